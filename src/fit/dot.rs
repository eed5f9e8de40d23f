//! The dot product Σ aᵢbᵢ that the normal equations (JᵀJ, Jᵀr) and the linear fits of the
//! Kramers–Kronig check spend most of their arithmetic in.
//!
//! Eight independent partial sums let the compiler vectorise the loop (a single running sum
//! cannot be reordered); [`crate::wide::wide`] runs it four wide where the processor can. Every
//! build adds the same products into the same eight sums in the same order, so the result is
//! bit for bit the same on every machine.

use crate::wide::wide;

/// Σ aᵢbᵢ over the common length of `a` and `b`.
pub fn dot(a: &[f64], b: &[f64]) -> f64 {
    wide(
        #[inline(always)]
        || partial_sums(a, b),
    )
}

#[inline(always)]
fn partial_sums(a: &[f64], b: &[f64]) -> f64 {
    let n = a.len().min(b.len());
    let (a, b) = (&a[..n], &b[..n]);
    let mut acc = [0.0f64; 8];
    let (ca, cb) = (a.chunks_exact(8), b.chunks_exact(8));
    let tail: f64 = ca
        .remainder()
        .iter()
        .zip(cb.remainder())
        .map(|(x, y)| x * y)
        .sum();
    for (x, y) in ca.zip(cb) {
        for k in 0..8 {
            acc[k] += x[k] * y[k];
        }
    }
    ((acc[0] + acc[4]) + (acc[2] + acc[6])) + ((acc[1] + acc[5]) + (acc[3] + acc[7])) + tail
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Σ k·(n − k) for k < n has the closed form n(n² − 1)/6 (sum of k and k², standard
    /// identities); exact in doubles for these sizes. Lengths cover the 8-wide body and tails.
    #[test]
    fn matches_the_closed_form_sum() {
        for n in [0usize, 1, 7, 8, 9, 100, 3203] {
            let a: Vec<f64> = (0..n).map(|k| k as f64).collect();
            let b: Vec<f64> = (0..n).map(|k| (n - k) as f64).collect();
            let nf = n as f64;
            assert_eq!(dot(&a, &b), nf * (nf * nf - 1.0) / 6.0, "n = {n}");
        }
    }

    /// The wide and the portable build give the same bits on inexact data.
    #[test]
    fn every_build_gives_the_same_bits() {
        let a: Vec<f64> = (0..1001).map(|k| (k as f64 * 0.37).sin()).collect();
        let b: Vec<f64> = (0..1001).map(|k| (k as f64 * 0.11).cos() / 3.0).collect();
        assert_eq!(dot(&a, &b).to_bits(), partial_sums(&a, &b).to_bits());
    }

    #[test]
    fn unequal_lengths_use_the_common_part() {
        assert_eq!(dot(&[1.0, 2.0, 3.0], &[4.0, 5.0]), 14.0);
    }
}
