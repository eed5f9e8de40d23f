//! Linear least squares by Householder QR with column pivoting (Businger & Golub 1965; Golub &
//! Van Loan, Matrix Computations, §5.4.1), for the Lin-KK fit whose Debye and resonance basis
//! columns are nearly collinear. Normal equations would square that conditioning; pivoted QR
//! instead finds the numerical rank and leaves dependent columns at zero weight.
//!
//! Matrices are held as a list of columns (each column contiguous), the layout the Householder
//! updates walk through.

use super::dot::dot;

/// Relative size below which a downdated column norm is recomputed: √ε, as LAPACK's dgeqp3.
const DOWNDATE_TOL: f64 = 1.49e-8;

/// A column-pivoted QR factorisation A·P = Q·R of a tall matrix, stored compactly: R on and
/// above the diagonal of the first `rank` columns, the Householder vectors below it.
#[derive(Debug, Clone)]
pub struct PivotedQr {
    /// Factorised columns in pivoted order.
    cols: Vec<Vec<f64>>,
    /// Householder scalars τ_k of the reflectors I − τ_k v_k v_kᵀ (v_k[k] = 1 implied).
    tau: Vec<f64>,
    /// `perm[k]` is the original index of pivoted column k.
    perm: Vec<usize>,
    rank: usize,
    rows: usize,
}

impl PivotedQr {
    /// Factor the columns `cols` (all of the same length). Elimination stops when the largest
    /// remaining column norm falls below `rank_rtol` times the largest original column norm;
    /// the columns not eliminated by then are numerically dependent on the others.
    pub fn factor(mut cols: Vec<Vec<f64>>, rank_rtol: f64) -> PivotedQr {
        let rows = cols.first().map_or(0, Vec::len);
        let n = cols.len();
        let mut perm: Vec<usize> = (0..n).collect();
        let mut tau = Vec::with_capacity(n.min(rows));
        // Remaining column norms below row k, downdated after each step and recomputed when
        // cancellation has eaten their accuracy (LAPACK dgeqp3's scheme, Drmač & Bujanović 2008).
        let mut part: Vec<f64> = cols.iter().map(|c| norm(c)).collect();
        let mut fresh = part.clone();
        let first_norm = part.iter().copied().fold(0.0, f64::max);
        let mut rank = 0;
        for k in 0..n.min(rows) {
            // Pivot: the remaining column with the largest norm below row k.
            let best = (k..n).fold(k, |b, j| if part[j] > part[b] { j } else { b });
            if !(part[best] > rank_rtol * first_norm) {
                break;
            }
            cols.swap(k, best);
            perm.swap(k, best);
            part.swap(k, best);
            fresh.swap(k, best);
            let t = make_reflector(&mut cols[k][k..]);
            let (done, rest) = cols.split_at_mut(k + 1);
            let v = &done[k][k..];
            for (i, c) in rest.iter_mut().enumerate() {
                apply_reflector(v, t, &mut c[k..]);
                let j = k + 1 + i;
                if part[j] > 0.0 {
                    let ratio = c[k].abs() / part[j];
                    let left = (1.0 - ratio * ratio).max(0.0);
                    if left * (part[j] / fresh[j]).powi(2) <= DOWNDATE_TOL {
                        part[j] = norm(&c[k + 1..]);
                        fresh[j] = part[j];
                    } else {
                        part[j] *= left.sqrt();
                    }
                }
            }
            tau.push(t);
            rank += 1;
        }
        PivotedQr {
            cols,
            tau,
            perm,
            rank,
            rows,
        }
    }

    /// Numerical rank found by the factorisation.
    pub fn rank(&self) -> usize {
        self.rank
    }

    /// b ← Qᵀ·b for a vector of the matrix's row count.
    pub fn apply_qt(&self, b: &mut [f64]) {
        debug_assert_eq!(b.len(), self.rows);
        for (k, &t) in self.tau.iter().enumerate() {
            apply_reflector(&self.cols[k][k..], t, &mut b[k..]);
        }
    }

    /// Solve R₁₁·y = c[..rank] and return x in the original column order, zero for the columns
    /// left out as dependent. `c` is Qᵀb (or a right-hand side already reduced by other terms).
    pub fn solve_triangular(&self, c: &[f64]) -> Vec<f64> {
        let r = self.rank;
        let mut y = c[..r].to_vec();
        for i in (0..r).rev() {
            let mut s = y[i];
            for j in i + 1..r {
                s -= self.cols[j][i] * y[j];
            }
            y[i] = s / self.cols[i][i];
        }
        let mut x = vec![0.0; self.cols.len()];
        for (k, v) in y.into_iter().enumerate() {
            x[self.perm[k]] = v;
        }
        x
    }
}

