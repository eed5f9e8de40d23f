//! Two-terminal R, L, C networks: series/parallel trees, their impedance, and the sections that
//! reproduce each permeability term of a wound core exactly (circuit algebra, derived [D]).
//!
//! With L0′ = M·N²·μ0/C1 the winding's air-core inductance, the core term is Z = jωL0′·μ(f)
//! (PHYSICS.md §2) and every term of μ adds an impedance in series:
//! * μ∞ → an inductor L0′·μ∞;
//! * Debye Δμ/(1 + jω/ω_r) → R‖L with L = L0′Δμ, R = L·ω_r, because
//!   jωL·R/(R + jωL) = jωL/(1 + jωL/R) = jωL/(1 + jω/ω_r);
//! * damped resonance Δμ/(1 − ω²/ω_r² + j·d·ω/ω_r) → R‖L‖C with L = L0′Δμ, C = 1/(ω_r²·L),
//!   R = L·ω_r/d, because 1/(1/(jωL) + jωC + 1/R) = jωL/(1 − ω²LC + jωL/R);
//! * a gap, 1/μ_e = 1/μ + l_g/l_e, makes the admittance 1/(jωL0′μ) + 1/(jω·L0′·l_e/l_g): the
//!   material chain in parallel with an inductor L0′·l_e/l_g;
//! * a winding capacitance C_p is a capacitor across the core term, a lead inductance a series
//!   inductor ([`crate::extract::winding::impedance_at`] composes the same way).

use crate::C64;
use std::f64::consts::TAU;

/// A two-terminal network of ideal R, L and C (ohms, henries, farads).
#[derive(Debug, Clone, PartialEq)]
pub enum Net {
    R(f64),
    L(f64),
    C(f64),
    Series(Vec<Net>),
    Parallel(Vec<Net>),
}

impl Net {
    /// Impedance at `f_hz` > 0.
    pub fn impedance(&self, f_hz: f64) -> C64 {
        let jw = C64::new(0.0, TAU * f_hz);
        match self {
            Net::R(r) => C64::new(*r, 0.0),
            Net::L(l) => jw * *l,
            Net::C(c) => 1.0 / (jw * *c),
            Net::Series(parts) => parts.iter().map(|p| p.impedance(f_hz)).sum(),
            Net::Parallel(parts) => {
                1.0 / parts.iter().map(|p| 1.0 / p.impedance(f_hz)).sum::<C64>()
            }
        }
    }

    /// Number of R, L and C elements.
    pub fn element_count(&self) -> usize {
        match self {
            Net::R(_) | Net::L(_) | Net::C(_) => 1,
            Net::Series(p) | Net::Parallel(p) => p.iter().map(Net::element_count).sum(),
        }
    }
}

/// Debye section jωL0′Δμ/(1 + jω/ω_r): L = L0′Δμ in parallel with R = L·ω_r.
pub fn debye_section(l0: f64, delta_mu: f64, f_r: f64) -> Net {
    let l = l0 * delta_mu;
    Net::Parallel(vec![Net::R(l * TAU * f_r), Net::L(l)])
}

/// Damped-resonance section jωL0′Δμ/(1 − ω²/ω_r² + j·d·ω/ω_r): L = L0′Δμ, C = 1/(ω_r²L) and,
/// for d > 0, R = L·ω_r/d, all in parallel (d = 0 is the lossless L‖C).
pub fn lorentz_section(l0: f64, delta_mu: f64, f_r: f64, damping: f64) -> Net {
    let l = l0 * delta_mu;
    let w_r = TAU * f_r;
    let mut parts = vec![Net::L(l), Net::C(1.0 / (w_r * w_r * l))];
    if damping > 0.0 {
        parts.push(Net::R(l * w_r / damping));
    }
    Net::Parallel(parts)
}

/// A gap of l_g/l_e = `gap_ratio` across the material chain: the chain in parallel with
/// L0′/gap_ratio.
pub fn with_gap(material: Net, l0: f64, gap_ratio: f64) -> Net {
    Net::Parallel(vec![material, Net::L(l0 / gap_ratio)])
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::Term;

    const L0: f64 = 2.7e-7;

    /// Frequencies spread over eight decades around the terms' corner frequencies.
    fn freqs() -> impl Iterator<Item = f64> {
        (0..161).map(|k| 1e3 * 10f64.powf(k as f64 / 20.0))
    }

    fn rel(a: C64, b: C64) -> f64 {
        (a - b).norm() / b.norm()
    }

    // Circuit algebra [D]: R‖L with L = L0′Δμ, R = L·ω_r is exactly jωL0′·Δμ/(1 + jω/ω_r).
    #[test]
    fn r_parallel_l_equals_the_debye_term_exactly() {
        let term = Term::debye(350.0, 12e6);
        let net = debye_section(L0, 350.0, 12e6);
        for f in freqs() {
            let want = C64::new(0.0, TAU * f) * L0 * term.value(f);
            assert!(rel(net.impedance(f), want) < 1e-13, "{f} Hz");
        }
    }

    // Circuit algebra [D]: R‖L‖C with L = L0′Δμ, C = 1/(ω_r²L), R = L·ω_r/d is exactly
    // jωL0′·Δμ/(1 − ω²/ω_r² + j·d·ω/ω_r), for light and heavy damping and without loss.
    #[test]
    fn rlc_equals_the_damped_resonance_term_exactly() {
        for d in [0.05, 0.8, 3.0, 0.0] {
            let term = Term::lorentz(45.0, 2.3e8, d);
            let net = lorentz_section(L0, 45.0, 2.3e8, d);
            for f in freqs() {
                let want = C64::new(0.0, TAU * f) * L0 * term.value(f);
                assert!(rel(net.impedance(f), want) < 1e-12, "d = {d}, {f} Hz");
            }
        }
        assert_eq!(lorentz_section(L0, 45.0, 2.3e8, 0.0).element_count(), 2);
    }

    // Gap in parallel [D from PHYSICS.md §2, 1/μ_e = 1/μ + l_g/l_e]: the material chain in
    // parallel with L0′·l_e/l_g gives jωL0′·μ_e, checked against the extract stage's μ_e.
    #[test]
    fn parallel_gap_inductor_equals_the_apparent_permeability() {
        let (mu_inf, dm, fr) = (2.0, 800.0, 5e6);
        let chain = Net::Series(vec![Net::L(L0 * mu_inf), debye_section(L0, dm, fr)]);
        let (gap, le) = (10e-6, 43.55e-3);
        let net = with_gap(chain, L0, gap / le);
        for f in freqs() {
            let mu = C64::new(mu_inf, 0.0) + Term::debye(dm, fr).value(f);
            let mu_e = crate::extract::gap::apparent(mu, gap, le);
            let want = C64::new(0.0, TAU * f) * L0 * mu_e;
            assert!(rel(net.impedance(f), want) < 1e-12, "{f} Hz");
        }
    }
}
