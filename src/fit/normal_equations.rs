//! Small dense symmetric positive-definite solves for the normal equations (JᵀJ + λD)h = −Jᵀr
//! and for (JᵀJ)⁻¹. The matrices are at most a dozen rows, so a plain Cholesky factorisation is
//! the right tool; argmin-math's ndarray backend here has no linear algebra.
//!
//! Fitted parameters differ in scale by many orders of magnitude (Hz against exponents), so the
//! matrix is first scaled to unit diagonal (Jacobi scaling, Golub & Van Loan, Matrix
//! Computations, §4.2 and §3.5.2): this leaves the solution unchanged in exact arithmetic and
//! keeps the factorisation's pivots meaningful, so a singular matrix is told apart from a
//! badly scaled one.

use super::dot::dot;
use ndarray::{Array1, Array2};

/// A pivot of the unit-diagonal matrix below this is treated as zero: the columns are then
/// linearly dependent to within about √ε of double precision (common practice for Cholesky
/// rank decisions on equilibrated matrices).
const PIVOT_TOL: f64 = 1e-13;

/// Cholesky factor L (lower) of the Jacobi-scaled matrix S = D⁻½AD⁻½, with the scale d_i = 1/√A_ii.
#[derive(Debug, Clone)]
pub struct Cholesky {
    l: Array2<f64>,
    scale: Array1<f64>,
}

impl Cholesky {
    /// Factor the symmetric matrix `a` (only its lower triangle is read). `None` when `a` is not
    /// square, not finite, or not positive definite to working precision.
    pub fn factor(a: &Array2<f64>) -> Option<Cholesky> {
        let n = a.nrows();
        if a.ncols() != n {
            return None;
        }
        let mut scale = Array1::zeros(n);
        for i in 0..n {
            let d = a[[i, i]];
            if !(d.is_finite() && d > 0.0) {
                return None;
            }
            scale[i] = 1.0 / d.sqrt();
        }
        let mut l = Array2::<f64>::zeros((n, n));
        for j in 0..n {
            let mut diag = a[[j, j]] * scale[j] * scale[j];
            for k in 0..j {
                diag -= l[[j, k]] * l[[j, k]];
            }
            if !(diag > PIVOT_TOL) {
                return None;
            }
            let ljj = diag.sqrt();
            l[[j, j]] = ljj;
            for i in j + 1..n {
                let mut s = a[[i, j]] * scale[i] * scale[j];
                for k in 0..j {
                    s -= l[[i, k]] * l[[j, k]];
                }
                l[[i, j]] = s / ljj;
            }
        }
        Some(Cholesky { l, scale })
    }

    /// Solve A x = b.
    pub fn solve(&self, b: &Array1<f64>) -> Array1<f64> {
        let n = self.scale.len();
        // A = D^{-1/2} L Lᵀ D^{-1/2}  ⇒  x = D^{1/2}… with d = 1/√A_ii: x = d ∘ L⁻ᵀ L⁻¹ (d ∘ b).
        let mut y: Array1<f64> = b * &self.scale;
        for i in 0..n {
            let mut s = y[i];
            for k in 0..i {
                s -= self.l[[i, k]] * y[k];
            }
            y[i] = s / self.l[[i, i]];
        }
        for i in (0..n).rev() {
            let mut s = y[i];
            for k in i + 1..n {
                s -= self.l[[k, i]] * y[k];
            }
            y[i] = s / self.l[[i, i]];
        }
        y * &self.scale
    }

    /// A⁻¹, column by column.
    pub fn inverse(&self) -> Array2<f64> {
        let n = self.scale.len();
        let mut inv = Array2::zeros((n, n));
        for j in 0..n {
            let mut e = Array1::zeros(n);
            e[j] = 1.0;
            inv.column_mut(j).assign(&self.solve(&e));
        }
        // Symmetrise away the rounding difference between the two triangles.
        for i in 0..n {
            for j in 0..i {
                let m = 0.5 * (inv[[i, j]] + inv[[j, i]]);
                inv[[i, j]] = m;
                inv[[j, i]] = m;
            }
        }
        inv
    }
}

/// JᵀJ for a Jacobian with one row per residual. A column-major Jacobian (long contiguous
/// columns, the layout [`crate::fit::problem::MuProblem`] returns) is reduced by contiguous
/// column dot products over the lower triangle ([`dot`], vectorised); any other layout by
/// matrix product.
pub fn gram(j: &Array2<f64>) -> Array2<f64> {
    let Some(cols) = contiguous_columns(j) else {
        return j.t().dot(j);
    };
    let n = cols.len();
    let mut g = Array2::zeros((n, n));
    for a in 0..n {
        for b in 0..=a {
            let v = dot(cols[a], cols[b]);
            g[[a, b]] = v;
            g[[b, a]] = v;
        }
    }
    g
}

