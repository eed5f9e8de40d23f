//! Kramers–Kronig validity of a measured spectrum (PHYSICS.md §5).
//!
//! **Lin-KK** (Schönleber, Klotz & Ivers-Tiffée, Electrochim. Acta 131, 20 (2014)): fit
//! μ∞ + Σₖ χₖ/(1 + jωτₖ) with τₖ log-spaced from 1/ω_max to 1/ω_min. Every basis function is
//! causal, so any combination of them is; what the combination cannot follow is the part of the
//! data that violates Kramers–Kronig. The fit is linear in (μ∞, χₖ): weighted least squares on
//! the real and imaginary parts with weights 1/|μ|, solved through the normal equations with
//! dependent columns dropped ([`super::lstsq::GramFactor`]; neighbouring basis columns are
//! nearly collinear). M is raised until μ_c = 1 − Σ_{χ<0}|χ|/Σ_{χ≥0}|χ| falls below
//! [`MU_C_LIMIT`] (the onset of over-fitting). The τ grids of the M tried are nested in the
//! densest one ([`MAX_PER_DECADE`] per decade): M − 1 runs over the divisors of the densest
//! grid's intervals, so one Gram matrix serves every M.
//!
//! Two departures from the paper, both because μ spectra are not impedance spectra:
//! - **Under-resolution.** μ of a ferrite spans three decades of magnitude, and at the M where
//!   μ_c first drops the basis may still be far too coarse to follow one clean relaxation. If
//!   that fit is not clearly within the limits, the densest basis is tried too and the better one
//!   kept. Basis functions stay inside the measured band, so a denser basis cannot absorb a
//!   non-causal artefact (the tests add one and check that it still fails).
//! - **Resonances.** A damped resonance has poles off the imaginary axis that no sum of Debye
//!   terms with real τ represents economically (μ′ may fall below μ∞). When the relaxation basis
//!   alone is not clearly within the limits, a coarser Debye grid ([`RESONANCE_STAGE_PER_DECADE`])
//!   is combined with up to [`MAX_RESONANCES`] damped-resonance functions
//!   1/(1 − (f/fₖ)² + j·d·f/fₖ) whose centres and dampings are fitted as well
//!   ([`super::kk_resonance`]; each starts from the grid resonance that best matches what is left
//!   to explain). They are causal like the Debye terms, stay inside the band and are no narrower
//!   than d = 0.05, so they cannot follow a feature of μ′ that has no counterpart in μ″. The
//!   report names the basis used.
//!
//! The linear fits are made on at most [`FIT_POINTS`] points thinned evenly from a dense sweep (a
//! few hundred points determine a few dozen weights, and resolve a resonance of d = 0.2 with
//! several points across its width); the chosen fit is then judged at every point.
//!
//! Pass: residual RMS and drift (largest moving average of the residuals over a window of
//! `DRIFT_WINDOW_FRACTION` of the points) both at most [`KK_RESIDUAL_LIMIT`].
//!
//! [`mu_prime_from_loss`] is the direct discrete transform μ″ → μ′ − μ∞ on a log grid, for
//! checking a loss curve against its real part without any basis.

use super::engine::thin_indices;
use super::kk_resonance::{self, Resonance, Weighted};
use super::lstsq::NormalEquations;
use super::report::KkReport;
use super::synthetic::log_freqs;
use super::FitError;
use crate::error::Diagnostic;
use crate::wide::wide;
use crate::C64;
use std::f64::consts::PI;

/// μ_c below which the Lin-KK basis starts to over-fit [S: Schönleber et al. 2014, c = 0.85].
pub const MU_C_LIMIT: f64 = 0.85;
/// μ_c reported when (almost) every weight is negative.
const MU_C_FLOOR: f64 = -1e6;
/// Relative residual (RMS and drift) up to which a spectrum passes [PHYSICS.md §5, "~1 %"].
pub const KK_RESIDUAL_LIMIT: f64 = 0.01;
/// Densest relaxation basis, per decade of the band.
const MAX_PER_DECADE: f64 = 7.0;
/// Debye grid beside fitted resonances, per decade: dense enough to follow a relaxation term
/// between its τ to the noise of the tests' spectra, coarse enough that the grid does not
/// compete with the resonances for the same shapes (denser grids left the resonance search in
/// worse optima on the benchmark lot of synthetic spin + wall sweeps).
const RESONANCE_STAGE_PER_DECADE: f64 = 3.0;
/// Most fitted resonances: one per resonance of the material, a second for a dimensional or
/// wall resonance beside it, or for what a coarse Debye grid leaves of a relaxation.
const MAX_RESONANCES: usize = 2;
/// Grid the starting resonances are picked from: dampings, and centres per decade × d (so that
/// neighbouring centres are a few line widths apart).
const SEED_DAMPINGS: [f64; 3] = [0.2, 0.5, 1.2];
const SEED_DENSITY: f64 = 2.0;
/// A fit whose RMS and drift on the thinned points are both within this fraction of the limit
/// is final; closer to the limit, the richer basis is tried as well (the verdict is taken on all
/// points, where a marginal fit may land on either side).
const CONFIRMED: f64 = 0.8;
/// Fewest frequencies Lin-KK is run on.
const MIN_POINTS: usize = 8;
/// Points the linear fits are made on (thinned evenly from denser sweeps).
const FIT_POINTS: usize = 200;
/// Moving-average window for the drift measure, as a fraction of the points (at least 5).
const DRIFT_WINDOW_FRACTION: f64 = 0.05;

