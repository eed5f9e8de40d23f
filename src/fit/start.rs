//! Start values from the data, so no fit needs hand-given starts.
//!
//! The spectrum is read for its features: the loss peaks of μ″ (frequency, height, half-widths
//! left and right in decades), the low-frequency μ′ (static permeability μ_s), and where a
//! resonance shows in μ′ (μ′ falling below μ∞, or rising before it falls). Each term is then
//! given a feature: its shape parameter (α, β or d) is the one whose own μ″ peak has the
//! measured widths, f_r follows from the peak frequency and Δμ from the peak height, both
//! through the term's own peak position and height (for Havriliak–Negami the loss-peak formula
//! of PHYSICS.md §4). Finally all Δμ are scaled together so the model's μ′ at the lowest
//! frequency matches the measured one.
//!
//! One spectrum can be read several ways — a broad loss peak may be one term or two (spin
//! relaxation + domain-wall resonance, PHYSICS.md §4), and which term takes which peak is not
//! known — so [`starts`] returns a few alternatives (splits of a peak, permutations of the
//! assignment, a frequency perturbation), most plausible first. The engine fits from each and
//! keeps the best optimum.

use crate::model::{Model, Term, TermKind};
use crate::C64;
use std::sync::OnceLock;

/// Most start models returned.
pub const MAX_STARTS: usize = 8;
/// A local maximum of μ″ counts as a peak if it is at least this fraction of the largest one and
/// stands out from its surroundings by this fraction of its own height.
const MIN_PEAK_FRACTION: f64 = 0.05;
const MIN_PROMINENCE: f64 = 0.1;
/// μ′ must rise by this fraction (of |μ|) before a fall to count as a resonance overshoot.
const RESONANCE_RISE: f64 = 0.02;
/// Factors by which a single loss peak is split into two terms.
const SPLIT_FACTORS: [f64; 2] = [2.5, 6.0];
/// Frequency factor of the perturbed start.
const PERTURB_FACTOR: f64 = 2.0;

/// One loss peak of μ″.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LossPeak {
    pub f_hz: f64,
    /// μ″ at the peak (smoothed).
    pub height: f64,
    /// Decades from the peak down to half height on the low side, if reached before a valley.
    pub left_dec: Option<f64>,
    /// The same on the high side.
    pub right_dec: Option<f64>,
}

/// What the start values are read from.
#[derive(Debug, Clone, PartialEq)]
pub struct Features {
    /// μ′ at the lowest frequency (smoothed): the static permeability when the band starts low.
    pub mu_low: f64,
    /// Loss peaks, highest first.
    pub peaks: Vec<LossPeak>,
    /// Where μ′ shows a resonance, Hz: it falls below μ∞, or overshoots before falling.
    pub resonance_hz: Option<f64>,
}

/// Moving average over `w` points (odd), shrinking at the ends.
fn smooth(v: &[f64], w: usize) -> Vec<f64> {
    let h = w / 2;
    (0..v.len())
        .map(|i| {
            let (a, b) = (i.saturating_sub(h), (i + h + 1).min(v.len()));
            v[a..b].iter().sum::<f64>() / (b - a) as f64
        })
        .collect()
}

fn smoothing_window(n: usize) -> usize {
    (n / 160).max(1) * 2 + 1
}

/// Read the features of the spectrum `mu` (μ′ − jμ″) at increasing `freq_hz`.
pub fn features(freq_hz: &[f64], mu: &[C64], mu_inf: f64) -> Features {
    let w = smoothing_window(freq_hz.len());
    let loss = smooth(&mu.iter().map(|m| -m.im).collect::<Vec<_>>(), w);
    let real = smooth(&mu.iter().map(|m| m.re).collect::<Vec<_>>(), w);
    Features {
        mu_low: real.first().copied().unwrap_or(1.0),
        peaks: loss_peaks(freq_hz, &loss),
        resonance_hz: resonance(freq_hz, &real, mu, mu_inf),
    }
}

