//! Stage 3 — fit a causal model to μ′/μ″ by nonlinear least squares, with honest uncertainties,
//! model choice by BIC and a Kramers–Kronig check of the data. OWNER: fit helpers.

pub mod lm;
pub mod normal_equations;
pub mod problem;
pub mod report;
pub mod transform;

crate::stage_error!(
    /// A fit that cannot be set up or run (too few points, bad model spec, ...).
    FitError
);
