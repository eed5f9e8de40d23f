//! Analytic derivatives of each term's complex value with respect to its parameters.
//!
//! With x = f/f_r and u = (jx)^α = x^α·e^{jπα/2}, every relaxation term is T = Δμ·(1 + u)^(−β)
//! (Debye: α = β = 1; Cole–Cole: β = 1; Cole–Davidson: α = 1), so one set of formulas serves them:
//!
//! ∂T/∂Δμ = T/Δμ,  ∂T/∂f_r = T·αβ·u / ((1 + u)·f_r),
//! ∂T/∂α = −T·β·u·(ln x + jπ/2) / (1 + u),  ∂T/∂β = −T·ln(1 + u).
//!
//! The damped resonance T = Δμ/D with D = 1 − x² + j·d·x has
//! ∂T/∂f_r = T·x·(jd − 2x) / (D·f_r) and ∂T/∂d = −T·jx / D.
//!
//! Derivatives come back in [`TermKind::param_names`] order, the same order as [`Term::params`].

use super::{Model, Term, TermKind};
use crate::C64;
use std::f64::consts::FRAC_PI_2;

impl Term {
    /// The term's value at `f_hz` and its derivatives, written into `grad` (length
    /// `self.kind.param_names().len()`) in [`TermKind::param_names`] order.
    pub fn value_and_gradient_into(&self, f_hz: f64, grad: &mut [C64]) -> C64 {
        let x = f_hz / self.f_hz;
        let one = C64::new(1.0, 0.0);
        if self.kind == TermKind::Lorentz {
            let inv = one / C64::new(1.0 - x * x, self.damping * x);
            let t = self.delta_mu * inv;
            grad[0] = inv;
            grad[1] = t * inv * C64::new(-2.0 * x * x, self.damping * x) / self.f_hz;
            grad[2] = -t * inv * C64::new(0.0, x);
            return t;
        }
        let (alpha, beta) = match self.kind {
            TermKind::Debye => (1.0, 1.0),
            TermKind::ColeCole => (self.alpha, 1.0),
            TermKind::ColeDavidson => (1.0, self.beta),
            _ => (self.alpha, self.beta),
        };
        // (jx)^α on the principal branch; α = 1 (Debye, Cole–Davidson) needs no transcendentals.
        let u = if alpha == 1.0 {
            C64::new(0.0, x)
        } else {
            C64::from_polar(x.powf(alpha), FRAC_PI_2 * alpha)
        };
        let one_u = one + u;
        let inv_one_u = one / one_u;
        let inv = if beta == 1.0 {
            inv_one_u
        } else {
            one_u.powf(-beta)
        };
        let t = self.delta_mu * inv;
        let u_over = u * inv_one_u;
        grad[0] = inv;
        grad[1] = t * u_over * (alpha * beta / self.f_hz);
        // d/dα of (jx)^α is (jx)^α·ln(jx); at x = 0 the product u·ln x tends to 0.
        let d_alpha = || {
            if x > 0.0 {
                -t * u_over * C64::new(beta * x.ln(), beta * FRAC_PI_2)
            } else {
                C64::new(0.0, 0.0)
            }
        };
        let d_beta = || -t * one_u.ln();
        match self.kind {
            TermKind::ColeCole => grad[2] = d_alpha(),
            TermKind::ColeDavidson => grad[2] = d_beta(),
            TermKind::HavriliakNegami => {
                grad[2] = d_alpha();
                grad[3] = d_beta();
            }
            TermKind::Debye | TermKind::Lorentz => {}
        }
        t
    }

    /// Derivatives of the term's complex value at `f_hz`, in [`TermKind::param_names`] order.
    pub fn gradient(&self, f_hz: f64) -> Vec<C64> {
        let mut g = vec![C64::new(0.0, 0.0); self.kind.param_names().len()];
        self.value_and_gradient_into(f_hz, &mut g);
        g
    }
}

