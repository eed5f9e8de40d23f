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
//! Debye (α = β = 1) and the resonance have integer exponents and are evaluated without
//! transcendental functions, 1/z as conj(z)/|z|².
//!
//! Derivatives come back in [`TermKind::param_names`] order, the same order as [`Term::params`].

use super::{Model, Term, TermKind};
use crate::C64;
use std::f64::consts::FRAC_PI_2;

impl Term {
    /// The term's value at `f_hz` and its derivatives, written into `grad` (length
    /// `self.kind.param_names().len()`) in [`TermKind::param_names`] order.
    pub fn value_and_gradient_into(&self, f_hz: f64, grad: &mut [C64]) -> C64 {
        self.evaluate(f_hz, Some(grad))
    }

    /// Adds the term's value at every frequency of `f_hz` to (`re`, `im`) and, with `grad`,
    /// writes its derivatives as scaled columns (see [`ScaledColumns`]). Debye and
    /// damped-resonance terms run as straight loops over the frequencies, which the compiler
    /// vectorises; the fractional-exponent kinds go point by point.
    ///
    /// Panics if the buffers do not have the lengths [`ScaledColumns`] states (a layout bug,
    /// not data).
    pub fn accumulate_columns(
        &self,
        f_hz: &[f64],
        re: &mut [f64],
        im: &mut [f64],
        grad: Option<ScaledColumns>,
    ) {
        let inv_fr = 1.0 / self.f_hz;
        let with_grad = grad.is_some();
        let fractional = |f: f64| self.fractional_at(inv_fr, f * inv_fr, with_grad);
        // Four wide where the processor can (the Debye and resonance loops vectorise).
        crate::wide::wide(
            #[inline(always)]
            || match self.kind {
                TermKind::Debye => columns(f_hz, re, im, grad, |f| {
                    debye_at(self.delta_mu, inv_fr, f * inv_fr)
                }),
                TermKind::Lorentz => columns(f_hz, re, im, grad, |f| {
                    lorentz_at(self.delta_mu, inv_fr, self.damping, f * inv_fr)
                }),
                TermKind::ColeCole | TermKind::ColeDavidson => columns(f_hz, re, im, grad, |f| {
                    let (t, g) = fractional(f);
                    (t, [g[0], g[1], g[2]])
                }),
                TermKind::HavriliakNegami => columns(f_hz, re, im, grad, fractional),
            },
        )
    }

    /// Value, and with `grad` the derivatives.
    fn evaluate(&self, f_hz: f64, grad: Option<&mut [C64]>) -> C64 {
        let inv_fr = 1.0 / self.f_hz;
        let x = f_hz * inv_fr;
        let (t, g) = match self.kind {
            TermKind::Debye => {
                let (t, g) = debye_at(self.delta_mu, inv_fr, x);
                (t, [g[0], g[1], C64::new(0.0, 0.0), C64::new(0.0, 0.0)])
            }
            TermKind::Lorentz => {
                let (t, g) = lorentz_at(self.delta_mu, inv_fr, self.damping, x);
                (t, [g[0], g[1], g[2], C64::new(0.0, 0.0)])
            }
            _ => self.fractional_at(inv_fr, x, grad.is_some()),
        };
        if let Some(grad) = grad {
            let k = grad.len();
            grad.copy_from_slice(&g[..k]);
        }
        t
    }

