//! Levenberg–Marquardt least squares as an argmin [`Solver`] (argmin 0.11 ships none).
//!
//! The problem is any argmin [`Operator`] (parameters → residual vector r) that is also a
//! [`Jacobian`] (→ ∂r/∂p, one row per residual) and a [`LeastSquares`] problem (which adds
//! evaluation into reused buffers); cost = ½Σr². Each iteration solves the damped
//! normal equations (JᵀJ + λ·diag(D²)) h = −Jᵀr with Marquardt's scaling D² = diag(JᵀJ), kept as
//! the running maximum over iterations as in MINPACK (Moré, "The Levenberg–Marquardt algorithm:
//! implementation and theory", Springer LNM 630, 1978), so the method is invariant to
//! the units of each parameter. λ follows Nielsen's gain-ratio update (Madsen, Nielsen &
//! Tingleff, "Methods for non-linear least squares problems", DTU 2004, §3.2): on success
//! λ ← λ·max(⅓, 1 − (2ρ − 1)³), ν ← 2; on failure λ ← λ·ν, ν ← 2ν.
//!
//! One argmin iteration is one accepted step (rejected trials inside it only raise λ), so
//! `max_iters` bounds Jacobian evaluations and observers see one line per accepted step with
//! `lambda`, `rho` and `trials`. Stopping tests, as in MINPACK's lmder:
//! - ftol: actual and predicted relative cost reductions both ≤ ftol;
//! - xtol: scaled step ‖D·h‖ ≤ xtol·(‖D·p‖ + xtol);
//! - gtol: largest cosine between r and a column of J ≤ gtol (or r = 0).
//!
//! Geodesic acceleration ([`LmConfig::geodesic`], off by default) adds a second-order correction
//! and, more importantly, rejects steps that leap beyond where the linear model holds; without it
//! plain LM walks from NIST BoxBOD's first start into the plateau b2 → ∞ (tests/nist_strd.rs).
//! It is off by default because on permeability spectra fitted from the fit engine's
//! data-driven starts the plain method reached the better optimum more often and in fewer
//! iterations, each without the extra residual evaluation (a lot of 200 synthetic 1601-point
//! spin + wall sweeps: 178 against 166 fits at the noise floor, 11.6 against 16.5 iterations
//! on average). Turn it on for problems with far-away plateaus or poor starts.
//!
//! Speed: the solver evaluates residuals and Jacobian together at each trial point and keeps
//! the buffers of the current and the trial point between iterations ([`LeastSquares`]), so a
//! fit of thousands of residuals allocates nothing per iteration; ‖Jh‖² and the gradient test
//! come from JᵀJ rather than from passes over the residuals.

use super::normal_equations::{add_jac_times, gram, jac_t_times, Cholesky};
use super::FitError;
use crate::error::Diagnostic;
use argmin::core::{
    Error, Executor, IterState, Jacobian, Operator, Problem, Solver, State, TerminationReason,
    TerminationStatus, KV,
};
use ndarray::{Array1, Array2};

/// The argmin state this solver runs on: parameters, gradient Jᵀr, Jacobian, residuals.
pub type LmState = IterState<Array1<f64>, Array1<f64>, Array2<f64>, (), Array1<f64>, f64>;

/// Settings of the Levenberg–Marquardt solver.
#[derive(Debug, Clone, PartialEq)]
pub struct LmConfig {
    /// Most accepted steps (argmin iterations).
    pub max_iters: u64,
    /// Relative cost-reduction tolerance.
    pub ftol: f64,
    /// Relative scaled step-size tolerance.
    pub xtol: f64,
    /// Gradient tolerance (cosine between residual and Jacobian columns).
    pub gtol: f64,
    /// Starting damping λ, relative to the Marquardt scaling diag(JᵀJ).
    pub initial_lambda: f64,
    /// Most consecutive rejected trial steps within one iteration before giving up.
    pub max_rejections: usize,
    /// Geodesic acceleration (Transtrum & Sethna, arXiv:1201.5885, 2012): add the second-order
    /// correction ½a to each step and reject steps whose correction is large against the step
    /// (2‖a‖/‖v‖ > [`GEODESIC_MAX_RATIO`]), i.e. where the linear model cannot be trusted. Costs
    /// one extra residual evaluation per trial step; keeps the solver out of far-away plateaus.
    /// Applied only to steps that promise at least [`GEODESIC_MIN_GAIN`] of the cost.
    pub geodesic: bool,
}