fn loss_peaks(f: &[f64], loss: &[f64]) -> Vec<LossPeak> {
    let n = loss.len();
    let top = loss.iter().copied().fold(0.0, f64::max);
    if !(top > 0.0) {
        return Vec::new();
    }
    let mut peaks = Vec::new();
    for i in 0..n {
        let h = loss[i];
        let left_ok = i == 0 || loss[i - 1] < h;
        let right_ok = i == n - 1 || loss[i + 1] <= h;
        if !(left_ok && right_ok) || h < MIN_PEAK_FRACTION * top {
            continue;
        }
        // Walk out to a higher point or the edge; the lowest value passed is the base.
        let walk = |range: &mut dyn Iterator<Item = usize>| {
            let mut base = h;
            let mut half: Option<usize> = None;
            for k in range {
                if loss[k] > h {
                    break;
                }
                base = base.min(loss[k]);
                if half.is_none() && loss[k] <= 0.5 * h {
                    half = Some(k);
                }
            }
            (base, half)
        };
        let (lb, lh) = walk(&mut (0..i).rev());
        let (rb, rh) = walk(&mut (i + 1..n));
        let at_edge = i == 0 || i == n - 1;
        if !at_edge && h - lb.max(rb) < MIN_PROMINENCE * h {
            continue;
        }
        let dec = |k: Option<usize>| k.map(|k| (f[i] / f[k]).log10().abs());
        peaks.push(LossPeak {
            f_hz: f[i],
            height: h,
            left_dec: dec(lh),
            right_dec: dec(rh),
        });
    }
    peaks.sort_by(|a, b| b.height.total_cmp(&a.height));
    peaks
}

fn resonance(f: &[f64], real: &[f64], mu: &[C64], mu_inf: f64) -> Option<f64> {
    if let Some(i) = real.iter().position(|&r| r < mu_inf) {
        return Some(f[i]);
    }
    // Overshoot: a local maximum of μ′ that stands above the lowest μ′ before it.
    let mut low = real[0];
    for i in 1..real.len().saturating_sub(1) {
        low = low.min(real[i]);
        let is_max = real[i] >= real[i - 1] && real[i] > real[i + 1];
        if is_max && real[i] - low > RESONANCE_RISE * mu[i].norm() {
            return Some(f[i]);
        }
    }
    None
}

/// The μ″ peak of a unit term of some shape: where it is (x = f/f_r), how high, and its
/// half-widths in decades on either side.
#[derive(Debug, Clone, Copy)]
struct Shape {
    term: Term,
    x_peak: f64,
    height: f64,
    left_dec: f64,
    right_dec: f64,
}

fn shape_of(term: Term) -> Shape {
    // 200 points per decade over ±5 decades: peak position to ±0.3 %, ample for a start.
    let xs: Vec<f64> = (0..=2000)
        .map(|k| 10f64.powf(-5.0 + k as f64 / 200.0))
        .collect();
    let loss: Vec<f64> = xs.iter().map(|&x| -term.value(x * term.f_hz).im).collect();
    let i = (0..xs.len())
        .max_by(|&a, &b| loss[a].total_cmp(&loss[b]))
        .unwrap_or(0);
    let h = loss[i];
    let left = (0..i)
        .rev()
        .find(|&k| loss[k] <= 0.5 * h)
        .map_or(5.0, |k| (xs[i] / xs[k]).log10());
    let right = (i..xs.len())
        .find(|&k| loss[k] <= 0.5 * h)
        .map_or(5.0, |k| (xs[k] / xs[i]).log10());
    Shape {
        term,
        x_peak: xs[i],
        height: h,
        left_dec: left,
        right_dec: right,
    }
}

/// Unit terms (Δμ = 1, f_r = 1 Hz) of every kind over a grid of shape parameters.
fn shape_table() -> &'static Vec<Shape> {
    static TABLE: OnceLock<Vec<Shape>> = OnceLock::new();
    TABLE.get_or_init(|| {
        // Exponents stop short of 1: a start on the logistic bound could not move off it.
        let exps: Vec<f64> = (0..14).map(|i| 0.3 + 0.05 * i as f64).collect();
        let mut terms = vec![Term::debye(1.0, 1.0)];
        terms.extend(exps.iter().map(|&a| Term::cole_cole(1.0, 1.0, a)));
        terms.extend(exps.iter().map(|&b| Term::cole_davidson(1.0, 1.0, b)));
        for a in exps.iter().step_by(2) {
            terms.extend(
                exps.iter()
                    .step_by(2)
                    .map(|&b| Term::havriliak_negami(1.0, 1.0, *a, b)),
            );
        }
        terms.extend((0..25).map(|i| Term::lorentz(1.0, 1.0, 0.05 * 10f64.powf(i as f64 / 12.0))));
        terms.into_iter().map(shape_of).collect()
    })
}

