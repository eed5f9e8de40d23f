//! Measured and fitted μ′, μ″ with a residual panel. OWNER: fit-pipeline helper.