/// Largest accepted 2‖a‖/‖v‖ with geodesic acceleration (Transtrum & Sethna recommend ≤ 0.75).
pub const GEODESIC_MAX_RATIO: f64 = 0.75;
/// Geodesic acceleration is skipped for steps whose predicted cost reduction is below this
/// fraction of the cost: such steps are local (the minimum is near and the quadratic model good),
/// the correction would change them negligibly, and the probe evaluation is saved. Measured on
/// synthetic permeability spectra and the NIST problems of tests/nist_strd.rs: the same optima
/// and iteration counts as without the cut-off, at about 15 % less time.
pub const GEODESIC_MIN_GAIN: f64 = 1e-2;
/// Finite-difference step, along the step direction, for the second directional derivative
/// (Transtrum & Sethna's h = 0.1).
const GEODESIC_FD_STEP: f64 = 0.1;
/// A residual difference within this many ulps of the residual norm is rounding, not curvature.
const ROUNDING_NOISE: f64 = 100.0 * f64::EPSILON;

/// A least-squares problem for [`LevenbergMarquardt`]: an argmin [`Operator`] (parameters →
/// residuals r) and [`Jacobian`] (→ ∂r/∂p, one row per residual) that may also evaluate into
/// buffers the solver keeps from one iteration to the next. The provided methods call `apply`
/// and `jacobian`, so `impl LeastSquares for MyProblem {}` is all a small problem needs; a
/// problem with thousands of residuals overrides them, because allocating and zeroing a fresh
/// Jacobian every iteration then costs as much as computing it, and because its Jacobian can
/// reuse the arithmetic of its residuals.
///
/// The solver evaluates residuals and Jacobian together at each trial point and keeps the
/// Jacobian when the step is accepted (most are), so the residuals of an accepted point are
/// never computed twice.
pub trait LeastSquares:
    Operator<Param = Array1<f64>, Output = Array1<f64>>
    + Jacobian<Param = Array1<f64>, Jacobian = Array2<f64>>
{
    /// r(p) into `r`, which may be resized or replaced.
    fn residuals_into(&self, p: &Array1<f64>, r: &mut Array1<f64>) -> Result<(), Error> {
        *r = self.apply(p)?;
        Ok(())
    }

    /// r(p) into `r` and ∂r/∂p into `j`; either may be resized or replaced (`j` in either
    /// memory order).
    fn residuals_and_jacobian_into(
        &self,
        p: &Array1<f64>,
        r: &mut Array1<f64>,
        j: &mut Array2<f64>,
    ) -> Result<(), Error> {
        *r = self.apply(p)?;
        *j = self.jacobian(p)?;
        Ok(())
    }
}

impl Default for LmConfig {
    /// Tighter than MINPACK's usual 1e-8 defaults, because the uncertainty analysis wants the
    /// minimum itself, not its neighbourhood. ftol = 1e-10 stops once a step changed the cost
    /// by less than 1e-10 of itself, one or two iterations sooner than 1e-12. Near a well-posed
    /// minimum each step cuts the change by orders of magnitude, so the cost is then within
    /// ~1e-14 of its minimum and the parameters within ~1e-7 relative (synthetic spin + wall
    /// spectra at 0.5 % noise); even where convergence is slow (a term drifting out of the
    /// band) the cost stays within ~1e-10, and the parameters far inside the 1e-4 the scipy
    /// reference asks for (tests/nist_strd.rs). The NIST checks set their own tolerances.
    fn default() -> Self {
        LmConfig {
            max_iters: 500,
            ftol: 1e-10,
            xtol: 1e-12,
            gtol: 1e-12,
            initial_lambda: 1e-3,
            max_rejections: 40,
            geodesic: false,
        }
    }
}

