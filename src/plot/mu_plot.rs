//! μ′ and μ″ against log frequency with the valid band shaded, as SVG or PNG
//! ([`super::output`], labels in the built-in font).

use super::output::{write_figure, Figure};
use super::PlotError;
use crate::error::Diagnostic;
use crate::C64;
use plotters::coord::Shift;
use plotters::prelude::*;
use std::path::Path;

/// Pixel size of the figure.
pub const SIZE: (u32, u32) = (1000, 640);

/// What a μ plot shows.
#[derive(Debug, Clone, Copy)]
pub struct MuPlot<'a> {
    pub freq_hz: &'a [f64],
    /// μ′ − jμ″ at each frequency.
    pub mu: &'a [C64],
    /// Valid band, Hz: shaded; the y range is chosen from the points inside it.
    pub valid: (f64, f64),
    pub title: &'a str,
}

/// Draw the plot to `path`: `.svg` or `.png`, chosen by the extension.
pub fn write_mu_plot(path: &Path, plot: &MuPlot) -> Result<(), PlotError> {
    check(plot).map_err(|e| PlotError(e.0.file(path)))?;
    write_figure(path, plot)
}

/// The plot as SVG text.
pub fn render_svg(plot: &MuPlot) -> Result<String, PlotError> {
    check(plot)?;
    super::output::render_svg(plot)
}

impl Figure for MuPlot<'_> {
    fn size(&self) -> (u32, u32) {
        SIZE
    }
    fn draw<DB: DrawingBackend>(&self, root: &DrawingArea<DB, Shift>) -> Result<(), String> {
        draw(root, self)
    }
}

fn check(plot: &MuPlot) -> Result<(), PlotError> {
    let ok = plot.freq_hz.len() == plot.mu.len()
        && plot.freq_hz.len() >= 2
        && plot.freq_hz.iter().all(|f| f.is_finite() && *f > 0.0)
        && plot.valid.0 <= plot.valid.1;
    if ok {
        Ok(())
    } else {
        Err(Diagnostic::new("nothing to plot")
            .expected("two or more points at positive frequencies")
            .into())
    }
}

/// The y range: from the points inside the band (all points if none), with a margin, and
/// always including 0 so μ″ ≥ 0 reads at a glance.
fn y_range(plot: &MuPlot) -> (f64, f64) {
    let inside: Vec<usize> = (0..plot.freq_hz.len())
        .filter(|&i| plot.freq_hz[i] >= plot.valid.0 && plot.freq_hz[i] <= plot.valid.1)
        .collect();
    let idx: Vec<usize> = if inside.is_empty() {
        (0..plot.freq_hz.len()).collect()
    } else {
        inside
    };
    let values = idx
        .iter()
        .flat_map(|&i| [plot.mu[i].re, -plot.mu[i].im])
        .filter(|v| v.is_finite());
    let (lo, hi) = values.fold((0.0f64, 0.0f64), |(a, b), v| (a.min(v), b.max(v)));
    let pad = 0.08 * (hi - lo).max(1e-9);
    (lo - pad, hi + pad)
}

fn draw<DB: DrawingBackend>(root: &DrawingArea<DB, Shift>, plot: &MuPlot) -> Result<(), String> {
    let e = |x: DrawingAreaErrorKind<DB::ErrorType>| x.to_string();
    root.fill(&WHITE).map_err(e)?;
    let f_lo = plot.freq_hz[0];
    let f_hi = plot.freq_hz[plot.freq_hz.len() - 1];
    let (y_lo, y_hi) = y_range(plot);
    let mut chart = ChartBuilder::on(root)
        .caption(plot.title, ("sans-serif", 22))
        .margin(16)
        .x_label_area_size(50)
        .y_label_area_size(70)
        .build_cartesian_2d((f_lo..f_hi).log_scale(), y_lo..y_hi)
        .map_err(e)?;
    chart
        .configure_mesh()
        .x_desc("frequency (Hz)")
        .y_desc("relative permeability μ′, μ″ (1)")
        .x_label_formatter(&|f| eng_hz(*f))
        .label_style(("sans-serif", 15))
        .axis_desc_style(("sans-serif", 17))
        .draw()
        .map_err(e)?;
    let band = RGBColor(200, 230, 200).mix(0.6);
    let (b_lo, b_hi) = (plot.valid.0.max(f_lo), plot.valid.1.min(f_hi));
    chart
        .draw_series(std::iter::once(Rectangle::new(
            [(b_lo, y_lo), (b_hi, y_hi)],
            band.filled(),
        )))
        .map_err(e)?
        .label("valid band")
        .legend(move |(x, y)| Rectangle::new([(x, y - 6), (x + 20, y + 6)], band.filled()));
    // Points outside the y range are held at its edge so a wild value outside the band does not
    // drag a line across the figure.
    let clamp = |v: f64| v.clamp(y_lo, y_hi);
    let series = [("μ′", BLUE, 1.0), ("μ″", RED, -1.0)];
    for (name, colour, sign) in series {
        let points = plot
            .freq_hz
            .iter()
            .zip(plot.mu)
            .map(|(&f, m)| (f, clamp(if sign > 0.0 { m.re } else { -m.im })));
        chart
            .draw_series(LineSeries::new(points, colour.stroke_width(2)))
            .map_err(e)?
            .label(name)
            .legend(move |(x, y)| {
                PathElement::new(vec![(x, y), (x + 20, y)], colour.stroke_width(2))
            });
    }
    chart
        .configure_series_labels()
        .position(SeriesLabelPosition::UpperRight)
        .background_style(WHITE.mix(0.85))
        .border_style(BLACK)
        .label_font(("sans-serif", 15))
        .draw()
        .map_err(e)?;
    Ok(())
}

/// Tick labels: 100 k, 1 M, 10 M ...
fn eng_hz(f: f64) -> String {
    let (scale, prefix) = [(1e9, "G"), (1e6, "M"), (1e3, "k")]
        .into_iter()
        .find(|(s, _)| f >= *s)
        .unwrap_or((1.0, ""));
    let v = f / scale;
    let text = if (v - v.round()).abs() < 1e-9 {
        format!("{}", v.round())
    } else {
        format!("{:.2}", v)
    };
    format!("{}{}", text, prefix)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn svg_has_labels_and_shaded_band() {
        let freq: Vec<f64> = (0..50).map(|k| 1e5 * 10f64.powf(k as f64 / 12.0)).collect();
        let mu: Vec<C64> = freq
            .iter()
            .map(|&f| C64::new(300.0, 0.0) / C64::new(1.0, f / 2e7))
            .collect();
        let plot = MuPlot {
            freq_hz: &freq,
            mu: &mu,
            valid: (1e6, 1e8),
            title: "test",
        };
        super::super::font::ensure_font().unwrap();
        let svg = render_svg(&plot).unwrap();
        assert!(svg.contains("frequency (Hz)") && svg.contains("μ″") && svg.contains("valid band"));
        assert!(svg.contains("<polyline") || svg.contains("<path"));
        assert_eq!(eng_hz(1e6), "1M");
        assert_eq!(eng_hz(2.5e5), "250k");
    }
}
