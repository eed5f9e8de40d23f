//! Kramers–Kronig validity of a measured spectrum (PHYSICS.md §5).
//!
//! **Lin-KK** (Schönleber, Klotz & Ivers-Tiffée, Electrochim. Acta 131, 20 (2014)): fit
//! μ∞ + Σₖ χₖ/(1 + jωτₖ) with τₖ log-spaced from 1/ω_max to 1/ω_min. Every basis function is
//! causal, so any combination of them is; what the combination cannot follow is the part of the
//! data that violates Kramers–Kronig. The fit is linear in (μ∞, χₖ): weighted least squares on
//! the real and imaginary parts with weights 1/|μ|, solved by column-pivoted QR
//! ([`super::lstsq`]) because neighbouring basis columns are nearly collinear. M is raised from 1
//! until μ_c = 1 − Σ_{χ<0}|χ|/Σ_{χ≥0}|χ| falls below [`MU_C_LIMIT`] (the onset of over-fitting).
//!
//! Two departures from the paper, both because μ spectra are not impedance spectra:
//! - **Under-resolution.** μ of a ferrite spans three decades of magnitude, and at the M where
//!   μ_c first drops the basis may still be too coarse to follow one clean relaxation. If that
//!   fit fails, the densest basis (`MAX_PER_DECADE` per decade) is tried too and the better one
//!   kept. Basis functions stay inside the measured band, so a denser basis cannot absorb a
//!   non-causal artefact (the tests add one and check that it still fails).
//! - **Resonances.** A damped resonance has poles off the imaginary axis that no sum of Debye
//!   terms with real τ represents economically (μ′ may fall below μ∞). When the relaxation basis
//!   alone does not pass, the fit is repeated with a fixed grid of damped-resonance functions
//!   1/(1 − (f/fₖ)² + j·d·f/fₖ) added — centre frequencies log-spaced over the band at each of the
//!   dampings `RESONANCE_DAMPINGS`, denser for the sharper ones — and the report names the basis used.
//!   Resonances sharper than the smallest damping, or spectra whose |μ| passes near zero, can
//!   still fail on the basis rather than on the data; the warning then says which basis failed.
//!
//! The linear fit is made on at most `FIT_POINTS` points thinned evenly from a dense sweep (a
//! few hundred points determine a few dozen weights); the residuals are judged at every point.
//!
//! Pass: residual RMS and drift (largest moving average of the residuals over a window of
//! `DRIFT_WINDOW_FRACTION` of the points) both at most [`KK_RESIDUAL_LIMIT`].
//!
//! [`mu_prime_from_loss`] is the direct discrete transform μ″ → μ′ − μ∞ on a log grid, for
//! checking a loss curve against its real part without any basis.

use super::engine::thin_indices;
use super::lstsq::{normalise, PivotedQr};
use super::report::KkReport;
use super::synthetic::log_freqs;
use super::FitError;
use crate::error::Diagnostic;
use crate::C64;
use std::f64::consts::PI;

/// μ_c below which the Lin-KK basis starts to over-fit [S: Schönleber et al. 2014, c = 0.85].
pub const MU_C_LIMIT: f64 = 0.85;
/// μ_c reported when (almost) every weight is negative.
const MU_C_FLOOR: f64 = -1e6;
/// Relative residual (RMS and drift) up to which a spectrum passes [PHYSICS.md §5, "~1 %"].
pub const KK_RESIDUAL_LIMIT: f64 = 0.01;
/// Densest relaxation basis tried, per decade of the band.
const MAX_PER_DECADE: f64 = 7.0;
/// Resonance grid: the dampings, and the grid density for each — inversely proportional to the
/// damping, since a resonance's relative width is about d, so that neighbouring centres sit
/// about half a line width apart (chosen so that synthetic resonances with d ≥ 0.2 and the
/// relaxation-plus-resonance spectra of the tests fit to their noise).
const RESONANCE_DAMPINGS: [f64; 3] = [0.2, 0.5, 1.2];
const RESONANCE_DENSITY: f64 = 4.6;
/// Relative rank threshold for the pivoted QR of the unit-norm basis columns.
const RANK_RTOL: f64 = 1e-10;
/// Fewest frequencies Lin-KK is run on.
const MIN_POINTS: usize = 8;
/// Points the linear fit is made on (thinned evenly from denser sweeps).
const FIT_POINTS: usize = 400;
/// Moving-average window for the drift measure, as a fraction of the points (at least 5).
const DRIFT_WINDOW_FRACTION: f64 = 0.05;

