//! Stage 5 — from a material model to a core's impedance, insertion loss and pulse response.

crate::stage_error!(
    /// A prediction that cannot be made from the given inputs.
    PredictError
);