/// The Levenberg–Marquardt solver; build with [`LevenbergMarquardt::new`], run with argmin's
/// `Executor` (or [`minimize`]).
#[derive(Debug, Clone)]
pub struct LevenbergMarquardt {
    cfg: LmConfig,
    lambda: f64,
    nu: f64,
    /// Running maximum of diag(JᵀJ): the Marquardt scaling D².
    scale: Array1<f64>,
    /// JᵀJ at the current point (kept with the Jacobian in the state).
    jtj: Array2<f64>,
    /// Why the solver stopped itself, once it has.
    stop: Option<(TerminationReason, String)>,
    /// Buffers for trial residuals, the next Jacobian and the geodesic probe, reused across
    /// iterations (an accepted point's buffers swap with the current point's).
    spare_r: Array1<f64>,
    spare_j: Array2<f64>,
    probe_r: Array1<f64>,
}

impl LevenbergMarquardt {
    pub fn new(cfg: LmConfig) -> Self {
        LevenbergMarquardt {
            lambda: cfg.initial_lambda,
            nu: 2.0,
            scale: Array1::zeros(0),
            jtj: Array2::zeros((0, 0)),
            stop: None,
            spare_r: Array1::zeros(0),
            spare_j: Array2::zeros((0, 0)),
            probe_r: Array1::zeros(0),
            cfg,
        }
    }

    /// The solver's own account of why it stopped (`None` if argmin stopped it, e.g. max_iters).
    pub fn stop_detail(&self) -> Option<&str> {
        self.stop.as_ref().map(|(_, s)| s.as_str())
    }

    fn converged(&mut self, why: String) {
        self.stop = Some((TerminationReason::SolverConverged, why));
    }

    /// Take in the Jacobian of a new current point: its JᵀJ and the scaling's running maximum.
    fn new_jacobian(&mut self, j: &Array2<f64>) {
        self.jtj = gram(j);
        if self.scale.len() != self.jtj.nrows() {
            self.scale = Array1::zeros(self.jtj.nrows());
        }
        for (s, d) in self.scale.iter_mut().zip(self.jtj.diag()) {
            *s = s.max(*d);
        }
    }

    /// The Marquardt scaling with columns that never moved the residuals given weight 1, as MINPACK does.
    fn damping_diag(&self) -> Array1<f64> {
        self.scale.mapv(|s| if s > 0.0 { s } else { 1.0 })
    }

    /// The cost reduction the linear model predicts for step `h`, with `d` = √diag(D²):
    /// L(0) − L(h) = ½‖Jh‖² + λ·‖Dh‖² when h solves the damped system, a form that is not
    /// negative (with acceleration, h ≈ v and it is used as is). ‖Jh‖² = hᵀ(JᵀJ)h needs no
    /// pass over the residuals.
    fn predicted_gain(&self, h: &Array1<f64>, d: &Array1<f64>) -> f64 {
        let dh = d * h;
        0.5 * h.dot(&self.jtj.dot(h)) + self.lambda * dh.dot(&dh)
    }

    /// Raise the damping after a rejected trial (Nielsen).
    fn reject(&mut self) {
        self.lambda *= self.nu;
        self.nu *= 2.0;
    }

    /// Lower the damping after an accepted step with gain ratio `rho` (Nielsen).
    fn accept(&mut self, rho: f64) {
        self.lambda *= (1.0 / 3.0f64).max(1.0 - (2.0 * rho - 1.0).powi(3));
        self.nu = 2.0;
    }

    /// Test the gradient condition at a point; records convergence if it holds.
    fn check_gradient(&mut self, pt: &Point) {
        let rnorm = norm(&pt.r);
        if rnorm == 0.0 {
            self.converged("residuals are exactly zero".into());
            return;
        }
        // Column norms from the diagonal of JᵀJ, which is the point's (see `new_jacobian`).
        let cos_max = self
            .jtj
            .diag()
            .iter()
            .zip(pt.g.iter())
            .map(|(jj, gi)| {
                let cn = jj.sqrt();
                if cn > 0.0 {
                    gi.abs() / (cn * rnorm)
                } else {
                    0.0
                }
            })
            .fold(0.0, f64::max);
        if cos_max <= self.cfg.gtol {
            self.converged(format!(
                "gradient test: max cosine between residuals and Jacobian columns {cos_max:.3e} <= gtol"
            ));
        }
    }