/// Squared sine of the angle between a column and the span of the columns kept before it below
/// which [`GramFactor`] drops the column as dependent. The Gram matrix squares the condition of
/// the columns, so this corresponds to a relative singular-value cut-off of about 1e-6: far
/// above the rounding of a unit-diagonal Gram matrix (~1e-15), far below any direction that
/// changes a fit (common practice for rank decisions on normal equations; Golub & Van Loan §5.3.7).
pub const DEPENDENT_PIVOT: f64 = 1e-12;

/// Cholesky factor of a Gram matrix G = AᵀA for the normal equations AᵀA·x = Aᵀb, for small
/// linear fits that are re-solved many times with changing columns (Lin-KK). G is scaled to unit
/// diagonal first; a column whose pivot falls below [`DEPENDENT_PIVOT`] lies in the span of the
/// columns before it and is left out with coefficient 0 — the normal-equation counterpart of
/// [`PivotedQr`]'s rank decision, without pivoting (the columns' own order decides which of two
/// dependent columns stays).
#[derive(Debug, Clone)]
pub struct GramFactor {
    n: usize,
    /// Lower factor of the scaled matrix, row-major n×n (rows of dropped columns are zero).
    l: Vec<f64>,
    /// 1/√G_ii (0 for a zero column).
    scale: Vec<f64>,
    kept: Vec<bool>,
}

impl GramFactor {
    /// Factor the n×n symmetric matrix whose entries `entry(i, j)` gives (read for i ≥ j).
    pub fn new(n: usize, entry: impl Fn(usize, usize) -> f64) -> GramFactor {
        let scale: Vec<f64> = (0..n)
            .map(|i| {
                let d = entry(i, i);
                if d > 0.0 && d.is_finite() {
                    1.0 / d.sqrt()
                } else {
                    0.0
                }
            })
            .collect();
        let mut l = vec![0.0; n * n];
        let mut kept = vec![false; n];
        for j in 0..n {
            if scale[j] == 0.0 {
                continue;
            }
            let row_j = j * n;
            let mut d = entry(j, j) * scale[j] * scale[j];
            d -= l[row_j..row_j + j].iter().map(|v| v * v).sum::<f64>();
            if !(d > DEPENDENT_PIVOT) {
                continue;
            }
            let ljj = d.sqrt();
            l[row_j + j] = ljj;
            kept[j] = true;
            for i in j + 1..n {
                if scale[i] == 0.0 {
                    continue;
                }
                let row_i = i * n;
                let s = entry(i, j) * scale[i] * scale[j]
                    - dot(&l[row_i..row_i + j], &l[row_j..row_j + j]);
                l[row_i + j] = s / ljj;
            }
        }
        GramFactor { n, l, scale, kept }
    }

    /// Columns kept (not dependent on the ones before them).
    pub fn rank(&self) -> usize {
        self.kept.iter().filter(|k| **k).count()
    }

    /// x with G·x = `rhs` on the kept columns, 0 for the dropped ones.
    pub fn solve(&self, rhs: &[f64]) -> Vec<f64> {
        let n = self.n;
        let mut y: Vec<f64> = rhs.iter().zip(&self.scale).map(|(r, s)| r * s).collect();
        for i in 0..n {
            y[i] = if self.kept[i] {
                (y[i] - dot(&self.l[i * n..i * n + i], &y[..i])) / self.l[i * n + i]
            } else {
                0.0
            };
        }
        for i in (0..n).rev() {
            if !self.kept[i] {
                continue;
            }
            let s: f64 = (i + 1..n).map(|k| self.l[k * n + i] * y[k]).sum();
            y[i] = (y[i] - s) / self.l[i * n + i];
        }
        y.iter().zip(&self.scale).map(|(v, s)| v * s).collect()
    }
}

/// The normal equations AᵀA·x = Aᵀb of columns given as slices of one length, kept so that
/// subsets of the columns can be solved, or columns added, without forming the products again.
#[derive(Debug, Clone)]
pub struct NormalEquations {
    k: usize,
    /// AᵀA, row-major k×k.
    g: Vec<f64>,
    /// Aᵀb.
    h: Vec<f64>,
}

impl NormalEquations {
    pub fn new(cols: &[Vec<f64>], b: &[f64]) -> NormalEquations {
        NormalEquations {
            k: 0,
            g: Vec::new(),
            h: Vec::new(),
        }
        .extended(&[], cols, b)
    }

