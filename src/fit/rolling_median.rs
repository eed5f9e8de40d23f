//! Medians of a window sliding along a series, kept sorted as it moves: one value leaves and
//! one enters per step (a binary search and a short shift each), instead of collecting and
//! sorting the whole window at every point.

/// The window of values `i − half ..= i + half` (clipped to the series) around each `i`; absent
/// values (`None`) are skipped. The median of the present values, or `None` where fewer than
/// `min_count` are present.
pub fn window_medians(values: &[Option<f64>], half: usize, min_count: usize) -> Vec<Option<f64>> {
    let n = values.len();
    let mut window = SortedWindow::default();
    let (mut lo, mut hi) = (0, 0);
    (0..n)
        .map(|i| {
            let (want_lo, want_hi) = (i.saturating_sub(half), (i + half + 1).min(n));
            // In the middle of the series one value leaves as one enters: a single replace.
            while hi < want_hi && lo < want_lo {
                window.replace(values[lo], values[hi]);
                lo += 1;
                hi += 1;
            }
            while hi < want_hi {
                window.insert(values[hi]);
                hi += 1;
            }
            while lo < want_lo {
                window.remove(values[lo]);
                lo += 1;
            }
            (window.len() >= min_count.max(1)).then(|| window.median())
        })
        .collect()
}

/// The present values of the window, ascending (by `total_cmp`, so a NaN has a place too).
#[derive(Default)]
struct SortedWindow(Vec<f64>);

impl SortedWindow {
    fn len(&self) -> usize {
        self.0.len()
    }

    fn insert(&mut self, v: Option<f64>) {
        if let Some(v) = v {
            let at = self.0.partition_point(|x| x.total_cmp(&v).is_lt());
            self.0.insert(at, v);
        }
    }

    /// Remove one copy of `v`, which entered the window earlier.
    fn remove(&mut self, v: Option<f64>) {
        if let Some(v) = v {
            let at = self.position(v);
            self.0.remove(at);
        }
    }

    /// Remove one copy of `old` and insert `new`: the new value is written over the old one and
    /// moved to its place by adjacent swaps (a few, as neighbouring values are alike), without
    /// shifting the rest of the window twice.
    fn replace(&mut self, old: Option<f64>, new: Option<f64>) {
        let (old, new) = match (old, new) {
            (Some(o), Some(n)) => (o, n),
            (old, new) => {
                self.remove(old);
                self.insert(new);
                return;
            }
        };
        let mut at = self.position(old);
        let w = &mut self.0;
        w[at] = new;
        while at + 1 < w.len() && w[at + 1].total_cmp(&new).is_lt() {
            w.swap(at, at + 1);
            at += 1;
        }
        while at > 0 && w[at - 1].total_cmp(&new).is_gt() {
            w.swap(at, at - 1);
            at -= 1;
        }
    }

    /// Where one copy of `v`, which entered the window earlier, is.
    fn position(&self, v: f64) -> usize {
        let at = self.0.partition_point(|x| x.total_cmp(&v).is_lt());
        debug_assert!(at < self.0.len() && self.0[at].total_cmp(&v).is_eq());
        at
    }

    /// The middle value, or the mean of the two middle values of an even count; not empty.
    fn median(&self) -> f64 {
        let m = self.0.len();
        if m % 2 == 1 {
            self.0[m / 2]
        } else {
            0.5 * (self.0[m / 2 - 1] + self.0[m / 2])
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The definition: collect the window's present values, sort, take the middle.
    fn by_sorting(values: &[Option<f64>], half: usize, min_count: usize) -> Vec<Option<f64>> {
        let n = values.len();
        (0..n)
            .map(|i| {
                let lo = i.saturating_sub(half);
                let hi = (i + half + 1).min(n);
                let mut w: Vec<f64> = values[lo..hi].iter().flatten().copied().collect();
                if w.len() < min_count.max(1) {
                    return None;
                }
                w.sort_by(f64::total_cmp);
                let m = w.len();
                Some(if m % 2 == 1 {
                    w[m / 2]
                } else {
                    0.5 * (w[m / 2 - 1] + w[m / 2])
                })
            })
            .collect()
    }

    /// Pseudo-random series with gaps and repeated values (ties must leave one copy each).
    fn series(n: usize, seed: u64) -> Vec<Option<f64>> {
        let mut s = seed;
        (0..n)
            .map(|_| {
                s = s
                    .wrapping_mul(6364136223846793005)
                    .wrapping_add(1442695040888963407);
                let r = (s >> 33) % 50;
                (r >= 5).then_some((r % 17) as f64 * 0.25)
            })
            .collect()
    }

    #[test]
    fn agrees_with_sorting_each_window() {
        for (n, half, min) in [
            (0, 3, 1),
            (1, 10, 5),
            (7, 10, 5),
            (300, 10, 5),
            (300, 1, 1),
            (64, 0, 1),
        ] {
            let v = series(n, n as u64 + half as u64);
            assert_eq!(
                window_medians(&v, half, min),
                by_sorting(&v, half, min),
                "n {n} half {half}"
            );
        }
    }

    #[test]
    fn all_absent_gives_no_median() {
        assert_eq!(window_medians(&[None; 5], 2, 1), vec![None; 5]);
    }
}
