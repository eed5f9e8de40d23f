//! Rotationally symmetric cores of any axial profile h(r) (PHYSICS.md §1):
//! I1 = ∫h/r dr, I2 = ∫h/r² dr over r1..r2, C1 = 2π/I1, C2 = 2π·I2/I1³.
//! The integrals use Gauss–Legendre quadrature on zones inside which h(r) is smooth, so
//! chamfers and rounded edges (kinks at the zone borders) integrate to machine precision or
//! close to it.

use super::Effective;
use std::f64::consts::{PI, TAU};

/// Gauss–Legendre points per smooth zone (PHYSICS.md §1 suggests ~64).
pub const POINTS_PER_ZONE: usize = 64;

/// Nodes and weights of the n-point Gauss–Legendre rule on [−1, 1], found by Newton's method
/// on the Legendre polynomial P_n from the usual cosine first guess.
pub fn gauss_legendre(n: usize) -> (Vec<f64>, Vec<f64>) {
    let mut x = vec![0.0; n];
    let mut w = vec![0.0; n];
    for i in 0..n.div_ceil(2) {
        let mut z = (PI * (i as f64 + 0.75) / (n as f64 + 0.5)).cos();
        for _ in 0..100 {
            let (p, d) = legendre_and_derivative(n, z);
            let dz = p / d;
            z -= dz;
            if dz.abs() < 1e-16 {
                break;
            }
        }
        let (_, dp) = legendre_and_derivative(n, z);
        let wi = 2.0 / ((1.0 - z * z) * dp * dp);
        x[i] = -z;
        x[n - 1 - i] = z;
        w[i] = wi;
        w[n - 1 - i] = wi;
    }
    (x, w)
}

/// P_n(z) and P_n′(z) by the three-term recurrence.
fn legendre_and_derivative(n: usize, z: f64) -> (f64, f64) {
    let (mut p0, mut p1) = (1.0, z);
    if n == 0 {
        return (1.0, 0.0);
    }
    for k in 2..=n {
        let p2 = ((2 * k - 1) as f64 * z * p1 - (k - 1) as f64 * p0) / k as f64;
        p0 = p1;
        p1 = p2;
    }
    (p1, n as f64 * (z * p1 - p0) / (z * z - 1.0))
}

/// ∫ f over [a, b] split at `breaks` (sorted, inside (a, b)), Gauss–Legendre on each zone.
pub fn integrate_zones(f: impl Fn(f64) -> f64, a: f64, b: f64, breaks: &[f64]) -> f64 {
    let (x, w) = gauss_legendre(POINTS_PER_ZONE);
    let mut edges = vec![a];
    edges.extend(breaks.iter().copied().filter(|&t| t > a && t < b));
    edges.push(b);
    edges
        .windows(2)
        .map(|z| {
            let (mid, half) = ((z[0] + z[1]) / 2.0, (z[1] - z[0]) / 2.0);
            half * x
                .iter()
                .zip(&w)
                .map(|(xi, wi)| wi * f(mid + half * xi))
                .sum::<f64>()
        })
        .sum()
}

/// Effective parameters of a ring with axial height h(r) between radii r1 < r2; `breaks` are
/// the radii where h(r) has a kink. `a_min` is the cross-section ∫h dr.
pub fn ring_effective(h: impl Fn(f64) -> f64, r1: f64, r2: f64, breaks: &[f64]) -> Effective {
    let i1 = integrate_zones(|r| h(r) / r, r1, r2, breaks);
    let i2 = integrate_zones(|r| h(r) / (r * r), r1, r2, breaks);
    let area = integrate_zones(&h, r1, r2, breaks);
    Effective {
        c1: TAU / i1,
        c2: TAU * i2 / i1.powi(3),
        a_min: area,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    // Abramowitz & Stegun, Table 25.4: 2-point rule ±1/√3 with weights 1; 3-point ±√0.6, 5/9, 8/9.
    #[test]
    fn abramowitz_stegun_gauss_legendre_nodes() {
        let (x, w) = gauss_legendre(2);
        assert!((x[1] - 1.0 / 3f64.sqrt()).abs() < 1e-15 && (w[0] - 1.0).abs() < 1e-14);
        let (x, w) = gauss_legendre(3);
        assert!((x[2] - 0.6f64.sqrt()).abs() < 1e-15 && x[1].abs() < 1e-15);
        assert!((w[1] - 8.0 / 9.0).abs() < 1e-14 && (w[0] - 5.0 / 9.0).abs() < 1e-14);
        let (_, w) = gauss_legendre(POINTS_PER_ZONE);
        assert!((w.iter().sum::<f64>() - 2.0).abs() < 1e-13);
    }

    // Calculus: ∫₁² dr/r = ln 2 and ∫₁² dr/r² = 1/2.
    #[test]
    fn integrals_of_textbook_functions() {
        assert!((integrate_zones(|r| 1.0 / r, 1.0, 2.0, &[]) - 2f64.ln()).abs() < 1e-15);
        assert!((integrate_zones(|r| 1.0 / (r * r), 1.0, 2.0, &[1.5]) - 0.5).abs() < 1e-15);
    }
}
