//! A material model on a wound core as an R, L, C network for circuit simulators: μ∞ as a
//! series inductor, each Debye term exactly as R‖L, each damped resonance exactly as R‖L‖C,
//! each Cole–Cole, Cole–Davidson or Havriliak–Negami term as a fitted non-negative sum of R‖L
//! sections ([`super::debye_sum`]); then the gap (a parallel inductor), the winding capacitance
//! (a parallel capacitor) and the lead inductance (a series inductor) as
//! [`crate::extract::winding::impedance_at`] composes them ([`super::network`] derives each).

use super::debye_sum::{fit_debye_sum, log_grid, CHECK_PER_DECADE};
use super::network::{debye_section, lorentz_section, with_gap, Net};
use super::plan::Device;
use super::ExportError;
use crate::error::Diagnostic;
use crate::model::{Model, Term, TermKind};

/// How one term became sections.
#[derive(Debug, Clone, PartialEq)]
pub enum Method {
    /// One section reproducing the term exactly.
    Exact,
    /// A non-negative Debye sum fitted over `fit_band` (Hz).
    DebyeSum { fit_band: (f64, f64) },
}

/// One term's share of the network.
#[derive(Debug, Clone, PartialEq)]
pub struct TermSynthesis {
    /// 1-based position of the term in the model.
    pub index: usize,
    pub kind: TermKind,
    pub method: Method,
    pub sections: usize,
    /// Largest relative error of the term's sections over the band (0 when exact).
    pub max_rel_error: f64,
}

/// The network and how well it reproduces the model.
#[derive(Debug, Clone, PartialEq)]
pub struct Synthesis {
    pub net: Net,
    pub terms: Vec<TermSynthesis>,
    /// The band the network was built for, Hz.
    pub band: (f64, f64),
    /// Largest |Z_net − Z_model|/|Z_model| over the band ([`CHECK_PER_DECADE`] points per decade).
    pub max_rel_error: f64,
}

/// Refuse a model that no network of positive R, L and C can follow: negative μ∞ or Δμ, shape
/// parameters outside (0, 1], negative damping, or nothing inductive at all.
pub fn check_model(model: &Model, reference: &str) -> Result<(), ExportError> {
    let refuse = |what: String| -> ExportError {
        Diagnostic::new(format!(
            "{}: {}; no network of positive R, L and C reproduces it",
            reference, what
        ))
        .expected("μ∞ ≥ 0, every Δμ ≥ 0 and f_hz > 0, 0 < α, β ≤ 1, damping ≥ 0")
        .hint("export it as csv or touchstone instead, or refit with a passive model")
        .into()
    };
    if !(model.mu_inf >= 0.0) {
        return Err(refuse(format!("mu_inf = {}", model.mu_inf)));
    }
    for (i, t) in model.terms.iter().enumerate() {
        let name = format!("term {} ({})", i + 1, t.kind.name());
        if !(t.delta_mu >= 0.0) || !(t.f_hz > 0.0) {
            return Err(refuse(format!(
                "{} has delta_mu = {}, f_hz = {}",
                name, t.delta_mu, t.f_hz
            )));
        }
        let unit = |v: f64| v > 0.0 && v <= 1.0;
        if !unit(t.alpha) || !unit(t.beta) || !(t.damping >= 0.0) {
            return Err(refuse(format!(
                "{} has alpha = {}, beta = {}, damping = {}",
                name, t.alpha, t.beta, t.damping
            )));
        }
    }
    if model.mu_inf + model.terms.iter().map(|t| t.delta_mu).sum::<f64>() <= 0.0 {
        return Err(refuse("μ∞ and every Δμ are zero".into()));
    }
    Ok(())
}

/// Build the network of `model` on `device` for use over `band` (Hz, lo < hi). The model must
/// have passed [`check_model`].
pub fn synthesize(model: &Model, device: &Device, band: (f64, f64)) -> Synthesis {
    let l0 = device.winding.l0(&device.core);
    let mut chain = Vec::new();
    if model.mu_inf > 0.0 {
        chain.push(Net::L(l0 * model.mu_inf));
    }
    let mut terms = Vec::new();
    for (i, t) in model
        .terms
        .iter()
        .enumerate()
        .filter(|(_, t)| t.delta_mu > 0.0)
    {
        let (sections, method, err) = term_sections(t, l0, band);
        terms.push(TermSynthesis {
            index: i + 1,
            kind: t.kind,
            method,
            sections: sections.len(),
            max_rel_error: err,
        });
        chain.extend(sections);
    }
    let mut net = single_or(chain, Net::Series);
    let gap = device.core.gap_m();
    if gap > 0.0 {
        net = with_gap(net, l0, gap / device.core.effective().le());
    }
    if let Some(c) = device.winding.c_p {
        net = Net::Parallel(vec![net, Net::C(c)]);
    }
    if let Some(l) = device.winding.l_lead {
        net = Net::Series(vec![net, Net::L(l)]);
    }
    let max_rel_error = log_grid(band.0, band.1, CHECK_PER_DECADE)
        .into_iter()
        .map(|f| {
            let want = device.impedance(model, f);
            (net.impedance(f) - want).norm() / want.norm()
        })
        .fold(0.0, f64::max);
    Synthesis {
        net,
        terms,
        band,
        max_rel_error,
    }
}

