//! Damped resonances placed by least squares inside the Lin-KK check ([`super::kk`]): the
//! linear fit of a fixed causal basis plus a few resonances 1/(1 − x² + j·d·x), x = f/f_k, whose
//! centres f_k and dampings d are fitted too.
//!
//! The fit is separable (Golub & Pereyra, SIAM J. Numer. Anal. 10, 413 (1973)): for given
//! (f_k, d_k) the weights of all basis functions follow from linear least squares, so the solver
//! sees only the 2 parameters per resonance and the residual of that linear fit. Its Jacobian is
//! Kaufman's approximation (BIT 15, 49 (1975)) J = P⊥·(∂A/∂θ)·x, P⊥ the projector onto the
//! complement of the basis columns. The solver works on bounded coordinates: ln f_k logistic
//! within the band, ln d logistic within [`DAMPING_RANGE`], so a resonance can neither leave the
//! band nor become a line narrower than the data resolve.

use super::dot::dot;
use super::lm::{minimize, LeastSquares, LmConfig};
use super::lstsq::NormalEquations;
use argmin::core::{Error, Jacobian, Operator};
use ndarray::{Array1, Array2, ShapeBuilder};

/// Dampings a fitted resonance may take: from a line of Q = 20 to a strongly overdamped one.
pub const DAMPING_RANGE: (f64, f64) = (0.05, 5.0);
/// Solver tolerances: the check compares residual levels of a percent, so the cost is needed to
/// a part in 10⁵, not to the last digit.
const TOL: f64 = 1e-5;
const MAX_ITERS: u64 = 40;

/// The weighted data of a Lin-KK fit: frequencies, weights 1/|μ|, the fixed basis columns and
/// the right-hand side (real parts of all points, then imaginary parts).
pub struct Weighted<'a> {
    pub freq_hz: &'a [f64],
    pub weight: &'a [f64],
    pub base: &'a [Vec<f64>],
    pub rhs: &'a [f64],
}

/// A resonance of the basis: centre frequency and damping.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Resonance {
    pub f_hz: f64,
    pub damping: f64,
}

/// The weighted column of `res` and, with `grad`, its derivatives by ln f_k and ln d.
fn column(w: &Weighted, res: Resonance, mut grad: Option<(&mut [f64], &mut [f64])>) -> Vec<f64> {
    let n = w.freq_hz.len();
    let mut col = vec![0.0; 2 * n];
    let inv_fk = 1.0 / res.f_hz;
    let d = res.damping;
    for (i, (&f, &wt)) in w.freq_hz.iter().zip(w.weight).enumerate() {
        let x = f * inv_fk;
        // 1/D = conj(D)/|D|², D = 1 − x² + j·d·x.
        let (dr, di) = (1.0 - x * x, d * x);
        let s = 1.0 / (dr * dr + di * di);
        let (vr, vi) = (dr * s, -di * s);
        col[i] = wt * vr;
        col[n + i] = wt * vi;
        if let Some((gf, gd)) = grad.as_mut() {
            // ∂(1/D) = −∂D·(1/D)², with ∂D/∂ln f_k = 2x² − j·d·x (x = f/f_k falls as f_k
            // rises) and ∂D/∂ln d = j·d·x.
            let (qr, qi) = (vr * vr - vi * vi, 2.0 * vr * vi);
            let (ar, ai) = (2.0 * x * x, -d * x);
            gf[i] = -wt * (ar * qr - ai * qi);
            gf[n + i] = -wt * (ar * qi + ai * qr);
            let (br, bi) = (0.0, d * x);
            gd[i] = -wt * (br * qr - bi * qi);
            gd[n + i] = -wt * (br * qi + bi * qr);
        }
    }
    col
}

/// logistic(u) and its slope.
fn logistic(u: f64) -> (f64, f64) {
    let s = 1.0 / (1.0 + (-u).exp());
    (s, s * (1.0 - s))
}

fn logit(s: f64) -> f64 {
    let s = s.clamp(1e-6, 1.0 - 1e-6);
    (s / (1.0 - s)).ln()
}

