//! The fit stage as one library call, for the CLI and the demo alike: one or more sources →
//! the chosen model (or the BIC choice among candidates) fitted to all of them → the Lin-KK check
//! of each source → physics sanity → the [`FitReport`].

use super::build_report::{build_report, merged, SourceData};
use super::engine::{fit_auto, fit_model, Candidate, FitOptions, FitOutcome};
use super::kk::lin_kk;
use super::report::FitReport;
use super::sanity::SaturationPolarisation;
use super::FitError;
use crate::error::Diagnostic;
use crate::model::{parse_spec, ModelError, TermKind};

/// Which model to fit.
#[derive(Debug, Clone, PartialEq)]
pub enum ModelChoice {
    /// Fit the candidates of [`super::engine::auto_candidates`] and keep the lowest BIC.
    Auto,
    Kinds(Vec<TermKind>),
}

impl ModelChoice {
    /// `auto` or a model spec such as `debye+lorentz`.
    pub fn parse(spec: &str) -> Result<ModelChoice, ModelError> {
        if spec.trim().eq_ignore_ascii_case("auto") {
            Ok(ModelChoice::Auto)
        } else {
            parse_spec(spec).map(ModelChoice::Kinds)
        }
    }
}

/// What to fit and how.
#[derive(Debug, Clone, PartialEq)]
pub struct FitRequest {
    pub model: ModelChoice,
    pub options: FitOptions,
    /// Saturation polarisation for the Snoek check.
    pub js: SaturationPolarisation,
}

/// A finished fit: the report and what it was made from.
#[derive(Debug, Clone)]
pub struct Analysis {
    pub report: FitReport,
    pub outcome: FitOutcome,
    /// With `auto`: every candidate's BIC (or why it failed).
    pub candidates: Vec<Candidate>,
}

/// Fit one shared model to `sources` (one source: an ordinary fit; several: samples of one
/// material) and check each source's spectrum.
pub fn analyse(sources: &[SourceData], req: &FitRequest) -> Result<Analysis, FitError> {
    if sources.is_empty() {
        return Err(FitError(
            Diagnostic::new("nothing to fit").hint("give at least one μ table or sweep"),
        ));
    }
    // KK first: it also checks each source's points (count, order, finite non-zero μ).
    let kk = sources
        .iter()
        .map(|s| {
            lin_kk(&s.freq_hz, &s.mu)
                .map(|k| k.report)
                .map_err(|e| FitError(e.0.in_file(&s.label)))
        })
        .collect::<Result<Vec<_>, _>>()?;
    let (freq, mu) = merged(sources);
    let (outcome, runner_up, candidates) = match &req.model {
        ModelChoice::Kinds(kinds) => (
            fit_model(&freq, &mu, kinds, &req.options)?,
            None,
            Vec::new(),
        ),
        ModelChoice::Auto => {
            let a = fit_auto(&freq, &mu, &req.options)?;
            (a.best, a.runner_up, a.candidates)
        }
    };
    let report = build_report(&outcome, sources, &kk, req.js, runner_up);
    Ok(Analysis {
        report,
        outcome,
        candidates,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::fit::report::SourceProvenance;
    use crate::fit::synthetic::{log_freqs, spectrum, with_noise};
    use crate::model::{Model, Term};

    fn source(label: &str, model: &Model, seed: u64) -> SourceData {
        let f = log_freqs(301, 1e5, 1e9);
        SourceData {
            label: label.into(),
            mu: with_noise(&spectrum(model, &f), 0.003, seed),
            freq_hz: f,
            provenance: vec![SourceProvenance {
                file: label.into(),
                sha256: format!("{seed:064x}"),
                ..Default::default()
            }],
            warnings: vec![],
            sanity: vec![],
        }
    }

    /// `spec` with the default options, checked against the typical J_s.
    fn request(spec: &str) -> FitRequest {
        FitRequest {
            model: ModelChoice::parse(spec).unwrap(),
            options: FitOptions::default(),
            js: SaturationPolarisation::Typical,
        }
    }

    /// Two samples fitted by one model: residuals come source by source, each ascending in
    /// frequency (the layout the library's vetting splits them by), provenance in the same order.
    #[test]
    fn joint_fit_lists_residuals_source_by_source() {
        let m = Model {
            mu_inf: 1.0,
            terms: vec![Term::debye(600.0, 8e6)],
        };
        let sources = [source("a.csv", &m, 1), source("b.csv", &m, 2)];
        let req = request("debye");
        let a = analyse(&sources, &req).unwrap();
        let r = &a.report;
        assert_eq!(r.source, "a.csv + b.csv");
        assert_eq!(r.provenance.len(), 2);
        assert_eq!(r.residuals.len(), 602);
        let breaks = r
            .residuals
            .windows(2)
            .filter(|w| w[1].freq_hz <= w[0].freq_hz)
            .count();
        assert_eq!(breaks, 1);
        assert_eq!(r.stats.points, 2 * 602);
        assert!(r.kk.pass, "{:?}", r.kk);
    }

    /// Notes on the files stay warnings; an earlier stage's sanity finding (the extraction's
    /// size effect) reaches the report's sanity list, tagged with its source, and is a warning
    /// too. A clean passive Debye spectrum adds no finding of its own (PHYSICS.md §4: μ″ ≥ 0,
    /// Δμ·f_r = 4.8 GHz under Snoek's 9.3 GHz at the typical upper J_s of 0.5 T).
    #[test]
    fn only_sanity_findings_reach_the_sanity_list() {
        let m = Model {
            mu_inf: 1.0,
            terms: vec![Term::debye(600.0, 8e6)],
        };
        let mut a = source("a.csv", &m, 4);
        a.warnings = vec!["a.s1p: 1 repeated frequency merged".into()];
        let mut b = source("b.csv", &m, 5);
        let size = "μ′ ≈ 2265 at the bottom of the band looks like MnZn ferrite".to_string();
        b.warnings = vec![size.clone()];
        b.sanity = vec![size.clone()];
        let req = request("debye");
        let r = analyse(&[a.clone(), b], &req).unwrap().report;
        assert_eq!(r.sanity, Some(vec![format!("b.csv: {size}")]));
        assert!(
            r.warnings.contains(&format!("b.csv: {size}")),
            "{:?}",
            r.warnings
        );
        assert!(r.warnings.iter().any(|w| w.contains("repeated frequency")));
        let r = analyse(&[a], &req).unwrap().report;
        assert_eq!(r.sanity, Some(vec![]), "{:?}", r.warnings);
    }

    #[test]
    fn too_few_points_name_the_source() {
        let m = Model {
            mu_inf: 1.0,
            terms: vec![Term::debye(600.0, 8e6)],
        };
        let mut s = source("short.csv", &m, 3);
        s.freq_hz.truncate(4);
        s.mu.truncate(4);
        let req = request("auto");
        let e = analyse(&[s], &req).unwrap_err();
        assert!(
            e.to_string().contains("short.csv") && e.to_string().contains("at least 8"),
            "{e}"
        );
    }

    #[test]
    fn model_choice_parses_auto_and_specs() {
        assert_eq!(ModelChoice::parse("AUTO").unwrap(), ModelChoice::Auto);
        assert_eq!(
            ModelChoice::parse("debye+lorentz").unwrap(),
            ModelChoice::Kinds(vec![TermKind::Debye, TermKind::Lorentz])
        );
        assert!(ModelChoice::parse("debye+magic").is_err());
    }
}