/// The basis a Lin-KK fit used.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum KkBasis {
    /// μ∞ and Debye terms only (Schönleber et al. 2014).
    Relaxation,
    /// Plus a fixed grid of damped resonances.
    RelaxationAndResonance,
}

impl KkBasis {
    pub fn name(self) -> &'static str {
        match self {
            KkBasis::Relaxation => "debye",
            KkBasis::RelaxationAndResonance => "debye+resonance",
        }
    }
}

/// A Lin-KK result: the report and what it was computed from.
#[derive(Debug, Clone)]
pub struct KkOutcome {
    pub report: KkReport,
    pub basis: KkBasis,
    /// The causal fit at each frequency.
    pub fitted: Vec<C64>,
    /// (fit − measured)/|measured| at each frequency.
    pub residuals: Vec<C64>,
}

/// One basis function of the linear fit.
#[derive(Debug, Clone, Copy)]
enum BasisFn {
    Constant,
    Debye { tau: f64 },
    Resonance { f_hz: f64, damping: f64 },
}

impl BasisFn {
    fn value(self, f_hz: f64) -> C64 {
        match self {
            BasisFn::Constant => C64::new(1.0, 0.0),
            BasisFn::Debye { tau } => C64::new(1.0, 2.0 * PI * f_hz * tau).inv(),
            BasisFn::Resonance { f_hz: fk, damping } => {
                let x = f_hz / fk;
                C64::new(1.0 - x * x, damping * x).inv()
            }
        }
    }
}

/// The data as the weighted linear problem sees it.
struct Data {
    freq_hz: Vec<f64>,
    mu: Vec<C64>,
    weight: Vec<f64>,
}

impl Data {
    fn new(freq_hz: &[f64], mu: &[C64]) -> Data {
        Data {
            freq_hz: freq_hz.to_vec(),
            mu: mu.to_vec(),
            weight: mu.iter().map(|m| 1.0 / m.norm()).collect(),
        }
    }
    /// Every k-th point (and the last), about `most` of them: the linear fit needs far fewer
    /// points than a dense sweep has, while the residuals are still judged at every point.
    fn thinned(&self, most: usize) -> Data {
        let idx = thin_indices(self.freq_hz.len(), most);
        Data {
            freq_hz: idx.iter().map(|&i| self.freq_hz[i]).collect(),
            mu: idx.iter().map(|&i| self.mu[i]).collect(),
            weight: idx.iter().map(|&i| self.weight[i]).collect(),
        }
    }
    /// A basis function as a weighted column: real parts of all frequencies, then imaginary.
    fn column(&self, b: BasisFn) -> Vec<f64> {
        let n = self.freq_hz.len();
        let mut col = vec![0.0; 2 * n];
        for (i, (&f, &w)) in self.freq_hz.iter().zip(&self.weight).enumerate() {
            let v = b.value(f) * w;
            col[i] = v.re;
            col[n + i] = v.im;
        }
        col
    }
    fn rhs(&self) -> Vec<f64> {
        let n = self.mu.len();
        let mut b = vec![0.0; 2 * n];
        for (i, (m, &w)) in self.mu.iter().zip(&self.weight).enumerate() {
            b[i] = m.re * w;
            b[n + i] = m.im * w;
        }
        b
    }
}

/// The columns that stay the same while M changes, factorised once.
struct FixedBlock {
    funcs: Vec<BasisFn>,
    scale: Vec<f64>,
    qr: PivotedQr,
    /// Qᵀb.
    qtb: Vec<f64>,
}

impl FixedBlock {
    fn new(data: &Data, funcs: Vec<BasisFn>) -> FixedBlock {
        let mut cols: Vec<Vec<f64>> = funcs.iter().map(|&b| data.column(b)).collect();
        let scale = cols.iter_mut().map(|c| normalise(c)).collect();
        let qr = PivotedQr::factor(cols, RANK_RTOL);
        let mut qtb = data.rhs();
        qr.apply_qt(&mut qtb);
        FixedBlock {
            funcs,
            scale,
            qr,
            qtb,
        }
    }
}

