//! Exports for other tools: a material's μ table (CSV), a wound core's S-parameters
//! (Touchstone v1.1) and a wound core as a SPICE sub-circuit.
//!
//! [`plan::plan`] turns the raw options into one checked [`ExportPlan`] (material loaded,
//! format, grid, core and winding, ports, names) before any work; [`render`] then produces the
//! file's text without I/O, and the caller writes it atomically.
//!
//! * `csv` ([`csv`]): `freq_hz,mu_prime,mu_double_prime` on the grid, the extract stage's table.
//! * `touchstone` ([`touchstone`]): `.s1p` reflection or `.s2p` series-through of the winding's
//!   impedance, Z from [`crate::extract::winding::impedance_at`].
//! * `spice` ([`spice`], [`synthesis`], [`network`]): `.subckt NAME A B`. μ∞ is a series L,
//!   every Debye term exactly an R‖L, every damped resonance exactly an R‖L‖C, a gap exactly a
//!   parallel L, the winding capacitance a parallel C and the lead a series L. Cole–Cole,
//!   Cole–Davidson and Havriliak–Negami terms become a non-negative sum of R‖L sections
//!   ([`debye_sum`]) fitted over the export band widened a decade each side; over the export
//!   band a term is followed to about 1e-7 relative (Cole–Cole, Havriliak–Negami) and 2e-4 at
//!   worst (Cole–Davidson with small β). Each netlist states the band and the accuracy it
//!   reached, per term and for the whole |Z|; ngspice reproduces the model's |Z| within 1 %
//!   from 1 MHz to 1 GHz (tests/export_ngspice.rs).
//!
//! Every file starts with the provenance (material@version, its file's SHA-256, tool version,
//! model, band, core and winding) and a caution line ([`provenance`]).

pub mod csv;
pub mod debye_sum;
pub mod grid;
pub mod network;
pub mod nnls;
pub mod plan;
pub mod provenance;
pub mod spice;
pub mod synthesis;
pub mod touchstone;

pub use grid::FreqGrid;
pub use plan::{plan, ExportPlan, Format, Request, Target};

crate::stage_error!(
    /// An export that cannot be produced.
    ExportError
);

/// An export's text and a one-line summary of what it holds.
#[derive(Debug, Clone, PartialEq)]
pub struct Rendered {
    pub text: String,
    pub summary: String,
}

/// The file `plan` describes.
pub fn render(plan: &ExportPlan) -> Rendered {
    let meta = provenance::lines(plan);
    let freqs = plan.grid.freqs();
    let model = &plan.source.model;
    let what = plan.source.material.reference();
    match &plan.target {
        Target::Csv => Rendered {
            text: csv::render(&meta, model, &freqs),
            summary: format!("μ′/μ″ of {} at {} frequencies", what, freqs.len()),
        },
        Target::Touchstone { device, ports, z0 } => {
            let z: Vec<_> = freqs.iter().map(|&f| device.impedance(model, f)).collect();
            Rendered {
                text: touchstone::render(&meta, &freqs, &z, *ports, *z0),
                summary: format!(
                    "{}-port S-parameters of {} on {} ({} turns, {} core(s)) at {} frequencies, Z0 = {} Ω",
                    ports, what, device.core.spec(), device.winding.turns, device.winding.cores, freqs.len(), z0
                ),
            }
        }
        Target::Spice { device, name } => {
            let s = synthesis::synthesize(model, device, plan.grid.band());
            Rendered {
                text: spice::render(&meta, name, &s),
                summary: format!(
                    "sub-circuit {} of {} on {}: {} elements, max |Z| error {:.2e} relative from {} to {}",
                    name,
                    what,
                    device.core.spec(),
                    s.net.element_count(),
                    s.max_rel_error,
                    crate::extract::band::hz(s.band.0),
                    crate::extract::band::hz(s.band.1)
                ),
            }
        }
    }
}
