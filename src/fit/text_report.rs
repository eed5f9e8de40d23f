//! The human-readable fit report: parameters ± standard error, strong correlations called out,
//! fit statistics, the Kramers–Kronig check and every warning. A pure function of the report.

use super::report::{Estimate, FitReport};
use super::sanity::fmt_hz;
use std::fmt::Write;

/// Correlations at or above this magnitude are called out (issue: fitting engine, item 3).
pub const STRONG_CORRELATION: f64 = 0.9;
/// Strong pairs listed in the text, strongest first; the rest are counted.
const MOST_CORRELATIONS_LISTED: usize = 8;

/// A value with 5 significant figures, plain or in exponent form when very large or small.
fn num(v: f64) -> String {
    if v == 0.0 || !v.is_finite() {
        return format!("{v}");
    }
    let mag = v.abs().log10().floor() as i32;
    if (-3..6).contains(&mag) {
        format!("{:.*}", (4 - mag).max(0) as usize, v)
    } else {
        format!("{:.4e}", v)
    }
}

fn value(name: &str, v: f64) -> String {
    if name == "f_hz" {
        fmt_hz(v)
    } else {
        num(v)
    }
}

/// "± stderr (rel %)" or why there is none.
fn uncertainty(name: &str, e: &Estimate, fixed: bool) -> String {
    match e.stderr {
        _ if fixed => "(held fixed)".to_string(),
        Some(s) if e.value != 0.0 => format!(
            "± {:<12} ({:.2} %)",
            value(name, s),
            100.0 * s / e.value.abs()
        ),
        Some(s) => format!("± {}", value(name, s)),
        None => "± (not determined)".to_string(),
    }
}

/// The whole report as text, ending with a newline.
pub fn render(r: &FitReport) -> String {
    let mut out = String::new();
    let w = &mut out;
    let _ = writeln!(w, "fit of {}", r.source);
    let _ = writeln!(w, "model: {}", r.model);
    if let Some(ru) = &r.runner_up {
        let why = if ru.delta_bic < 0.0 {
            " (lower BIC, but with parameters the data do not determine)"
        } else {
            ""
        };
        let _ = writeln!(
            w,
            "  chosen by BIC; runner-up {} with ΔBIC = {:.1}{}",
            ru.model, ru.delta_bic, why
        );
    }
    let _ = writeln!(
        w,
        "band: {} – {}, {} frequencies",
        fmt_hz(r.f_min_hz),
        fmt_hz(r.f_max_hz),
        r.stats.points / 2
    );
    let _ = writeln!(w);
    let _ = writeln!(w, "  {:<24} {:<14} standard error", "parameter", "value");
    let mu_inf_fixed = !r.correlation_params.iter().any(|p| p == "mu_inf");
    let _ = writeln!(
        w,
        "  {:<24} {:<14} {}",
        "mu_inf",
        num(r.mu_inf.value),
        uncertainty("mu_inf", &r.mu_inf, mu_inf_fixed)
    );
    for (i, t) in r.terms.iter().enumerate() {
        // Parameters in the order the model spec defines, not the map's alphabetical order.
        let order = crate::model::TermKind::parse(&t.kind)
            .map(|k| k.param_names().to_vec())
            .unwrap_or_default();
        for name in order {
            if let Some(e) = t.params.get(name) {
                let label = format!("{}#{}.{}", t.kind, i + 1, name);
                let _ = writeln!(
                    w,
                    "  {:<24} {:<14} {}",
                    label,
                    value(name, e.value),
                    uncertainty(name, e, false)
                );
            }
        }
    }
    let strong = strong_correlations(r);
    if !strong.is_empty() {
        let _ = writeln!(w);
        let _ = writeln!(
            w,
            "strong correlations (|r| ≥ {}): these parameters trade off against each other",
            STRONG_CORRELATION
        );
        for (a, b, c) in strong.iter().take(MOST_CORRELATIONS_LISTED) {
            let _ = writeln!(w, "  {:<24} ~ {:<24} r = {:+.3}", a, b, c);
        }
        if strong.len() > MOST_CORRELATIONS_LISTED {
            let _ = writeln!(
                w,
                "  … and {} more pairs (see the correlation matrix in --json)",
                strong.len() - MOST_CORRELATIONS_LISTED
            );
        }
    }
    let s = &r.stats;
    let _ = writeln!(w);
    let _ = writeln!(
        w,
        "fit: rms {:.3} %, max {:.3} % (relative complex error); cost {}; reduced χ² {}; AIC {:.1}; BIC {:.1}; {} points; {} iterations",
        100.0 * s.rms_rel,
        100.0 * s.max_rel,
        num(s.cost),
        num(s.chi2_reduced),
        s.aic,
        s.bic,
        s.points,
        s.iterations
    );
    let k = &r.kk;
    let _ = writeln!(
        w,
        "Kramers–Kronig (Lin-KK, {} basis, M = {}, μ_c = {:.2}): {} — residual rms {:.3} %, max {:.3} %, drift {:.3} %",
        k.basis,
        k.m,
        k.mu_c,
        if k.pass { "pass" } else { "FAIL" },
        100.0 * k.residual_rms,
        100.0 * k.residual_max,
        100.0 * k.drift_max
    );
    if !r.warnings.is_empty() {
        let blocking = |m: &String| r.sanity.as_ref().is_some_and(|s| s.contains(m));
        let _ = writeln!(w);
        if r.warnings.iter().any(blocking) {
            let _ = writeln!(
                w,
                "warnings (! = sanity finding: the library will not vet this fit):"
            );
        } else {
            let _ = writeln!(w, "warnings:");
        }
        for m in &r.warnings {
            let _ = writeln!(w, "  {} {}", if blocking(m) { "!" } else { "-" }, m);
        }
    }
    out
}