/// Jᵀv, the gradient Jᵀr of the cost: one [`dot`] per column of a column-major J.
pub fn jac_t_times(j: &Array2<f64>, v: &Array1<f64>) -> Array1<f64> {
    match (contiguous_columns(j), v.as_slice()) {
        (Some(cols), Some(v)) => cols.iter().map(|c| dot(c, v)).collect(),
        _ => j.t().dot(v),
    }
}

/// The columns of `j` as slices, if each is contiguous in memory (column-major layout).
fn contiguous_columns(j: &Array2<f64>) -> Option<Vec<&[f64]>> {
    if !j.t().is_standard_layout() {
        return None;
    }
    (0..j.ncols()).map(|c| j.column(c).to_slice()).collect()
}

/// out += α·J·v. A column-major J is added column by column (contiguous axpy updates);
/// ndarray's own product would walk it row by row, short strided rows that cost far more
/// than the arithmetic.
pub fn add_jac_times(out: &mut Array1<f64>, alpha: f64, j: &Array2<f64>, v: &Array1<f64>) {
    if j.t().is_standard_layout() {
        for (col, &vc) in j.columns().into_iter().zip(v) {
            out.scaled_add(alpha * vc, &col);
        }
    } else {
        out.scaled_add(alpha, &j.dot(v));
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use ndarray::array;

    /// The 4×4 Hilbert matrix H_ij = 1/(i+j+1) has a known exact inverse with integer entries
    /// (Hilbert 1894; Higham, Accuracy and Stability of Numerical Algorithms, §28.1): its
    /// condition number ~1.6e4 makes this a real test of the factorisation.
    #[test]
    fn hilbert4_inverse_matches_exact_integer_inverse() {
        let h = Array2::from_shape_fn((4, 4), |(i, j)| 1.0 / (i + j + 1) as f64);
        let exact = array![
            [16.0, -120.0, 240.0, -140.0],
            [-120.0, 1200.0, -2700.0, 1680.0],
            [240.0, -2700.0, 6480.0, -4200.0],
            [-140.0, 1680.0, -4200.0, 2800.0]
        ];
        let inv = Cholesky::factor(&h)
            .expect("Hilbert matrices are positive definite")
            .inverse();
        for (a, b) in inv.iter().zip(exact.iter()) {
            assert!((a - b).abs() <= 1e-9 * b.abs(), "{a} vs {b}");
        }
    }

    #[test]
    fn solve_is_invariant_to_badly_scaled_columns() {
        // Same system with parameter 1 measured in units 1e9 times smaller.
        let a = array![[4.0, 2.0], [2.0, 3.0]];
        let b = array![2.0, 1.0];
        let x = Cholesky::factor(&a).unwrap().solve(&b);
        // Exact: det = 8, x = [ (3·2 − 2·1)/8, (4·1 − 2·2)/8 ] = [0.5, 0].
        assert!((x[0] - 0.5).abs() < 1e-15 && x[1].abs() < 1e-15);
        let s = 1e9;
        let a2 = array![[4.0 * s * s, 2.0 * s], [2.0 * s, 3.0]];
        let b2 = array![2.0 * s, 1.0];
        let x2 = Cholesky::factor(&a2).unwrap().solve(&b2);
        assert!((x2[0] * s - 0.5).abs() < 1e-14 && x2[1].abs() < 1e-14);
    }

    /// JᵀJ and J·v of a small matrix worked by hand, in both memory orders (the column-major
    /// order takes the column-by-column paths).
    #[test]
    fn gram_and_jacobian_product_match_hand_values_in_both_orders() {
        use ndarray::ShapeBuilder;
        let rows = array![[1.0, 2.0], [3.0, 4.0], [5.0, 6.0]];
        let mut cols = Array2::zeros((3, 2).f());
        cols.assign(&rows);
        assert!(!cols.is_standard_layout());
        // JᵀJ = [[1+9+25, 2+12+30], [., 4+16+36]]; J·(1, −1) = (−1, −1, −1).
        let want = array![[35.0, 44.0], [44.0, 56.0]];
        for j in [&rows, &cols] {
            assert_eq!(gram(j), want);
            let mut out = array![10.0, 20.0, 30.0];
            add_jac_times(&mut out, 2.0, j, &array![1.0, -1.0]);
            assert_eq!(out, array![8.0, 18.0, 28.0]);
        }
    }

    #[test]
    fn singular_and_indefinite_matrices_are_refused() {
        assert!(Cholesky::factor(&array![[1.0, 1.0], [1.0, 1.0]]).is_none());
        assert!(Cholesky::factor(&array![[1.0, 2.0], [2.0, 1.0]]).is_none());
        assert!(Cholesky::factor(&array![[0.0, 0.0], [0.0, 1.0]]).is_none());
    }
}
