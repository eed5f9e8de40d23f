//! The fit itself: multi-start Levenberg–Marquardt on the relative complex residuals, the
//! uncertainty of the optimum, the statistics that compare models, and model choice by BIC.
//!
//! - **Multi-start.** [`super::start::starts`] reads several plausible starts from the data;
//!   each is run to convergence and the lowest cost wins, so a spin + wall spectrum does not stop
//!   in the local minimum its first reading leads to.
//! - **Uncertainty** (issue: fitting engine, item 5). C_int = s²(JᵀJ)⁻¹ at the optimum in the
//!   solver's transformed coordinates, s² = 2·cost/(m − p); mapped to model units by the delta
//!   method C = G·C_int·G with G = diag(∂external/∂internal), which equals s²(J_extᵀJ_ext)⁻¹.
//!   When an exponent sits on its bound (α or β → 1, the Debye limit) its column vanishes and
//!   the covariance of the others is computed without it; its standard error is then not given.
//! - **Statistics.** m = points = 2 × frequencies real residuals, RSS = Σr² = 2·cost, p = free
//!   parameters; rms_rel = √(RSS/m); max_rel = max |μ_model − μ_meas|/|μ_meas|;
//!   chi2_reduced = RSS/(m − p) (the residuals are relative errors with unknown σ, so this is the
//!   variance s² of a relative residual, not a χ² in units of a stated σ);
//!   AIC = m·ln(RSS/m) + 2p and BIC = m·ln(RSS/m) + p·ln m (Gaussian likelihood with σ estimated,
//!   constants dropped; Schwarz, Ann. Statist. 6, 461 (1978)).

use super::lm::{covariance, minimize, LmConfig, LmOutcome};
use super::problem::MuProblem;
use super::report::{FitStats, RunnerUp};
use super::screen;
use super::serial;
use super::start;
use super::transform::Transform;
use super::FitError;
use crate::error::Diagnostic;
use crate::model::{Model, TermKind};
use crate::C64;
use ndarray::{Array1, Array2};
use rayon::prelude::*;

/// An exponent whose logistic slope ∂α/∂u is below this is on its bound: a change of the
/// solver's coordinate no longer moves it (α > 0.9999).
const PINNED_SLOPE: f64 = 1e-4;
/// A term whose f_r lies this many decades outside the fitted band is reported as poorly determined.
const OUTSIDE_BAND_DECADES: f64 = 1.0;
/// ΔBIC above which the evidence for the lower-BIC model counts as very strong [S: Kass &
/// Raftery, J. Am. Stat. Assoc. 90, 773 (1995), §3.2: 2–6 positive, 6–10 strong, > 10 very strong].
pub const BIC_VERY_STRONG: f64 = 10.0;
/// Starts read from the spectrum's features, and from the separable grid screen (plus the one
/// greedy build-up start).
const FEATURE_STARTS: usize = 3;
const GRID_STARTS: usize = 3;
/// Points kept for screening the starts, their looser tolerances, and how many screened optima
/// are run to convergence on all the data. Screening only ranks basins: 1e-5 picks the same
/// optima as 1e-7 on the 200-sweep bench lot in three quarters of the time (fewer points lose
/// the needle-sharp optimum the auto-choice tests rely on).
const SCREEN_POINTS: usize = 200;
const SCREEN_TOL: f64 = 1e-5;
const POLISHED: usize = 2;
/// A second screened optimum is polished too only if its screened cost is within this factor of
/// the best one's (the decimated data rank optima as the full data do, up to noise).
const CONTENDER_RATIO: f64 = 1.05;

/// How to fit.
#[derive(Debug, Clone, PartialEq)]
pub struct FitOptions {
    /// Fit μ∞ (otherwise it is held at [`FitOptions::mu_inf`]).
    pub free_mu_inf: bool,
    /// μ∞ when held, and its start when free (1: no magnetic response left far above the band).
    pub mu_inf: f64,
    pub lm: LmConfig,
    /// Most starts tried per model.
    pub max_starts: usize,
}

impl Default for FitOptions {
    fn default() -> Self {
        FitOptions {
            free_mu_inf: false,
            mu_inf: 1.0,
            lm: LmConfig::default(),
            max_starts: FEATURE_STARTS + GRID_STARTS + 1,
        }
    }
}

