//! The permeability least-squares problem, apart from any solver: residuals and their Jacobian
//! in the solver's internal (transformed, see [`super::transform`]) coordinates.
//!
//! Residuals are the relative complex error (μ_model − μ_meas)/|μ_meas| at each frequency, the
//! real parts of all frequencies first, then the imaginary parts; cost = ½Σr². The internal
//! vector is the model's flat vector ([`Model::to_params`]) transformed, without `mu_inf` when
//! μ∞ is held fixed.

use super::transform::Transform;
use super::FitError;
use crate::error::Diagnostic;
use crate::model::{Model, TermKind};
use crate::C64;
use argmin::core::{Error, Jacobian, Operator};
use ndarray::{Array1, Array2};

/// Complex permeability data and the model family to fit to it.
#[derive(Debug, Clone)]
pub struct MuProblem {
    freq_hz: Vec<f64>,
    mu_meas: Vec<C64>,
    kinds: Vec<TermKind>,
    free_mu_inf: bool,
    mu_inf_fixed: f64,
    /// 1/|μ_meas| per frequency.
    weight: Vec<f64>,
    /// For each internal parameter: its index in the model's flat vector and its transform.
    layout: Vec<(usize, &'static str, Transform)>,
}

impl MuProblem {
    /// A problem for `kinds` on the data (`freq_hz`, `mu_meas`). With `free_mu_inf == false`,
    /// μ∞ is held at `mu_inf_fixed` (and that value is ignored otherwise).
    pub fn new(
        freq_hz: Vec<f64>,
        mu_meas: Vec<C64>,
        kinds: Vec<TermKind>,
        free_mu_inf: bool,
        mu_inf_fixed: f64,
    ) -> Result<MuProblem, FitError> {
        let fail = |msg: String, expected: &str, hint: &str| {
            FitError(Diagnostic::new(msg).expected(expected).hint(hint))
        };
        if freq_hz.len() != mu_meas.len() {
            return Err(fail(
                format!(
                    "{} frequencies but {} permeability values",
                    freq_hz.len(),
                    mu_meas.len()
                ),
                "one complex permeability per frequency",
                "this is a bug in the caller; please report it",
            ));
        }
        if let Some(i) = freq_hz.iter().position(|f| !(f.is_finite() && *f > 0.0)) {
            return Err(fail(
                format!("frequency #{} is {} Hz", i + 1, freq_hz[i]),
                "finite frequencies above 0 Hz",
                "check the sweep's frequency column",
            ));
        }
        if let Some(i) = mu_meas
            .iter()
            .position(|m| !(m.re.is_finite() && m.im.is_finite() && m.norm() > 0.0))
        {
            return Err(fail(
                format!("permeability at {} Hz is {} (relative residuals need a finite, non-zero value)", freq_hz[i], mu_meas[i]),
                "finite, non-zero μ′ − jμ″ at every frequency",
                "restrict the fit to the valid band of the extraction",
            ));
        }
        if !free_mu_inf && !mu_inf_fixed.is_finite() {
            return Err(fail(
                format!("fixed mu_inf is {mu_inf_fixed}"),
                "a finite μ∞ (usually 1)",
                "free mu_inf or give a number",
            ));
        }
        let names = Model::param_names(&kinds);
        let first = if free_mu_inf { 0 } else { 1 };
        let layout: Vec<_> = (first..names.len())
            .map(|k| (k, names[k], Transform::of(names[k])))
            .collect();
        if layout.is_empty() {
            return Err(fail(
                "the model has no free parameters".into(),
                "at least one term or a free mu_inf",
                "e.g. --model debye",
            ));
        }
        if 2 * freq_hz.len() < layout.len() {
            return Err(fail(
                format!(
                    "{} frequencies give {} real values, fewer than the {} parameters of the model",
                    freq_hz.len(),
                    2 * freq_hz.len(),
                    layout.len()
                ),
                "at least as many real values (2 per frequency) as parameters",
                "use a wider band or a model with fewer terms",
            ));
        }
        let weight = mu_meas.iter().map(|m| 1.0 / m.norm()).collect();
        Ok(MuProblem {
            freq_hz,
            mu_meas,
            kinds,
            free_mu_inf,
            mu_inf_fixed,
            weight,
            layout,
        })
    }

