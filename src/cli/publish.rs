//! `mucurve publish FIT.json --material ID [--library DIR] [--note TEXT]`.

use super::Failure;
use crate::library::layout::DEFAULT_LIBRARY;
use std::path::PathBuf;

#[derive(Debug, clap::Args)]
pub struct Args {
    /// Fit file written by `mucurve fit ... -o FIT.json`.
    pub fit: PathBuf,
    /// Material id: lower-case letters, digits, '.', '_' or '-' (1–64, starting alphanumeric).
    #[arg(long)]
    pub material: String,
    /// Library folder.
    #[arg(long, default_value = DEFAULT_LIBRARY)]
    pub library: PathBuf,
    /// Free text kept with the version (what changed, why it was published).
    #[arg(long)]
    pub note: Option<String>,
}

pub fn run(args: Args) -> Result<(), Failure> {
    let published =
        super::library::open(&args.library).publish_file(&args.fit, &args.material, args.note)?;
    if published.stale_temps_removed > 0 {
        eprintln!(
            "note: removed {} temporary file(s) left by an interrupted earlier write",
            published.stale_temps_removed
        );
    }
    println!(
        "published {}@{} {}",
        published.material,
        published.version,
        published.path.display()
    );
    Ok(())
}
