//! Relaxation and resonance models of complex permeability (PHYSICS.md §4).
//!
//! μ(f) = μ∞ + Σ terms, x = f/f_r, convention μ = μ′ − jμ″ (μ″ ≥ 0 for a lossy core), so each
//! term's complex value is returned as it is: a Debye term Δμ/(1 + jx) has a negative imaginary
//! part, i.e. positive μ″. Parameter names are a contract: `delta_mu`, `f_hz`, `alpha`, `beta`,
//! `damping`, `mu_inf`.

pub mod jacobian;
pub mod params;
pub mod term;

pub use term::{Term, TermKind};

use crate::C64;

crate::stage_error!(
    /// A model spec or parameter set that cannot be used.
    ModelError
);

/// A complete permeability model: μ∞ plus a sum of terms.
#[derive(Debug, Clone, PartialEq)]
pub struct Model {
    pub mu_inf: f64,
    pub terms: Vec<Term>,
}

impl Model {
    /// Complex permeability μ′ − jμ″ at frequency `f_hz`.
    pub fn mu(&self, f_hz: f64) -> C64 {
        self.terms.iter().fold(C64::new(self.mu_inf, 0.0), |acc, t| acc + t.value(f_hz))
    }
    /// The spec string of this model's kinds, e.g. `debye+lorentz`.
    pub fn spec(&self) -> String {
        self.terms.iter().map(|t| t.kind.name()).collect::<Vec<_>>().join("+")
    }
}

/// Parse a model spec `kind+kind+...` into its term kinds.
pub fn parse_spec(spec: &str) -> Result<Vec<TermKind>, ModelError> {
    let kinds: Result<Vec<_>, _> = spec.split('+').map(|k| TermKind::parse(k.trim())).collect();
    let kinds = kinds.map_err(|bad| {
        crate::error::Diagnostic::new(format!("unknown model term '{}' in '{}'", bad, spec))
            .expected("kinds joined by '+': debye, cole-cole, cole-davidson, havriliak-negami, lorentz")
            .hint("e.g. --model debye+lorentz, or --model auto to let BIC choose")
    })?;
    if kinds.is_empty() {
        return Err(crate::error::Diagnostic::new("empty model spec").hint("e.g. --model debye").into());
    }
    Ok(kinds)
}