    /// The trial step from `pt` for the damped system factored in `chol`: the plain
    /// Levenberg–Marquardt step v, or v + ½a with geodesic acceleration. `None` when the
    /// acceleration says the step reaches too far for the linear model.
    fn trial_step<O: LeastSquares>(
        &mut self,
        problem: &mut Problem<O>,
        pt: &Point,
        chol: &Cholesky,
        d: &Array1<f64>,
    ) -> Result<Option<Array1<f64>>, Error> {
        let v = chol.solve(&pt.g.mapv(|x| -x));
        if !self.cfg.geodesic {
            return Ok(Some(v));
        }
        // Far from the minimum the acceleration guards long steps; near it, where the step
        // promises only a small fraction of the cost, the correction is negligible.
        if self.predicted_gain(&v, d) < GEODESIC_MIN_GAIN * pt.cost {
            return Ok(Some(v));
        }
        // The curvature of the residuals along v, c = r(p + t·v) − r − t·J·v ≈ ½t²·r_vv,
        // formed in the probe buffer.
        let t = GEODESIC_FD_STEP;
        residuals(problem, &(&pt.p + &(&v * t)), &mut self.probe_r)?;
        let scale = norm(&pt.r) + norm(&self.probe_r);
        self.probe_r -= &pt.r;
        add_jac_times(&mut self.probe_r, -t, &pt.j, &v);
        // Near the minimum the steps are so small that this difference is rounding noise,
        // not curvature: the plain step is then already exact to working precision.
        if norm(&self.probe_r) <= ROUNDING_NOISE * scale {
            return Ok(Some(v));
        }
        // a solves the damped system with −Jᵀr_vv on the right, r_vv = (2/t²)·c.
        let a = chol.solve(&(jac_t_times(&pt.j, &self.probe_r) * (-2.0 / (t * t))));
        let ratio = 2.0 * norm(&(d * &a)) / norm(&(d * &v));
        Ok((ratio <= GEODESIC_MAX_RATIO).then(|| v + a * 0.5))
    }
}

/// What the argmin state carries between iterations: the current point, its residuals,
/// Jacobian, gradient Jᵀr and cost.
struct Point {
    p: Array1<f64>,
    r: Array1<f64>,
    j: Array2<f64>,
    g: Array1<f64>,
    cost: f64,
}

impl Point {
    /// The point `p` with its residuals `r` and Jacobian `j`: checks their shapes and forms the
    /// gradient Jᵀr and the cost.
    fn new(p: Array1<f64>, r: Array1<f64>, j: Array2<f64>) -> Result<Point, Error> {
        if j.nrows() != r.len() || j.ncols() != p.len() {
            return Err(argmin_err(format!(
                "Jacobian is {}x{}, expected {}x{} (residuals x parameters)",
                j.nrows(),
                j.ncols(),
                r.len(),
                p.len()
            )));
        }
        let g = jac_t_times(&j, &r);
        let cost = half_sum_sq(&r);
        Ok(Point { p, r, j, g, cost })
    }

    fn take(state: &mut LmState) -> Result<Point, Error> {
        let missing = |what: &str| argmin_err(format!("Levenberg-Marquardt: no {what} in state"));
        Ok(Point {
            p: state.take_param().ok_or_else(|| missing("parameters"))?,
            r: state.take_residuals().ok_or_else(|| missing("residuals"))?,
            j: state.take_jacobian().ok_or_else(|| missing("Jacobian"))?,
            g: state.take_gradient().ok_or_else(|| missing("gradient"))?,
            cost: state.get_cost(),
        })
    }

    fn into_state(self, state: LmState) -> LmState {
        state
            .param(self.p)
            .residuals(self.r)
            .jacobian(self.j)
            .gradient(self.g)
            .cost(self.cost)
    }
}

/// r(p) into `r`, counted as argmin counts `apply`.
fn residuals<O: LeastSquares>(
    problem: &mut Problem<O>,
    p: &Array1<f64>,
    r: &mut Array1<f64>,
) -> Result<(), Error> {
    problem.problem("operator_count", |o| o.residuals_into(p, r))
}

