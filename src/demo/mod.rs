//! The invented demo scenario: an organisation qualifying suppression cores, its materials, the
//! deterministic generator of its raw sweeps and manifest, and the walk of the pipeline over them
//! that `mucurve demo` reports. Nothing here prints; the pipeline reports through a callback.

pub mod cores;
pub mod formats;
pub mod generate;
pub mod manifest;
pub mod materials;
pub mod pipeline;
pub mod readme;
pub mod release;
pub mod rng;
pub mod scenario;

crate::stage_error!(
    /// The demo scenario could not be generated, read or run.
    DemoError
);