/// Shape closest to the measured half-widths (only the sides that were measured count); with
/// none measured, a moderate default shape.
fn best_shape(kind: TermKind, left: Option<f64>, right: Option<f64>) -> Shape {
    let default = default_shape(kind);
    if left.is_none() && right.is_none() {
        return default;
    }
    let miss = |s: &Shape| {
        left.map_or(0.0, |l| (s.left_dec - l).powi(2))
            + right.map_or(0.0, |r| (s.right_dec - r).powi(2))
    };
    shape_table()
        .iter()
        .filter(|s| s.term.kind == kind)
        .min_by(|a, b| miss(a).total_cmp(&miss(b)))
        .copied()
        .unwrap_or(default)
}

/// The moderate shape used when a feature's widths were not measured (computed once).
fn default_shape(kind: TermKind) -> Shape {
    static DEFAULTS: OnceLock<Vec<Shape>> = OnceLock::new();
    let all = DEFAULTS.get_or_init(|| {
        [
            Term::debye(1.0, 1.0),
            Term::cole_cole(1.0, 1.0, 0.8),
            Term::cole_davidson(1.0, 1.0, 0.8),
            Term::havriliak_negami(1.0, 1.0, 0.8, 0.8),
            Term::lorentz(1.0, 1.0, 0.5),
        ]
        .into_iter()
        .map(shape_of)
        .collect()
    });
    *all.iter().find(|s| s.term.kind == kind).unwrap_or(&all[0])
}

/// A term of `kind` whose μ″ peak matches `peak` (widths used only if `use_widths`).
fn term_for(kind: TermKind, peak: &LossPeak, use_widths: bool) -> Term {
    let s = if use_widths {
        best_shape(kind, peak.left_dec, peak.right_dec)
    } else {
        best_shape(kind, None, None)
    };
    Term {
        delta_mu: peak.height / s.height,
        f_hz: peak.f_hz / s.x_peak,
        ..s.term
    }
}

/// A feature assigned to a term: a measured peak (widths usable) or a piece of a split one.
#[derive(Debug, Clone, Copy)]
struct Slot {
    peak: LossPeak,
    measured: bool,
}

/// Ways to give `n` terms one feature each, most plausible first.
fn slot_sets(feat: &Features, freq_hz: &[f64], mu: &[C64], n: usize) -> Vec<Vec<Slot>> {
    let mut peaks = feat.peaks.clone();
    if peaks.is_empty() {
        peaks.push(peak_from_mu_prime(freq_hz, mu));
    }
    let measured: Vec<Slot> = peaks
        .iter()
        .map(|&peak| Slot {
            peak,
            measured: true,
        })
        .collect();
    let mut sets = Vec::new();
    if measured.len() >= n {
        sets.push(measured[..n].to_vec());
    }
    // Split the highest peak into the missing number of terms (or one more than needed).
    let missing = n.saturating_sub(measured.len()).max(1);
    for &r in &SPLIT_FACTORS {
        let p = peaks[0];
        let pieces = missing + 1;
        let mut set: Vec<Slot> = (0..pieces)
            .map(|k| {
                let e = k as f64 - (pieces - 1) as f64 / 2.0;
                Slot {
                    peak: LossPeak {
                        f_hz: p.f_hz * r.powf(e),
                        height: p.height / pieces as f64,
                        left_dec: None,
                        right_dec: None,
                    },
                    measured: false,
                }
            })
            .collect();
        set.extend(measured.iter().skip(1).copied());
        set.truncate(n);
        if set.len() == n {
            sets.push(set);
        }
    }
    sets
}