/// r(p) into `r` and ∂r/∂p into `j`, counted as argmin counts `jacobian`.
fn residuals_and_jacobian<O: LeastSquares>(
    problem: &mut Problem<O>,
    p: &Array1<f64>,
    r: &mut Array1<f64>,
    j: &mut Array2<f64>,
) -> Result<(), Error> {
    problem.problem("jacobian_count", |o| o.residuals_and_jacobian_into(p, r, j))
}

fn norm(v: &Array1<f64>) -> f64 {
    v.dot(v).sqrt()
}

fn half_sum_sq(r: &Array1<f64>) -> f64 {
    let c = 0.5 * r.dot(r);
    if c.is_finite() {
        c
    } else {
        f64::INFINITY
    }
}

fn argmin_err(text: impl Into<String>) -> Error {
    Error::msg(text.into())
}

impl<O: LeastSquares> Solver<O, LmState> for LevenbergMarquardt {
    fn name(&self) -> &str {
        "Levenberg-Marquardt"
    }

    fn init(
        &mut self,
        problem: &mut Problem<O>,
        mut state: LmState,
    ) -> Result<(LmState, Option<KV>), Error> {
        let p = state
            .take_param()
            .ok_or_else(|| argmin_err("Levenberg-Marquardt needs a start point (state.param)"))?;
        if p.iter().any(|v| !v.is_finite()) {
            return Err(argmin_err(format!("start point is not finite: {p}")));
        }
        let (mut r, mut j) = (Array1::zeros(0), Array2::zeros((0, 0)));
        residuals_and_jacobian(problem, &p, &mut r, &mut j)?;
        if !half_sum_sq(&r).is_finite() {
            return Err(argmin_err("residuals at the start point are not finite"));
        }
        let pt = Point::new(p, r, j)?;
        self.lambda = self.cfg.initial_lambda;
        self.nu = 2.0;
        self.scale = Array1::zeros(0);
        self.stop = None;
        self.new_jacobian(&pt.j);
        self.check_gradient(&pt);
        Ok((pt.into_state(state), None))
    }

    fn next_iter(
        &mut self,
        problem: &mut Problem<O>,
        mut state: LmState,
    ) -> Result<(LmState, Option<KV>), Error> {
        let pt = Point::take(&mut state)?;
        let damp = self.damping_diag();
        let d = damp.mapv(f64::sqrt);
        let xnorm = norm(&(&d * &pt.p));
        for trials in 1..=self.cfg.max_rejections as u64 {
            let mut m = self.jtj.clone();
            for (i, di) in damp.iter().enumerate() {
                m[[i, i]] += self.lambda * di;
            }
            let Some(chol) = Cholesky::factor(&m) else {
                self.reject();
                continue;
            };
            let Some(h) = self.trial_step(problem, &pt, &chol, &d)? else {
                self.reject();
                continue;
            };
            let trial = &pt.p + &h;
            residuals_and_jacobian(problem, &trial, &mut self.spare_r, &mut self.spare_j)?;
            let cost_new = half_sum_sq(&self.spare_r);
            let predicted = self.predicted_gain(&h, &d);
            let actual = pt.cost - cost_new;
            let rho = if predicted > 0.0 {
                actual / predicted
            } else {
                -1.0
            };
            let step_rel = norm(&(&d * &h)) / xnorm.max(f64::MIN_POSITIVE);
            let small_change =
                actual.abs() <= self.cfg.ftol * pt.cost && predicted <= self.cfg.ftol * pt.cost;
            let small_step = norm(&(&d * &h)) <= self.cfg.xtol * (xnorm + self.cfg.xtol);
            let accepted = rho > 0.0 && cost_new < pt.cost;
            // MINPACK applies the ftol and xtol tests to rejected steps too: the current point is
            // then the minimum to the tolerances (or to working precision, when even the
            // predicted gain is negligible).
            let why = match (accepted, small_change, small_step) {
                (_, true, _) => Some(format!(
                    "relative cost change {:.3e} <= ftol",
                    actual.abs() / pt.cost
                )),
                (_, _, true) => Some(format!("relative step {step_rel:.3e} <= xtol")),
                (false, _, _) if predicted <= f64::EPSILON * pt.cost => Some(format!(
                    "no further reduction possible in double precision (predicted {:.3e})",
                    predicted / pt.cost
                )),
                _ => None,
            };
            let next = if accepted {
                self.accept(rho);
                let r_new = std::mem::take(&mut self.spare_r);
                let j_new = std::mem::take(&mut self.spare_j);
                let next = Point::new(trial, r_new, j_new)?;
                self.new_jacobian(&next.j);
                (self.spare_r, self.spare_j) = (pt.r, pt.j);
                next
            } else if why.is_some() {
                pt
            } else {
                self.reject();
                continue;
            };
            match why {
                Some(why) => self.converged(why),
                None => self.check_gradient(&next),
            }
            let kv = argmin::kv!("lambda" => self.lambda; "rho" => rho; "trials" => trials;);
            return Ok((next.into_state(state), Some(kv)));
        }
        self.stop = Some((
            TerminationReason::SolverExit("no cost reduction found".into()),
            format!(
                "no cost reduction in {} trial steps (lambda = {:.3e})",
                self.cfg.max_rejections, self.lambda
            ),
        ));
        let kv = argmin::kv!("lambda" => self.lambda; "trials" => self.cfg.max_rejections as u64;);
        Ok((pt.into_state(state), Some(kv)))
    }