/// One linear fit: the basis functions and their weights.
struct LinearFit {
    m: usize,
    funcs: Vec<BasisFn>,
    coeffs: Vec<f64>,
    /// Weights of the M Debye terms, for μ_c.
    chi: Vec<f64>,
}

/// Fit the fixed block plus `m` Debye terms: block QR, eliminating the fixed columns first.
fn fit_with(data: &Data, fixed: &FixedBlock, taus: &[f64]) -> LinearFit {
    let r = fixed.qr.rank();
    let debye: Vec<BasisFn> = taus.iter().map(|&tau| BasisFn::Debye { tau }).collect();
    let mut cols: Vec<Vec<f64>> = debye.iter().map(|&b| data.column(b)).collect();
    let scale: Vec<f64> = cols.iter_mut().map(|c| normalise(c)).collect();
    for c in cols.iter_mut() {
        fixed.qr.apply_qt(c);
    }
    // The Debye weights from the part of the problem orthogonal to the fixed columns ...
    let bottom: Vec<Vec<f64>> = cols.iter().map(|c| c[r..].to_vec()).collect();
    let qr_d = PivotedQr::factor(bottom, RANK_RTOL);
    let mut c_bottom = fixed.qtb[r..].to_vec();
    qr_d.apply_qt(&mut c_bottom);
    let x_d = qr_d.solve_triangular(&c_bottom);
    // ... then the fixed weights by back-substitution.
    let c_top: Vec<f64> = (0..r)
        .map(|i| fixed.qtb[i] - cols.iter().zip(&x_d).map(|(c, x)| c[i] * x).sum::<f64>())
        .collect();
    let x_f = fixed.qr.solve_triangular(&c_top);
    let chi: Vec<f64> = x_d.iter().zip(&scale).map(|(x, s)| x * s).collect();
    let mut coeffs: Vec<f64> = x_f.iter().zip(&fixed.scale).map(|(x, s)| x * s).collect();
    coeffs.extend_from_slice(&chi);
    let mut funcs = fixed.funcs.clone();
    funcs.extend(debye);
    LinearFit {
        m: taus.len(),
        funcs,
        coeffs,
        chi,
    }
}

impl LinearFit {
    fn mu_c(&self) -> f64 {
        let pos: f64 = self
            .chi
            .iter()
            .filter(|c| **c >= 0.0)
            .map(|c| c.abs())
            .sum();
        let neg: f64 = self.chi.iter().filter(|c| **c < 0.0).map(|c| c.abs()).sum();
        // All weights negative is the extreme of over-fitting; kept finite for JSON.
        (1.0 - neg / pos.max(f64::MIN_POSITIVE)).max(MU_C_FLOOR)
    }
    fn value(&self, f_hz: f64) -> C64 {
        self.funcs
            .iter()
            .zip(&self.coeffs)
            .map(|(b, c)| b.value(f_hz) * c)
            .sum()
    }
}

/// Residual statistics of one fit.
struct Scored {
    fit: LinearFit,
    fitted: Vec<C64>,
    residuals: Vec<C64>,
    rms: f64,
    max: f64,
    drift: f64,
}

impl Scored {
    fn new(data: &Data, fit: LinearFit) -> Scored {
        let fitted: Vec<C64> = data.freq_hz.iter().map(|&f| fit.value(f)).collect();
        let residuals: Vec<C64> = fitted
            .iter()
            .zip(&data.mu)
            .zip(&data.weight)
            .map(|((y, m), w)| (y - m) * w)
            .collect();
        let n = residuals.len() as f64;
        let rms = (residuals.iter().map(|r| r.norm_sqr()).sum::<f64>() / (2.0 * n)).sqrt();
        let max = residuals.iter().map(|r| r.norm()).fold(0.0, f64::max);
        let drift = drift(&residuals);
        Scored {
            fit,
            fitted,
            residuals,
            rms,
            max,
            drift,
        }
    }
    fn passes(&self) -> bool {
        self.rms <= KK_RESIDUAL_LIMIT && self.drift <= KK_RESIDUAL_LIMIT
    }
    /// Ordering for "better": passing first, then lower RMS.
    fn better_than(&self, other: &Scored) -> bool {
        (self.passes(), -self.rms) > (other.passes(), -other.rms)
    }
}