    /// Equations whose Gram matrix AᵀA (`g`, row-major k×k) and Aᵀb (`h`, length k) were
    /// formed some other way (in closed form, say).
    pub fn from_parts(g: Vec<f64>, h: Vec<f64>) -> NormalEquations {
        let k = h.len();
        assert_eq!(g.len(), k * k, "a {k}×{k} Gram matrix");
        NormalEquations { k, g, h }
    }

    /// These equations (of the columns `cols`) with the columns `more` appended.
    pub fn extended(&self, cols: &[Vec<f64>], more: &[Vec<f64>], b: &[f64]) -> NormalEquations {
        debug_assert_eq!(cols.len(), self.k);
        let k = self.k + more.len();
        let col = |i: usize| {
            if i < self.k {
                &cols[i]
            } else {
                &more[i - self.k]
            }
        };
        let mut g = vec![0.0; k * k];
        for i in 0..k {
            for j in 0..=i {
                let v = if i < self.k {
                    self.g[i * self.k + j]
                } else {
                    dot(col(i), col(j))
                };
                g[i * k + j] = v;
                g[j * k + i] = v;
            }
        }
        let mut h = self.h.clone();
        h.extend(more.iter().map(|c| dot(c, b)));
        NormalEquations { k, g, h }
    }

    /// The factor of the Gram matrix of the columns `subset` (indices, in that order).
    pub fn factor(&self, subset: &[usize]) -> GramFactor {
        GramFactor::new(subset.len(), |i, j| self.g[subset[i] * self.k + subset[j]])
    }

    /// Least-squares coefficients of the columns `subset` (in that order; 0 for dependent ones).
    pub fn solve(&self, subset: &[usize]) -> Vec<f64> {
        let rhs: Vec<f64> = subset.iter().map(|&i| self.h[i]).collect();
        self.factor(subset).solve(&rhs)
    }

    /// AᵀA, row-major.
    pub fn gram(&self) -> &[f64] {
        &self.g
    }

    /// Aᵀb.
    pub fn products_with_rhs(&self) -> &[f64] {
        &self.h
    }

    /// Number of columns.
    pub fn len(&self) -> usize {
        self.k
    }

    pub fn is_empty(&self) -> bool {
        self.k == 0
    }
}

/// Least-squares solution of min ‖A·x − b‖ for A given by columns. Columns are scaled to unit
/// norm first so the rank decision compares directions, not units; the solution is unscaled.
pub fn lstsq(mut cols: Vec<Vec<f64>>, b: &[f64], rank_rtol: f64) -> Vec<f64> {
    let scale: Vec<f64> = cols.iter_mut().map(|c| normalise(c)).collect();
    let qr = PivotedQr::factor(cols, rank_rtol);
    let mut c = b.to_vec();
    qr.apply_qt(&mut c);
    qr.solve_triangular(&c)
        .into_iter()
        .zip(scale)
        .map(|(x, s)| x * s)
        .collect()
}

/// Scale `c` to unit norm and return the factor that undoes it on the coefficient (1/‖c‖),
/// or 0 for a zero column (its coefficient is then 0).
pub fn normalise(c: &mut [f64]) -> f64 {
    let n = norm(c);
    if n > 0.0 {
        c.iter_mut().for_each(|v| *v /= n);
        1.0 / n
    } else {
        0.0
    }
}

fn norm(v: &[f64]) -> f64 {
    let plain = v.iter().map(|x| x * x).sum::<f64>().sqrt();
    if plain.is_finite() && plain > 1e-150 {
        return plain;
    }
    // Scaled sum of squares when the plain one over- or underflows.
    let big = v.iter().fold(0.0f64, |m, x| m.max(x.abs()));
    if big == 0.0 || !big.is_finite() {
        return big;
    }
    big * v.iter().map(|x| (x / big) * (x / big)).sum::<f64>().sqrt()
}

/// Turn `x` into the Householder vector v (v[0] = 1 implied, stored below) with R's diagonal
/// entry in x[0]; returns τ. Sign chosen to avoid cancellation (Golub & Van Loan Alg. 5.1.1).
fn make_reflector(x: &mut [f64]) -> f64 {
    let alpha = x[0];
    let sigma = norm(&x[1..]);
    if sigma == 0.0 {
        return 0.0;
    }
    let beta = -alpha.signum() * alpha.hypot(sigma);
    let beta = if beta == 0.0 { -sigma } else { beta };
    let t = (beta - alpha) / beta;
    let s = 1.0 / (alpha - beta);
    x[1..].iter_mut().for_each(|v| *v *= s);
    x[0] = beta;
    t
}

