//! `mucurve extract`. Placeholder until its stage lands.

use super::Failure;

#[derive(Debug, clap::Args)]
pub struct Args {}

pub fn run(_args: Args) -> Result<(), Failure> {
    Err(Failure::input("'extract' is not available yet in this build"))
}