    /// Value and (`with_grad`) derivatives of the fractional-exponent kinds (the general
    /// formulas of the module header); unused entries of the array are zero.
    fn fractional_at(&self, inv_fr: f64, x: f64, with_grad: bool) -> (C64, [C64; 4]) {
        let (alpha, beta) = match self.kind {
            TermKind::ColeCole => (self.alpha, 1.0),
            TermKind::ColeDavidson => (1.0, self.beta),
            _ => (self.alpha, self.beta),
        };
        // (jx)^α on the principal branch; α = 1 (Cole–Davidson) needs no transcendentals.
        let u = if alpha == 1.0 {
            C64::new(0.0, x)
        } else {
            C64::from_polar(x.powf(alpha), FRAC_PI_2 * alpha)
        };
        let one_u = C64::new(1.0, 0.0) + u;
        let inv_one_u = recip(one_u);
        let inv = if beta == 1.0 {
            inv_one_u
        } else {
            one_u.powf(-beta)
        };
        let t = inv * self.delta_mu;
        let zero = C64::new(0.0, 0.0);
        if !with_grad {
            return (t, [zero; 4]);
        }
        let u_over = u * inv_one_u;
        // d/dα of (jx)^α is (jx)^α·ln(jx); at x = 0 the product u·ln x tends to 0.
        let d_alpha = || {
            if x > 0.0 {
                -t * u_over * C64::new(beta * x.ln(), beta * FRAC_PI_2)
            } else {
                zero
            }
        };
        let d_beta = || -t * one_u.ln();
        let shape = match self.kind {
            TermKind::ColeCole => [d_alpha(), zero],
            TermKind::ColeDavidson => [d_beta(), zero],
            _ => [d_alpha(), d_beta()],
        };
        let d_fr = t * u_over * (alpha * beta * inv_fr);
        (t, [inv, d_fr, shape[0], shape[1]])
    }

    /// Derivatives of the term's complex value at `f_hz`, in [`TermKind::param_names`] order.
    pub fn gradient(&self, f_hz: f64) -> Vec<C64> {
        let mut g = vec![C64::new(0.0, 0.0); self.kind.param_names().len()];
        self.value_and_gradient_into(f_hz, &mut g);
        g
    }
}

/// Debye Δμ/(1 + jx) and its derivatives by Δμ and f_r at x = f/f_r. The integer exponent
/// needs no transcendental function: 1/(1 + jx) = (1 − jx)/(1 + x²), one real division.
#[inline(always)]
fn debye_at(delta_mu: f64, inv_fr: f64, x: f64) -> (C64, [C64; 2]) {
    let s = 1.0 / (1.0 + x * x);
    let inv = C64::new(s, -x * s);
    let t = inv * delta_mu;
    // u/(1 + u) with u = jx is (x² + jx)/(1 + x²).
    let u_over = C64::new(x * x * s, x * s);
    (t, [inv, t * u_over * inv_fr])
}

/// The damped resonance Δμ/(1 − x² + jdx) and its derivatives by Δμ, f_r and d at x = f/f_r.
#[inline(always)]
fn lorentz_at(delta_mu: f64, inv_fr: f64, damping: f64, x: f64) -> (C64, [C64; 3]) {
    let inv = recip(C64::new(1.0 - x * x, damping * x));
    let t = inv * delta_mu;
    let t_inv = t * inv;
    let d_fr = t_inv * C64::new(-2.0 * x * x, damping * x) * inv_fr;
    (t, [inv, d_fr, t_inv * C64::new(0.0, -x)])
}

/// Where [`Term::accumulate_columns`] writes a term's derivatives: the column-major layout of
/// a fit's Jacobian, scaled as a fit needs them. For the k-th parameter
/// ([`TermKind::param_names`] order) and n frequencies, w_i·c_k·Re ∂T/∂p_k(f_i) goes to
/// `cols[2kn + i]` and w_i·c_k·Im ∂T/∂p_k(f_i) to `cols[2kn + n + i]`, with w = `weight`
/// (one per frequency, e.g. residual weights) and c = `factor` (one per parameter, e.g. the
/// chain rule of a reparametrisation). Scaling as the columns are written saves a pass.
#[derive(Debug)]
pub struct ScaledColumns<'a> {
    pub cols: &'a mut [f64],
    pub weight: &'a [f64],
    pub factor: &'a [f64],
}