/// With no loss peak (μ″ ≈ 0), a relaxation is placed where μ′ has fallen halfway.
fn peak_from_mu_prime(freq_hz: &[f64], mu: &[C64]) -> LossPeak {
    let (lo, hi) = (mu[0].re, mu[mu.len() - 1].re);
    let i = mu
        .iter()
        .position(|m| m.re <= 0.5 * (lo + hi))
        .unwrap_or(mu.len() / 2);
    LossPeak {
        f_hz: freq_hz[i],
        height: (0.5 * (lo - hi)).abs().max(1e-3),
        left_dec: None,
        right_dec: None,
    }
}

/// Orders of assigning `slots` to the terms: every permutation (n ≤ 3), the ones that put
/// resonance terms nearest the μ′ resonance first.
fn assignments(kinds: &[TermKind], slots: &[Slot], resonance_hz: Option<f64>) -> Vec<Vec<Slot>> {
    let mut perms = permutations(slots.len());
    let misfit = |perm: &Vec<usize>| -> f64 {
        let Some(fr) = resonance_hz else { return 0.0 };
        kinds
            .iter()
            .zip(perm)
            .filter(|(k, _)| **k == TermKind::Lorentz)
            .map(|(_, &i)| (slots[i].peak.f_hz / fr).log10().abs())
            .sum()
    };
    perms.sort_by(|a, b| misfit(a).total_cmp(&misfit(b)));
    perms
        .into_iter()
        .map(|p| p.into_iter().map(|i| slots[i]).collect())
        .collect()
}

fn permutations(n: usize) -> Vec<Vec<usize>> {
    if n <= 1 {
        return vec![(0..n).collect()];
    }
    let mut out = Vec::new();
    for p in permutations(n - 1) {
        for at in 0..=p.len() {
            let mut q = p.clone();
            q.insert(at, n - 1);
            out.push(q);
        }
    }
    out
}

/// Scale every Δμ so that the model's μ′ at the lowest frequency is the measured one (the
/// low-frequency μ′ fixes the total Δμ better than peak heights of overlapping terms).
fn match_static(mut model: Model, f_low: f64, mu_low: f64) -> Model {
    let model_low = model.mu(f_low).re - model.mu_inf;
    let want = mu_low - model.mu_inf;
    let k = want / model_low;
    if k.is_finite() && (0.2..=5.0).contains(&k) {
        model.terms.iter_mut().for_each(|t| t.delta_mu *= k);
    }
    model
}

/// Start models for `kinds` on the data, most plausible first, at most [`MAX_STARTS`].
pub fn starts(freq_hz: &[f64], mu: &[C64], kinds: &[TermKind], mu_inf: f64) -> Vec<Model> {
    if freq_hz.is_empty() || kinds.is_empty() {
        return vec![Model {
            mu_inf,
            terms: Vec::new(),
        }];
    }
    let feat = features(freq_hz, mu, mu_inf);
    let build = |slots: &[Slot]| {
        let terms = kinds
            .iter()
            .zip(slots)
            .map(|(&k, s)| term_for(k, &s.peak, s.measured))
            .collect();
        match_static(Model { mu_inf, terms }, freq_hz[0], feat.mu_low)
    };
    let mut out: Vec<Model> = Vec::new();
    for set in slot_sets(&feat, freq_hz, mu, kinds.len()) {
        for slots in assignments(kinds, &set, feat.resonance_hz) {
            push_distinct(&mut out, build(&slots));
        }
    }
    if let Some(first) = out.first().cloned() {
        for factor in [PERTURB_FACTOR, 1.0 / PERTURB_FACTOR] {
            let mut m = first.clone();
            m.terms.iter_mut().for_each(|t| t.f_hz *= factor);
            push_distinct(&mut out, m);
        }
    }
    out.truncate(MAX_STARTS);
    out
}

/// Add `m` unless an equivalent start is already there (see [`is_new`]).
pub fn push_distinct(out: &mut Vec<Model>, m: Model) {
    if is_new(out, &m) {
        out.push(m);
    }
}

