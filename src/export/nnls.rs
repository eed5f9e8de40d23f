//! Non-negative least squares, min ‖A·x − b‖ subject to x ≥ 0, by the active-set method of
//! Lawson & Hanson (*Solving Least Squares Problems*, 1974, ch. 23, algorithm NNLS). The
//! unconstrained sub-problems go through the crate's pivoted-QR solver, because the Debye basis
//! columns this is used for are nearly collinear. Pure math.

use crate::fit::lstsq::lstsq;

/// Rank tolerance of the QR sub-problems (relative to the largest unit-scaled column).
const RANK_RTOL: f64 = 1e-13;

/// The non-negative `x` minimising ‖A·x − b‖ for A given by columns of equal length.
pub fn nnls(cols: &[Vec<f64>], b: &[f64]) -> Vec<f64> {
    let n = cols.len();
    // Columns scaled to unit norm: x ≥ 0 is kept by a positive scaling, and the optimality
    // test below then compares directions, not units.
    let scale: Vec<f64> = cols.iter().map(|c| inv_norm(c)).collect();
    let a: Vec<Vec<f64>> = cols
        .iter()
        .zip(&scale)
        .map(|(c, s)| c.iter().map(|v| v * s).collect())
        .collect();
    let tol = 1e-12 * norm(b).max(f64::MIN_POSITIVE);
    let mut x = vec![0.0; n];
    let mut passive = vec![false; n];
    // Each outer step adds one column; Lawson & Hanson's bound of 3n iterations guards against
    // cycling through round-off.
    for _ in 0..3 * n.max(1) {
        let r = residual(&a, &x, b);
        let best = (0..n)
            .filter(|&j| !passive[j] && scale[j] > 0.0)
            .map(|j| (j, dot(&a[j], &r)))
            .filter(|&(_, w)| w > tol)
            .max_by(|p, q| p.1.total_cmp(&q.1));
        let Some((j, _)) = best else { break };
        passive[j] = true;
        loop {
            let z = solve_on(&a, &passive, b);
            let blocking: Vec<usize> = (0..n).filter(|&i| passive[i] && z[i] <= 0.0).collect();
            if blocking.is_empty() {
                x = z;
                break;
            }
            // Step from x towards z only as far as x stays feasible, then drop the columns
            // that reached zero.
            let (stop, alpha) = blocking.iter().map(|&i| (i, x[i] / (x[i] - z[i]))).fold(
                (blocking[0], f64::INFINITY),
                |m, p| if p.1 < m.1 { p } else { m },
            );
            for i in 0..n {
                x[i] += alpha * (z[i] - x[i]);
            }
            x[stop] = 0.0;
            let big = x.iter().fold(0.0f64, |m, v| m.max(v.abs()));
            for i in 0..n {
                if passive[i] && x[i] <= 1e-15 * big {
                    passive[i] = false;
                    x[i] = 0.0;
                }
            }
            if !passive.iter().any(|&p| p) {
                break;
            }
        }
    }
    x.iter().zip(&scale).map(|(v, s)| v * s).collect()
}

/// Unconstrained least squares on the passive columns; zero elsewhere.
fn solve_on(a: &[Vec<f64>], passive: &[bool], b: &[f64]) -> Vec<f64> {
    let idx: Vec<usize> = (0..a.len()).filter(|&i| passive[i]).collect();
    let sol = lstsq(idx.iter().map(|&i| a[i].clone()).collect(), b, RANK_RTOL);
    let mut z = vec![0.0; a.len()];
    for (k, &i) in idx.iter().enumerate() {
        z[i] = sol[k];
    }
    z
}

fn residual(a: &[Vec<f64>], x: &[f64], b: &[f64]) -> Vec<f64> {
    let mut r = b.to_vec();
    for (c, &xi) in a.iter().zip(x) {
        if xi != 0.0 {
            r.iter_mut().zip(c).for_each(|(ri, ci)| *ri -= xi * ci);
        }
    }
    r
}

fn dot(u: &[f64], v: &[f64]) -> f64 {
    u.iter().zip(v).map(|(a, b)| a * b).sum()
}

fn norm(v: &[f64]) -> f64 {
    dot(v, v).sqrt()
}

fn inv_norm(c: &[f64]) -> f64 {
    let n = norm(c);
    if n > 0.0 && n.is_finite() {
        1.0 / n
    } else {
        0.0
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    // Lawson & Hanson, ch. 23: at the solution x ≥ 0, the gradient w = Aᵀ(b − Ax) is zero on
    // the positive components and ≤ 0 on the zero ones (the Kuhn–Tucker conditions). Checked on
    // a problem whose unconstrained solution has a negative component.
    #[test]
    fn nnls_meets_the_kuhn_tucker_conditions() {
        let cols = vec![
            vec![1.0, 0.0, 0.0, 1.0],
            vec![0.0, 1.0, 0.0, 1.0],
            vec![1.0, 1.0, 1.0, 0.0],
        ];
        let b = vec![2.0, -1.0, 0.5, 1.0];
        let unconstrained = lstsq(cols.clone(), &b, 1e-14);
        assert!(
            unconstrained.iter().any(|&v| v < 0.0),
            "{:?}",
            unconstrained
        );
        let x = nnls(&cols, &b);
        let r = residual(&cols, &x, &b);
        for (j, c) in cols.iter().enumerate() {
            let w = dot(c, &r);
            assert!(x[j] >= 0.0);
            if x[j] > 0.0 {
                assert!(w.abs() < 1e-12, "w[{j}] = {w}");
            } else {
                assert!(w <= 1e-12, "w[{j}] = {w}");
            }
        }
    }

    // A consistent system with a non-negative solution is solved exactly [circuit-free algebra].
    #[test]
    fn nnls_recovers_a_nonnegative_exact_solution() {
        let cols = vec![vec![1.0, 2.0, 0.5], vec![0.0, 1.0, 3.0]];
        let b: Vec<f64> = (0..3)
            .map(|i| 2.0 * cols[0][i] + 0.25 * cols[1][i])
            .collect();
        let x = nnls(&cols, &b);
        assert!(
            (x[0] - 2.0).abs() < 1e-12 && (x[1] - 0.25).abs() < 1e-12,
            "{:?}",
            x
        );
    }
}