/// The best fit of one model family.
#[derive(Debug, Clone)]
pub struct FitOutcome {
    pub model: Model,
    pub free_mu_inf: bool,
    /// Labels of the parameters of [`Model::to_params`], e.g. `mu_inf`, `debye#1.f_hz`.
    pub labels: Vec<String>,
    /// Standard error of each parameter of [`Model::to_params`]; `None` when held fixed or not
    /// determined (on a bound, or the covariance is singular).
    pub stderr: Vec<Option<f64>>,
    /// Labels of the rows/columns of [`FitOutcome::correlation`] (the determined free parameters).
    pub correlation_labels: Vec<String>,
    pub correlation: Vec<Vec<f64>>,
    /// Covariance of the same parameters, in model units.
    pub covariance: Vec<Vec<f64>>,
    pub stats: FitStats,
    /// (μ_model − μ_meas)/|μ_meas| at each frequency.
    pub residuals: Vec<C64>,
    pub converged: bool,
    pub termination: String,
    /// Starts fitted, and which of them (0-based) gave this optimum, counted in the order they
    /// were tried: the quick starts (the first feature start, then the greedy build-up; see
    /// [`fit_model`]), then those of [`starts_for`] if the multi-start ran.
    pub starts_tried: usize,
    pub best_start: usize,
    /// Whether the multi-start ran (the quick starts left a systematic misfit or none existed).
    pub multi_start: bool,
    /// Fit-specific warnings (not converged, bound reached, poorly determined parameters).
    pub warnings: Vec<String>,
    /// The findings among `warnings` that block publishing the model as material data:
    /// parameters the data do not determine (their standard errors and correlations, and the
    /// term they belong to, would describe nothing).
    pub sanity: Vec<String>,
}

impl FitOutcome {
    /// The model's values at `freq_hz`.
    pub fn fitted(&self, freq_hz: &[f64]) -> Vec<C64> {
        freq_hz.iter().map(|&f| self.model.mu(f)).collect()
    }
}

/// Labels of the flat parameter vector: `mu_inf`, then `<kind>#<n>.<name>` with n from 1.
pub fn param_labels(kinds: &[TermKind]) -> Vec<String> {
    let mut out = vec!["mu_inf".to_string()];
    for (i, k) in kinds.iter().enumerate() {
        out.extend(
            k.param_names()
                .iter()
                .map(|n| format!("{}#{}.{}", k.name(), i + 1, n)),
        );
    }
    out
}

/// Fit `kinds` to `mu` (μ′ − jμ″ at `freq_hz`) from the data's own starts; the best optimum.
///
/// A dense sweep is first fitted from the most plausible starts alone ([`quick_fit`]: the first
/// feature start, else the greedy build-up, screened on the thinned data, then run on all of
/// it); if that fit's residuals are white ([`serial::is_white`]), no systematic misfit is left
/// for another start to remove and the multi-start is skipped. Otherwise the multi-start runs,
/// and the better of the two optima is kept.
pub fn fit_model(
    freq_hz: &[f64],
    mu: &[C64],
    kinds: &[TermKind],
    opts: &FitOptions,
) -> Result<FitOutcome, FitError> {
    let (tried, quick) = quick_fit(freq_hz, mu, kinds, opts);
    if let Some(q) = quick.as_ref().filter(|q| serial::is_white(&q.residuals)) {
        return Ok(q.clone());
    }
    let full = fit_all_starts(freq_hz, mu, kinds, opts)?;
    let starts_tried = tried + full.starts_tried;
    Ok(match quick {
        Some(q) if q.stats.cost < full.stats.cost => FitOutcome {
            starts_tried,
            multi_start: true,
            ..q
        },
        _ => FitOutcome {
            starts_tried,
            best_start: tried + full.best_start,
            multi_start: true,
            ..full
        },
    })
}

/// Fit `kinds` from every start of [`starts_for`]; the best optimum. Model choice compares
/// candidates by their likelihood, so each gets all starts: a fit can be free of systematic
/// misfit and still not be the lowest cost its family reaches.
pub fn fit_all_starts(
    freq_hz: &[f64],
    mu: &[C64],
    kinds: &[TermKind],
    opts: &FitOptions,
) -> Result<FitOutcome, FitError> {
    let starts = starts_for(freq_hz, mu, kinds, opts);
    fit_from_starts(freq_hz, mu, kinds, &starts, opts)
}

