//! The invented materials of the demo, each described as the model the fitting stage should find
//! (PHYSICS.md §4). Names and numbers are made up; the parameters are chosen to be physically
//! plausible: each material's static permeability and relaxation frequency sit near Snoek's limit
//! (μ_s − 1)·f_r ≈ (2/3)·(γ/2π)·J_s for its stated saturation polarisation.

use crate::fit::sanity::snoek_limit_hz;
use crate::model::{Model, Term};

/// One invented material and what it is meant to show.
#[derive(Debug, Clone)]
pub struct Material {
    /// Library id (lower case, `[a-z0-9][a-z0-9._-]*`).
    pub id: &'static str,
    /// What kind of ferrite it imitates and why it is in the demo.
    pub description: &'static str,
    /// Saturation polarisation J_s the Snoek check assumes, T.
    pub j_s_tesla: f64,
    /// The true permeability spectrum.
    pub model: Model,
}

impl Material {
    /// Snoek's limit for this material, (2/3)·(γ/2π)·J_s, Hz.
    pub fn snoek_limit_hz(&self) -> f64 {
        snoek_limit_hz(self.j_s_tesla)
    }
    /// Static permeability μ_s = μ∞ + Σ Δμ.
    pub fn mu_static(&self) -> f64 {
        self.model.mu_inf + self.model.terms.iter().map(|t| t.delta_mu).sum::<f64>()
    }
}

/// The four materials of the scenario, in a fixed order.
pub fn materials() -> Vec<Material> {
    vec![
        Material {
            id: "driftwood",
            description: "NiZn-like cable-suppression ferrite: spin relaxation (cole-cole) plus a damped \
                          domain-wall resonance (lorentz); loss peak near 25 MHz",
            j_s_tesla: 0.33,
            model: Model {
                mu_inf: 1.0,
                terms: vec![Term::cole_cole(80.0, 90.0e6, 0.9), Term::lorentz(60.0, 30.0e6, 1.4)],
            },
        },
        Material {
            id: "saltmarsh",
            description: "low-permeability NiZn-like ferrite for the VHF band: a heavily damped wall \
                          resonance (lorentz) below a spin relaxation (debye)",
            j_s_tesla: 0.30,
            model: Model { mu_inf: 1.0, terms: vec![Term::debye(30.0, 200.0e6), Term::lorentz(14.0, 95.0e6, 1.8)] },
        },
        Material {
            id: "emberstone",
            description: "high-permeability MnZn-like ferrite for the low band; above about 1 MHz its \
                          apparent permeability depends on the core's size (a warning case)",
            j_s_tesla: 0.48,
            model: Model { mu_inf: 1.0, terms: vec![Term::cole_cole(2300.0, 3.5e6, 0.92)] },
        },
        Material {
            id: "kelpline",
            description: "broadband lossy ferrite for clip-on sleeves: one wide, asymmetric \
                          relaxation (havriliak-negami)",
            j_s_tesla: 0.30,
            model: Model { mu_inf: 1.0, terms: vec![Term::havriliak_negami(420.0, 5.0e6, 0.65, 0.7)] },
        },
    ]
}

/// Look a material up by id.
pub fn material(id: &str) -> Option<Material> {
    materials().into_iter().find(|m| m.id == id)
}

/// The same spectrum with every Δμ scaled by `mu_scale` and every f_r by `f_scale` (a lot or a
/// sample that differs from the nominal material).
pub fn scaled(model: &Model, mu_scale: f64, f_scale: f64) -> Model {
    Model {
        mu_inf: model.mu_inf,
        terms: model
            .terms
            .iter()
            .map(|t| Term { delta_mu: t.delta_mu * mu_scale, f_hz: t.f_hz * f_scale, ..*t })
            .collect(),
    }
}

/// Frequency of the largest μ″ of `model` on a fine log grid between `lo` and `hi`, Hz.
pub fn loss_peak_hz(model: &Model, lo: f64, hi: f64) -> f64 {
    let n = 2000;
    (0..=n)
        .map(|i| lo * (hi / lo).powf(i as f64 / n as f64))
        .map(|f| (f, -model.mu(f).im))
        .fold((lo, f64::MIN), |best, cur| if cur.1 > best.1 { cur } else { best })
        .0
}

#[cfg(test)]
mod tests {
    use super::*;

    // Snoek's law (PHYSICS.md §4, [D; Snoek, Physica 14, 207 (1948)]): a polycrystalline ferrite's
    // (μ_s − 1)·f_peak stays at or below about (2/3)(γ/2π)J_s. Allow up to 1.3× the limit, the
    // spread real ferrites show around the law [common practice], and require at least 0.4× so
    // no invented material is far from a real one either.
    #[test]
    fn every_material_is_snoek_consistent() {
        for m in materials() {
            let f_peak = loss_peak_hz(&m.model, 1e4, 1e10);
            let product = (m.mu_static() - 1.0) * f_peak;
            let ratio = product / m.snoek_limit_hz();
            assert!(
                (0.4..=1.3).contains(&ratio),
                "{}: (μs−1)·f_peak = {:.3e} Hz, limit {:.3e} Hz",
                m.id,
                product,
                m.snoek_limit_hz()
            );
        }
    }

    // Passivity (PHYSICS.md conventions, IEV 121-12-30 sign): μ″ ≥ 0 everywhere for a lossy core.
    #[test]
    fn every_material_is_passive() {
        for m in materials() {
            for i in 0..=600 {
                let f = 1e4 * 10f64.powf(i as f64 / 100.0);
                assert!(-m.model.mu(f).im >= 0.0, "{} has μ″ < 0 at {} Hz", m.id, f);
            }
        }
    }

    // PHYSICS.md §4 [D]: a Debye term's μ″ peaks at Δμ/2 at f_r; `scaled` must move that peak.
    #[test]
    fn scaled_moves_the_debye_peak() {
        let m = Model { mu_inf: 1.0, terms: vec![Term::debye(100.0, 10e6)] };
        let s = scaled(&m, 0.7, 1.3);
        let f = loss_peak_hz(&s, 1e5, 1e9);
        assert!((f / 13e6 - 1.0).abs() < 0.01, "peak at {}", f);
        assert!((-s.mu(13e6).im - 35.0).abs() < 1e-9);
    }
}
