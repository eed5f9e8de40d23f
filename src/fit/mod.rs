//! Stage 3 — fit a causal model to μ′/μ″ by nonlinear least squares, with honest uncertainties,
//! model choice by BIC and a Kramers–Kronig check of the data. OWNER: fit helpers.

pub mod analysis;
pub mod build_report;
pub mod dot;
pub mod engine;
pub mod kk;
pub mod kk_resonance;
pub mod lm;
pub mod lstsq;
pub mod normal_equations;
pub mod problem;
pub mod report;
pub mod sanity;
pub mod screen;
pub mod serial;
pub mod source;
pub mod start;
pub mod summary;
pub mod synthetic;
pub mod text_report;
pub mod transform;

crate::stage_error!(
    /// A fit that cannot be set up or run (too few points, bad model spec, ...).
    FitError
);