/// Largest moving average (real and imaginary parts separately) of the residuals: the
/// systematic part that noise does not explain.
fn drift(res: &[C64]) -> f64 {
    let n = res.len();
    let w = ((n as f64 * DRIFT_WINDOW_FRACTION).round() as usize).clamp(5.min(n), n.max(1));
    let mut worst = 0.0f64;
    let (mut sr, mut si) = (0.0, 0.0);
    for (i, r) in res.iter().enumerate() {
        sr += r.re;
        si += r.im;
        if i >= w {
            sr -= res[i - w].re;
            si -= res[i - w].im;
        }
        if i + 1 >= w {
            worst = worst.max((sr / w as f64).abs()).max((si / w as f64).abs());
        }
    }
    worst
}

/// Lin-KK on the raised-M schedule for one basis.
fn run_basis(data: &Data, basis: KkBasis, m_max: usize) -> Scored {
    let (f_lo, f_hi) = (data.freq_hz[0], data.freq_hz[data.freq_hz.len() - 1]);
    let fit_data = data.thinned(FIT_POINTS);
    let mut funcs = vec![BasisFn::Constant];
    if basis == KkBasis::RelaxationAndResonance {
        for &damping in &RESONANCE_DAMPINGS {
            let n_res = ((f_hi / f_lo).log10() * RESONANCE_DENSITY / damping).ceil() as usize + 1;
            funcs.extend(
                log_freqs(n_res, f_lo, f_hi)
                    .into_iter()
                    .map(|f_hz| BasisFn::Resonance { f_hz, damping }),
            );
        }
    }
    let fixed = FixedBlock::new(&fit_data, funcs);
    let (tau_lo, tau_hi) = (1.0 / (2.0 * PI * f_hi), 1.0 / (2.0 * PI * f_lo));
    let fit_m = |m: usize| fit_with(&fit_data, &fixed, &log_freqs(m, tau_lo, tau_hi));
    // Raise M until μ_c drops below the limit; only that fit is evaluated at every point.
    let first = (1..=m_max)
        .map(fit_m)
        .find(|f| f.mu_c() < MU_C_LIMIT)
        .unwrap_or_else(|| fit_m(m_max));
    let chosen = Scored::new(data, first);
    if chosen.passes() || chosen.fit.m == m_max {
        return chosen;
    }
    let densest = Scored::new(data, fit_m(m_max));
    if densest.better_than(&chosen) {
        densest
    } else {
        chosen
    }
}

/// Check that the data can be used: enough points, increasing positive frequencies, finite,
/// non-zero μ (the weights are 1/|μ|).
fn validate(freq_hz: &[f64], mu: &[C64]) -> Result<(), FitError> {
    let fail = |m: String, hint: &str| Err(FitError(Diagnostic::new(m).hint(hint.to_string())));
    if freq_hz.len() != mu.len() {
        return fail(
            format!(
                "{} frequencies but {} permeability values",
                freq_hz.len(),
                mu.len()
            ),
            "this is a bug in the caller",
        );
    }
    if freq_hz.len() < MIN_POINTS {
        return fail(
            format!(
                "the Kramers–Kronig check needs at least {MIN_POINTS} frequencies, got {}",
                freq_hz.len()
            ),
            "measure more points or widen the valid band",
        );
    }
    if let Some(i) = (0..freq_hz.len()).find(|&i| {
        !(freq_hz[i] > 0.0 && freq_hz[i].is_finite()) || (i > 0 && freq_hz[i] <= freq_hz[i - 1])
    }) {
        return fail(
            format!(
                "frequency #{} ({} Hz) is not positive and increasing",
                i + 1,
                freq_hz[i]
            ),
            "sort the sweep and drop repeated frequencies",
        );
    }
    if let Some(i) = mu
        .iter()
        .position(|m| !(m.re.is_finite() && m.im.is_finite() && m.norm() > 0.0))
    {
        return fail(
            format!("permeability at {} Hz is {}", freq_hz[i], mu[i]),
            "restrict the check to the valid band",
        );
    }
    Ok(())
}