    pub fn freq_hz(&self) -> &[f64] {
        &self.freq_hz
    }
    pub fn mu_meas(&self) -> &[C64] {
        &self.mu_meas
    }
    pub fn kinds(&self) -> &[TermKind] {
        &self.kinds
    }
    pub fn free_mu_inf(&self) -> bool {
        self.free_mu_inf
    }
    pub fn mu_inf_fixed(&self) -> f64 {
        self.mu_inf_fixed
    }
    /// Number of residuals (2 per frequency).
    pub fn n_residuals(&self) -> usize {
        2 * self.freq_hz.len()
    }
    /// Number of internal (fitted) parameters.
    pub fn n_params(&self) -> usize {
        self.layout.len()
    }
    /// Names of the internal parameters in order (`mu_inf` first when it is free).
    pub fn param_names(&self) -> Vec<&'static str> {
        self.layout.iter().map(|(_, n, _)| *n).collect()
    }
    /// For each internal parameter, its index in [`Model::to_params`].
    pub fn model_indices(&self) -> Vec<usize> {
        self.layout.iter().map(|(k, _, _)| *k).collect()
    }

    /// The internal vector of `model` (whose kinds must be this problem's).
    pub fn to_internal(&self, model: &Model) -> Array1<f64> {
        let flat = model.to_params();
        self.layout
            .iter()
            .map(|&(k, _, t)| t.to_internal(flat[k]))
            .collect()
    }

    /// The model at internal vector `p`.
    pub fn to_model(&self, p: &Array1<f64>) -> Model {
        let mut flat = vec![self.mu_inf_fixed; Model::param_count(&self.kinds)];
        for (&(k, _, t), &u) in self.layout.iter().zip(p.iter()) {
            flat[k] = t.to_external(u);
        }
        Model::from_params(&self.kinds, &flat)
    }

    /// d external / d internal for each internal parameter at `p`.
    pub fn external_derivatives(&self, p: &Array1<f64>) -> Array1<f64> {
        self.layout
            .iter()
            .zip(p.iter())
            .map(|(&(_, _, t), &u)| t.derivative(u))
            .collect()
    }

    /// Covariance of the external parameters (same order as [`MuProblem::param_names`]) from
    /// the covariance `cov_internal` found at internal point `p`, by the delta method G·C·G.
    pub fn external_covariance(&self, p: &Array1<f64>, cov_internal: &Array2<f64>) -> Array2<f64> {
        let g = self.external_derivatives(p);
        Array2::from_shape_fn(cov_internal.dim(), |(i, j)| {
            g[i] * cov_internal[[i, j]] * g[j]
        })
    }

    /// The relative complex error (μ_model − μ_meas)/|μ_meas| at each frequency.
    pub fn relative_errors(&self, model: &Model) -> Vec<C64> {
        self.freq_hz
            .iter()
            .zip(&self.mu_meas)
            .zip(&self.weight)
            .map(|((&f, &m), &w)| (model.mu(f) - m) * w)
            .collect()
    }
}

impl Operator for MuProblem {
    type Param = Array1<f64>;
    type Output = Array1<f64>;

    fn apply(&self, p: &Array1<f64>) -> Result<Array1<f64>, Error> {
        let n = self.freq_hz.len();
        let mut r = Array1::zeros(2 * n);
        for (i, e) in self
            .relative_errors(&self.to_model(p))
            .into_iter()
            .enumerate()
        {
            r[i] = e.re;
            r[n + i] = e.im;
        }
        Ok(r)
    }
}

impl Jacobian for MuProblem {
    type Param = Array1<f64>;
    type Jacobian = Array2<f64>;