/// The solver's coordinates: θ = (u, v) per resonance, ln f_k = a + (b − a)·σ(u) over the
/// band's ln f, ln d likewise over [`DAMPING_RANGE`].
#[derive(Debug, Clone, Copy)]
struct Bounds {
    ln_f: (f64, f64),
    ln_d: (f64, f64),
}

impl Bounds {
    fn new(band_hz: (f64, f64)) -> Bounds {
        Bounds {
            ln_f: (band_hz.0.ln(), band_hz.1.ln()),
            ln_d: (DAMPING_RANGE.0.ln(), DAMPING_RANGE.1.ln()),
        }
    }

    /// Each resonance with ∂ln f_k/∂u and ∂ln d/∂v.
    fn decode(&self, p: &Array1<f64>) -> Vec<(Resonance, f64, f64)> {
        let (span_f, span_d) = (self.ln_f.1 - self.ln_f.0, self.ln_d.1 - self.ln_d.0);
        p.iter()
            .copied()
            .collect::<Vec<f64>>()
            .chunks_exact(2)
            .map(|uv| {
                let (su, gu) = logistic(uv[0]);
                let (sv, gv) = logistic(uv[1]);
                let res = Resonance {
                    f_hz: (self.ln_f.0 + span_f * su).exp(),
                    damping: (self.ln_d.0 + span_d * sv).exp(),
                };
                (res, span_f * gu, span_d * gv)
            })
            .collect()
    }

    fn encode(&self, res: &[Resonance]) -> Array1<f64> {
        let at = |v: f64, (a, b): (f64, f64)| logit((v.ln() - a) / (b - a));
        res.iter()
            .flat_map(|r| [at(r.f_hz, self.ln_f), at(r.damping, self.ln_d)])
            .collect()
    }
}

/// The separable problem the solver sees.
struct Problem<'a> {
    data: &'a Weighted<'a>,
    base_eqs: NormalEquations,
    bounds: Bounds,
}

impl Problem<'_> {
    /// Residuals r = A·x − b at the linear optimum x, and with `jac` Kaufman's Jacobian
    /// (column-major, one column of 2n values per coordinate).
    fn evaluate(&self, p: &Array1<f64>, r: &mut [f64], jac: Option<&mut [f64]>) {
        let w = self.data;
        let rows = w.rhs.len();
        let decoded = self.bounds.decode(p);
        let with_grad = jac.is_some();
        let mut grads: Vec<(Vec<f64>, Vec<f64>)> = Vec::new();
        let cols: Vec<Vec<f64>> = decoded
            .iter()
            .map(|&(res, _, _)| {
                if with_grad {
                    let (mut gf, mut gd) = (vec![0.0; rows], vec![0.0; rows]);
                    let c = column(w, res, Some((&mut gf, &mut gd)));
                    grads.push((gf, gd));
                    c
                } else {
                    column(w, res, None)
                }
            })
            .collect();
        let eqs = self.base_eqs.extended(w.base, &cols, w.rhs);
        let all: Vec<usize> = (0..eqs.len()).collect();
        let factor = eqs.factor(&all);
        let x = eqs.solve(&all);
        let col = |i: usize| {
            if i < w.base.len() {
                &w.base[i]
            } else {
                &cols[i - w.base.len()]
            }
        };
        r.iter_mut().zip(w.rhs).for_each(|(ri, b)| *ri = -b);
        for (i, &xi) in x.iter().enumerate() {
            axpy(r, xi, col(i));
        }
        let Some(jac) = jac else { return };
        let nb = w.base.len();
        for (k, ((gf, gd), &(_, sf, sd))) in grads.iter().zip(&decoded).enumerate() {
            for (j, (g, slope)) in [(gf, sf), (gd, sd)].into_iter().enumerate() {
                let out = &mut jac[(2 * k + j) * rows..(2 * k + j + 1) * rows];
                // v = x_k·slope·∂c_k, then P⊥v = v − A·G⁻¹·Aᵀv.
                out.iter_mut()
                    .zip(g)
                    .for_each(|(o, gi)| *o = x[nb + k] * slope * gi);
                let atv: Vec<f64> = (0..eqs.len()).map(|i| dot(col(i), out)).collect();
                let y = factor.solve(&atv);
                for (i, &yi) in y.iter().enumerate() {
                    axpy(out, -yi, col(i));
                }
            }
        }
    }
}