/// The sections of one term, how they were found and their largest relative error.
fn term_sections(t: &Term, l0: f64, band: (f64, f64)) -> (Vec<Net>, Method, f64) {
    match t.kind {
        TermKind::Debye => (
            vec![debye_section(l0, t.delta_mu, t.f_hz)],
            Method::Exact,
            0.0,
        ),
        TermKind::Lorentz => (
            vec![lorentz_section(l0, t.delta_mu, t.f_hz, t.damping)],
            Method::Exact,
            0.0,
        ),
        TermKind::ColeCole | TermKind::ColeDavidson | TermKind::HavriliakNegami => {
            let sum = fit_debye_sum(t, band);
            let nets = sum
                .sections
                .iter()
                .map(|&(dm, f)| debye_section(l0, dm, f))
                .collect();
            (
                nets,
                Method::DebyeSum {
                    fit_band: sum.fit_band,
                },
                sum.max_rel_error,
            )
        }
    }
}

fn single_or(mut parts: Vec<Net>, wrap: fn(Vec<Net>) -> Net) -> Net {
    if parts.len() == 1 {
        parts.remove(0)
    } else {
        wrap(parts)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::extract::winding::Winding;
    use crate::geometry::Core;

    fn device(spec: &str, w: Winding) -> Device {
        Device {
            core: Core::parse(spec).unwrap(),
            winding: w,
        }
    }

    // The exact sections (circuit algebra [D], network.rs) on a complete winding — gap, two
    // cores, three turns, C_p and lead — reproduce the extract stage's μ → Z to rounding.
    #[test]
    fn exact_terms_reproduce_the_wound_core_to_rounding() {
        let model = Model {
            mu_inf: 1.5,
            terms: vec![Term::debye(180.0, 8e6), Term::lorentz(40.0, 2e8, 0.8)],
        };
        let d = device(
            "split:od=25mm,id=15mm,h=10mm,gap=4um",
            Winding {
                turns: 3.0,
                cores: 2,
                c_p: Some(1.5e-12),
                l_lead: Some(30e-9),
            },
        );
        let s = synthesize(&model, &d, (1e6, 1e9));
        assert!(s.max_rel_error < 1e-12, "{:.3e}", s.max_rel_error);
        assert!(s
            .terms
            .iter()
            .all(|t| t.method == Method::Exact && t.sections == 1));
        // μ∞ L, R‖L (2), R‖L‖C (3), gap L, C_p, lead L.
        assert_eq!(s.net.element_count(), 1 + 2 + 3 + 3);
    }

    // Fractional terms through the Debye sum: the wound core's |Z| follows the model well
    // inside the 1 % that the ngspice check allows.
    #[test]
    fn fractional_terms_follow_the_model_closely() {
        let model = Model {
            mu_inf: 1.0,
            terms: vec![
                Term::cole_cole(300.0, 20e6, 0.7),
                Term::havriliak_negami(60.0, 3e8, 0.8, 0.6),
            ],
        };
        let d = device("toroid:od=20mm,id=10mm,h=10mm", Winding::turns(2.0));
        let s = synthesize(&model, &d, (1e6, 1e9));
        assert!(s.max_rel_error < 1e-4, "{:.3e}", s.max_rel_error);
        assert!(s
            .terms
            .iter()
            .all(|t| matches!(t.method, Method::DebyeSum { .. }) && t.sections > 3));
    }

    #[test]
    fn refuses_models_without_a_passive_network() {
        let ok = Model {
            mu_inf: 1.0,
            terms: vec![Term::debye(10.0, 1e6)],
        };
        assert!(check_model(&ok, "m@1").is_ok());
        for bad in [
            Model {
                mu_inf: -1.0,
                ..ok.clone()
            },
            Model {
                mu_inf: 1.0,
                terms: vec![Term::debye(-10.0, 1e6)],
            },
            Model {
                mu_inf: 1.0,
                terms: vec![Term::cole_cole(10.0, 1e6, 1.2)],
            },
            Model {
                mu_inf: 1.0,
                terms: vec![Term::lorentz(10.0, 1e6, -0.1)],
            },
            Model {
                mu_inf: 0.0,
                terms: vec![],
            },
        ] {
            let e = check_model(&bad, "m@1").expect_err("accepted");
            assert!(e.to_string().starts_with("m@1: "), "{e}");
        }
    }
}
