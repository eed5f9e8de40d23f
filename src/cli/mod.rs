//! Command-line interface: parses arguments (clap derive), calls the library, prints.
//! One file per command; the only place besides `main.rs` that prints.

pub mod bench;
pub mod demo;
pub mod export;
pub mod extract;
pub mod fit;
pub mod ingest;
pub mod library;
pub mod publish;

use clap::{Parser, Subcommand};
use std::fmt;

#[derive(Debug, Parser)]
#[command(name = "mucurve", version, about = "Ferrite suppression cores: from analyser sweeps to causal μ′/μ″ models, a versioned material library and predictions")]
pub struct Cli {
    #[command(subcommand)]
    pub command: Command,
}

#[derive(Debug, Subcommand)]
pub enum Command {
    /// Read an analyser export and write the part's impedance as freq_hz,z_re_ohm,z_im_ohm.
    Ingest(ingest::Args),
    /// Turn impedance sweeps of a wound core into μ′/μ″ (freq_hz,mu_prime,mu_double_prime).
    Extract(extract::Args),
    /// Fit a causal permeability model to one or more sweeps.
    Fit(fit::Args),
    /// Publish a fit as the next version of a material in the library.
    Publish(publish::Args),
    /// Query, vet, retire and verify the material library.
    Library(library::Args),
    /// Export a material for other tools (CSV table, Touchstone, SPICE).
    Export(export::Args),
    /// Run the whole pipeline on the bundled, invented demo scenario.
    Demo(demo::Args),
    /// Time the fit engine on synthetic spectra (see tests/reference/scipy_bench.py).
    Bench(bench::Args),
}

/// What a command failed with: the message to print and the exit code.
#[derive(Debug)]
pub struct Failure {
    pub message: String,
    pub code: i32,
}

impl Failure {
    /// A failure caused by the user's input or files (exit code 1).
    pub fn input(message: impl Into<String>) -> Self {
        Failure { message: message.into(), code: 1 }
    }
}

impl fmt::Display for Failure {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.message)
    }
}

macro_rules! failure_from {
    ($($t:ty),*) => {$(
        impl From<$t> for Failure {
            fn from(e: $t) -> Self { Failure::input(e.to_string()) }
        }
    )*};
}
failure_from!(
    crate::ingest::IngestError,
    crate::geometry::GeometryError,
    crate::extract::ExtractError,
    crate::model::ModelError,
    crate::fit::FitError,
    crate::library::LibraryError,
    crate::predict::PredictError,
    crate::export::ExportError,
    crate::plot::PlotError,
    crate::fsutil::WriteError
);

/// Run one parsed command line.
pub fn run(cli: Cli) -> Result<(), Failure> {
    match cli.command {
        Command::Ingest(a) => ingest::run(a),
        Command::Extract(a) => extract::run(a),
        Command::Fit(a) => fit::run(a),
        Command::Publish(a) => publish::run(a),
        Command::Library(a) => library::run(a),
        Command::Export(a) => export::run(a),
        Command::Demo(a) => demo::run(a),
        Command::Bench(a) => bench::run(a),
    }
}