    fn terminate(&mut self, _state: &LmState) -> TerminationStatus {
        match &self.stop {
            Some((reason, _)) => TerminationStatus::Terminated(reason.clone()),
            None => TerminationStatus::NotTerminated,
        }
    }
}

/// The result of a least-squares fit.
#[derive(Debug, Clone)]
pub struct LmOutcome {
    pub params: Array1<f64>,
    /// ½ Σ r² at `params`.
    pub cost: f64,
    /// Accepted steps taken.
    pub iterations: usize,
    /// ∂r/∂p at `params`, one row per residual.
    pub jacobian: Array2<f64>,
    pub residuals: Array1<f64>,
    /// A stopping test was met (not merely the iteration limit or a stall).
    pub converged: bool,
    /// Why it stopped, in words.
    pub termination: String,
}

/// Run Levenberg–Marquardt on `problem` from `p0`.
pub fn minimize<P: LeastSquares>(
    problem: P,
    p0: Array1<f64>,
    cfg: &LmConfig,
) -> Result<LmOutcome, FitError> {
    let max_iters = cfg.max_iters;
    let result = Executor::new(problem, LevenbergMarquardt::new(cfg.clone()))
        .configure(|s| s.param(p0).max_iters(max_iters))
        .timer(false)
        .run()
        .map_err(|e| FitError(Diagnostic::new(format!("least-squares solver failed: {e}"))))?;
    let detail = result.solver().stop_detail().map(str::to_string);
    // Owned, so the final Jacobian and residuals move into the outcome without a copy.
    let mut state = result.state;
    let reason = state.get_termination_reason().cloned();
    let missing = || {
        FitError(Diagnostic::new(
            "least-squares solver finished without a result",
        ))
    };
    let converged = matches!(
        reason,
        Some(TerminationReason::SolverConverged) | Some(TerminationReason::TargetCostReached)
    );
    let termination = match (&reason, detail) {
        (Some(TerminationReason::MaxItersReached), _) | (None, None) => {
            format!(
                "{} ({max_iters})",
                reason.as_ref().map_or("stopped", |r| r.text())
            )
        }
        (_, Some(d)) => d,
        (Some(r), None) => r.text().to_string(),
    };
    Ok(LmOutcome {
        params: state.take_param().ok_or_else(missing)?,
        cost: state.get_cost(),
        iterations: state.get_iter() as usize,
        jacobian: state.take_jacobian().ok_or_else(missing)?,
        residuals: state.take_residuals().ok_or_else(missing)?,
        converged,
        termination,
    })
}