/// Lin-KK check of the measured spectrum (`mu` = μ′ − jμ″ at `freq_hz`, increasing).
pub fn lin_kk(freq_hz: &[f64], mu: &[C64]) -> Result<KkOutcome, FitError> {
    validate(freq_hz, mu)?;
    let data = Data::new(freq_hz, mu);
    let decades = (freq_hz[freq_hz.len() - 1] / freq_hz[0]).log10();
    // Leave at least as many real values as weights, with room for the resonance grid.
    let m_max = ((MAX_PER_DECADE * decades).ceil() as usize + 1)
        .clamp(1, (freq_hz.len().min(FIT_POINTS) / 2).max(1));
    let mut best = (
        KkBasis::Relaxation,
        run_basis(&data, KkBasis::Relaxation, m_max),
    );
    if !best.1.passes() {
        let with_res = run_basis(&data, KkBasis::RelaxationAndResonance, m_max);
        if with_res.better_than(&best.1) {
            best = (KkBasis::RelaxationAndResonance, with_res);
        }
    }
    let (basis, s) = best;
    let report = KkReport {
        pass: s.passes(),
        residual_rms: s.rms,
        residual_max: s.max,
        m: s.fit.m,
        mu_c: s.fit.mu_c(),
        drift_max: s.drift,
        basis: basis.name().to_string(),
    };
    Ok(KkOutcome {
        report,
        basis,
        fitted: s.fitted,
        residuals: s.residuals,
    })
}

