//! One fit, the Kramers–Kronig check of each source and the physics sanity → the one
//! [`FitReport`] that feeds the text report, `--json`, the `-o` file and the material library.
//!
//! A fit may cover several sources (samples of one material fitted by one shared model). Each
//! residual point and each provenance entry carries its sample's index, which the library's
//! vetting groups by; the KK figures are those of the worst source.

use super::engine::FitOutcome;
use super::kk::KK_RESIDUAL_LIMIT;
use super::report::{
    Estimate, FitReport, KkReport, ResidualPoint, RunnerUp, SourceProvenance, TermReport,
};
use super::sanity::{self, SaturationPolarisation};
pub use super::source::{merged, SourceData};
use std::collections::BTreeMap;

/// Assemble the report. `kk[i]` is the Lin-KK result of `sources[i]`. Warnings come in
/// pipeline order: earlier stages, the fit, the KK check, the physics sanity; the sanity list
/// holds those of them that block publishing, in the same order.
pub fn build_report(
    outcome: &FitOutcome,
    sources: &[SourceData],
    kk: &[KkReport],
    js: SaturationPolarisation,
    runner_up: Option<RunnerUp>,
) -> FitReport {
    let flat = outcome.model.to_params();
    let estimate = |k: usize| Estimate {
        value: flat[k],
        stderr: outcome.stderr[k],
    };
    let mut at = 1;
    let terms = outcome
        .model
        .terms
        .iter()
        .map(|t| {
            let names = t.kind.param_names();
            let params: BTreeMap<String, Estimate> = names
                .iter()
                .enumerate()
                .map(|(i, n)| (n.to_string(), estimate(at + i)))
                .collect();
            at += names.len();
            TermReport {
                kind: t.kind.name().to_string(),
                params,
            }
        })
        .collect();
    let several = sources.len() > 1;
    let tag = |s: &SourceData, w: &str| {
        if several {
            format!("{}: {}", s.label, w)
        } else {
            w.to_string()
        }
    };
    let mut warnings: Vec<String> = sources
        .iter()
        .flat_map(|s| s.warnings.iter().map(move |w| tag(s, w)))
        .collect();
    let mut findings: Vec<String> = sources
        .iter()
        .flat_map(|s| s.sanity.iter().map(move |w| tag(s, w)))
        .collect();
    warnings.extend(outcome.warnings.iter().cloned());
    findings.extend(outcome.sanity.iter().cloned());
    warnings.extend(
        sources
            .iter()
            .zip(kk)
            .filter_map(|(s, k)| kk_warning(k).map(|w| tag(s, &w))),
    );
    let spectra: Vec<sanity::Spectrum> = sources
        .iter()
        .map(|s| (s.freq_hz.as_slice(), s.mu.as_slice()))
        .collect();
    let physics = sanity::warnings(&spectra, &outcome.model, js);
    let (f_min_hz, f_max_hz) = sanity::band(&spectra).unwrap_or((0.0, 0.0));
    warnings.extend(physics.iter().cloned());
    findings.extend(physics);
    // The fit's residuals are in merged order; the report lists them source by source.
    let order = super::source::merge_order(sources);
    let mut residuals = vec![ResidualPoint::default(); order.len()];
    let sample_of: Vec<usize> = sources
        .iter()
        .enumerate()
        .flat_map(|(sample, s)| std::iter::repeat_n(sample, s.freq_hz.len()))
        .collect();
    let all_freq: Vec<f64> = sources
        .iter()
        .flat_map(|s| s.freq_hz.iter().copied())
        .collect();
    for (r, &g) in outcome.residuals.iter().zip(&order) {
        residuals[g] = ResidualPoint {
            freq_hz: all_freq[g],
            re: r.re,
            im: r.im,
            sample: sample_of[g],
        };
    }
    FitReport {
        source: sources
            .iter()
            .map(|s| s.label.as_str())
            .collect::<Vec<_>>()
            .join(" + "),
        model: outcome.model.spec(),
        mu_inf: estimate(0),
        terms,
        correlation: outcome.correlation.clone(),
        correlation_params: outcome.correlation_labels.clone(),
        stats: outcome.stats.clone(),
        f_min_hz,
        f_max_hz,
        kk: worst_kk(kk),
        warnings,
        sanity: Some(findings),
        runner_up,
        provenance: sources
            .iter()
            .enumerate()
            .flat_map(|(sample, s)| {
                s.provenance.iter().map(move |p| SourceProvenance {
                    sample,
                    ..p.clone()
                })
            })
            .collect(),
        residuals,
    }
}

/// The KK figures of the worst source: it passes only if every source passes.
fn worst_kk(kk: &[KkReport]) -> KkReport {
    let worst = kk.iter().max_by(|a, b| {
        (!a.pass, a.residual_rms)
            .partial_cmp(&(!b.pass, b.residual_rms))
            .unwrap_or(std::cmp::Ordering::Equal)
    });
    match worst {
        Some(w) => KkReport {
            pass: kk.iter().all(|k| k.pass),
            ..w.clone()
        },
        None => KkReport {
            pass: false,
            residual_rms: 0.0,
            residual_max: 0.0,
            m: 0,
            mu_c: 0.0,
            drift_max: 0.0,
            basis: String::new(),
        },
    }
}

/// A failing KK check is a warning on the fit (and blocks vetting in the library).
fn kk_warning(kk: &KkReport) -> Option<String> {
    (!kk.pass).then(|| {
        format!(
            "the spectrum fails the Kramers–Kronig check (Lin-KK, {} basis, M = {}): residual RMS {:.2} %, drift {:.2} % \
             (limit {:.0} %); as measured it is not a causal material response — check the valid band, fixture and lead \
             corrections before publishing",
            kk.basis,
            kk.m,
            100.0 * kk.residual_rms,
            100.0 * kk.drift_max,
            100.0 * KK_RESIDUAL_LIMIT
        )
    })
}

/// The report as `--json` prints it: without provenance and residuals.
pub fn json_view(report: &FitReport) -> FitReport {
    FitReport {
        provenance: Vec::new(),
        residuals: Vec::new(),
        ..report.clone()
    }
}
