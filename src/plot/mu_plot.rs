//! μ′ and μ″ against log frequency with the valid band shaded. OWNER: geometry/extract helper.
