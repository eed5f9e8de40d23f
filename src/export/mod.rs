//! Exports for other tools: μ table CSV, Touchstone, SPICE sub-circuit. OWNER: library helper.

crate::stage_error!(
    /// An export that cannot be produced.
    ExportError
);