/// μ′(f) − μ∞ from μ″ by the Kramers–Kronig relation
/// μ′(ω) − μ∞ = (2/π)·P∫₀^∞ ω′μ″(ω′)/(ω′² − ω²) dω′ (e^{+jωt}, μ = μ′ − jμ″; Landau & Lifshitz,
/// Electrodynamics of Continuous Media, §123), evaluated on the measured grid only.
///
/// With s = ln ω′ the integrand is ω′²μ″(ω′)/(ω′² − ω²) ds; subtracting ω²μ″(ω)/(ω′² − ω²),
/// whose principal value over [ω_a, ω_b] is ½·ln|1 − ω²/ω′²| between the limits, leaves a
/// regular integrand for the trapezoid rule (its value at ω′ = ω is μ″ + ½·ω·dμ″/dω). The band
/// ends truncate the integral: trust the result a decade or more inside them.
pub fn mu_prime_from_loss(freq_hz: &[f64], mu_dd: &[f64]) -> Vec<f64> {
    let n = freq_hz.len();
    if n < 3 {
        return vec![f64::NAN; n];
    }
    let s: Vec<f64> = freq_hz.iter().map(|f| f.ln()).collect();
    let slope = |i: usize| {
        let (a, b) = (i.saturating_sub(1), (i + 1).min(n - 1));
        (mu_dd[b] - mu_dd[a]) / (s[b] - s[a])
    };
    let (wa, wb) = (freq_hz[0], freq_hz[n - 1]);
    (0..n)
        .map(|i| {
            let w = freq_hz[i];
            let h = |k: usize| {
                if k == i {
                    mu_dd[i] + 0.5 * slope(i)
                } else {
                    let wk2 = freq_hz[k] * freq_hz[k];
                    (wk2 * mu_dd[k] - w * w * mu_dd[i]) / (wk2 - w * w)
                }
            };
            let integral: f64 = (1..n)
                .map(|k| 0.5 * (h(k - 1) + h(k)) * (s[k] - s[k - 1]))
                .sum();
            let edge = |we: f64| (1.0 - (w / we).powi(2)).abs().ln();
            let singular = if i == 0 || i == n - 1 {
                0.0
            } else {
                0.5 * mu_dd[i] * (edge(wb) - edge(wa))
            };
            2.0 / PI * (integral + singular)
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::fit::synthetic::{log_freqs, spectrum, with_mu_prime_bump, with_noise};
    use crate::model::{Model, Term};

    #[test]
    fn causal_relaxation_spectra_pass_with_the_relaxation_basis() {
        let f = log_freqs(401, 1e5, 1e9);
        for (i, m) in [
            Model {
                mu_inf: 1.0,
                terms: vec![Term::debye(800.0, 5e6)],
            },
            Model {
                mu_inf: 1.0,
                terms: vec![Term::cole_cole(800.0, 5e6, 0.7)],
            },
            Model {
                mu_inf: 1.0,
                terms: vec![Term::havriliak_negami(800.0, 5e6, 0.7, 0.6)],
            },
        ]
        .iter()
        .enumerate()
        {
            let out = lin_kk(&f, &with_noise(&spectrum(m, &f), 0.002, 7 + i as u64)).unwrap();
            assert!(out.report.pass, "{}: {:?}", m.spec(), out.report);
            assert_eq!(out.basis, KkBasis::Relaxation, "{}", m.spec());
        }
    }

    /// Spin relaxation + a sharp resonance (PHYSICS.md §4) is causal; μ′ overshoots before the
    /// resonance and falls below μ∞ above it, which the relaxation basis alone cannot follow.
    #[test]
    fn relaxation_plus_resonance_passes_with_the_resonance_basis() {
        let f = log_freqs(401, 1e5, 1e9);
        let m = Model {
            mu_inf: 1.0,
            terms: vec![Term::debye(500.0, 30e6), Term::lorentz(300.0, 50e6, 0.3)],
        };
        let out = lin_kk(&f, &with_noise(&spectrum(&m, &f), 0.002, 3)).unwrap();
        assert!(out.report.pass, "{:?}", out.report);
        assert_eq!(out.basis, KkBasis::RelaxationAndResonance);
    }

    /// The check must be able to fail: the same spectra with a non-causal μ′ bump of 5 %.
    #[test]
    fn non_causal_artefact_fails_lin_kk() {
        let f = log_freqs(401, 1e5, 1e9);
        for m in [
            Model {
                mu_inf: 1.0,
                terms: vec![Term::debye(800.0, 5e6)],
            },
            Model {
                mu_inf: 1.0,
                terms: vec![Term::debye(500.0, 30e6), Term::lorentz(300.0, 5e6, 0.8)],
            },
        ] {
            let noisy = with_noise(&spectrum(&m, &f), 0.002, 11);
            let out = lin_kk(&f, &with_mu_prime_bump(&f, &noisy, 0.05, 1e7, 0.2)).unwrap();
            assert!(!out.report.pass, "{}: {:?}", m.spec(), out.report);
            assert!(out.report.drift_max > KK_RESIDUAL_LIMIT, "{:?}", out.report);
        }
    }

    /// μ_c starts at 1 (all weights positive) and M stops at the first value below 0.85
    /// unless that fit is under-resolved; either way μ_c is reported at the M used.
    #[test]
    fn reports_m_and_mu_c_of_the_chosen_fit() {
        let f = log_freqs(201, 1e5, 1e9);
        let m = Model {
            mu_inf: 1.0,
            terms: vec![Term::cole_cole(300.0, 2e6, 0.8)],
        };
        let out = lin_kk(&f, &with_noise(&spectrum(&m, &f), 0.001, 5)).unwrap();
        assert!(out.report.m >= 2 && out.report.m <= 29, "{:?}", out.report);
        assert!(out.report.mu_c <= 1.0);
        assert_eq!(out.fitted.len(), f.len());
    }

    /// Debye μ″ = Δμ·x/(1 + x²) transformed must give μ′ − μ∞ = Δμ/(1 + x²) (the Debye pair is
    /// the textbook Kramers–Kronig pair; Böttcher & Bordewijk, Theory of Electric Polarization
    /// II, §10). 8 decades either side of f_r keep the truncation error below 1e-3·Δμ inside.
    #[test]
    fn discrete_transform_recovers_debye_mu_prime_from_its_loss() {
        let (dm, fr) = (1000.0, 1e6);
        let f = log_freqs(1601, 1e-2, 1e14);
        let loss: Vec<f64> = f
            .iter()
            .map(|&x| dm * (x / fr) / (1.0 + (x / fr).powi(2)))
            .collect();
        let re = mu_prime_from_loss(&f, &loss);
        for (i, &x) in f.iter().enumerate() {
            if x < 1e2 || x > 1e10 {
                continue;
            }
            let exact = dm / (1.0 + (x / fr).powi(2));
            assert!(
                (re[i] - exact).abs() < 1e-3 * dm,
                "at {x} Hz: {} vs {exact}",
                re[i]
            );
        }
    }

    #[test]
    fn bad_input_is_an_error_not_a_panic() {
        assert!(lin_kk(&[1.0, 2.0], &[C64::new(1.0, 0.0); 2]).is_err());
        let f = log_freqs(20, 1e5, 1e8);
        let mut mu = vec![C64::new(10.0, -1.0); 20];
        mu[3] = C64::new(0.0, 0.0);
        assert!(lin_kk(&f, &mu).is_err());
        let mut f2 = f.clone();
        f2[5] = f2[4];
        assert!(lin_kk(&f2, &[C64::new(10.0, -1.0); 20]).is_err());
    }
}
