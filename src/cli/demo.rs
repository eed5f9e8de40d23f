//! `mucurve demo`: run the whole pipeline that exists over the invented demo scenario and say
//! what was done, step by step.

use super::Failure;
use crate::demo::pipeline::{self, Event, Options};
use std::path::PathBuf;

#[derive(Debug, clap::Args)]
pub struct Args {
    /// Work folder for the results.
    #[arg(long, value_name = "DIR", default_value = "demo-output")]
    pub out: PathBuf,
    /// Rewrite raw_measurements/ from the deterministic generator before running.
    #[arg(long)]
    pub regenerate: bool,
}

/// The folder the demo's measurements live in, relative to the current folder.
const RAW_DIR: &str = "raw_measurements";

const CAUTION: &str = "Caution: these are invented demo materials. Surge, EFT and EMP work can hurt people; \
defer to the applicable standards, local codes and licensed practice before relying on any prediction.";

pub fn run(args: Args) -> Result<(), Failure> {
    let opts = Options { raw_dir: PathBuf::from(RAW_DIR), out_dir: args.out, regenerate: args.regenerate };
    println!(
        "mucurve demo: {} qualifies suppression cores (an invented scenario)",
        crate::demo::scenario::ORGANISATION
    );
    let mut step = 0;
    let mut print = |e: Event| match e {
        Event::Step(text) => {
            step += 1;
            println!("\n{}. {}", step, text);
        }
        Event::Detail(text) => println!("   {}", text),
        Event::Warning(text) => println!("   warning: {}", text),
    };
    let summary = pipeline::run(&opts, &mut print).map_err(|e| Failure::input(e.to_string()))?;
    println!(
        "\nDone: {} files, {} ingested, {} permeability spectra extracted; results in {}",
        summary.files,
        summary.ingested,
        summary.extracted,
        opts.out_dir.display()
    );
    println!("{}", CAUTION);
    if summary.failures.is_empty() {
        Ok(())
    } else {
        Err(Failure::input(format!(
            "{} of {} demo files failed a stage:\n  {}",
            summary.failures.len(),
            summary.files,
            summary.failures.join("\n  ")
        )))
    }
}
