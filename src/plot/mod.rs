//! Plots (SVG/PNG through plotters). Functions take values and one output path; nothing else.

pub mod fit_plot;
pub mod font;
pub mod mu_plot;
pub mod output;

crate::stage_error!(
    /// A plot that cannot be drawn or written.
    PlotError
);
