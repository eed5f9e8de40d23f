//! mucurve — from a network-analyser sweep of a ferrite core to a published, causal
//! permeability model, and from that model to predictions for any core, winding and circuit.
//!
//! The modules follow the pipeline, one stage each:
//! `ingest` (read analyser exports, turn them into impedance) → `geometry` (IEC 60205 effective
//! parameters) → `extract` (impedance → μ′/μ″, valid band) → `model` (relaxation terms) →
//! `fit` (least squares, uncertainty, Kramers–Kronig) → `library` (versioned material files) →
//! `predict` / `export` (impedance, insertion loss, Touchstone, SPICE). `plot` draws; `cli` parses
//! arguments and prints. Only `cli` and `main.rs` print or exit.

pub mod demo;
pub mod error;
pub mod extract;
pub mod fsutil;
pub mod fit;
pub mod geometry;
pub mod ingest;
pub mod library;
pub mod model;
pub mod plot;
pub mod predict;
pub mod export;
pub mod units;
pub mod wide;
pub mod cli;

/// Complex numbers throughout: `re − j·im` conventions are spelled out where they matter.
pub type C64 = num_complex::Complex64;

/// Permeability of free space, H/m (CODATA 2018: 1.25663706212e-6).
pub const MU0: f64 = 1.256_637_062_12e-6;

/// Version written into every output's provenance.
pub const TOOL_VERSION: &str = env!("CARGO_PKG_VERSION");
