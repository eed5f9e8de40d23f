//! The batch summary: one row per fit with its key figures and every parameter ± standard
//! error, built as a polars table and written as CSV or Parquet (chosen by the extension).

use super::report::FitReport;
use super::FitError;
use crate::error::Diagnostic;
use polars::prelude::*;
use std::path::Path;

/// Parameter names in the column order of the summary (every kind's names, each once).
const PARAM_COLUMNS: [&str; 5] = ["delta_mu", "f_hz", "alpha", "beta", "damping"];

/// The summary table of `reports`. Terms are numbered from 1 in each model; a parameter a term
/// does not have (or a term a model does not have) is null.
pub fn summary_frame(reports: &[FitReport]) -> Result<DataFrame, FitError> {
    let text = |name: &str, f: &dyn Fn(&FitReport) -> Option<String>| {
        Column::new(name.into(), reports.iter().map(f).collect::<Vec<_>>())
    };
    let num = |name: &str, f: &dyn Fn(&FitReport) -> Option<f64>| {
        Column::new(name.into(), reports.iter().map(f).collect::<Vec<_>>())
    };
    let mut cols = vec![
        text("source", &|r| Some(r.source.clone())),
        text("model", &|r| Some(r.model.clone())),
        text("runner_up", &|r| {
            r.runner_up.as_ref().map(|u| u.model.clone())
        }),
        num("delta_bic", &|r| r.runner_up.as_ref().map(|u| u.delta_bic)),
        num("f_min_hz", &|r| Some(r.f_min_hz)),
        num("f_max_hz", &|r| Some(r.f_max_hz)),
        Column::new(
            "points".into(),
            reports
                .iter()
                .map(|r| r.stats.points as u64)
                .collect::<Vec<_>>(),
        ),
        num("rms_rel", &|r| Some(r.stats.rms_rel)),
        num("max_rel", &|r| Some(r.stats.max_rel)),
        num("chi2_reduced", &|r| Some(r.stats.chi2_reduced)),
        num("aic", &|r| Some(r.stats.aic)),
        num("bic", &|r| Some(r.stats.bic)),
        Column::new(
            "kk_pass".into(),
            reports.iter().map(|r| r.kk.pass).collect::<Vec<_>>(),
        ),
        num("kk_residual_rms", &|r| Some(r.kk.residual_rms)),
        Column::new(
            "warnings".into(),
            reports
                .iter()
                .map(|r| r.warnings.len() as u64)
                .collect::<Vec<_>>(),
        ),
        // Findings that block vetting; null for a report written before the list existed.
        Column::new(
            "sanity".into(),
            reports
                .iter()
                .map(|r| r.sanity.as_ref().map(|s| s.len() as u64))
                .collect::<Vec<_>>(),
        ),
        num("mu_inf", &|r| Some(r.mu_inf.value)),
        num("mu_inf_stderr", &|r| r.mu_inf.stderr),
    ];
    let most_terms = reports.iter().map(|r| r.terms.len()).max().unwrap_or(0);
    for t in 0..most_terms {
        cols.push(text(&format!("term{}_kind", t + 1), &|r| {
            r.terms.get(t).map(|x| x.kind.clone())
        }));
        for name in PARAM_COLUMNS {
            let est = |r: &FitReport| r.terms.get(t).and_then(|x| x.params.get(name)).copied();
            cols.push(num(&format!("term{}_{}", t + 1, name), &|r| {
                est(r).map(|e| e.value)
            }));
            cols.push(num(&format!("term{}_{}_stderr", t + 1, name), &|r| {
                est(r).and_then(|e| e.stderr)
            }));
        }
    }
    DataFrame::new(cols).map_err(|e| {
        FitError(Diagnostic::new(format!(
            "cannot build the summary table: {e}"
        )))
    })
}