/// The fit from the most plausible starts alone, for sweeps of at least [`serial::MIN_POINTS`]
/// frequencies: the first start of [`start::starts`], then (only if that one fails) the greedy
/// build-up. Each is converged on the thinned data first, and the first whose residuals there
/// could be white ([`serial::could_be_white`]) is run on all of it — a fit left in the wrong
/// basin is told apart cheaply, and the next start or the multi-start takes over. Returns how
/// many starts were tried, and the fit if one was run on all the data.
fn quick_fit(
    freq_hz: &[f64],
    mu: &[C64],
    kinds: &[TermKind],
    opts: &FitOptions,
) -> (usize, Option<FitOutcome>) {
    if freq_hz.len() < serial::MIN_POINTS {
        return (0, None);
    }
    let (fs, ms) = thinned(freq_hz, mu, SCREEN_POINTS);
    let Ok(small) = MuProblem::new(
        fs.clone(),
        ms.clone(),
        kinds.to_vec(),
        opts.free_mu_inf,
        opts.mu_inf,
    ) else {
        return (0, None);
    };
    let cfg = LmConfig {
        ftol: QUICK_TOL,
        xtol: QUICK_TOL,
        gtol: QUICK_TOL,
        ..opts.lm.clone()
    };
    // Called in turn: the greedy build-up costs a few screens and is only wanted when the
    // first start fails.
    let primary = || {
        start::starts(&fs, &ms, kinds, opts.mu_inf)
            .into_iter()
            .next()
    };
    let greedy = || greedy_start(&fs, &ms, kinds, opts);
    let quick_starts: [&dyn Fn() -> Option<Model>; 2] = [&primary, &greedy];
    let mut tried = 0;
    for make in quick_starts {
        let Some(s) = make() else { continue };
        tried += 1;
        let Some(pre) = minimize(small.clone(), small.to_internal(&s), &cfg)
            .ok()
            .filter(|o| o.cost.is_finite())
        else {
            continue;
        };
        let model = small.to_model(&pre.params);
        if !serial::could_be_white(&small.relative_errors(&model)) {
            continue;
        }
        let fit = fit_from_starts(freq_hz, mu, kinds, &[model], opts).ok();
        let which = tried - 1;
        return (
            tried,
            fit.map(|f| FitOutcome {
                starts_tried: tried,
                best_start: which,
                ..f
            }),
        );
    }
    (tried, None)
}

/// Tolerance of the quick starts' fits on the thinned data: converged, so that what its
/// residuals show is the basin's, not an unfinished walk (looser fits stopped in flat valleys
/// with residuals far from white, and the run on all the data then took up to 190 steps).
const QUICK_TOL: f64 = 1e-8;

/// The starts [`fit_model`] runs from, most plausible first: those read from the spectrum's
/// features, the greedy build-up, then the grid screen's (all read from the thinned data).
pub fn starts_for(
    freq_hz: &[f64],
    mu: &[C64],
    kinds: &[TermKind],
    opts: &FitOptions,
) -> Vec<Model> {
    let (fs, ms) = thinned(freq_hz, mu, SCREEN_POINTS);
    let mut starts = start::starts(&fs, &ms, kinds, opts.mu_inf);
    starts.truncate(FEATURE_STARTS);
    let more = greedy_start(&fs, &ms, kinds, opts)
        .into_iter()
        .chain(screen::grid_starts(
            &fs,
            &ms,
            kinds,
            opts.mu_inf,
            opts.free_mu_inf,
            GRID_STARTS,
        ));
    for s in more {
        start::push_distinct(&mut starts, s);
    }
    starts.truncate(opts.max_starts.max(1));
    starts
}

/// A start built term by term: place the term (of the kinds still to place) that best explains
/// the data together with those already placed, refine all placed terms by least squares on the
/// (decimated) data, repeat. A small term beside a large one is then looked for against the
/// large one's exact shape rather than a grid approximation of it.
fn greedy_start(
    freq_hz: &[f64],
    mu: &[C64],
    kinds: &[TermKind],
    opts: &FitOptions,
) -> Option<Model> {
    let cfg = screen_config(opts);
    let mut placed = Model {
        mu_inf: opts.mu_inf,
        terms: Vec::new(),
    };
    let mut left = kinds.to_vec();
    while !left.is_empty() {
        let mut tried: Vec<TermKind> = Vec::new();
        let mut best: Option<(usize, screen::Screened)> = None;
        for (i, &k) in left.iter().enumerate() {
            if tried.contains(&k) {
                continue;
            }
            tried.push(k);
            if let Some(s) = screen::best_extension(freq_hz, mu, &placed, k, opts.free_mu_inf) {
                if best.as_ref().map_or(true, |(_, b)| s.cost < b.cost) {
                    best = Some((i, s));
                }
            }
        }
        let (i, s) = best?;
        left.remove(i);
        let problem = MuProblem::new(
            freq_hz.to_vec(),
            mu.to_vec(),
            s.model.kinds(),
            opts.free_mu_inf,
            opts.mu_inf,
        )
        .ok()?;
        let out = minimize(problem.clone(), problem.to_internal(&s.model), &cfg).ok()?;
        placed = problem.to_model(&out.params);
    }
    // Back into the order of `kinds`: each kind takes the first placed term of that kind left.
    let mut pool = placed.terms;
    let terms = kinds
        .iter()
        .map(|&k| {
            pool.iter()
                .position(|t| t.kind == k)
                .map(|i| pool.remove(i))
        })
        .collect::<Option<Vec<_>>>()?;
    Some(Model {
        mu_inf: placed.mu_inf,
        terms,
    })
}