/// The loop of [`Term::accumulate_columns`] for a term whose value and `K` derivatives at a
/// frequency come from `at`. Without `grad` the derivatives of an inlined `at` are dead code.
#[inline(always)]
fn columns<const K: usize>(
    f_hz: &[f64],
    re: &mut [f64],
    im: &mut [f64],
    grad: Option<ScaledColumns>,
    at: impl Fn(f64) -> (C64, [C64; K]),
) {
    let n = f_hz.len();
    assert!(
        re.len() == n && im.len() == n,
        "value buffers of the wrong length"
    );
    let Some(ScaledColumns {
        cols: grad,
        weight,
        factor,
    }) = grad
    else {
        for ((&f, r), i) in f_hz.iter().zip(re.iter_mut()).zip(im.iter_mut()) {
            let (t, _) = at(f);
            *r += t.re;
            *i += t.im;
        }
        return;
    };
    assert!(
        grad.len() == 2 * n * K && weight.len() == n && factor.len() == K,
        "gradient buffers of the wrong length"
    );
    let c: [f64; K] = std::array::from_fn(|k| factor[k]);
    let mut chunks = grad.chunks_exact_mut(n);
    let mut cols: [&mut [f64]; 2 * 4] = Default::default();
    for col in cols.iter_mut().take(2 * K) {
        *col = chunks.next().expect("length checked above");
    }
    for i in 0..n {
        let (t, d) = at(f_hz[i]);
        re[i] += t.re;
        im[i] += t.im;
        let w = weight[i];
        for k in 0..K {
            let s = c[k] * w;
            cols[2 * k][i] = d[k].re * s;
            cols[2 * k + 1][i] = d[k].im * s;
        }
    }
}

/// 1/z as conj(z)/|z|²: one real division (num-complex's division forms the same |z|², so
/// over- and underflow are no different).
fn recip(z: C64) -> C64 {
    let s = 1.0 / z.norm_sqr();
    C64::new(z.re * s, -z.im * s)
}

impl Model {
    /// μ at `f_hz` and its derivatives with respect to the flat parameter vector of
    /// [`Model::to_params`] (`mu_inf` first, then each term's parameters), written into `grad`.
    pub fn mu_and_gradient_into(&self, f_hz: f64, grad: &mut [C64]) -> C64 {
        self.mu_with_gradient(f_hz, Some(grad))
    }

    /// μ at `f_hz`, and with `grad` its derivatives as [`Model::mu_and_gradient_into`] writes
    /// them. Without `grad` this is [`Model::mu`] by the gradient's arithmetic (the residuals
    /// and the Jacobian of a fit then come from the same formulas), which is also faster.
    pub fn mu_with_gradient(&self, f_hz: f64, mut grad: Option<&mut [C64]>) -> C64 {
        let mut mu = C64::new(self.mu_inf, 0.0);
        if let Some(g) = grad.as_deref_mut() {
            g[0] = C64::new(1.0, 0.0);
        }
        let mut at = 1;
        for term in &self.terms {
            let n = term.kind.param_names().len();
            mu += term.evaluate(f_hz, grad.as_deref_mut().map(|g| &mut g[at..at + n]));
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
            for value in [mu, model.mu_with_gradient(f, None)] {
                assert!(
                    (value - direct).norm() <= 1e-12 * direct.norm(),
                    "value at {f}: {value} vs {direct}"
                );
            }
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

    /// The column kernel against the point-by-point gradient (checked above against finite
    /// differences), with weights and factors, for every kind.
    #[test]
    fn scaled_columns_match_the_pointwise_gradient_for_every_kind() {
        let f = [1.0e4, 2.9e6, 1.1e7, 6.0e7, 2.0e9];
        let w = [0.5, 2.0, 1.0, 3.0, 0.25];
        let n = f.len();
        for t in all_kinds_model().terms {
            let k = t.params().len();
            let factor: Vec<f64> = (0..k).map(|i| 1.0 + i as f64).collect();
            let (mut re, mut im) = (vec![1.0; n], vec![0.0; n]);
            let mut cols = vec![0.0; 2 * n * k];
            t.accumulate_columns(
                &f,
                &mut re,
                &mut im,
                Some(ScaledColumns {
                    cols: &mut cols,
                    weight: &w,
                    factor: &factor,
                }),
            );
            for i in 0..n {
                let v = t.value(f[i]);
                assert!((C64::new(re[i] - 1.0, im[i]) - v).norm() <= 1e-12 * v.norm());
                let g = t.gradient(f[i]);
                for p in 0..k {
                    let want = g[p] * (w[i] * factor[p]);
                    let got = C64::new(cols[2 * p * n + i], cols[2 * p * n + n + i]);
                    assert!(
                        (got - want).norm() <= 1e-14 * want.norm(),
                        "{:?} #{p}",
                        t.kind
                    );
                }
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
