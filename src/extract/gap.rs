//! Gapped and split cores (PHYSICS.md §2): 1/μ_e = 1/μ + l_g/l_e, complex, so Im(1/μ_e) =
//! Im(1/μ) — a gap changes the stored energy, not the loss per unit of 1/μ
//! [S: μ_e = μ/(1 + μ·l_g/l_e), Finke via Encyclopedia Magnetica; complex form D].

use crate::C64;

/// Apparent permeability μ_e of a core of material μ with total gap l_g on a path l_e.
pub fn apparent(mu: C64, gap_m: f64, le_m: f64) -> C64 {
    if gap_m == 0.0 {
        return mu;
    }
    1.0 / (1.0 / mu + gap_m / le_m)
}

/// Material permeability from the apparent μ_e: 1/μ = 1/μ_e − l_g/l_e.
pub fn material(mu_e: C64, gap_m: f64, le_m: f64) -> C64 {
    if gap_m == 0.0 {
        return mu_e;
    }
    1.0 / (1.0 / mu_e - gap_m / le_m)
}

/// A gap length estimated from a split core's apparent μ_e and the material's μ measured on a
/// solid core: l_g = l_e·Re(1/μ_e − 1/μ), the median over the points given.
#[derive(Debug, Clone, PartialEq)]
pub struct GapEstimate {
    /// Total gap (both faces), m.
    pub total_m: f64,
    /// 16th and 84th percentile of the per-frequency estimates, m.
    pub p16_m: f64,
    pub p84_m: f64,
    /// Median relative difference of Im(1/μ) between the two, which a gap leaves unchanged:
    /// large values mean the two cores are not the same material.
    pub loss_mismatch: f64,
}

pub fn estimate_gap(mu_e: &[C64], mu_solid: &[C64], le_m: f64) -> Option<GapEstimate> {
    let per: Vec<f64> = mu_e
        .iter()
        .zip(mu_solid)
        .map(|(e, s)| le_m * (1.0 / e - 1.0 / s).re)
        .collect();
    let mismatch: Vec<f64> = mu_e
        .iter()
        .zip(mu_solid)
        .map(|(e, s)| ((1.0 / e).im - (1.0 / s).im).abs() / (1.0 / s).norm())
        .collect();
    let total_m = percentile(&per, 50.0)?;
    Some(GapEstimate {
        total_m,
        p16_m: percentile(&per, 16.0)?,
        p84_m: percentile(&per, 84.0)?,
        loss_mismatch: percentile(&mismatch, 50.0)?,
    })
}

/// Linear-interpolated percentile of the finite values; None when there are none.
pub fn percentile(values: &[f64], p: f64) -> Option<f64> {
    let mut v: Vec<f64> = values.iter().copied().filter(|x| x.is_finite()).collect();
    if v.is_empty() {
        return None;
    }
    v.sort_by(f64::total_cmp);
    let pos = (p / 100.0).clamp(0.0, 1.0) * (v.len() - 1) as f64;
    let (lo, hi) = (pos.floor() as usize, pos.ceil() as usize);
    Some(v[lo] + (v[hi] - v[lo]) * (pos - lo as f64))
}

#[cfg(test)]
mod tests {
    use super::*;

    // PHYSICS.md §2 [D]: μ = 1000, l_g = 10 µm, l_e = 43.55 mm → μ_e = 813; and Im(1/μ) is
    // unchanged by the gap [S: Finke via Encyclopedia Magnetica, complex form D].
    #[test]
    fn physics_gap_worked_example_mu_e_813() {
        let mu_e = apparent(C64::new(1000.0, 0.0), 10e-6, 43.55e-3);
        assert!((mu_e.re - 813.0).abs() < 0.5, "{}", mu_e);
        let mu = C64::new(1000.0, -500.0);
        let e = apparent(mu, 10e-6, 43.55e-3);
        assert!(((1.0 / e).im - (1.0 / mu).im).abs() < 1e-15);
        assert!((material(e, 10e-6, 43.55e-3) - mu).norm() < 1e-9);
    }

    // The inverse of the same formula: a gap hidden in synthetic μ_e comes back.
    #[test]
    fn physics_gap_estimate_recovers_gap() {
        let mu: Vec<C64> = (0..20)
            .map(|k| C64::new(800.0 - 10.0 * k as f64, -(50.0 + 5.0 * k as f64)))
            .collect();
        let e: Vec<C64> = mu.iter().map(|&m| apparent(m, 16e-6, 60.18e-3)).collect();
        let g = estimate_gap(&e, &mu, 60.18e-3).unwrap();
        assert!((g.total_m - 16e-6).abs() < 1e-12 && g.loss_mismatch < 1e-9);
    }
}
