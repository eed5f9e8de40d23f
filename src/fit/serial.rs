//! Serial correlation of fit residuals ordered by frequency: the von Neumann ratio (J. von
//! Neumann, "Distribution of the ratio of the mean square successive difference to the
//! variance", Ann. Math. Statist. 12, 367 (1941); the Durbin–Watson statistic of regression is
//! the same ratio).
//!
//! For independent residuals of equal variance the mean square successive difference is twice
//! the mean square, so [`von_neumann_ratio`] (which halves it) is 1 with a standard deviation of
//! about 1/√m for m values. A misfit that varies smoothly with frequency — a term in the wrong
//! place, a missing one — adds to the mean square but hardly to the successive differences of
//! a dense sweep, and pulls the ratio below 1. The fit engine uses it to tell a fit whose
//! residuals are noise alone (no other start can remove anything systematic) from one that
//! leaves structure behind.

use crate::C64;

/// Fewest frequencies for which the ratio is used: with 400 points (800 values) its spread
/// under pure noise is 1/√800 ≈ 0.035, below the margin of [`WHITE`]; sparser sweeps also let a
/// smooth misfit change between neighbouring points, which hides it from the ratio.
pub const MIN_POINTS: usize = 400;
/// Residuals whose ratio is at least this are treated as free of systematic misfit: a smooth
/// misfit carrying more than about 5 % of the residual variance brings the ratio below it, while
/// pure noise of 1601 points (3202 values, spread 0.018) stays above it in all but ~0.3 % of
/// draws (2.8 standard deviations, one-sided normal tail).
pub const WHITE: f64 = 0.95;

/// The von Neumann ratio of complex residuals (real and imaginary parts as two sequences):
/// mean square successive difference over twice the mean square, 1 for white noise. `None` for
/// fewer than two residuals or all-zero residuals.
pub fn von_neumann_ratio(res: &[C64]) -> Option<f64> {
    if res.len() < 2 {
        return None;
    }
    let diff: f64 = res.windows(2).map(|w| (w[1] - w[0]).norm_sqr()).sum();
    let sq: f64 = res.iter().map(|r| r.norm_sqr()).sum();
    let ratio = (diff / (res.len() - 1) as f64) / (2.0 * sq / res.len() as f64);
    ratio.is_finite().then_some(ratio)
}

/// A fit to thinned data (about 200 points, 400 values, spread 0.05 under pure noise) whose
/// ratio is below this has a systematic misfit — five standard deviations below 1, so white
/// residuals are not turned away — and is not worth running on all points in the hope that its
/// residuals there will be white.
pub const COULD_BE_WHITE: f64 = 0.75;

/// Whether residuals of a fit to thinned data could still be white ([`COULD_BE_WHITE`]).
pub fn could_be_white(res: &[C64]) -> bool {
    von_neumann_ratio(res).is_some_and(|r| r >= COULD_BE_WHITE)
}

/// Whether the residuals of a fit are white by [`WHITE`] (dense sweeps only, [`MIN_POINTS`]).
pub fn is_white(res: &[C64]) -> bool {
    res.len() >= MIN_POINTS && von_neumann_ratio(res).is_some_and(|r| r >= WHITE)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::fit::synthetic::with_noise;

    /// White noise gives a ratio of 1 within a few 1/√m (von Neumann 1941: mean 2 for the
    /// unhalved ratio, variance ≈ 4/m).
    #[test]
    fn white_noise_has_ratio_one() {
        let zero = vec![C64::new(1.0, 0.0); 1601];
        let noise: Vec<C64> = with_noise(&zero, 0.01, 3)
            .iter()
            .map(|v| v - C64::new(1.0, 0.0))
            .collect();
        let r = von_neumann_ratio(&noise).unwrap();
        assert!((r - 1.0).abs() < 4.0 / (2.0 * 1601.0f64).sqrt(), "{r}");
        assert!(is_white(&noise) && could_be_white(&noise));
    }

    /// A smooth misfit a of about the noise's size lowers the ratio to 2σ²/(2σ² + ⟨a²⟩) (its
    /// successive differences vanish): here σ = 0.01 per component and a = 0.014·sin on the real
    /// part, ⟨a²⟩ = 0.98e-4, so 0.671. A sparse sweep is never called white.
    #[test]
    fn smooth_misfit_is_not_white() {
        let n = 1601;
        let zero = vec![C64::new(1.0, 0.0); n];
        let res: Vec<C64> = with_noise(&zero, 0.01, 4)
            .iter()
            .enumerate()
            .map(|(i, v)| {
                let x = i as f64 / n as f64 * 6.0;
                v - C64::new(1.0, 0.0) + C64::new(0.014 * x.sin(), 0.0)
            })
            .collect();
        let r = von_neumann_ratio(&res).unwrap();
        assert!((r - 0.671).abs() < 0.05, "{r}");
        assert!(!is_white(&res));
        assert!(!is_white(&res[..MIN_POINTS - 1]));
        assert!(!could_be_white(&res));
        assert_eq!(von_neumann_ratio(&res[..1]), None);
    }
}