fn axpy(out: &mut [f64], a: f64, x: &[f64]) {
    if a != 0.0 {
        out.iter_mut().zip(x).for_each(|(o, v)| *o += a * v);
    }
}

impl Operator for Problem<'_> {
    type Param = Array1<f64>;
    type Output = Array1<f64>;
    fn apply(&self, p: &Array1<f64>) -> Result<Array1<f64>, Error> {
        let mut r = Array1::zeros(self.data.rhs.len());
        self.residuals_into(p, &mut r)?;
        Ok(r)
    }
}

impl Jacobian for Problem<'_> {
    type Param = Array1<f64>;
    type Jacobian = Array2<f64>;
    fn jacobian(&self, p: &Array1<f64>) -> Result<Array2<f64>, Error> {
        let (mut r, mut j) = (Array1::zeros(0), Array2::zeros((0, 0)));
        self.residuals_and_jacobian_into(p, &mut r, &mut j)?;
        Ok(j)
    }
}

impl LeastSquares for Problem<'_> {
    fn residuals_into(&self, p: &Array1<f64>, r: &mut Array1<f64>) -> Result<(), Error> {
        if r.len() != self.data.rhs.len() || r.as_slice().is_none() {
            *r = Array1::zeros(self.data.rhs.len());
        }
        let out = r
            .as_slice_mut()
            .ok_or_else(|| Error::msg("residual buffer"))?;
        self.evaluate(p, out, None);
        Ok(())
    }

    fn residuals_and_jacobian_into(
        &self,
        p: &Array1<f64>,
        r: &mut Array1<f64>,
        j: &mut Array2<f64>,
    ) -> Result<(), Error> {
        let shape = (self.data.rhs.len(), p.len());
        if r.len() != shape.0 || r.as_slice().is_none() {
            *r = Array1::zeros(shape.0);
        }
        if j.dim() != shape || !j.t().is_standard_layout() {
            *j = Array2::zeros(shape.f());
        }
        let out = r
            .as_slice_mut()
            .ok_or_else(|| Error::msg("residual buffer"))?;
        let cols = j
            .as_slice_memory_order_mut()
            .ok_or_else(|| Error::msg("Jacobian buffer"))?;
        self.evaluate(p, out, Some(cols));
        Ok(())
    }
}

/// The weighted column of a resonance (for the linear fit that follows a refinement).
pub fn weighted_column(w: &Weighted, res: Resonance) -> Vec<f64> {
    column(w, res, None)
}

/// Refine the resonances `start` (each inside the band and [`DAMPING_RANGE`]) so that, together
/// with the fixed basis, they fit the data best; `start` itself when the solver fails.
/// `base_eqs` are the normal equations of the fixed basis columns `w.base` with `w.rhs`, which
/// the caller has already formed.
pub fn refine(
    w: &Weighted,
    base_eqs: &NormalEquations,
    band_hz: (f64, f64),
    start: &[Resonance],
) -> Vec<Resonance> {
    let bounds = Bounds::new(band_hz);
    let cfg = LmConfig {
        max_iters: MAX_ITERS,
        ftol: TOL,
        xtol: TOL,
        gtol: TOL,
        ..LmConfig::default()
    };
    let problem = Problem {
        data: w,
        base_eqs: base_eqs.clone(),
        bounds,
    };
    match minimize(problem, bounds.encode(start), &cfg) {
        Ok(out) if out.cost.is_finite() => bounds
            .decode(&out.params)
            .into_iter()
            .map(|d| d.0)
            .collect(),
        _ => start.to_vec(),
    }
}