/// Write the summary of `reports` to `path` (`.csv` or `.parquet`); returns the row count.
pub fn write_summary(path: &Path, reports: &[FitReport]) -> Result<usize, FitError> {
    let ext = path
        .extension()
        .and_then(|e| e.to_str())
        .map(str::to_ascii_lowercase);
    let mut df = summary_frame(reports)?;
    let mut bytes = Vec::new();
    let encoded = match ext.as_deref() {
        Some("csv") => CsvWriter::new(&mut bytes).finish(&mut df),
        Some("parquet") => ParquetWriter::new(std::io::Cursor::new(&mut bytes))
            .finish(&mut df)
            .map(|_| ()),
        _ => {
            return Err(FitError(
                Diagnostic::new("unknown summary format")
                    .file(path)
                    .expected("a file name ending in .csv or .parquet")
                    .hint("e.g. --summary fits.csv"),
            ))
        }
    };
    encoded.map_err(|e| {
        FitError(Diagnostic::new(format!("cannot encode the summary: {e}")).file(path))
    })?;
    crate::fsutil::write_atomic(path, &bytes).map_err(|e| FitError(e.0))?;
    Ok(df.height())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::fit::report::{Estimate, FitStats, KkReport, TermReport};
    use std::collections::BTreeMap;

    fn report(kinds: &[(&str, &[&str])]) -> FitReport {
        let terms = kinds
            .iter()
            .map(|(k, names)| TermReport {
                kind: k.to_string(),
                params: names
                    .iter()
                    .map(|n| {
                        (
                            n.to_string(),
                            Estimate {
                                value: 2.0,
                                stderr: Some(0.1),
                            },
                        )
                    })
                    .collect::<BTreeMap<_, _>>(),
            })
            .collect();
        FitReport {
            source: "a.csv".into(),
            model: "x".into(),
            mu_inf: Estimate {
                value: 1.0,
                stderr: None,
            },
            terms,
            correlation: vec![],
            correlation_params: vec![],
            stats: FitStats {
                cost: 1.0,
                rms_rel: 0.01,
                max_rel: 0.02,
                chi2_reduced: 1e-4,
                aic: 1.0,
                bic: 2.0,
                points: 10,
                iterations: 3,
            },
            f_min_hz: 1e5,
            f_max_hz: 1e9,
            kk: KkReport {
                pass: true,
                residual_rms: 0.001,
                residual_max: 0.002,
                m: 5,
                mu_c: 0.8,
                drift_max: 0.0,
                basis: "debye".into(),
            },
            warnings: vec![],
            sanity: None,
            runner_up: None,
            provenance: vec![],
            residuals: vec![],
        }
    }

    #[test]
    fn rows_with_different_term_counts_share_columns_with_nulls() {
        let a = report(&[("debye", &["delta_mu", "f_hz"])]);
        let b = report(&[
            ("cole-cole", &["delta_mu", "f_hz", "alpha"]),
            ("lorentz", &["delta_mu", "f_hz", "damping"]),
        ]);
        let df = summary_frame(&[a, b]).unwrap();
        assert_eq!(df.height(), 2);
        let kind2 = df.column("term2_kind").unwrap();
        assert_eq!(kind2.null_count(), 1);
        assert_eq!(df.column("term1_alpha").unwrap().null_count(), 1);
        assert_eq!(df.column("mu_inf_stderr").unwrap().null_count(), 2);
        // Neither test report carries a sanity list: the count is unknown, not zero.
        assert_eq!(df.column("sanity").unwrap().null_count(), 2);
    }

    #[test]
    fn csv_and_parquet_by_extension_and_others_refused() {
        let dir = tempfile::tempdir().unwrap();
        let r = [report(&[("debye", &["delta_mu", "f_hz"])])];
        assert_eq!(write_summary(&dir.path().join("s.csv"), &r).unwrap(), 1);
        let text = std::fs::read_to_string(dir.path().join("s.csv")).unwrap();
        assert!(
            text.starts_with("source,model,runner_up,delta_bic,"),
            "{text}"
        );
        write_summary(&dir.path().join("s.parquet"), &r).unwrap();
        // Parquet files begin and end with the magic "PAR1" (Apache Parquet format specification).
        let bytes = std::fs::read(dir.path().join("s.parquet")).unwrap();
        assert_eq!(&bytes[..4], b"PAR1");
        assert_eq!(&bytes[bytes.len() - 4..], b"PAR1");
        assert!(write_summary(&dir.path().join("s.xlsx"), &r).is_err());
    }
}
