//! Fit reports built in Rust for the library tests: a known model "measured" on several sources,
//! each a scaled copy of the model, so residuals, their statistics and the per-sample agreement
//! are known in closed form (|r| = |o|/(1 + o) for a source scaled by 1 + o).
#![allow(dead_code)]

use mucurve::fit::report::{
    Estimate, FitReport, FitStats, KkReport, ResidualPoint, SourceProvenance, TermReport,
};
use mucurve::library::canonical::sha256_hex;
use mucurve::model::{Model, Term};
use std::path::{Path, PathBuf};

/// Band of every synthetic fit.
pub const F_MIN: f64 = 1e6;
pub const F_MAX: f64 = 3e8;
/// Frequencies per source.
pub const POINTS: usize = 40;

/// A spin (Debye) + wall (damped resonance) spectrum with invented values.
pub fn spin_wall() -> Model {
    Model {
        mu_inf: 1.0,
        terms: vec![Term::debye(180.0, 8e6), Term::lorentz(40.0, 2e8, 0.8)],
    }
}

/// One Debye term: μ = 1 + Δμ/(1 + j f/f_r).
pub fn debye(delta_mu: f64, f_hz: f64) -> Model {
    Model {
        mu_inf: 1.0,
        terms: vec![Term::debye(delta_mu, f_hz)],
    }
}

/// A clean fit of `model` to one source per entry of `offsets` (source k measured μ·(1 + o_k)),
/// each source its own sample (core) with sample index k.
pub fn fit(model: &Model, offsets: &[f64]) -> FitReport {
    fit_n(model, offsets, POINTS)
}

/// [`fit`] with `points` frequencies per source (large values make big files).
pub fn fit_n(model: &Model, offsets: &[f64], points: usize) -> FitReport {
    let mut residuals = Vec::new();
    let mut provenance = Vec::new();
    for (k, &o) in offsets.iter().enumerate() {
        for i in 0..points {
            let f = F_MIN * (F_MAX / F_MIN).powf(i as f64 / (points - 1) as f64);
            let model_mu = model.mu(f);
            let measured = model_mu * (1.0 + o);
            let r = (model_mu - measured) / measured.norm();
            residuals.push(ResidualPoint {
                freq_hz: f,
                re: r.re,
                im: r.im,
                sample: k,
            });
        }
        let file = format!("sample{}-5t.s1p", k + 1);
        provenance.push(SourceProvenance {
            sha256: sha256_hex(file.as_bytes()),
            file,
            method: Some("reflection".into()),
            core: "toroid:od=25mm,id=15mm,h=10mm".into(),
            turns: 5.0,
            corrections: vec!["open-short".into()],
            temperature_c: Some(23.0),
            notes: None,
            sample: k,
        });
    }
    let sq: Vec<f64> = residuals
        .iter()
        .map(|r| r.re * r.re + r.im * r.im)
        .collect();
    let n = residuals.len();
    let stats = FitStats {
        cost: 0.5 * sq.iter().sum::<f64>(),
        rms_rel: (sq.iter().sum::<f64>() / (2 * n) as f64).sqrt(),
        max_rel: sq.iter().fold(0.0_f64, |m, &s| m.max(s.sqrt())),
        chi2_reduced: 1.0,
        aic: -100.0,
        bic: -90.0,
        points: 2 * n,
        iterations: 12,
    };
    let terms: Vec<TermReport> = model
        .terms
        .iter()
        .map(|t| TermReport {
            kind: t.kind.name().into(),
            params: t
                .kind
                .param_names()
                .iter()
                .zip(t.params())
                .map(|(n, v)| {
                    (
                        n.to_string(),
                        Estimate {
                            value: v,
                            stderr: Some(v.abs() * 1e-3),
                        },
                    )
                })
                .collect(),
        })
        .collect();
    let np = 1 + 3 * model.terms.len();
    let correlation: Vec<Vec<f64>> = (0..np)
        .map(|i| (0..np).map(|j| if i == j { 1.0 } else { 0.1 }).collect())
        .collect();
    // Built through serde, so fields the fit stage adds with defaults do not break these tests.
    serde_json::from_value(serde_json::json!({
        "source": "synthetic",
        "model": model.spec(),
        "mu_inf": Estimate { value: model.mu_inf, stderr: None },
        "terms": terms,
        "correlation": correlation,
        "stats": stats,
        "f_min_hz": F_MIN,
        "f_max_hz": F_MAX,
        "kk": passing_kk(),
        "warnings": [],
        "provenance": provenance,
        "residuals": residuals,
    }))
    .unwrap()
}

/// A passing Lin-KK result.
pub fn passing_kk() -> KkReport {
    serde_json::from_value(serde_json::json!({"pass": true, "residual_rms": 0.003, "residual_max": 0.008, "m": 12, "mu_c": 0.6})).unwrap()
}

/// Two samples within ±1 %: passes every vetting rule.
pub fn good_fit() -> FitReport {
    fit(&spin_wall(), &[0.01, -0.01])
}

/// Write `report` as `name` in `dir` and return its path.
pub fn write_fit(dir: &Path, name: &str, report: &FitReport) -> PathBuf {
    let path = dir.join(name);
    std::fs::write(&path, serde_json::to_vec_pretty(report).unwrap()).unwrap();
    path
}