/// The grid resonance that best explains the residual `r` of the current fit: largest
/// |⟨c, r⟩|/‖c‖ over centres log-spaced across the band at `per_decade`/d per decade for each of
/// the dampings `dampings` (matching pursuit; Mallat & Zhang, IEEE Trans. Signal Process. 41,
/// 3397 (1993)).
pub fn best_seed(
    w: &Weighted,
    r: &[f64],
    band_hz: (f64, f64),
    dampings: &[f64],
    per_decade: f64,
) -> Option<Resonance> {
    let decades = (band_hz.1 / band_hz.0).log10();
    let mut best: Option<(f64, Resonance)> = None;
    for &d in dampings {
        let n = (decades * per_decade / d).ceil() as usize + 1;
        for f_hz in super::synthetic::log_freqs(n, band_hz.0, band_hz.1) {
            let res = Resonance { f_hz, damping: d };
            let c = column(w, res, None);
            let norm = dot(&c, &c).sqrt();
            if !(norm > 0.0) {
                continue;
            }
            let score = dot(&c, r).abs() / norm;
            if best.map_or(true, |(s, _)| score > s) {
                best = Some((score, res));
            }
        }
    }
    best.map(|(_, res)| res)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::fit::synthetic::log_freqs;

    /// The Kaufman Jacobian of a fit whose residual is zero at the optimum equals the full
    /// Golub–Pereyra Jacobian there; check it against central differences of the residuals
    /// [common practice: finite-difference check of an analytic Jacobian].
    #[test]
    fn jacobian_matches_central_differences_at_an_exact_fit() {
        let f = log_freqs(60, 1e5, 1e9);
        let weight = vec![1.0; f.len()];
        let truth = Resonance {
            f_hz: 3e7,
            damping: 0.4,
        };
        let base = vec![
            [vec![1.0; f.len()], vec![0.0; f.len()]].concat(),
            column(
                &Weighted {
                    freq_hz: &f,
                    weight: &weight,
                    base: &[],
                    rhs: &[],
                },
                Resonance {
                    f_hz: 2e6,
                    damping: 1.0,
                },
                None,
            ),
        ];
        let data_w = Weighted {
            freq_hz: &f,
            weight: &weight,
            base: &base,
            rhs: &[],
        };
        let truth_col = column(&data_w, truth, None);
        let rhs: Vec<f64> = truth_col
            .iter()
            .zip(&base[0])
            .map(|(c, one)| 40.0 * c + 2.0 * one)
            .collect();
        let w = Weighted {
            rhs: &rhs,
            ..data_w
        };
        let problem = Problem {
            data: &w,
            base_eqs: NormalEquations::new(&base, &rhs),
            bounds: Bounds::new((1e5, 1e9)),
        };
        let p = problem.bounds.encode(&[truth]);
        let j = problem.jacobian(&p).unwrap();
        let h = 1e-6;
        for c in 0..2 {
            let (mut a, mut b) = (p.clone(), p.clone());
            a[c] += h;
            b[c] -= h;
            let fd = (problem.apply(&a).unwrap() - problem.apply(&b).unwrap()) / (2.0 * h);
            let scale = fd.iter().fold(0.0f64, |m, v| m.max(v.abs()));
            for (x, y) in j.column(c).iter().zip(fd.iter()) {
                assert!((x - y).abs() <= 1e-5 * scale, "param {c}: {x} vs {y}");
            }
        }
    }

    /// A resonance started half a decade off and at the wrong damping is moved onto the one in
    /// the data, which it then fits exactly.
    #[test]
    fn refine_finds_the_resonance_of_noise_free_data() {
        let f = log_freqs(120, 1e5, 1e9);
        let weight = vec![1.0; f.len()];
        let base = vec![[vec![1.0; f.len()], vec![0.0; f.len()]].concat()];
        let truth = Resonance {
            f_hz: 5e7,
            damping: 0.3,
        };
        let probe = Weighted {
            freq_hz: &f,
            weight: &weight,
            base: &base,
            rhs: &[],
        };
        let rhs: Vec<f64> = column(&probe, truth, None)
            .iter()
            .zip(&base[0])
            .map(|(c, one)| 300.0 * c + one)
            .collect();
        let w = Weighted { rhs: &rhs, ..probe };
        let seed = best_seed(&w, &rhs, (1e5, 1e9), &[0.2, 0.5, 1.2], 2.0).unwrap();
        let got = refine(
            &w,
            &NormalEquations::new(&base, &rhs),
            (1e5, 1e9),
            &[Resonance {
                f_hz: seed.f_hz,
                damping: seed.damping,
            }],
        );
        assert!((got[0].f_hz / truth.f_hz - 1.0).abs() < 1e-4, "{got:?}");
        assert!(
            (got[0].damping / truth.damping - 1.0).abs() < 1e-4,
            "{got:?}"
        );
    }
}