impl Model {
    /// μ at `f_hz` and its derivatives with respect to the flat parameter vector of
    /// [`Model::to_params`] (`mu_inf` first, then each term's parameters), written into `grad`.
    pub fn mu_and_gradient_into(&self, f_hz: f64, grad: &mut [C64]) -> C64 {
        grad[0] = C64::new(1.0, 0.0);
        let mut mu = C64::new(self.mu_inf, 0.0);
        let mut at = 1;
        for term in &self.terms {
            let n = term.kind.param_names().len();
            mu += term.value_and_gradient_into(f_hz, &mut grad[at..at + n]);
            at += n;
        }
        mu
    }

    /// μ at `f_hz` and its derivatives in [`Model::to_params`] order (`mu_inf` first).
    pub fn mu_and_gradient(&self, f_hz: f64) -> (C64, Vec<C64>) {
        let mut g = vec![C64::new(0.0, 0.0); Model::param_count(&self.kinds())];
        let mu = self.mu_and_gradient_into(f_hz, &mut g);
        (mu, g)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Relative agreement demanded between analytic and central-difference derivatives.
    /// Central differences with step h·|p| have truncation error O(h²) and rounding O(ε/h);
    /// h = 1e-6 gives ~1e-9 relative on these smooth functions [common practice].
    const FD_REL_TOL: f64 = 1e-6;
    const FD_STEP: f64 = 1e-6;
    /// Floor, relative to the largest parameter effect at that frequency.
    const FD_FLOOR: f64 = 1e-9;

    fn all_kinds_model() -> Model {
        Model {
            mu_inf: 1.7,
            terms: vec![
                Term::debye(800.0, 3.0e6),
                Term::cole_cole(450.0, 12.0e6, 0.72),
                Term::cole_davidson(120.0, 40.0e6, 0.55),
                Term::havriliak_negami(300.0, 7.0e6, 0.81, 0.63),
                Term::lorentz(900.0, 90.0e6, 0.35),
            ],
        }
    }

    /// Every analytic derivative against a central finite difference of `Model::mu`
    /// (which uses `Term::value`, an independent evaluation of the same formulas), at
    /// frequencies below, near and far above each term's f_r.
    #[test]
    fn gradient_matches_central_finite_differences_for_every_term_kind() {
        let model = all_kinds_model();
        let kinds = model.kinds();
        let p0 = model.to_params();
        for &f in &[1.0e4, 2.9e6, 1.1e7, 6.0e7, 9.1e7, 2.0e9] {
            let (mu, grad) = model.mu_and_gradient(f);
            let direct = model.mu(f);
            assert!(
                (mu - direct).norm() <= 1e-12 * direct.norm(),
                "value at {f}: {mu} vs {direct}"
            );
            // How much μ moves for a relative change of the most influential parameter.
            let sensitivity = (0..p0.len())
                .map(|k| (grad[k] * p0[k]).norm())
                .fold(0.0, f64::max);
            for k in 0..p0.len() {
                let h = FD_STEP * p0[k].abs();
                let mut up = p0.clone();
                let mut down = p0.clone();
                up[k] += h;
                down[k] -= h;
                let fd = (Model::from_params(&kinds, &up).mu(f)
                    - Model::from_params(&kinds, &down).mu(f))
                    / (2.0 * h);
                // Relative to the derivative itself, with a floor for derivatives that are
                // negligible at this frequency (compared on the scale of a relative step).
                let err = (grad[k] - fd).norm() * p0[k].abs();
                let tol = FD_REL_TOL * (grad[k] * p0[k]).norm() + FD_FLOOR * sensitivity;
                let name = Model::param_names(&kinds)[k];
                assert!(
                    err <= tol,
                    "{name} (#{k}) at f = {f}: analytic {} vs fd {fd} (err {err:e}, tol {tol:e})",
                    grad[k]
                );
            }
        }
    }

    #[test]
    fn term_gradient_has_param_names_order_and_length() {
        for t in all_kinds_model().terms {
            let g = t.gradient(5.0e6);
            assert_eq!(g.len(), t.params().len());
            // ∂T/∂Δμ is T/Δμ for every kind (the value is linear in Δμ).
            let rel = (g[0] * t.delta_mu - t.value(5.0e6)).norm() / t.value(5.0e6).norm();
            assert!(rel < 1e-12, "{:?}", t.kind);
        }
    }
}
