//! A fractional relaxation term (Cole–Cole, Cole–Davidson, Havriliak–Negami) as a sum of Debye
//! terms Σ Δμ_k/(1 + j f/f_k) with Δμ_k ≥ 0, so a circuit simulator can take it as R‖L sections.
//!
//! For 0 < α, β ≤ 1 these terms have a non-negative distribution of relaxation times, so a
//! non-negative sum of Debye terms can follow them as closely as its grid allows (the same
//! discretisation Lin-KK uses, PHYSICS.md §5). The recipe:
//! * relaxation frequencies f_k log-spaced from [`POLE_MARGIN`] below to [`POLE_MARGIN`] above
//!   the fit band, [`POLES_PER_DECADE`] per decade (poles far below the band act as resistors in
//!   it, poles far above as inductors, so the distribution's tails are kept);
//! * the fit band is the export band widened by [`FIT_MARGIN`] (a decade) each side, sampled
//!   [`SAMPLES_PER_DECADE`] per decade;
//! * Δμ_k by non-negative least squares ([`super::nnls`]) on the complex term, each point
//!   weighted by 1/|term(f)| so the error is relative;
//! * the accuracy reported is the largest |sum − term|/|term| on a grid of
//!   [`CHECK_PER_DECADE`] points per decade over the export band.
//!
//! Accuracy reached with these settings over 1 MHz–1 GHz (relative error of one term, the
//! unit tests' shapes): about 1e-7 for Cole–Cole and Havriliak–Negami with α from 0.2 to 0.99,
//! about 2e-4 at worst for Cole–Davidson (β from 0.1 to 0.95, whose relaxation-time
//! distribution ends abruptly at f_r); a term with α = β = 1 is a single exact section. The
//! export writes the value reached for each term, and for the whole netlist, into the netlist.

use super::nnls::nnls;
use crate::model::Term;
use crate::C64;

/// Relaxation frequencies per decade.
pub const POLES_PER_DECADE: f64 = 6.0;
/// The fit band is the export band widened by this factor at each end.
pub const FIT_MARGIN: f64 = 10.0;
/// Relaxation frequencies reach this factor beyond the fit band at each end.
pub const POLE_MARGIN: f64 = 100.0;
/// Fit points per decade.
pub const SAMPLES_PER_DECADE: f64 = 25.0;
/// Points per decade of the accuracy check.
pub const CHECK_PER_DECADE: f64 = 100.0;

/// A term approximated by Debye sections.
#[derive(Debug, Clone, PartialEq)]
pub struct DebyeSum {
    /// (Δμ_k, f_k in Hz), every Δμ_k > 0.
    pub sections: Vec<(f64, f64)>,
    /// The band the sum was fitted over, Hz.
    pub fit_band: (f64, f64),
    /// Largest |sum − term|/|term| over the export band.
    pub max_rel_error: f64,
}

impl DebyeSum {
    /// The sum's value at `f_hz` (μ′ − jμ″ convention, like [`Term::value`]).
    pub fn value(&self, f_hz: f64) -> C64 {
        self.sections
            .iter()
            .map(|&(dm, fk)| Term::debye(dm, fk).value(f_hz))
            .sum()
    }
}

/// `n` points log-spaced from `lo` to `hi` inclusive, `per_decade` per decade (at least two).
pub fn log_grid(lo: f64, hi: f64, per_decade: f64) -> Vec<f64> {
    let n = (((hi / lo).log10() * per_decade).ceil() as usize).max(1) + 1;
    (0..n)
        .map(|i| lo * (hi / lo).powf(i as f64 / (n - 1) as f64))
        .collect()
}

/// Relaxation frequencies f_r·10^(k/[`POLES_PER_DECADE`]) for every integer k that keeps them
/// within [lo, hi]: anchored at the term's own f_r, so a term that is nearly Debye (α, β → 1)
/// finds its dominant pole on the grid.
fn anchored_grid(f_r: f64, lo: f64, hi: f64) -> Vec<f64> {
    let k_lo = ((lo / f_r).log10() * POLES_PER_DECADE).ceil() as i64;
    let k_hi = ((hi / f_r).log10() * POLES_PER_DECADE).floor() as i64;
    (k_lo..=k_hi)
        .map(|k| f_r * 10f64.powf(k as f64 / POLES_PER_DECADE))
        .collect()
}