/// Solver settings for screening: the caller's, with looser tolerances.
fn screen_config(opts: &FitOptions) -> LmConfig {
    LmConfig {
        ftol: SCREEN_TOL,
        xtol: SCREEN_TOL,
        gtol: SCREEN_TOL,
        ..opts.lm.clone()
    }
}

/// Every k-th point of a sweep of `n` (and the last), about `most` of them: for work that
/// needs the shape of a dense sweep, not every point of it.
pub fn thin_indices(n: usize, most: usize) -> Vec<usize> {
    let step = n.div_ceil(most.max(1)).max(1);
    (0..n).filter(|i| i % step == 0 || *i + 1 == n).collect()
}

/// The data thinned to about `most` points (all of them if there are fewer).
pub fn thinned(freq_hz: &[f64], mu: &[C64], most: usize) -> (Vec<f64>, Vec<C64>) {
    thin_indices(freq_hz.len(), most)
        .into_iter()
        .map(|i| (freq_hz[i], mu[i]))
        .unzip()
}

/// Fit from given start models (all of `kinds`); the best optimum. With several starts, each is
/// first run on a decimated copy of the data (cheap, and it lands in the same basin); the best
/// [`POLISHED`] distinct optima are then run to convergence on all the data.
pub fn fit_from_starts(
    freq_hz: &[f64],
    mu: &[C64],
    kinds: &[TermKind],
    starts: &[Model],
    opts: &FitOptions,
) -> Result<FitOutcome, FitError> {
    if kinds.is_empty() || starts.is_empty() {
        return Err(FitError(
            Diagnostic::new("the model has no terms").hint("e.g. --model debye+lorentz"),
        ));
    }
    let problem = MuProblem::new(
        freq_hz.to_vec(),
        mu.to_vec(),
        kinds.to_vec(),
        opts.free_mu_inf,
        opts.mu_inf,
    )?;
    let (fs, ms) = thinned(freq_hz, mu, SCREEN_POINTS);
    // Screen on the decimated data when it is smaller; otherwise every start is polished.
    let mut polish: Vec<(usize, Model)> = starts.iter().cloned().enumerate().collect();
    if starts.len() > 1 && fs.len() < freq_hz.len() {
        let small = MuProblem::new(fs, ms, kinds.to_vec(), opts.free_mu_inf, opts.mu_inf)?;
        let cfg = screen_config(opts);
        let mut screened: Vec<(f64, usize, Model)> = starts
            .iter()
            .enumerate()
            .filter_map(|(i, s)| {
                minimize(small.clone(), small.to_internal(s), &cfg)
                    .ok()
                    .filter(|o| o.cost.is_finite())
                    .map(|o| (o.cost, i, small.to_model(&o.params)))
            })
            .collect();
        screened.sort_by(|a, b| a.0.total_cmp(&b.0));
        polish.clear();
        let best_cost = screened.first().map_or(0.0, |s| s.0);
        for (cost, i, m) in screened {
            let kept: Vec<Model> = polish.iter().map(|(_, p)| p.clone()).collect();
            // A distinct optimum is a contender only if its cost is close to the best one's.
            if polish.is_empty()
                || (start::is_new(&kept, &m) && cost <= CONTENDER_RATIO * best_cost)
            {
                polish.push((i, m));
            }
            if polish.len() == POLISHED {
                break;
            }
        }
        if polish.is_empty() {
            polish = starts.iter().cloned().enumerate().collect();
        }
    }
    let mut best: Option<(usize, LmOutcome)> = None;
    let mut last_err = None;
    for (i, s) in &polish {
        match minimize(problem.clone(), problem.to_internal(s), &opts.lm) {
            Ok(out) if out.cost.is_finite() => {
                if best.as_ref().map_or(true, |(_, b)| out.cost < b.cost) {
                    best = Some((*i, out));
                }
            }
            Ok(_) => {}
            Err(e) => last_err = Some(e),
        }
    }
    let Some((best_start, out)) = best else {
        return Err(last_err.unwrap_or_else(|| {
            FitError(Diagnostic::new(format!(
                "no start of '{}' gave a finite cost",
                spec_of(kinds)
            )))
        }));
    };
    Ok(finish(&problem, out, starts.len(), best_start))
}

fn spec_of(kinds: &[TermKind]) -> String {
    kinds.iter().map(|k| k.name()).collect::<Vec<_>>().join("+")
}