/// Whether `m` differs from every model in `out`: some term's kind, or its f_r by more than 1 %.
pub fn is_new(out: &[Model], m: &Model) -> bool {
    let same = |a: &Model| {
        a.terms
            .iter()
            .zip(&m.terms)
            .all(|(x, y)| (x.f_hz / y.f_hz - 1.0).abs() < 0.01 && x.kind == y.kind)
    };
    !out.iter().any(same)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::fit::synthetic::log_freqs;

    /// Debye: μ″ peak Δμ/2 at x = 1 (PHYSICS.md §4), half height at x = 2 ± √3, i.e.
    /// log10(2 + √3) = 0.572 decades either side [D].
    #[test]
    fn debye_feature_is_read_at_f_r_with_half_delta_mu_and_textbook_width() {
        let f = log_freqs(801, 1e4, 1e10);
        let m = Model {
            mu_inf: 1.0,
            terms: vec![Term::debye(800.0, 3e6)],
        };
        let mu: Vec<C64> = f.iter().map(|&x| m.mu(x)).collect();
        let feat = features(&f, &mu, 1.0);
        assert_eq!(feat.peaks.len(), 1, "{feat:?}");
        let p = feat.peaks[0];
        assert!((p.f_hz / 3e6 - 1.0).abs() < 0.01, "{p:?}");
        // Smoothing and the 0.0075-decade grid bias the reading slightly; starts need no more.
        assert!((p.height - 400.0).abs() < 4.0, "{p:?}");
        let w = (2.0 + 3f64.sqrt()).log10();
        assert!(
            (p.left_dec.unwrap() - w).abs() < 0.02 && (p.right_dec.unwrap() - w).abs() < 0.02,
            "{p:?}"
        );
        assert!(feat.resonance_hz.is_none());
        assert!((feat.mu_low - 801.0).abs() < 1.0);
    }

    /// The shape table inverts widths: a Cole–Cole of α = 0.6 is read back near 0.6, and
    /// f_r and Δμ come out near the truth (they are starts, so 10 % is plenty).
    #[test]
    fn cole_cole_start_recovers_alpha_f_r_and_delta_mu() {
        let f = log_freqs(801, 1e3, 1e11);
        let truth = Model {
            mu_inf: 1.0,
            terms: vec![Term::cole_cole(500.0, 2e7, 0.6)],
        };
        let mu: Vec<C64> = f.iter().map(|&x| truth.mu(x)).collect();
        let s = &starts(&f, &mu, &[TermKind::ColeCole], 1.0)[0].terms[0];
        assert!((s.alpha - 0.6).abs() < 0.051, "{s:?}");
        assert!(
            (s.f_hz / 2e7 - 1.0).abs() < 0.1 && (s.delta_mu / 500.0 - 1.0).abs() < 0.1,
            "{s:?}"
        );
    }

    /// Spin relaxation + wall resonance: the resonance shows in μ′, and the lorentz term is
    /// started at the loss peak nearest to it in the first start.
    #[test]
    fn resonance_in_mu_prime_steers_the_lorentz_term() {
        let f = log_freqs(801, 1e5, 1e10);
        let truth = Model {
            mu_inf: 1.0,
            terms: vec![Term::debye(300.0, 2e8), Term::lorentz(200.0, 3e6, 0.3)],
        };
        let mu: Vec<C64> = f.iter().map(|&x| truth.mu(x)).collect();
        let feat = features(&f, &mu, 1.0);
        let fr = feat
            .resonance_hz
            .expect("the overshoot of μ′ below f_r is a resonance");
        assert!(fr > 1e6 && fr < 5e6, "{fr}");
        let all = starts(&f, &mu, &[TermKind::Debye, TermKind::Lorentz], 1.0);
        assert!(all.len() >= 3 && all.len() <= MAX_STARTS);
        let lor = all[0].terms[1];
        assert!((lor.f_hz / 3e6).log10().abs() < 0.1, "{lor:?}");
    }

    #[test]
    fn permutations_are_all_orders() {
        let p = permutations(3);
        assert_eq!(p.len(), 6);
        let mut q = p.clone();
        q.sort();
        q.dedup();
        assert_eq!(q.len(), 6);
    }

    #[test]
    fn flat_loss_still_gives_a_start() {
        let f = log_freqs(50, 1e5, 1e8);
        let mu: Vec<C64> = f
            .iter()
            .map(|&x| C64::new(100.0 - 10.0 * (x / 1e5).log10(), 0.0))
            .collect();
        let s = starts(&f, &mu, &[TermKind::Debye], 1.0);
        assert!(!s.is_empty() && s[0].terms[0].f_hz.is_finite() && s[0].terms[0].delta_mu > 0.0);
    }
}
