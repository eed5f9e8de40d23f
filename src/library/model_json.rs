//! Rebuild a [`Model`] from the fit-report shape of a model (`mu_inf` and `terms` with named
//! parameters), as stored in material files.

use super::LibraryError;
use crate::error::Diagnostic;
use crate::fit::report::{Estimate, TermReport};
use crate::model::{Model, Term, TermKind};

/// The model described by `mu_inf` and `terms`; every parameter its kind needs must be present
/// and finite.
pub fn model_from_report(mu_inf: &Estimate, terms: &[TermReport]) -> Result<Model, LibraryError> {
    let terms = terms
        .iter()
        .enumerate()
        .map(|(i, t)| term_from_report(i, t))
        .collect::<Result<Vec<_>, _>>()?;
    finite("mu_inf", mu_inf.value)?;
    Ok(Model {
        mu_inf: mu_inf.value,
        terms,
    })
}

fn term_from_report(index: usize, t: &TermReport) -> Result<Term, LibraryError> {
    let kind = TermKind::parse(&t.kind).map_err(|bad| {
        Diagnostic::new(format!("term {} has unknown kind '{}'", index + 1, bad))
            .expected("debye, cole-cole, cole-davidson, havriliak-negami or lorentz")
    })?;
    let params = kind
        .param_names()
        .iter()
        .map(|name| {
            let e = t.params.get(*name).ok_or_else(|| {
                Diagnostic::new(format!(
                    "term {} ({}) lacks parameter '{}'",
                    index + 1,
                    t.kind,
                    name
                ))
                .expected(format!("parameters {}", kind.param_names().join(", ")))
            })?;
            finite(name, e.value)
        })
        .collect::<Result<Vec<f64>, LibraryError>>()?;
    Ok(Term::from_params(kind, &params))
}

fn finite(name: &str, v: f64) -> Result<f64, LibraryError> {
    if v.is_finite() {
        Ok(v)
    } else {
        Err(Diagnostic::new(format!("parameter '{}' is not a finite number", name)).into())
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::collections::BTreeMap;

    fn est(v: f64) -> Estimate {
        Estimate {
            value: v,
            stderr: None,
        }
    }

    fn term(kind: &str, p: &[(&str, f64)]) -> TermReport {
        TermReport {
            kind: kind.into(),
            params: p
                .iter()
                .map(|(k, v)| (k.to_string(), est(*v)))
                .collect::<BTreeMap<_, _>>(),
        }
    }

    /// Debye μ″ peak is Δμ/2 at f = f_r (PHYSICS.md §4, textbook Debye relaxation).
    #[test]
    fn rebuilt_debye_has_its_textbook_loss_peak() {
        let m = model_from_report(
            &est(1.0),
            &[term("debye", &[("delta_mu", 200.0), ("f_hz", 5e6)])],
        )
        .unwrap();
        let mu = m.mu(5e6);
        assert!((-mu.im - 100.0).abs() < 1e-9 && (mu.re - 101.0).abs() < 1e-9);
    }

    #[test]
    fn refuses_unknown_kinds_and_missing_parameters() {
        assert!(model_from_report(&est(1.0), &[term("warp", &[])]).is_err());
        assert!(model_from_report(
            &est(1.0),
            &[term("lorentz", &[("delta_mu", 1.0), ("f_hz", 1e8)])]
        )
        .is_err());
    }
}