/// Parameter covariance s²·(JᵀJ)⁻¹ with s² = 2·cost/(m − n_free), m = residual count (the
/// asymptotic covariance NIST uses for its certified standard deviations). `n_free` is the number
/// of fitted parameters, normally `jacobian.ncols()`. `None` if m ≤ n_free or JᵀJ is singular.
pub fn covariance(jacobian: &Array2<f64>, cost: f64, n_free: usize) -> Option<Array2<f64>> {
    let m = jacobian.nrows();
    if m <= n_free || !cost.is_finite() {
        return None;
    }
    let s2 = 2.0 * cost / (m - n_free) as f64;
    Some(Cholesky::factor(&gram(jacobian))?.inverse() * s2)
}

#[cfg(test)]
mod tests {
    use super::*;
    use argmin::core::observers::{Observe, ObserverMode};
    use std::sync::{Arc, Mutex};

    /// Rosenbrock as least squares: r = (10(y − x²), 1 − x), minimum at (1, 1) with zero cost
    /// (Moré, Garbow & Hillstrom, ACM TOMS 7(1) 1981, problem 1), start (−1.2, 1).
    struct Rosenbrock;
    impl Operator for Rosenbrock {
        type Param = Array1<f64>;
        type Output = Array1<f64>;
        fn apply(&self, p: &Array1<f64>) -> Result<Array1<f64>, Error> {
            Ok(ndarray::array![10.0 * (p[1] - p[0] * p[0]), 1.0 - p[0]])
        }
    }
    impl Jacobian for Rosenbrock {
        type Param = Array1<f64>;
        type Jacobian = Array2<f64>;
        fn jacobian(&self, p: &Array1<f64>) -> Result<Array2<f64>, Error> {
            Ok(ndarray::array![[-20.0 * p[0], 10.0], [-1.0, 0.0]])
        }
    }

    impl LeastSquares for Rosenbrock {}

    #[test]
    fn rosenbrock_from_the_standard_start_reaches_1_1() {
        let out = minimize(Rosenbrock, ndarray::array![-1.2, 1.0], &LmConfig::default()).unwrap();
        assert!(out.converged, "{}", out.termination);
        assert!(
            (out.params[0] - 1.0).abs() < 1e-10 && (out.params[1] - 1.0).abs() < 1e-10,
            "{}",
            out.params
        );
        assert!(out.cost < 1e-20);
    }

    struct CountIters(Arc<Mutex<u64>>);
    impl Observe<LmState> for CountIters {
        fn observe_iter(&mut self, _state: &LmState, kv: &KV) -> Result<(), Error> {
            assert!(kv.get("lambda").is_some());
            *self.0.lock().unwrap() += 1;
            Ok(())
        }
    }

    /// argmin users expect `max_iters` to stop the run and observers to see every iteration.
    #[test]
    fn executor_max_iters_and_observers_work() {
        let seen = Arc::new(Mutex::new(0));
        let res = Executor::new(Rosenbrock, LevenbergMarquardt::new(LmConfig::default()))
            .configure(|s| s.param(ndarray::array![-1.2, 1.0]).max_iters(3))
            .add_observer(CountIters(seen.clone()), ObserverMode::Always)
            .run()
            .unwrap();
        assert_eq!(res.state().get_iter(), 3);
        assert_eq!(*seen.lock().unwrap(), 3);
        assert_eq!(
            res.state().get_termination_reason(),
            Some(&TerminationReason::MaxItersReached)
        );
    }

    #[test]
    fn covariance_of_straight_line_fit_matches_textbook_formula() {
        // y = a + b·x by least squares: Var(b) = s²/Σ(x − x̄)², Var(a) = s²·Σx²/(n·Σ(x − x̄)²)
        // (Draper & Smith, Applied Regression Analysis, §1.4 / §2.1).
        let x = [0.0, 1.0, 2.0, 3.0, 4.0];
        let j = Array2::from_shape_fn((5, 2), |(i, k)| if k == 0 { 1.0 } else { x[i] });
        let cost = 0.6; // Σr² = 1.2 ⇒ s² = 1.2/3 = 0.4
        let cov = covariance(&j, cost, 2).unwrap();
        let sxx = 10.0;
        assert!((cov[[1, 1]] - 0.4 / sxx).abs() < 1e-15);
        assert!((cov[[0, 0]] - 0.4 * 30.0 / (5.0 * sxx)).abs() < 1e-15);
        assert!(covariance(&j, cost, 5).is_none());
    }
}