/// Statistics of a fit with `n_free` parameters and relative residuals `res`.
pub fn fit_stats(res: &[C64], n_free: usize, iterations: usize) -> FitStats {
    let points = 2 * res.len();
    let rss: f64 = res.iter().map(|r| r.norm_sqr()).sum();
    let m = points as f64;
    let log_term = m * (rss / m).max(f64::MIN_POSITIVE).ln();
    FitStats {
        cost: 0.5 * rss,
        rms_rel: (rss / m).sqrt(),
        // Largest |r| from the squares: hypot per point cost a tenth of a fit.
        max_rel: res.iter().map(|r| r.norm_sqr()).fold(0.0, f64::max).sqrt(),
        chi2_reduced: rss / points.saturating_sub(n_free).max(1) as f64,
        aic: log_term + 2.0 * n_free as f64,
        bic: log_term + n_free as f64 * m.ln(),
        points,
        iterations,
    }
}

/// Covariance of the determined parameters in model units: (indices into the internal vector,
/// matrix). Parameters on a bound are left out so the rest stay determined.
fn external_covariance(problem: &MuProblem, out: &LmOutcome) -> Option<(Vec<usize>, Array2<f64>)> {
    let n = problem.n_params();
    let slopes = problem.external_derivatives(&out.params);
    let names = problem.param_names();
    let keep: Vec<usize> = (0..n)
        .filter(|&i| !(Transform::of(names[i]) == Transform::Logistic && slopes[i] < PINNED_SLOPE))
        .collect();
    // Degrees of freedom count every fitted parameter, pinned or not.
    let cov_int = if keep.len() == n {
        covariance(&out.jacobian, out.cost, n)?
    } else {
        let j = Array2::from_shape_fn((out.jacobian.nrows(), keep.len()), |(r, c)| {
            out.jacobian[[r, keep[c]]]
        });
        covariance(&j, out.cost, n)?
    };
    let g: Array1<f64> = keep.iter().map(|&i| slopes[i]).collect();
    Some((
        keep,
        Array2::from_shape_fn(cov_int.dim(), |(a, b)| g[a] * cov_int[[a, b]] * g[b]),
    ))
}

fn finish(
    problem: &MuProblem,
    out: LmOutcome,
    starts_tried: usize,
    best_start: usize,
) -> FitOutcome {
    let model = problem.to_model(&out.params);
    let kinds = problem.kinds().to_vec();
    let labels = param_labels(&kinds);
    let index = problem.model_indices();
    let names = problem.param_names();
    let residuals = problem.relative_errors(&model);
    let stats = fit_stats(&residuals, problem.n_params(), out.iterations);
    let mut warnings = Vec::new();
    if !out.converged {
        warnings.push(format!(
            "the solver stopped without converging: {}",
            out.termination
        ));
    }
    let flat = model.to_params();
    let slopes = problem.external_derivatives(&out.params);
    for i in 0..problem.n_params() {
        if Transform::of(names[i]) == Transform::Logistic && slopes[i] < PINNED_SLOPE {
            warnings.push(format!(
                "{} = {:.6} is on its bound 1 (the data prefer the simpler limit of this term); its standard error is not given",
                labels[index[i]], flat[index[i]]
            ));
        }
    }
    let mut sanity = Vec::new();
    let mut stderr = vec![None; flat.len()];
    let (mut corr_labels, mut corr, mut cov_out) = (Vec::new(), Vec::new(), Vec::new());
    match external_covariance(problem, &out) {
        Some((keep, cov)) => {
            let sd: Vec<f64> = (0..keep.len()).map(|a| cov[[a, a]].max(0.0).sqrt()).collect();
            for (a, &i) in keep.iter().enumerate() {
                stderr[index[i]] = sd[a].is_finite().then_some(sd[a]);
                corr_labels.push(labels[index[i]].clone());
                corr.push(
                    (0..keep.len())
                        .map(|b| cov[[a, b]] / (sd[a] * sd[b]))
                        .map(|r| if r.is_finite() { r } else { 0.0 })
                        .collect(),
                );
                cov_out.push((0..keep.len()).map(|b| cov[[a, b]]).collect());
            }
        }
        None => sanity.push(
            "the covariance is singular: some parameters are not determined by the data (a term may be superfluous); \
             no standard errors are given"
                .to_string(),
        ),
    }
    let vague: Vec<String> = (0..flat.len())
        .filter_map(|k| {
            stderr[k]
                .filter(|sd| *sd > flat[k].abs())
                .map(|sd| format!("{} = {:.4e} ± {:.2e}", labels[k], flat[k], sd))
        })
        .collect();
    if !vague.is_empty() {
        sanity.push(format!(
            "not determined by the data (standard error larger than the value): {}; a simpler model may describe the data as well",
            vague.join(", ")
        ));
    }
    warnings.extend(sanity.iter().cloned());
    let (f_lo, f_hi) = (
        problem.freq_hz()[0],
        problem.freq_hz()[problem.freq_hz().len() - 1],
    );
    for (t, term) in model.terms.iter().enumerate() {
        let outside = (f_lo / term.f_hz).log10().max((term.f_hz / f_hi).log10());
        if outside > OUTSIDE_BAND_DECADES {
            warnings.push(format!(
                "{}#{}.f_hz = {:.4e} Hz lies {:.1} decades outside the fitted band {:.4e}–{:.4e} Hz; it is poorly determined",
                term.kind.name(),
                t + 1,
                term.f_hz,
                outside,
                f_lo,
                f_hi
            ));
        }
    }
    FitOutcome {
        model,
        free_mu_inf: problem.free_mu_inf(),
        labels,
        stderr,
        correlation_labels: corr_labels,
        correlation: corr,
        covariance: cov_out,
        stats,
        residuals,
        converged: out.converged,
        termination: out.termination,
        starts_tried,
        best_start,
        multi_start: false,
        warnings,
        sanity,
    }
}

