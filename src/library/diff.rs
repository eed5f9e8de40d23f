//! Differences between two versions: parameter deltas and the largest deviation of the curves.

use super::material::Material;
use super::LibraryError;
use crate::fit::report::TermReport;
use serde::Serialize;

/// Points of the log-spaced grid the curves are compared on.
pub const DIFF_GRID_POINTS: usize = 400;

/// One parameter in either version (absent on a side whose term has another kind).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ParamDelta {
    /// `mu_inf` or `term<i>.<kind>.<param>` (1-based term index).
    pub name: String,
    pub a: Option<f64>,
    pub b: Option<f64>,
    /// b − a.
    pub delta: Option<f64>,
    /// (b − a)/|a|.
    pub rel: Option<f64>,
}

/// The largest |μ_b − μ_a|/|μ_a| over the band both versions are valid in.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct CurveDeviation {
    pub f_lo_hz: f64,
    pub f_hi_hz: f64,
    pub points: usize,
    pub max_pct: f64,
    pub at_hz: f64,
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct MaterialDiff {
    pub a: String,
    pub b: String,
    pub model_a: String,
    pub model_b: String,
    pub params: Vec<ParamDelta>,
    /// `None` when the bands do not overlap.
    pub curve: Option<CurveDeviation>,
}

/// Compare version `a` (the reference) with version `b`.
pub fn diff(a: &Material, b: &Material) -> Result<MaterialDiff, LibraryError> {
    let mut params = vec![delta(
        "mu_inf".into(),
        Some(a.model.mu_inf.value),
        Some(b.model.mu_inf.value),
    )];
    for i in 0..a.model.terms.len().max(b.model.terms.len()) {
        params.extend(term_deltas(i, a.model.terms.get(i), b.model.terms.get(i)));
    }
    let (ma, mb) = (a.to_model()?, b.to_model()?);
    let (lo, hi) = (
        a.band.f_min_hz.max(b.band.f_min_hz),
        a.band.f_max_hz.min(b.band.f_max_hz),
    );
    let curve = (lo < hi).then(|| {
        let mut worst = (0.0_f64, lo);
        for f in log_grid(lo, hi, DIFF_GRID_POINTS) {
            let (ua, ub) = (ma.mu(f), mb.mu(f));
            let dev = 100.0 * (ub - ua).norm() / ua.norm();
            if dev > worst.0 || dev.is_nan() {
                worst = (dev, f);
            }
        }
        CurveDeviation {
            f_lo_hz: lo,
            f_hi_hz: hi,
            points: DIFF_GRID_POINTS,
            max_pct: worst.0,
            at_hz: worst.1,
        }
    });
    Ok(MaterialDiff {
        a: a.reference(),
        b: b.reference(),
        model_a: a.model.spec.clone(),
        model_b: b.model.spec.clone(),
        params,
        curve,
    })
}

fn term_deltas(i: usize, a: Option<&TermReport>, b: Option<&TermReport>) -> Vec<ParamDelta> {
    let name = |t: &TermReport, p: &str| format!("term{}.{}.{}", i + 1, t.kind, p);
    match (a, b) {
        (Some(ta), Some(tb)) if ta.kind == tb.kind => {
            let mut keys: Vec<&String> = ta.params.keys().chain(tb.params.keys()).collect();
            keys.sort();
            keys.dedup();
            keys.into_iter()
                .map(|k| {
                    delta(
                        name(ta, k),
                        ta.params.get(k).map(|e| e.value),
                        tb.params.get(k).map(|e| e.value),
                    )
                })
                .collect()
        }
        _ => {
            let side = |t: Option<&TermReport>, is_a: bool| -> Vec<ParamDelta> {
                t.map(|t| {
                    t.params
                        .iter()
                        .map(|(k, e)| {
                            if is_a {
                                delta(name(t, k), Some(e.value), None)
                            } else {
                                delta(name(t, k), None, Some(e.value))
                            }
                        })
                        .collect()
                })
                .unwrap_or_default()
            };
            let mut out = side(a, true);
            out.extend(side(b, false));
            out
        }
    }
}

fn delta(name: String, a: Option<f64>, b: Option<f64>) -> ParamDelta {
    let d = a.zip(b).map(|(a, b)| b - a);
    let rel = a.zip(d).and_then(|(a, d)| (a != 0.0).then(|| d / a.abs()));
    ParamDelta {
        name,
        a,
        b,
        delta: d,
        rel,
    }
}

/// `n` log-spaced frequencies from `lo` to `hi` inclusive (n ≥ 2; both > 0).
pub fn log_grid(lo: f64, hi: f64, n: usize) -> Vec<f64> {
    let (l0, l1) = (lo.ln(), hi.ln());
    (0..n)
        .map(|i| (l0 + (l1 - l0) * i as f64 / (n - 1) as f64).exp())
        .collect()
}
