//! The winding's self-resonance and its capacitance (PHYSICS.md §2):
//! Z_N = N²Z1/(1 + jωC_p·N²Z1), so at the resonance (X = 0) ωC_p = −Im(1/(N²Z1)).

use crate::C64;
use std::f64::consts::TAU;

/// First crossing of X from + to − at or after index `from`: (index before the crossing,
/// frequency found by linear interpolation of X between the two points).
pub fn find_self_resonance(freq: &[f64], z: &[C64], from: usize) -> Option<(usize, f64)> {
    (from..freq.len().saturating_sub(1))
        .find(|&i| z[i].im > 0.0 && z[i + 1].im <= 0.0)
        .map(|i| {
            let (x0, x1) = (z[i].im, z[i + 1].im);
            (i, freq[i] + (freq[i + 1] - freq[i]) * x0 / (x0 - x1))
        })
}

/// C_p from the resonance at `f_sr`, with the core term there estimated as jω·L0·μ_ref
/// (`l0` = M·N²·μ0/C1, `mu_ref` the permeability taken from below the resonance).
/// Ferrite μ′ falls with frequency, so a μ_ref from lower down makes this an underestimate.
pub fn estimate_cp(f_sr: f64, l0: f64, mu_ref: C64) -> Option<f64> {
    let w = TAU * f_sr;
    let z_core = C64::new(0.0, w) * l0 * mu_ref;
    let c = -(1.0 / z_core).im / w;
    (c.is_finite() && c > 0.0).then_some(c)
}

#[cfg(test)]
mod tests {
    use super::*;

    // A parallel LC: f = 1/(2π√(LC)) [textbook]; with μ constant the estimate returns C exactly.
    #[test]
    fn textbook_lc_resonance() {
        let (l, c): (f64, f64) = (10e-6, 5e-12);
        let f0 = 1.0 / (TAU * (l * c).sqrt());
        let freq: Vec<f64> = (1..400).map(|k| k as f64 * 1e5).collect();
        let z: Vec<C64> = freq
            .iter()
            .map(|&f| {
                let zl = C64::new(0.5, TAU * f * l);
                zl / (1.0 + C64::new(0.0, TAU * f * c) * zl)
            })
            .collect();
        let (_, f) = find_self_resonance(&freq, &z, 0).unwrap();
        // Linear interpolation of X across the pole is good to about one grid step.
        assert!((f - f0).abs() < 1e5, "{} vs {}", f, f0);
        let cp = estimate_cp(f0, l, C64::new(1.0, 0.0)).unwrap();
        assert!((cp / c - 1.0).abs() < 1e-12);
    }
}
