//! Stage 2 — impedance of a wound core → geometry-independent μ′/μ″, lead-inductance
//! correction, gap correction, validity band, and the inverse μ → Z. OWNER: geometry/extract helper.

crate::stage_error!(
    /// Anything that stops an extraction (mismatched files and turns, no valid band, ...).
    ExtractError
);
