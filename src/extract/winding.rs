//! A winding on a core, both ways (PHYSICS.md §2, §6):
//! μ → Z: Z_core = jω·M·N²·(μ0/C1)·μ_e, Z = Z_core/(1 + jωC_p·Z_core) + jωL_lead;
//! Z → μ: the same steps undone in reverse order. μ_e includes the core's gap.

use crate::geometry::Core;
use crate::C64;
use std::f64::consts::TAU;

/// How a core is wound and what the winding adds around it.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Winding {
    /// Turns through every core.
    pub turns: f64,
    /// Identical cores threaded in series on the same winding (M; Z scales with M).
    pub cores: u32,
    /// Winding capacitance across the core term, F.
    pub c_p: Option<f64>,
    /// Lead/loop inductance in series, outside the core, H.
    pub l_lead: Option<f64>,
}

impl Winding {
    pub fn turns(turns: f64) -> Winding {
        Winding {
            turns,
            cores: 1,
            c_p: None,
            l_lead: None,
        }
    }
    /// M·N²·μ0/C1: the inductance this winding would have with μ = 1 and no gap, H.
    pub fn l0(&self, core: &Core) -> f64 {
        self.cores as f64 * core.l0(self.turns)
    }
}

/// The winding's impedance at `f_hz` for material permeability `mu` (μ′ − jμ″).
pub fn impedance_at(f_hz: f64, mu: C64, core: &Core, w: &Winding) -> C64 {
    let jw = C64::new(0.0, TAU * f_hz);
    let e = core.effective();
    let mu_e = super::gap::apparent(mu, core.gap_m(), e.le());
    let z_core = jw * w.l0(core) * mu_e;
    let z = match w.c_p {
        Some(c) => z_core / (1.0 + jw * c * z_core),
        None => z_core,
    };
    z + jw * w.l_lead.unwrap_or(0.0)
}

/// The winding's impedance over a sweep: the function design tools call with a material's
/// μ(f). `mu` and `freq_hz` pair up point by point; a length mismatch gives None.
pub fn impedance(freq_hz: &[f64], mu: &[C64], core: &Core, w: &Winding) -> Option<Vec<C64>> {
    if freq_hz.len() != mu.len() {
        return None;
    }
    Some(
        freq_hz
            .iter()
            .zip(mu)
            .map(|(&f, &m)| impedance_at(f, m, core, w))
            .collect(),
    )
}

/// The core term jω·M·N²·L0·μ_e left after removing the lead and the winding capacitance.
pub fn core_term(f_hz: f64, z: C64, w: &Winding) -> C64 {
    let jw = C64::new(0.0, TAU * f_hz);
    let z = z - jw * w.l_lead.unwrap_or(0.0);
    match w.c_p {
        Some(c) => z / (1.0 - jw * c * z),
        None => z,
    }
}

/// The exact inverse of [`impedance_at`]: material μ from one measured Z.
pub fn mu_at(f_hz: f64, z: C64, core: &Core, w: &Winding) -> C64 {
    let jw = C64::new(0.0, TAU * f_hz);
    let mu_e = core_term(f_hz, z, w) / (jw * w.l0(core));
    super::gap::material(mu_e, core.gap_m(), core.effective().le())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::geometry::Toroid;

    fn core_20_10_10() -> Core {
        Core::Toroid(Toroid::new(20e-3, 10e-3, 10e-3).unwrap())
    }

    // PHYSICS.md §2 worked impedances [D], 20/10/10 core: N = 1, μ = 1000 − j500 at 10 MHz →
    // 43.552 + j87.103 Ω; μ = 100 − j200 at 100 MHz → 174.207 + j87.103 Ω; N = 3 → ×9.
    #[test]
    fn physics_worked_impedances_20_10_10() {
        let core = core_20_10_10();
        let cases = [
            (
                10e6,
                C64::new(1000.0, -500.0),
                1.0,
                C64::new(43.552, 87.103),
            ),
            (
                100e6,
                C64::new(100.0, -200.0),
                1.0,
                C64::new(174.207, 87.103),
            ),
            (
                100e6,
                C64::new(100.0, -200.0),
                3.0,
                C64::new(1567.86, 783.93),
            ),
        ];
        for (f, mu, n, want) in cases {
            let z = impedance_at(f, mu, &core, &Winding::turns(n));
            assert!(
                (z.re - want.re).abs() < 6e-3 && (z.im - want.im).abs() < 6e-3,
                "{} vs {}",
                z,
                want
            );
        }
    }

    // PHYSICS.md §6 [D]: M cores in series give M·Z1; N turns give N²·Z1 below self-resonance.
    #[test]
    fn physics_turns_and_cores_scale() {
        let core = core_20_10_10();
        let mu = C64::new(300.0, -120.0);
        let z1 = impedance_at(5e6, mu, &core, &Winding::turns(1.0));
        let z2m = impedance_at(
            5e6,
            mu,
            &core,
            &Winding {
                cores: 2,
                ..Winding::turns(1.0)
            },
        );
        let z2n = impedance_at(5e6, mu, &core, &Winding::turns(2.0));
        assert!(
            (z2m - 2.0 * z1).norm() < 1e-12 * z1.norm()
                && (z2n - 4.0 * z1).norm() < 1e-12 * z1.norm()
        );
    }

    // Self-resonance [D, PHYSICS.md §2]: Z_N = N²Z1/(1 + jωC_pN²Z1) is purely resistive where
    // ωC_p = −Im(1/(N²Z1)), i.e. at f = 1/(2π√(L·C_p)) with L = N²L0·|μ|²/μ′ (a lossless core
    // gives the familiar N²L1).
    #[test]
    fn physics_self_resonance_of_wound_core() {
        let core = core_20_10_10();
        let w = Winding {
            c_p: Some(3e-12),
            ..Winding::turns(5.0)
        };
        let mu = C64::new(200.0, -20.0);
        let l = w.l0(&core) * mu.norm_sqr() / mu.re;
        let f_sr = 1.0 / (TAU * (l * 3e-12).sqrt());
        let z = impedance_at(f_sr, mu, &core, &w);
        assert!(z.im.abs() < 1e-9 * z.re, "{}", z);
        let below = impedance_at(0.9 * f_sr, mu, &core, &w);
        let above = impedance_at(1.1 * f_sr, mu, &core, &w);
        assert!(below.im > 0.0 && above.im < 0.0);
    }

    // Round trip extract∘inverse = identity with every term present (gap, C_p, lead, M, N).
    #[test]
    fn round_trip_mu_to_z_to_mu_is_identity() {
        let core = Core::parse("split:od=25mm,id=15mm,h=10mm,gap=8um").unwrap();
        let w = Winding {
            turns: 3.0,
            cores: 2,
            c_p: Some(2.2e-12),
            l_lead: Some(35e-9),
        };
        for k in 0..50 {
            let f = 1e5 * 10f64.powf(k as f64 / 12.0);
            let mu = C64::new(900.0 / (1.0 + f / 3e6), -400.0 / (1.0 + (f / 5e6).powi(2)));
            let back = mu_at(f, impedance_at(f, mu, &core, &w), &core, &w);
            assert!((back - mu).norm() < 1e-9 * mu.norm(), "{} → {}", mu, back);
        }
    }
}