/// Fit `term` by a non-negative Debye sum for use over `band` (Hz, lo < hi).
pub fn fit_debye_sum(term: &Term, band: (f64, f64)) -> DebyeSum {
    let fit_band = (band.0 / FIT_MARGIN, band.1 * FIT_MARGIN);
    let poles = anchored_grid(
        term.f_hz,
        fit_band.0 / POLE_MARGIN,
        fit_band.1 * POLE_MARGIN,
    );
    let samples = log_grid(fit_band.0, fit_band.1, SAMPLES_PER_DECADE);
    let weights: Vec<f64> = samples
        .iter()
        .map(|&f| 1.0 / term.value(f).norm())
        .collect();
    // Rows: the real parts at every sample, then the imaginary parts.
    let column = |fk: f64| -> Vec<f64> {
        let v: Vec<C64> = samples
            .iter()
            .zip(&weights)
            .map(|(&f, &w)| Term::debye(1.0, fk).value(f) * w)
            .collect();
        v.iter()
            .map(|c| c.re)
            .chain(v.iter().map(|c| c.im))
            .collect()
    };
    let cols: Vec<Vec<f64>> = poles.iter().map(|&fk| column(fk)).collect();
    let target: Vec<C64> = samples
        .iter()
        .zip(&weights)
        .map(|(&f, &w)| term.value(f) * w)
        .collect();
    let b: Vec<f64> = target
        .iter()
        .map(|c| c.re)
        .chain(target.iter().map(|c| c.im))
        .collect();
    let x = nnls(&cols, &b);
    let sections: Vec<(f64, f64)> = x
        .into_iter()
        .zip(poles)
        .filter(|&(dm, _)| dm > 0.0)
        .collect();
    let mut sum = DebyeSum {
        sections,
        fit_band,
        max_rel_error: 0.0,
    };
    sum.max_rel_error = log_grid(band.0, band.1, CHECK_PER_DECADE)
        .into_iter()
        .map(|f| {
            let t = term.value(f);
            (sum.value(f) - t).norm() / t.norm()
        })
        .fold(0.0, f64::max);
    sum
}

#[cfg(test)]
mod tests {
    use super::*;

    const BAND: (f64, f64) = (1e6, 1e9);

    /// Relative accuracy the recipe above must reach on one term over the export band.
    const TERM_ACCURACY: f64 = 1e-3;

    // The shapes of PHYSICS.md §4 (α, β from 0.1 to 0.99, corner below, in and above the band):
    // each is followed to better than 1e-3 relative by a non-negative Debye sum (the survey
    // behind the module doc: Cole–Davidson is the hardest, about 2e-4 at β = 0.1 to 0.3).
    #[test]
    fn fractional_terms_are_followed_within_1e_3_over_the_band() {
        for t in [
            Term::cole_cole(300.0, 20e6, 0.3),
            Term::cole_cole(300.0, 20e6, 0.6),
            Term::cole_cole(300.0, 20e6, 0.95),
            Term::cole_davidson(300.0, 20e6, 0.1),
            Term::cole_davidson(300.0, 20e6, 0.3),
            Term::cole_davidson(300.0, 20e6, 0.95),
            Term::havriliak_negami(300.0, 20e6, 0.5, 0.5),
            Term::havriliak_negami(300.0, 20e6, 0.99, 0.3),
            Term::havriliak_negami(300.0, 20e6, 0.2, 0.9),
            Term::havriliak_negami(300.0, 3e5, 0.8, 0.6),
            Term::havriliak_negami(300.0, 3e9, 0.8, 0.6),
        ] {
            let s = fit_debye_sum(&t, BAND);
            assert!(
                s.max_rel_error < TERM_ACCURACY,
                "{:?}: {:.3e}",
                t,
                s.max_rel_error
            );
            assert!(s.sections.iter().all(|&(dm, f)| dm > 0.0 && f > 0.0));
            // The stated error, sampled at 100 points per decade, bounds what another grid finds
            // (to 1 %: the error is smooth between samples).
            for f in log_grid(BAND.0, BAND.1, 7.0) {
                let rel = (s.value(f) - t.value(f)).norm() / t.value(f).norm();
                assert!(
                    rel <= s.max_rel_error * 1.01,
                    "{:?} {} {:.4e} {:.4e}",
                    t,
                    f,
                    rel,
                    s.max_rel_error
                );
            }
        }
    }

    // Cole & Cole (1941) [S, PHYSICS.md §4]: at x = 1 the term is Δμ/(1 + j^α) with
    // j^α = cos(απ/2) + j·sin(απ/2); with α = 1 it is a Debye term, which the anchored grid
    // holds as a single section to rounding.
    #[test]
    fn cole_cole_at_its_corner_and_its_debye_limit() {
        let (dm, fr, a) = (250.0, 40e6, 0.7);
        let half = std::f64::consts::FRAC_PI_2 * a;
        let want = dm / C64::new(1.0 + half.cos(), half.sin());
        let s = fit_debye_sum(&Term::cole_cole(dm, fr, a), BAND);
        assert!((s.value(fr) - want).norm() < TERM_ACCURACY * want.norm());
        let debye_like = fit_debye_sum(&Term::cole_cole(dm, fr, 1.0), BAND);
        assert!(
            debye_like.max_rel_error < 1e-12,
            "{:.3e}",
            debye_like.max_rel_error
        );
    }
}