/// y ← (I − τ v vᵀ) y with v = [1, v[1..]] stored in `v` (its first entry is R's, not 1).
fn apply_reflector(v: &[f64], t: f64, y: &mut [f64]) {
    if t == 0.0 {
        return;
    }
    let dot = y[0] + v[1..].iter().zip(&y[1..]).map(|(a, b)| a * b).sum::<f64>();
    let s = t * dot;
    y[0] -= s;
    y[1..]
        .iter_mut()
        .zip(&v[1..])
        .for_each(|(yi, vi)| *yi -= s * vi);
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Six points of a straight line and its closed-form least-squares intercept a and slope b:
    /// b = Sxy/Sxx, a = ȳ − b·x̄ (Draper & Smith, Applied Regression Analysis, §1.2).
    fn straight_line() -> ([f64; 6], [f64; 6], f64, f64) {
        let x = [0.0, 1.0, 2.0, 3.0, 4.0, 5.0];
        let y = [1.1, 2.9, 5.2, 7.1, 8.8, 11.2];
        let n = x.len() as f64;
        let (xm, ym) = (x.iter().sum::<f64>() / n, y.iter().sum::<f64>() / n);
        let sxx: f64 = x.iter().map(|v| (v - xm) * (v - xm)).sum();
        let sxy: f64 = x.iter().zip(&y).map(|(a, b)| (a - xm) * (b - ym)).sum();
        let b = sxy / sxx;
        (x, y, ym - b * xm, b)
    }

    /// Straight-line fit y = a + b·x against the closed-form least-squares estimates
    /// b = Sxy/Sxx, a = ȳ − b·x̄ (Draper & Smith, Applied Regression Analysis, §1.2).
    #[test]
    fn straight_line_matches_closed_form_estimates() {
        let (x, y, a, b) = straight_line();
        let sol = lstsq(vec![vec![1.0; 6], x.to_vec()], &y, 1e-12);
        assert!(
            (sol[0] - a).abs() < 1e-12 && (sol[1] - b).abs() < 1e-12,
            "{sol:?} vs {a} {b}"
        );
    }

    /// The 5×5 Hilbert system H·x = H·1 has the exact solution x = 1; its condition number
    /// ~4.8e5 (Higham, Accuracy and Stability of Numerical Algorithms, §28.1) tests the
    /// factorisation's accuracy beyond a well-conditioned case.
    #[test]
    fn hilbert5_system_is_solved_to_its_conditioning() {
        let cols: Vec<Vec<f64>> = (0..5)
            .map(|j| (0..5).map(|i| 1.0 / (i + j + 1) as f64).collect())
            .collect();
        let b: Vec<f64> = (0..5)
            .map(|i| (0..5).map(|j| 1.0 / (i + j + 1) as f64).sum())
            .collect();
        let x = lstsq(cols, &b, 1e-14);
        for v in x {
            assert!((v - 1.0).abs() < 1e-9, "{v}");
        }
    }

    /// The normal equations of the straight line give the same closed-form estimates
    /// (Draper & Smith §1.2), and a duplicated column is dropped, not amplified.
    #[test]
    fn gram_factor_solves_the_straight_line_and_drops_a_duplicate() {
        let (x, y, a, b) = straight_line();
        let cols = [
            vec![1.0; 6],
            x.to_vec(),
            x.iter().map(|v| 3.0 * v).collect(),
        ];
        let g = GramFactor::new(3, |i, j| dot(&cols[i], &cols[j]));
        assert_eq!(g.rank(), 2);
        let rhs: Vec<f64> = cols.iter().map(|c| dot(c, &y)).collect();
        let sol = g.solve(&rhs);
        assert!(
            (sol[0] - a).abs() < 1e-12 && (sol[1] - b).abs() < 1e-12,
            "{sol:?}"
        );
        assert_eq!(sol[2], 0.0);
    }

    /// A duplicated column is dependent: rank drops by one and the fit is unchanged.
    #[test]
    fn dependent_column_is_dropped_not_amplified() {
        let x: Vec<f64> = (0..8).map(|i| i as f64).collect();
        let y: Vec<f64> = x.iter().map(|v| 2.0 + 3.0 * v).collect();
        let cols = vec![vec![1.0; 8], x.clone(), x.iter().map(|v| 2.0 * v).collect()];
        let qr = PivotedQr::factor(cols.clone(), 1e-12);
        assert_eq!(qr.rank(), 2);
        let sol = lstsq(cols, &y, 1e-12);
        let fit: Vec<f64> = x
            .iter()
            .map(|v| sol[0] + sol[1] * v + sol[2] * 2.0 * v)
            .collect();
        for (f, t) in fit.iter().zip(&y) {
            assert!((f - t).abs() < 1e-10);
        }
        assert!(sol.iter().all(|v| v.abs() < 10.0), "{sol:?}");
    }
}