/// One candidate of an automatic model choice.
#[derive(Debug, Clone)]
pub struct Candidate {
    pub spec: String,
    /// BIC of its best fit, or why it could not be fitted.
    pub bic: Result<f64, String>,
    /// Every parameter determined ([`all_determined`]).
    pub determined: bool,
    /// Every term describes something above the noise ([`negligible_terms`] finds none); a
    /// candidate with a term that does not is never chosen.
    pub terms_above_noise: bool,
}

/// The result of `--model auto`.
#[derive(Debug, Clone)]
pub struct AutoOutcome {
    pub best: FitOutcome,
    pub runner_up: Option<RunnerUp>,
    pub candidates: Vec<Candidate>,
}

/// The families `auto` tries: every single kind, each relaxation with a resonance, two
/// relaxations, two resonances, and the spin + wall triples most used for sintered ferrites.
pub fn auto_candidates() -> Vec<Vec<TermKind>> {
    use TermKind::*;
    let mut c: Vec<Vec<TermKind>> = TermKind::ALL.iter().map(|&k| vec![k]).collect();
    c.extend(
        [Debye, ColeCole, ColeDavidson, HavriliakNegami]
            .iter()
            .map(|&k| vec![k, Lorentz]),
    );
    c.push(vec![Debye, Debye]);
    c.push(vec![Lorentz, Lorentz]);
    c.push(vec![Debye, Debye, Lorentz]);
    c.push(vec![Debye, Lorentz, Lorentz]);
    c.push(vec![ColeCole, Lorentz, Lorentz]);
    c
}

/// Whether every fitted parameter has a standard error, no larger than its value.
pub fn all_determined(o: &FitOutcome) -> bool {
    let flat = o.model.to_params();
    (0..flat.len())
        .filter(|&k| k > 0 || o.free_mu_inf)
        .all(|k| o.stderr[k].is_some_and(|sd| sd <= flat[k].abs()))
}

/// The terms (0-based) of `o` that describe nothing above the noise: the rms of a term's share
/// of the measured μ over the fitted points, √(Σ|term(f_i)|²/|μ_i|² / 2n) — per component, as
/// `rms_rel` is — is below `noise_rel`, the rms relative misfit no candidate gets below (the
/// best one's `rms_rel`: noise, and what differs between samples). Such a term changes the
/// model by less than what no model describes: it fits an outlier or a wiggle of the noise (a
/// needle-sharp resonance between two points, a relaxation of Δμ ≈ 10⁻⁹), and BIC, which
/// counts only the cost it saves, can still rank it level with or above the simpler model. A
/// term that matters only where |μ| is small (a wall resonance in the tail of a large
/// relaxation) has a large share there and is kept, which a rule on Δμ alone (say < 1 % of the
/// total) would not do.
pub fn negligible_terms(o: &FitOutcome, freq_hz: &[f64], mu: &[C64], noise_rel: f64) -> Vec<usize> {
    let n = freq_hz.len().min(mu.len());
    if n == 0 {
        return Vec::new();
    }
    (0..o.model.terms.len())
        .filter(|&t| {
            let term = &o.model.terms[t];
            let share: f64 = (0..n)
                .map(|i| term.value(freq_hz[i]).norm_sqr() / mu[i].norm_sqr())
                .sum();
            (share / (2 * n) as f64).sqrt() < noise_rel
        })
        .collect()
}

/// Fit every candidate of [`auto_candidates`] (in parallel) and choose among them
/// ([`choose_model`]).
pub fn fit_auto(freq_hz: &[f64], mu: &[C64], opts: &FitOptions) -> Result<AutoOutcome, FitError> {
    let results: Vec<(Vec<TermKind>, Result<FitOutcome, FitError>)> = auto_candidates()
        .into_par_iter()
        .map(|k| {
            let r = fit_all_starts(freq_hz, mu, &k, opts);
            (k, r)
        })
        .collect();
    choose_model(results, freq_hz, mu)
}

