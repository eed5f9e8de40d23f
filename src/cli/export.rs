//! `mucurve export --library DIR --material ID[@N] --format csv|touchstone|spice
//! [--freq START..STOP:POINTS] [--core SPEC] [--turns N] [--cores M] [--lead-inductance L]
//! [--winding-capacitance C] [--z0 OHMS] [--ports 1|2] [--name SUBCKT] -o OUT`

use super::Failure;
use crate::export::{self, Request};
use crate::fsutil::write_atomic;
use crate::library::layout::DEFAULT_LIBRARY;
use std::path::PathBuf;

#[derive(Debug, clap::Args)]
pub struct Args {
    /// Library folder.
    #[arg(long, default_value = DEFAULT_LIBRARY)]
    pub library: PathBuf,
    /// Material and optional version, ID or ID@N (the latest version when N is left out).
    #[arg(long, value_name = "ID[@N]")]
    pub material: String,
    /// csv (μ′/μ″ table), touchstone (.s1p reflection or .s2p series-through of a wound core)
    /// or spice (.subckt NAME A B of a wound core).
    #[arg(long, value_name = "csv|touchstone|spice")]
    pub format: String,
    /// Log-spaced grid, e.g. 1MHz..1GHz:201; for spice, the band the network is built for.
    /// Default: the material's valid band, 201 points.
    #[arg(long, value_name = "START..STOP:POINTS")]
    pub freq: Option<String>,
    /// The core (touchstone, spice): SHAPE:key=value,... or a name from the cores file.
    #[arg(long, value_name = "SPEC")]
    pub core: Option<String>,
    /// Cores file of named cores (TOML). Default: cores.toml in the current folder, if any.
    #[arg(long, value_name = "FILE")]
    pub cores_file: Option<PathBuf>,
    /// Total residual gap replacing the core spec's, e.g. 8um.
    #[arg(long, value_name = "L")]
    pub gap: Option<String>,
    /// Turns through every core (default 1).
    #[arg(long, value_name = "N")]
    pub turns: Option<String>,
    /// Identical cores threaded in series on the winding (default 1).
    #[arg(long, value_name = "M")]
    pub cores: Option<u32>,
    /// Lead inductance in series with the winding, e.g. 30nH (default none).
    #[arg(long, value_name = "L")]
    pub lead_inductance: Option<String>,
    /// Winding capacitance across the core, e.g. 2pF (default none).
    #[arg(long, value_name = "C")]
    pub winding_capacitance: Option<String>,
    /// Touchstone reference impedance (default 50 Ω).
    #[arg(long, value_name = "OHMS", allow_hyphen_values = true)]
    pub z0: Option<String>,
    /// Touchstone ports: 1 (reflection) or 2 (series-through); default from the .s1p/.s2p name.
    #[arg(long, value_name = "1|2")]
    pub ports: Option<usize>,
    /// SPICE sub-circuit name (default: the material id with '_' for other characters).
    #[arg(long, value_name = "SUBCKT")]
    pub name: Option<String>,
    /// The file to write.
    #[arg(short = 'o', long = "output", value_name = "OUT")]
    pub output: PathBuf,
}

pub fn run(args: Args) -> Result<(), Failure> {
    let core = match &args.core {
        Some(spec) => Some(super::extract::resolve_core(
            spec,
            args.cores_file.as_deref(),
            args.gap.as_deref(),
        )?),
        None if args.gap.is_some() || args.cores_file.is_some() => {
            return Err(Failure::input(
                "--gap and --cores-file describe the core: give --core as well",
            ))
        }
        None => None,
    };
    let plan = export::plan(&Request {
        library: args.library,
        material: args.material,
        format: args.format,
        freq: args.freq,
        core,
        turns: args.turns,
        cores: args.cores,
        lead_inductance: args.lead_inductance,
        winding_capacitance: args.winding_capacitance,
        z0: args.z0,
        ports: args.ports,
        name: args.name,
        output: args.output,
    })?;
    let out = export::render(&plan);
    write_atomic(&plan.output, out.text.as_bytes())?;
    for w in &plan.warnings {
        eprintln!("warning: {}", w);
    }
    println!("wrote {}: {}", plan.output.display(), out.summary);
    Ok(())
}
