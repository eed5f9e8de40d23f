//! One relaxation or resonance term and its value.

use crate::C64;

/// The kinds of term, named as the model spec writes them.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum TermKind {
    /// Δμ/(1 + jx)
    Debye,
    /// Δμ/(1 + (jx)^α), 0 < α ≤ 1
    ColeCole,
    /// Δμ/(1 + jx)^β, 0 < β ≤ 1
    ColeDavidson,
    /// Δμ/(1 + (jx)^α)^β
    HavriliakNegami,
    /// Damped resonance Δμ/(1 − x² + j·d·x)
    Lorentz,
}

impl TermKind {
    pub const ALL: [TermKind; 5] =
        [TermKind::Debye, TermKind::ColeCole, TermKind::ColeDavidson, TermKind::HavriliakNegami, TermKind::Lorentz];

    pub fn name(self) -> &'static str {
        match self {
            TermKind::Debye => "debye",
            TermKind::ColeCole => "cole-cole",
            TermKind::ColeDavidson => "cole-davidson",
            TermKind::HavriliakNegami => "havriliak-negami",
            TermKind::Lorentz => "lorentz",
        }
    }
    /// Parse a kind name; on failure returns the offending text.
    pub fn parse(s: &str) -> Result<TermKind, String> {
        TermKind::ALL.iter().copied().find(|k| k.name() == s.to_ascii_lowercase()).ok_or_else(|| s.to_string())
    }
    /// The parameter names of this kind, in the order [`Term::params`] returns them.
    pub fn param_names(self) -> &'static [&'static str] {
        match self {
            TermKind::Debye => &["delta_mu", "f_hz"],
            TermKind::ColeCole => &["delta_mu", "f_hz", "alpha"],
            TermKind::ColeDavidson => &["delta_mu", "f_hz", "beta"],
            TermKind::HavriliakNegami => &["delta_mu", "f_hz", "alpha", "beta"],
            TermKind::Lorentz => &["delta_mu", "f_hz", "damping"],
        }
    }
}

/// One term with its parameters. Unused shape parameters stay at 1 (α, β) or 0 (damping).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Term {
    pub kind: TermKind,
    pub delta_mu: f64,
    pub f_hz: f64,
    pub alpha: f64,
    pub beta: f64,
    pub damping: f64,
}

impl Term {
    pub fn debye(delta_mu: f64, f_hz: f64) -> Term {
        Term { kind: TermKind::Debye, delta_mu, f_hz, alpha: 1.0, beta: 1.0, damping: 0.0 }
    }
    pub fn cole_cole(delta_mu: f64, f_hz: f64, alpha: f64) -> Term {
        Term { kind: TermKind::ColeCole, alpha, ..Term::debye(delta_mu, f_hz) }
    }
    pub fn cole_davidson(delta_mu: f64, f_hz: f64, beta: f64) -> Term {
        Term { kind: TermKind::ColeDavidson, beta, ..Term::debye(delta_mu, f_hz) }
    }
    pub fn havriliak_negami(delta_mu: f64, f_hz: f64, alpha: f64, beta: f64) -> Term {
        Term { kind: TermKind::HavriliakNegami, alpha, beta, ..Term::debye(delta_mu, f_hz) }
    }
    pub fn lorentz(delta_mu: f64, f_hz: f64, damping: f64) -> Term {
        Term { kind: TermKind::Lorentz, damping, ..Term::debye(delta_mu, f_hz) }
    }

    /// The term's parameters in the order of [`TermKind::param_names`].
    pub fn params(&self) -> Vec<f64> {
        match self.kind {
            TermKind::Debye => vec![self.delta_mu, self.f_hz],
            TermKind::ColeCole => vec![self.delta_mu, self.f_hz, self.alpha],
            TermKind::ColeDavidson => vec![self.delta_mu, self.f_hz, self.beta],
            TermKind::HavriliakNegami => vec![self.delta_mu, self.f_hz, self.alpha, self.beta],
            TermKind::Lorentz => vec![self.delta_mu, self.f_hz, self.damping],
        }
    }

    /// Build a term of `kind` from parameters in [`TermKind::param_names`] order.
    pub fn from_params(kind: TermKind, p: &[f64]) -> Term {
        match kind {
            TermKind::Debye => Term::debye(p[0], p[1]),
            TermKind::ColeCole => Term::cole_cole(p[0], p[1], p[2]),
            TermKind::ColeDavidson => Term::cole_davidson(p[0], p[1], p[2]),
            TermKind::HavriliakNegami => Term::havriliak_negami(p[0], p[1], p[2], p[3]),
            TermKind::Lorentz => Term::lorentz(p[0], p[1], p[2]),
        }
    }

    /// The term's complex contribution at `f_hz` (μ′ − jμ″ convention).
    pub fn value(&self, f_hz: f64) -> C64 {
        let x = f_hz / self.f_hz;
        let jx = C64::new(0.0, x);
        let one = C64::new(1.0, 0.0);
        let denom = match self.kind {
            TermKind::Debye => one + jx,
            TermKind::ColeCole => one + jx.powf(self.alpha),
            TermKind::ColeDavidson => (one + jx).powf(self.beta),
            TermKind::HavriliakNegami => (one + jx.powf(self.alpha)).powf(self.beta),
            TermKind::Lorentz => C64::new(1.0 - x * x, self.damping * x),
        };
        self.delta_mu / denom
    }
}