/// Pairs of parameters with |r| ≥ [`STRONG_CORRELATION`], strongest first.
pub fn strong_correlations(r: &FitReport) -> Vec<(String, String, f64)> {
    let n = r.correlation_params.len().min(r.correlation.len());
    let mut out = Vec::new();
    for i in 0..n {
        for j in 0..i {
            let c = r.correlation[i].get(j).copied().unwrap_or(0.0);
            if c.abs() >= STRONG_CORRELATION {
                out.push((
                    r.correlation_params[j].clone(),
                    r.correlation_params[i].clone(),
                    c,
                ));
            }
        }
    }
    out.sort_by(|a, b| b.2.abs().total_cmp(&a.2.abs()));
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::fit::report::{FitStats, KkReport, TermReport};
    use std::collections::BTreeMap;

    fn report() -> FitReport {
        let est = |value, stderr| Estimate { value, stderr };
        let mut p = BTreeMap::new();
        p.insert("delta_mu".to_string(), est(812.0, Some(4.0)));
        p.insert("f_hz".to_string(), est(12.5e6, Some(0.1e6)));
        FitReport {
            source: "core-a.csv".into(),
            model: "debye".into(),
            mu_inf: est(1.0, None),
            terms: vec![TermReport {
                kind: "debye".into(),
                params: p,
            }],
            correlation: vec![vec![1.0, -0.95], vec![-0.95, 1.0]],
            correlation_params: vec!["debye#1.delta_mu".into(), "debye#1.f_hz".into()],
            stats: FitStats {
                cost: 0.01,
                rms_rel: 0.002,
                max_rel: 0.008,
                chi2_reduced: 4e-6,
                aic: -100.0,
                bic: -90.0,
                points: 400,
                iterations: 6,
            },
            f_min_hz: 1e5,
            f_max_hz: 1e9,
            kk: KkReport {
                pass: false,
                residual_rms: 0.02,
                residual_max: 0.05,
                m: 7,
                mu_c: 0.8,
                drift_max: 0.015,
                basis: "debye".into(),
            },
            warnings: vec!["something to know".into(), "Snoek product exceeds".into()],
            sanity: Some(vec!["Snoek product exceeds".into()]),
            runner_up: None,
            provenance: Vec::new(),
            residuals: Vec::new(),
        }
    }

    #[test]
    fn text_names_every_parameter_with_its_error_and_calls_out_correlation() {
        let t = render(&report());
        assert!(
            t.contains("debye#1.delta_mu") && t.contains("± 4.0000"),
            "{t}"
        );
        assert!(
            t.contains("12.50 MHz") && t.contains("± 100.0 kHz") && t.contains("(0.80 %)"),
            "{t}"
        );
        assert!(t.contains("mu_inf") && t.contains("(held fixed)"), "{t}");
        assert!(t.contains("r = -0.950"), "{t}");
        assert!(
            t.contains("FAIL") && t.contains("  - something to know"),
            "{t}"
        );
        // A sanity finding is marked as one; a plain note is not.
        assert!(t.contains("  ! Snoek product exceeds"), "{t}");
        assert!(
            t.lines().position(|l| l.contains("delta_mu"))
                < t.lines().position(|l| l.contains("f_hz"))
        );
    }

    #[test]
    fn weak_correlations_are_not_called_out() {
        let mut r = report();
        r.correlation = vec![vec![1.0, 0.5], vec![0.5, 1.0]];
        assert!(strong_correlations(&r).is_empty());
        assert!(!render(&r).contains("strong correlations"));
    }

    #[test]
    fn numbers_have_five_significant_figures() {
        assert_eq!(num(812.0), "812.00");
        assert_eq!(num(0.012345678), "0.012346");
        assert_eq!(num(1.5e-7), "1.5000e-7");
    }
}
