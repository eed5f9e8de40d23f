//! `mucurve demo`: run the whole pipeline that exists over the invented demo scenario and say
//! what was done, step by step.

use super::Failure;
use crate::demo::pipeline::{self, Event, Options};
use crate::library::layout::DEFAULT_LIBRARY;
use std::path::PathBuf;

#[derive(Debug, clap::Args)]
pub struct Args {
    /// Work folder for the results (impedance, μ tables, fits, and the demo library).
    #[arg(long, value_name = "DIR", default_value = "demo-output")]
    pub out: PathBuf,
    /// Rewrite raw_measurements/ from the deterministic generator first, and publish the demo
    /// library into fitted_models/ (which may hold only demo materials) instead of DIR.
    #[arg(long)]
    pub regenerate: bool,
}

/// The folder the demo's measurements live in, relative to the current folder.
const RAW_DIR: &str = "raw_measurements";

const CAUTION: &str = "Caution: these are invented demo materials. Surge, EFT and EMP work can hurt people; \
defer to the applicable standards, local codes and licensed practice before relying on any prediction.";

pub fn run(args: Args) -> Result<(), Failure> {
    let library_dir = if args.regenerate { PathBuf::from(DEFAULT_LIBRARY) } else { args.out.join(DEFAULT_LIBRARY) };
    let opts = Options { raw_dir: PathBuf::from(RAW_DIR), out_dir: args.out, library_dir, regenerate: args.regenerate };
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
    let s = pipeline::run(&opts, &mut print).map_err(|e| Failure::input(e.to_string()))?;
    println!(
        "\nDone: {} files, {} ingested, {} permeability spectra extracted, {} fits, {} versions published, {} vetted, {} exports.",
        s.files, s.ingested, s.extracted, s.fitted, s.published, s.vetted, s.exported
    );
    println!(
        "Results in {}; the demo library in {} (try `mucurve library list --library {}`).",
        opts.out_dir.display(),
        opts.library_dir.display(),
        opts.library_dir.display()
    );
    println!("{}", CAUTION);
    if s.failures.is_empty() {
        Ok(())
    } else {
        Err(Failure::input(format!("{} demo step(s) failed:\n  {}", s.failures.len(), s.failures.join("\n  "))))
    }
}