/// The basis a Lin-KK fit used.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum KkBasis {
    /// μ∞ and Debye terms only (Schönleber et al. 2014).
    Relaxation,
    /// μ∞, Debye terms and fitted damped resonances.
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
    Resonance(Resonance),
}

impl BasisFn {
    /// (Re, Im) of the function at each frequency, added `coeff` times to (`re`, `im`).
    fn add_to(self, coeff: f64, freq_hz: &[f64], re: &mut [f64], im: &mut [f64]) {
        wide(
            #[inline(always)]
            || self.add_to_plain(coeff, freq_hz, re, im),
        )
    }

    #[inline(always)]
    fn add_to_plain(self, coeff: f64, freq_hz: &[f64], re: &mut [f64], im: &mut [f64]) {
        let points = freq_hz.iter().zip(re.iter_mut().zip(im.iter_mut()));
        match self {
            BasisFn::Constant => re.iter_mut().for_each(|r| *r += coeff),
            // 1/(1 + jωτ) = (1 − jωτ)/(1 + ω²τ²).
            BasisFn::Debye { tau } => {
                for (&f, (r, i)) in points {
                    let wt = 2.0 * PI * f * tau;
                    let s = coeff / (1.0 + wt * wt);
                    *r += s;
                    *i -= wt * s;
                }
            }
            BasisFn::Resonance(Resonance { f_hz: fk, damping }) => {
                for (&f, (r, i)) in points {
                    let x = f / fk;
                    let (dr, di) = (1.0 - x * x, damping * x);
                    let s = coeff / (dr * dr + di * di);
                    *r += dr * s;
                    *i -= di * s;
                }
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
            // √(re² + im²) rather than hypot: μ was checked finite and non-zero.
            weight: mu.iter().map(|m| 1.0 / m.norm_sqr().sqrt()).collect(),
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
    fn band(&self) -> (f64, f64) {
        (self.freq_hz[0], self.freq_hz[self.freq_hz.len() - 1])
    }
    /// A basis function as a weighted column: real parts of all frequencies, then imaginary.
    fn column(&self, b: BasisFn) -> Vec<f64> {
        let n = self.freq_hz.len();
        let mut col = vec![0.0; 2 * n];
        let (re, im) = col.split_at_mut(n);
        b.add_to(1.0, &self.freq_hz, re, im);
        for part in [re, im] {
            for (c, w) in part.iter_mut().zip(&self.weight) {
                *c *= w;
            }
        }
        col
    }
    /// The normal equations of the constant and Debye functions `funcs` (no resonance), in
    /// closed form: O(M·n) instead of the O(M²·n) of forming every product of columns.
    ///
    /// With φ_k = 1/(1 + jωτ_k), the product of two weighted columns is
    /// Σ w²·Re(φ_k·conj φ_l), and partial fractions give
    /// φ_k·conj φ_l = (τ_k·φ_k + τ_l·conj φ_l)/(τ_k + τ_l), so its real part is
    /// (τ_k·S_k + τ_l·S_l)/(τ_k + τ_l) with S_k = Σ w²·Re φ_k = Σ w²/(1 + ω²τ_k²) — a weighted
    /// mean of two positive sums, free of cancellation. The constant column w·(1, 0) gives
    /// Σ w² with itself and S_k with φ_k.
    fn relaxation_equations(&self, funcs: &[BasisFn]) -> Option<NormalEquations> {
        let w2: Vec<f64> = self.weight.iter().map(|w| w * w).collect();
        let rows: Vec<(Option<f64>, f64, f64)> = funcs
            .iter()
            .map(|&b| match b {
                BasisFn::Constant => Some((None, w2.iter().sum(), self.rhs_product(&w2, None))),
                BasisFn::Debye { tau } => {
                    let s = wide(
                        #[inline(always)]
                        || {
                            self.freq_hz
                                .iter()
                                .zip(&w2)
                                .map(|(&f, w2)| {
                                    let wt = 2.0 * PI * f * tau;
                                    w2 / (1.0 + wt * wt)
                                })
                                .sum()
                        },
                    );
                    Some((Some(tau), s, self.rhs_product(&w2, Some(tau))))
                }
                BasisFn::Resonance(_) => None,
            })
            .collect::<Option<_>>()?;
        let k = rows.len();
        let mut g = vec![0.0; k * k];
        for (i, &(ti, si, _)) in rows.iter().enumerate() {
            for (j, &(tj, sj, _)) in rows.iter().enumerate() {
                g[i * k + j] = match (ti, tj) {
                    (None, None) => si,
                    (None, Some(_)) => sj,
                    (Some(_), None) => si,
                    (Some(a), Some(b)) => (a * si + b * sj) / (a + b),
                };
            }
        }
        Some(NormalEquations::from_parts(
            g,
            rows.iter().map(|r| r.2).collect(),
        ))
    }

    /// Σ w²·Re(μ·conj φ) for the Debye function of `tau` (the constant 1 with `None`): the
    /// product of its weighted column with the right-hand side.
    fn rhs_product(&self, w2: &[f64], tau: Option<f64>) -> f64 {
        let terms = self.freq_hz.iter().zip(&self.mu).zip(w2);
        match tau {
            None => terms.map(|((_, m), w2)| w2 * m.re).sum(),
            // Re(μ·conj φ) = (μ′ − μ_im·ωτ)/(1 + ω²τ²) with φ = (1 − jωτ)/(1 + ω²τ²).
            Some(tau) => terms
                .map(|((&f, m), w2)| {
                    let wt = 2.0 * PI * f * tau;
                    w2 * (m.re - m.im * wt) / (1.0 + wt * wt)
                })
                .sum(),
        }
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

/// One linear fit: the basis functions and their weights.
#[derive(Debug, Clone)]
struct LinearFit {
    funcs: Vec<BasisFn>,
    coeffs: Vec<f64>,
}

impl LinearFit {
    /// Weights of the Debye terms, for M and μ_c.
    fn chi(&self) -> Vec<f64> {
        self.funcs
            .iter()
            .zip(&self.coeffs)
            .filter(|(b, _)| matches!(b, BasisFn::Debye { .. }))
            .map(|(_, c)| *c)
            .collect()
    }
    fn mu_c(&self) -> f64 {
        let chi = self.chi();
        let pos: f64 = chi.iter().filter(|c| **c >= 0.0).sum();
        let neg: f64 = chi.iter().filter(|c| **c < 0.0).map(|c| -c).sum();
        // All weights negative is the extreme of over-fitting; kept finite for JSON.
        (1.0 - neg / pos.max(f64::MIN_POSITIVE)).max(MU_C_FLOOR)
    }
    fn values(&self, freq_hz: &[f64]) -> Vec<C64> {
        let n = freq_hz.len();
        let (mut re, mut im) = (vec![0.0; n], vec![0.0; n]);
        for (b, &c) in self.funcs.iter().zip(&self.coeffs) {
            if c != 0.0 {
                b.add_to(c, freq_hz, &mut re, &mut im);
            }
        }
        re.into_iter()
            .zip(im)
            .map(|(r, i)| C64::new(r, i))
            .collect()
    }
}

/// A fit with its residual statistics on some data.
struct Scored {
    fit: LinearFit,
    basis: KkBasis,
    fitted: Vec<C64>,
    residuals: Vec<C64>,
    rms: f64,
    max: f64,
    drift: f64,
}

impl Scored {
    fn new(data: &Data, fit: LinearFit, basis: KkBasis) -> Scored {
        let fitted = fit.values(&data.freq_hz);
        let residuals: Vec<C64> = fitted
            .iter()
            .zip(&data.mu)
            .zip(&data.weight)
            .map(|((y, m), w)| (y - m) * w)
            .collect();
        let n = residuals.len() as f64;
        let rms = (residuals.iter().map(|r| r.norm_sqr()).sum::<f64>() / (2.0 * n)).sqrt();
        let max = residuals
            .iter()
            .map(|r| r.norm_sqr())
            .fold(0.0, f64::max)
            .sqrt();
        let drift = drift(&residuals);
        Scored {
            fit,
            basis,
            fitted,
            residuals,
            rms,
            max,
            drift,
        }
    }
    fn within(&self, fraction: f64) -> bool {
        let limit = fraction * KK_RESIDUAL_LIMIT;
        self.rms <= limit && self.drift <= limit
    }
    fn passes(&self) -> bool {
        self.within(1.0)
    }
    /// Ordering for "better": passing first, then lower RMS.
    fn better_than(&self, other: &Scored) -> bool {
        (self.passes(), -self.rms) > (other.passes(), -other.rms)
    }
    /// The weighted residual vector (real parts, then imaginary parts).
    fn residual_vector(&self) -> Vec<f64> {
        let re = self.residuals.iter().map(|r| r.re);
        re.chain(self.residuals.iter().map(|r| r.im)).collect()
    }
}

/// The better of two scored fits.
fn better(a: Scored, b: Scored) -> Scored {
    if b.better_than(&a) {
        b
    } else {
        a
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

/// Debye terms with τ log-spaced over the band, `count` of them.
fn debye_grid(band: (f64, f64), count: usize) -> Vec<BasisFn> {
    let (tau_lo, tau_hi) = (1.0 / (2.0 * PI * band.1), 1.0 / (2.0 * PI * band.0));
    log_freqs(count, tau_lo, tau_hi)
        .into_iter()
        .map(|tau| BasisFn::Debye { tau })
        .collect()
}

/// Most Debye terms the fit data allow, leaving at least as many real values as weights.
fn most_terms(data: &Data) -> usize {
    (data.freq_hz.len() / 2).max(2)
}

/// The relaxation basis on Schönleber's raised-M schedule (nested grids, see the module
/// header), then the densest grid unless the first fit with μ_c < [`MU_C_LIMIT`] is confirmed.
fn relaxation_stage(fit_data: &Data) -> Scored {
    let band = fit_data.band();
    let decades = (band.1 / band.0).log10();
    let intervals = ((MAX_PER_DECADE * decades).ceil() as usize).clamp(1, most_terms(fit_data) - 1);
    let mut funcs = vec![BasisFn::Constant];
    funcs.extend(debye_grid(band, intervals + 1));
    let eqs = fit_data
        .relaxation_equations(&funcs)
        .expect("constant and Debye functions only");
    let fit_m = |m: usize| {
        let step = intervals / (m - 1);
        let subset: Vec<usize> = std::iter::once(0)
            .chain((0..m).map(|k| 1 + k * step))
            .collect();
        let coeffs = eqs.solve(&subset);
        LinearFit {
            funcs: subset.iter().map(|&i| funcs[i]).collect(),
            coeffs,
        }
    };
    let densest = intervals + 1;
    let first = (2..densest)
        .filter(|m| intervals % (m - 1) == 0)
        .map(fit_m)
        .find(|f| f.mu_c() < MU_C_LIMIT)
        .unwrap_or_else(|| fit_m(densest));
    let scored = Scored::new(fit_data, first, KkBasis::Relaxation);
    if scored.within(CONFIRMED) || scored.fit.chi().len() == densest {
        return scored;
    }
    better(
        scored,
        Scored::new(fit_data, fit_m(densest), KkBasis::Relaxation),
    )
}

/// A coarse Debye grid plus up to [`MAX_RESONANCES`] fitted resonances, added one at a time
/// until the fit is confirmed.
fn resonance_stage(fit_data: &Data) -> Scored {
    let band = fit_data.band();
    let decades = (band.1 / band.0).log10();
    let m = ((RESONANCE_STAGE_PER_DECADE * decades).ceil() as usize + 1).min(most_terms(fit_data));
    let mut base_funcs = vec![BasisFn::Constant];
    base_funcs.extend(debye_grid(band, m));
    let base: Vec<Vec<f64>> = base_funcs.iter().map(|&b| fit_data.column(b)).collect();
    let rhs = fit_data.rhs();
    let weighted = Weighted {
        freq_hz: &fit_data.freq_hz,
        weight: &fit_data.weight,
        base: &base,
        rhs: &rhs,
    };
    let base_eqs = fit_data
        .relaxation_equations(&base_funcs)
        .expect("constant and Debye functions only");
    let solve = |resonances: &[Resonance]| {
        let more: Vec<Vec<f64>> = resonances
            .iter()
            .map(|&r| kk_resonance::weighted_column(&weighted, r))
            .collect();
        let eqs = base_eqs.extended(&base, &more, &rhs);
        let coeffs = eqs.solve(&(0..eqs.len()).collect::<Vec<_>>());
        let mut funcs = base_funcs.clone();
        funcs.extend(resonances.iter().map(|&r| BasisFn::Resonance(r)));
        Scored::new(
            fit_data,
            LinearFit { funcs, coeffs },
            KkBasis::RelaxationAndResonance,
        )
    };
    let mut resonances: Vec<Resonance> = Vec::new();
    let mut best = solve(&resonances);
    for _ in 0..MAX_RESONANCES {
        let Some(seed) = kk_resonance::best_seed(
            &weighted,
            &best.residual_vector(),
            band,
            &SEED_DAMPINGS,
            SEED_DENSITY,
        ) else {
            break;
        };
        resonances.push(seed);
        resonances = kk_resonance::refine(&weighted, &base_eqs, band, &resonances);
        best = better(best, solve(&resonances));
        if best.within(CONFIRMED) {
            break;
        }
    }
    best
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
        .position(|m| !(m.re.is_finite() && m.im.is_finite() && m.norm_sqr() > 0.0))
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
    let fit_data = data.thinned(FIT_POINTS);
    let mut chosen = relaxation_stage(&fit_data);
    if !chosen.within(CONFIRMED) {
        chosen = better(chosen, resonance_stage(&fit_data));
    }
    // The verdict on every point.
    let s = Scored::new(&data, chosen.fit, chosen.basis);
    let report = KkReport {
        pass: s.passes(),
        residual_rms: s.rms,
        residual_max: s.max,
        m: s.fit.chi().len(),
        mu_c: s.fit.mu_c(),
        drift_max: s.drift,
        basis: s.basis.name().to_string(),
    };
    Ok(KkOutcome {
        report,
        basis: s.basis,
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

    /// Spin + wall sweeps of the benchmark lot (damping 0.2–1.5, noise 0.5 %) and a spectrum
    /// with two resonances are sums of causal terms (PHYSICS.md §4), so they must pass.
    #[test]
    fn benchmark_sweeps_and_two_resonances_pass() {
        for s in crate::fit::synthetic::debye_lorentz_lot(24, 1601, 0.005, 1) {
            let out = lin_kk(&s.freq_hz, &s.mu).unwrap();
            assert!(out.report.pass, "{}: {:?}", s.truth.spec(), out.report);
        }
        let f = log_freqs(801, 1e5, 1e9);
        let m = Model {
            mu_inf: 1.0,
            terms: vec![
                Term::debye(400.0, 3e6),
                Term::lorentz(150.0, 2e7, 0.3),
                Term::lorentz(40.0, 3e8, 0.6),
            ],
        };
        let out = lin_kk(&f, &with_noise(&spectrum(&m, &f), 0.003, 9)).unwrap();
        assert!(out.report.pass, "{:?}", out.report);
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
            // Anywhere in the band, also where the fitted resonances could be placed on it.
            for f0 in [1e6, 1e7, 1e8] {
                let out = lin_kk(&f, &with_mu_prime_bump(&f, &noisy, 0.05, f0, 0.2)).unwrap();
                assert!(!out.report.pass, "{} at {f0}: {:?}", m.spec(), out.report);
                assert!(out.report.drift_max > KK_RESIDUAL_LIMIT, "{:?}", out.report);
            }
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

    /// The closed-form normal equations of the relaxation basis equal those formed from the
    /// weighted columns product by product (the partial-fraction identity is exact algebra;
    /// only rounding differs), on a noisy spin + wall spectrum with a constant and 29 τ.
    #[test]
    fn closed_form_relaxation_equations_match_the_column_products() {
        let truth = Model {
            mu_inf: 1.0,
            terms: vec![Term::debye(800.0, 3e6), Term::lorentz(60.0, 80e6, 0.6)],
        };
        let f = log_freqs(400, 1e5, 1e9);
        let data = Data::new(&f, &with_noise(&spectrum(&truth, &f), 0.005, 8));
        let mut funcs = vec![BasisFn::Constant];
        funcs.extend(debye_grid(data.band(), 29));
        let closed = data.relaxation_equations(&funcs).unwrap();
        let cols: Vec<Vec<f64>> = funcs.iter().map(|&b| data.column(b)).collect();
        let direct = NormalEquations::new(&cols, &data.rhs());
        let close = |a: &[f64], b: &[f64]| {
            a.iter()
                .zip(b)
                .all(|(x, y)| (x - y).abs() <= 1e-12 * x.abs().max(y.abs()))
        };
        assert!(close(closed.gram(), direct.gram()));
        assert!(close(
            closed.products_with_rhs(),
            direct.products_with_rhs()
        ));
        let resonance = BasisFn::Resonance(Resonance {
            f_hz: 1e7,
            damping: 0.5,
        });
        assert!(data
            .relaxation_equations(&[BasisFn::Constant, resonance])
            .is_none());
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
