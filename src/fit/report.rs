//! The one fit-report struct that feeds the text report, `--json`, `-o FIT.json` and the
//! material files. Field names are a contract (issue: fitting engine, `--json`).

use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;

/// A fitted value with its standard error (NaN stderr is written as null).
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Estimate {
    pub value: f64,
    pub stderr: Option<f64>,
}

/// One fitted term: its kind and its named parameters.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct TermReport {
    pub kind: String,
    pub params: BTreeMap<String, Estimate>,
}

/// Goodness of fit. `points` counts real numbers fitted: 2 × frequencies for complex data.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct FitStats {
    pub cost: f64,
    pub rms_rel: f64,
    pub max_rel: f64,
    pub chi2_reduced: f64,
    pub aic: f64,
    pub bic: f64,
    pub points: usize,
    pub iterations: usize,
}

/// Lin-KK result (PHYSICS.md §5).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct KkReport {
    pub pass: bool,
    /// RMS of the relative residuals of the Lin-KK fit.
    pub residual_rms: f64,
    /// Largest relative residual.
    pub residual_max: f64,
    /// Number of Debye basis terms used.
    pub m: usize,
    /// Under/over-fitting measure μ_c at the chosen M.
    pub mu_c: f64,
    /// Largest moving average of the relative residuals (systematic misfit, not noise).
    #[serde(default)]
    pub drift_max: f64,
    /// Basis of the Lin-KK fit: `debye`, or `debye+resonance` for resonant spectra.
    #[serde(default)]
    pub basis: String,
}

/// Where one source sweep came from and what was done to it.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, Default)]
pub struct SourceProvenance {
    pub file: String,
    pub sha256: String,
    pub method: Option<String>,
    pub core: String,
    pub turns: f64,
    pub corrections: Vec<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub temperature_c: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub notes: Option<String>,
    /// Which physical sample (core) this sweep measured, numbered from 0 within one fit.
    /// Several windings on one core share a sample; vetting compares different samples.
    #[serde(default)]
    pub sample: usize,
}

/// The residual at one frequency, relative complex error (model − measured)/|measured|.
#[derive(Debug, Clone, Copy, Default, PartialEq, Serialize, Deserialize)]
pub struct ResidualPoint {
    pub freq_hz: f64,
    pub re: f64,
    pub im: f64,
    /// The sample (see [`SourceProvenance::sample`]) this point was measured on.
    #[serde(default)]
    pub sample: usize,
}

/// One fit, as printed with `--json` (one line) and written with `-o`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct FitReport {
    pub source: String,
    pub model: String,
    pub mu_inf: Estimate,
    pub terms: Vec<TermReport>,
    pub correlation: Vec<Vec<f64>>,
    /// Labels of the rows and columns of `correlation` (`mu_inf`, `<kind>#<n>.<name>`): the
    /// fitted parameters whose uncertainty is determined.
    #[serde(default)]
    pub correlation_params: Vec<String>,
    pub stats: FitStats,
    pub f_min_hz: f64,
    pub f_max_hz: f64,
    pub kk: KkReport,
    /// Everything the stages had to say, for people to read: notes on the files (a merged
    /// repeated frequency, noise outside the valid band), corrections, the fit, the KK check and
    /// the [`FitReport::sanity`] findings.
    pub warnings: Vec<String>,
    /// The findings among `warnings` that make the fit unfit to publish as material data: the
    /// physics sanity of the spectrum and the model (μ″ < 0 beyond the noise, Snoek's limit
    /// exceeded), a size effect of the core the extraction recognised, and parameters the data
    /// do not determine. The library's vetting refuses a version with any of them. `None` in a
    /// fit file written before the list existed.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub sanity: Option<Vec<String>>,
    /// Runner-up model and ΔBIC when the model was chosen automatically.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub runner_up: Option<RunnerUp>,
    /// Provenance and residuals: written with `-o` for the library, omitted from `--json`.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub provenance: Vec<SourceProvenance>,
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub residuals: Vec<ResidualPoint>,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct RunnerUp {
    pub model: String,
    pub delta_bic: f64,
}