/// The choice among fitted candidates (each family with its fit to `mu`, or why it failed): the
/// lowest BIC, with two exceptions. A candidate with a term below the noise
/// ([`negligible_terms`]) is never chosen: the simpler candidate without it describes the
/// same. And when the lowest-BIC candidate
/// has a parameter the data leave undetermined ([`all_determined`]) while a candidate whose
/// parameters are all determined comes within [`BIC_VERY_STRONG`] of it, the determined one is
/// kept. BIC is a large-sample approximation that assumes a well-defined optimum; a superfluous
/// term (a resonance parked above the band) can edge out a simpler model by a few units
/// without describing anything more. The runner-up is the best other candidate whose terms are
/// all above the noise, so its ΔBIC is negative when the lowest BIC was passed over for an
/// undetermined parameter.
pub fn choose_model(
    results: Vec<(Vec<TermKind>, Result<FitOutcome, FitError>)>,
    freq_hz: &[f64],
    mu: &[C64],
) -> Result<AutoOutcome, FitError> {
    let noise_rel = results
        .iter()
        .filter_map(|(_, r)| r.as_ref().ok())
        .map(|o| o.stats.rms_rel)
        .fold(f64::INFINITY, f64::min);
    let above_noise = |o: &FitOutcome| negligible_terms(o, freq_hz, mu, noise_rel).is_empty();
    let candidates: Vec<Candidate> = results
        .iter()
        .map(|(k, r)| Candidate {
            spec: spec_of(k),
            bic: r.as_ref().map(|o| o.stats.bic).map_err(|e| e.to_string()),
            determined: r.as_ref().is_ok_and(all_determined),
            terms_above_noise: r.as_ref().is_ok_and(above_noise),
        })
        .collect();
    let fitted: Vec<FitOutcome> = results.into_iter().filter_map(|(_, r)| r.ok()).collect();
    // Every candidate below the noise happens only when μ barely departs from μ∞ (nothing
    // magnetic was measured); then the usual choice among them all is made.
    let mut ok: Vec<FitOutcome> = if fitted.iter().any(above_noise) {
        fitted.into_iter().filter(above_noise).collect()
    } else {
        fitted
    };
    ok.sort_by(|a, b| a.stats.bic.total_cmp(&b.stats.bic));
    let Some(lowest) = ok.first().map(|o| o.stats.bic) else {
        let why = candidates
            .iter()
            .filter_map(|c| c.bic.as_ref().err())
            .next()
            .cloned()
            .unwrap_or_default();
        return Err(FitError(Diagnostic::new(format!(
            "no candidate model could be fitted: {why}"
        ))));
    };
    let pick = ok
        .iter()
        .position(|o| all_determined(o) && o.stats.bic - lowest <= BIC_VERY_STRONG)
        .unwrap_or(0);
    let best = ok.remove(pick);
    let runner_up = ok.first().map(|r| RunnerUp {
        model: r.model.spec(),
        delta_bic: r.stats.bic - best.stats.bic,
    });
    Ok(AutoOutcome {
        best,
        runner_up,
        candidates,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::fit::synthetic::{log_freqs, spectrum, with_noise};
    use crate::model::Term;

    /// The demo's kelpline material in shape: one Havriliak–Negami relaxation, nothing else.
    fn pure_hn() -> Model {
        Model {
            mu_inf: 1.0,
            terms: vec![Term::havriliak_negami(420.0, 5e6, 0.65, 0.7)],
        }
    }

    /// Three sweeps of `truth` on interleaved grids, merged, with 0.6 % noise below 1 MHz and
    /// 0.15 % above: a few-turn winding measured by reflection is noisiest at the low end, where
    /// its |Z| nears 1 Ω, the bottom of the method's good range (PHYSICS.md §3, common practice).
    fn three_sweeps(truth: &Model, seed: u64) -> (Vec<f64>, Vec<C64>) {
        let mut pts: Vec<(f64, C64)> = Vec::new();
        for (k, n) in [321usize, 301, 321].into_iter().enumerate() {
            let f = log_freqs(n, 1.5e5, 1e9);
            let clean = spectrum(truth, &f);
            let noisy = with_noise(&clean, 0.006, seed * 10 + k as u64);
            let quiet = with_noise(&clean, 0.0015, seed * 10 + k as u64);
            for i in 0..n {
                pts.push((f[i], if f[i] < 1e6 { noisy[i] } else { quiet[i] }));
            }
        }
        pts.sort_by(|a, b| a.0.total_cmp(&b.0));
        pts.into_iter().unzip()
    }

    /// Auto on a pure Havriliak–Negami spectrum names that family and does not add a resonance.
    /// On some of these draws the noise lets a needle-sharp lorentz term buy a lower BIC than
    /// the true family with every parameter determined (the rule that rules it out is tested on
    /// its own below); whether a draw does depends on the optimiser's path, not on the rule.
    #[test]
    fn auto_names_a_pure_havriliak_negami_spectrum() {
        for seed in [2, 12, 14] {
            let (f, mu) = three_sweeps(&pure_hn(), seed);
            let a = fit_auto(&f, &mu, &FitOptions::default()).unwrap();
            assert_eq!(a.best.model.spec(), "havriliak-negami", "seed {seed}");
            let ru = a.runner_up.unwrap();
            assert!(
                ru.delta_bic > 0.0 && ru.model != "havriliak-negami+lorentz",
                "{ru:?}"
            );
        }
    }

    /// The rule itself, on candidates built so that it alone decides: the Havriliak–Negami fit
    /// to a pure HN spectrum, and the same model plus a needle-sharp resonance on one frequency
    /// (|term| = 1 there against |μ| ≈ 10², a share of μ far below the misfit) that is given a
    /// BIC 50 lower and standard errors that make it "determined". The needle is never chosen,
    /// nor named runner-up.
    #[test]
    fn a_term_below_the_noise_is_never_chosen_however_low_its_bic() {
        use TermKind::{Debye, HavriliakNegami, Lorentz};
        let (f, mu) = three_sweeps(&pure_hn(), 2);
        let opts = FitOptions::default();
        let hn = fit_model(&f, &mu, &[HavriliakNegami], &opts).unwrap();
        let debye = fit_model(&f, &mu, &[Debye], &opts).unwrap();
        let mut model = hn.model.clone();
        model.terms.push(Term::lorentz(1e-4, f[500], 1e-4));
        let mut stderr = hn.stderr.clone();
        stderr.extend([Some(1e-5), Some(1.0), Some(1e-5)]);
        let needle = FitOutcome {
            model,
            stderr,
            stats: FitStats {
                bic: hn.stats.bic - 50.0,
                ..hn.stats.clone()
            },
            ..hn.clone()
        };
        assert!(all_determined(&needle));
        assert_eq!(negligible_terms(&needle, &f, &mu, hn.stats.rms_rel), [1]);
        let results = vec![
            (vec![HavriliakNegami], Ok(hn)),
            (vec![HavriliakNegami, Lorentz], Ok(needle)),
            (vec![Debye], Ok(debye)),
        ];
        let a = choose_model(results, &f, &mu).unwrap();
        let cand = |spec: &str| a.candidates.iter().find(|c| c.spec == spec).unwrap();
        let (hn, hn_l) = (cand("havriliak-negami"), cand("havriliak-negami+lorentz"));
        assert!(hn_l.bic.as_ref().unwrap() < hn.bic.as_ref().unwrap() && hn_l.determined);
        assert!(!hn_l.terms_above_noise && hn.terms_above_noise);
        assert_eq!(a.best.model.spec(), "havriliak-negami");
        assert_eq!(a.runner_up.unwrap().model, "debye");
    }

    /// The other side: a wall resonance of Δμ = 5 beside a relaxation of Δμ = 1000 is 0.5 % of
    /// the static permeability — a rule on Δμ alone would drop it — but it carries the spectrum
    /// above 200 MHz, where the relaxation has died away (PHYSICS.md §4, spin + wall). It stays,
    /// and auto names the true family.
    #[test]
    fn a_small_term_that_carries_part_of_the_band_is_kept() {
        let truth = Model {
            mu_inf: 1.0,
            terms: vec![Term::debye(1000.0, 1e6), Term::lorentz(5.0, 300e6, 0.5)],
        };
        let f = log_freqs(401, 1e5, 1e9);
        let mu = with_noise(&spectrum(&truth, &f), 0.003, 21);
        let o = fit_model(&f, &mu, &truth.kinds(), &FitOptions::default()).unwrap();
        assert!(negligible_terms(&o, &f, &mu, o.stats.rms_rel).is_empty());
        let a = fit_auto(&f, &mu, &FitOptions::default()).unwrap();
        assert_eq!(a.best.model.spec(), "debye+lorentz");
        // The same family forced onto the pure relaxation parks its resonance below the noise.
        let relaxation = Model {
            mu_inf: 1.0,
            terms: vec![Term::debye(1000.0, 1e6)],
        };
        let mu = with_noise(&spectrum(&relaxation, &f), 0.003, 21);
        let o = fit_model(&f, &mu, &truth.kinds(), &FitOptions::default()).unwrap();
        assert_eq!(
            negligible_terms(&o, &f, &mu, o.stats.rms_rel),
            [1],
            "{:?}",
            o.model
        );
    }
}