    fn jacobian(&self, p: &Array1<f64>) -> Result<Array2<f64>, Error> {
        let n = self.freq_hz.len();
        let model = self.to_model(p);
        let chain = self.external_derivatives(p);
        let mut grad = vec![C64::new(0.0, 0.0); Model::param_count(&self.kinds)];
        let cols = self.layout.len();
        let mut j = Array2::zeros((2 * n, cols));
        let js = j.as_slice_mut().expect("a new array is contiguous");
        for (i, (&f, &w)) in self.freq_hz.iter().zip(&self.weight).enumerate() {
            model.mu_and_gradient_into(f, &mut grad);
            for (c, (&(k, _, _), &dk)) in self.layout.iter().zip(chain.iter()).enumerate() {
                let d = grad[k] * (dk * w);
                js[i * cols + c] = d.re;
                js[(n + i) * cols + c] = d.im;
            }
        }
        Ok(j)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::fit::lm::{minimize, LmConfig};
    use crate::model::Term;

    fn log_freqs(n: usize, lo: f64, hi: f64) -> Vec<f64> {
        (0..n)
            .map(|i| lo * (hi / lo).powf(i as f64 / (n - 1) as f64))
            .collect()
    }

    fn truth() -> Model {
        Model {
            mu_inf: 1.0,
            terms: vec![
                Term::cole_cole(700.0, 6.0e6, 0.8),
                Term::lorentz(250.0, 45.0e6, 0.6),
            ],
        }
    }

    /// The problem's Jacobian against central differences of its own residuals, in internal
    /// coordinates (checks the chain rule through the transforms and the 1/|μ| weights).
    #[test]
    fn jacobian_matches_central_differences_of_residuals() {
        let f = log_freqs(40, 1e5, 1e9);
        let mu: Vec<C64> = f
            .iter()
            .map(|&x| truth().mu(x) * C64::new(1.01, 0.003))
            .collect();
        let prob = MuProblem::new(f, mu, truth().kinds(), true, 1.0).unwrap();
        let p = prob.to_internal(&Model {
            mu_inf: 1.3,
            terms: vec![
                Term::cole_cole(500.0, 8.0e6, 0.7),
                Term::lorentz(300.0, 35.0e6, 0.4),
            ],
        });
        let j = prob.jacobian(&p).unwrap();
        for c in 0..p.len() {
            let h = 1e-6 * p[c].abs().max(1.0);
            let (mut up, mut dn) = (p.clone(), p.clone());
            up[c] += h;
            dn[c] -= h;
            let fd = (prob.apply(&up).unwrap() - prob.apply(&dn).unwrap()) / (2.0 * h);
            let colmax = fd.iter().fold(0.0f64, |a, v| a.max(v.abs()));
            for i in 0..fd.len() {
                assert!(
                    (j[[i, c]] - fd[i]).abs() <= 1e-6 * colmax,
                    "{} row {i}: {} vs {}",
                    prob.param_names()[c],
                    j[[i, c]],
                    fd[i]
                );
            }
        }
    }

    /// Noise-free data from a known model must come back to that model (consistency of the
    /// residual, the Jacobian and the solver; the external check against scipy is in tests/).
    #[test]
    fn noise_free_cole_cole_plus_lorentz_recovers_truth() {
        let f = log_freqs(201, 1e5, 1e9);
        let mu: Vec<C64> = f.iter().map(|&x| truth().mu(x)).collect();
        let prob = MuProblem::new(f, mu, truth().kinds(), false, 1.0).unwrap();
        let start = Model {
            mu_inf: 1.0,
            terms: vec![
                Term::cole_cole(500.0, 9.0e6, 0.7),
                Term::lorentz(350.0, 30.0e6, 0.3),
            ],
        };
        let out = minimize(prob.clone(), prob.to_internal(&start), &LmConfig::default()).unwrap();
        assert!(out.converged, "{}", out.termination);
        let fitted = prob.to_model(&out.params).to_params();
        for (a, b) in fitted.iter().zip(truth().to_params()) {
            assert!((a - b).abs() <= 1e-8 * b.abs(), "{a} vs {b}");
        }
    }

    #[test]
    fn bad_data_is_a_clear_error_not_a_panic() {
        let kinds = vec![TermKind::Debye];
        assert!(MuProblem::new(
            vec![1e6, 2e6],
            vec![C64::new(1.0, 0.0)],
            kinds.clone(),
            false,
            1.0
        )
        .is_err());
        let e = MuProblem::new(
            vec![1e6, 0.0],
            vec![C64::new(1.0, 0.0); 2],
            kinds.clone(),
            false,
            1.0,
        )
        .unwrap_err();
        assert!(e.to_string().contains("frequency #2"), "{e}");
        assert!(MuProblem::new(vec![1e6], vec![C64::new(0.0, 0.0)], kinds, false, 1.0).is_err());
        assert!(MuProblem::new(
            vec![1e6],
            vec![C64::new(5.0, -1.0)],
            vec![TermKind::HavriliakNegami],
            false,
            1.0
        )
        .is_err());
    }
}
