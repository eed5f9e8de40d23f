//! Measured and fitted μ′, μ″ against log frequency, with the relative residuals in a panel
//! below, as SVG or PNG ([`super::output`]; both lay out their labels with a system TrueType
//! font and are refused with an error that says what to install when there is none).

use super::output::{write_figure, Figure};
use super::PlotError;
use crate::error::Diagnostic;
use crate::C64;
use plotters::coord::Shift;
use plotters::prelude::*;
use std::path::Path;

/// Pixel size of the figure, and the share of its height the residual panel takes.
pub const SIZE: (u32, u32) = (1000, 760);
const RESIDUAL_SHARE: f64 = 0.3;

/// What a fit plot shows.
#[derive(Debug, Clone, Copy)]
pub struct FitPlot<'a> {
    pub freq_hz: &'a [f64],
    /// Measured μ′ − jμ″.
    pub measured: &'a [C64],
    /// The fitted model at the same frequencies.
    pub fitted: &'a [C64],
    pub title: &'a str,
}

/// Draw the plot to `path` (`.svg` or `.png` by extension); the file appears whole or not at all.
pub fn write_fit_plot(path: &Path, plot: &FitPlot) -> Result<(), PlotError> {
    check(plot).map_err(|e| PlotError(e.0.file(path)))?;
    write_figure(path, plot)
}

/// The plot as SVG text (a font must be registered, see [`super::font`]).
pub fn render_svg(plot: &FitPlot) -> Result<String, PlotError> {
    check(plot)?;
    super::output::render_svg(plot)
}

impl Figure for FitPlot<'_> {
    fn size(&self) -> (u32, u32) {
        SIZE
    }
    fn draw<DB: DrawingBackend>(&self, root: &DrawingArea<DB, Shift>) -> Result<(), String> {
        draw(root, self)
    }
}

fn check(plot: &FitPlot) -> Result<(), PlotError> {
    let n = plot.freq_hz.len();
    let ok = n >= 2
        && plot.measured.len() == n
        && plot.fitted.len() == n
        && plot.freq_hz.iter().all(|f| f.is_finite() && *f > 0.0)
        && plot.freq_hz.windows(2).all(|w| w[0] < w[1]);
    if ok {
        Ok(())
    } else {
        Err(Diagnostic::new("nothing to plot")
            .expected("two or more increasing positive frequencies, with a measured and a fitted value at each")
            .into())
    }
}

/// Range of finite values with a margin, always including 0.
fn padded_range(values: impl Iterator<Item = f64>) -> (f64, f64) {
    let (lo, hi) = values
        .filter(|v| v.is_finite())
        .fold((0.0f64, 0.0f64), |(a, b), v| (a.min(v), b.max(v)));
    let pad = 0.08 * (hi - lo).max(1e-9);
    (lo - pad, hi + pad)
}

/// The title cut to what fits the figure's width at the caption size, ending in "..." (plain
/// dots: the built-in font is a subset).
fn short_title(t: &str) -> String {
    const MOST_CHARS: usize = 80;
    if t.chars().count() <= MOST_CHARS {
        return t.to_string();
    }
    t.chars()
        .take(MOST_CHARS - 3)
        .chain("...".chars())
        .collect()
}

/// Engineering label for a frequency tick.
fn tick_hz(f: f64) -> String {
    let (scale, unit) = match f {
        f if f >= 1e9 => (1e9, "GHz"),
        f if f >= 1e6 => (1e6, "MHz"),
        f if f >= 1e3 => (1e3, "kHz"),
        _ => (1.0, "Hz"),
    };
    format!("{}{}", (f / scale * 1000.0).round() / 1000.0, unit)
}

fn draw<DB: DrawingBackend>(root: &DrawingArea<DB, Shift>, plot: &FitPlot) -> Result<(), String> {
    let e = |x: DrawingAreaErrorKind<DB::ErrorType>| x.to_string();
    root.fill(&WHITE).map_err(e)?;
    let split = (SIZE.1 as f64 * (1.0 - RESIDUAL_SHARE)) as u32;
    let (upper, lower) = root.split_vertically(split);
    let (f_lo, f_hi) = (plot.freq_hz[0], plot.freq_hz[plot.freq_hz.len() - 1]);
    let parts = |m: &[C64]| -> (Vec<f64>, Vec<f64>) {
        (
            m.iter().map(|v| v.re).collect(),
            m.iter().map(|v| -v.im).collect(),
        )
    };
    let (meas_re, meas_im) = parts(plot.measured);
    let (fit_re, fit_im) = parts(plot.fitted);
    let (y_lo, y_hi) = padded_range(
        meas_re
            .iter()
            .chain(&meas_im)
            .chain(&fit_re)
            .chain(&fit_im)
            .copied(),
    );
    let mut chart = ChartBuilder::on(&upper)
        .caption(short_title(plot.title), ("sans-serif", 22))
        .margin(16)
        .x_label_area_size(30)
        .y_label_area_size(70)
        .build_cartesian_2d((f_lo..f_hi).log_scale(), y_lo..y_hi)
        .map_err(e)?;
    chart
        .configure_mesh()
        .y_desc("relative permeability μ′, μ″ (1)")
        .x_label_formatter(&|f| tick_hz(*f))
        .label_style(("sans-serif", 15))
        .axis_desc_style(("sans-serif", 17))
        .draw()
        .map_err(e)?;
    let f = plot.freq_hz;
    let series: [(&str, &[f64], RGBColor, bool); 4] = [
        ("μ′ measured", &meas_re, RGBColor(120, 160, 230), false),
        ("μ″ measured", &meas_im, RGBColor(235, 140, 120), false),
        ("μ′ fitted", &fit_re, RGBColor(20, 40, 150), true),
        ("μ″ fitted", &fit_im, RGBColor(160, 20, 20), true),
    ];
    for (name, ys, colour, fitted) in series {
        let width = if fitted { 2 } else { 4 };
        let style = colour.stroke_width(width);
        chart
            .draw_series(LineSeries::new(
                f.iter().copied().zip(ys.iter().copied()),
                style,
            ))
            .map_err(e)?
            .label(name)
            .legend(move |(x, y)| {
                PathElement::new(vec![(x, y), (x + 20, y)], colour.stroke_width(width))
            });
    }
    chart
        .configure_series_labels()
        .background_style(WHITE.mix(0.85))
        .border_style(BLACK)
        .label_font(("sans-serif", 15))
        .draw()
        .map_err(e)?;

    let res: Vec<C64> = plot
        .fitted
        .iter()
        .zip(plot.measured)
        .map(|(y, m)| (y - m) / m.norm() * 100.0)
        .collect();
    let (r_lo, r_hi) = padded_range(res.iter().flat_map(|r| [r.re, r.im]));
    let mut rchart = ChartBuilder::on(&lower)
        .margin(16)
        .x_label_area_size(50)
        .y_label_area_size(70)
        .build_cartesian_2d((f_lo..f_hi).log_scale(), r_lo..r_hi)
        .map_err(e)?;
    rchart
        .configure_mesh()
        .x_desc("frequency (Hz)")
        .y_desc("residual (%)")
        .x_label_formatter(&|f| tick_hz(*f))
        .label_style(("sans-serif", 15))
        .axis_desc_style(("sans-serif", 17))
        .draw()
        .map_err(e)?;
    rchart
        .draw_series(LineSeries::new(
            [(f_lo, 0.0), (f_hi, 0.0)],
            BLACK.stroke_width(1),
        ))
        .map_err(e)?;
    let parts: [(&str, RGBColor, fn(&C64) -> f64); 2] = [
        ("real", RGBColor(20, 40, 150), |r| r.re),
        ("imaginary", RGBColor(160, 20, 20), |r| r.im),
    ];
    for (name, colour, pick) in parts {
        rchart
            .draw_series(
                f.iter()
                    .zip(&res)
                    .map(|(&x, r)| Circle::new((x, pick(r)), 2, colour.filled())),
            )
            .map_err(e)?
            .label(name)
            .legend(move |(x, y)| Circle::new((x + 10, y), 3, colour.filled()));
    }
    rchart
        .configure_series_labels()
        .background_style(WHITE.mix(0.85))
        .border_style(BLACK)
        .label_font(("sans-serif", 14))
        .draw()
        .map_err(e)?;
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    fn data() -> (Vec<f64>, Vec<C64>, Vec<C64>) {
        let f: Vec<f64> = (0..50).map(|i| 1e5 * 10f64.powf(i as f64 / 12.0)).collect();
        let fit: Vec<C64> = f
            .iter()
            .map(|&x| C64::new(800.0, 0.0) / C64::new(1.0, x / 5e6) + 1.0)
            .collect();
        let meas: Vec<C64> = fit
            .iter()
            .enumerate()
            .map(|(i, m)| m * (1.0 + 0.01 * ((i % 3) as f64 - 1.0)))
            .collect();
        (f, meas, fit)
    }

    #[test]
    fn svg_has_both_panels_and_the_legend() {
        super::super::font::ensure_font().unwrap();
        let (f, m, y) = data();
        let svg = render_svg(&FitPlot {
            freq_hz: &f,
            measured: &m,
            fitted: &y,
            title: "test fit",
        })
        .unwrap();
        for label in [
            "test fit",
            "μ′ fitted",
            "μ″ measured",
            "residual (%)",
            "frequency (Hz)",
        ] {
            assert!(svg.contains(label), "missing {label}");
        }
    }

    #[test]
    fn bad_extension_and_mismatched_data_are_errors() {
        let (f, m, y) = data();
        let dir = tempfile::tempdir().unwrap();
        let e = write_fit_plot(
            &dir.path().join("x.pdf"),
            &FitPlot {
                freq_hz: &f,
                measured: &m,
                fitted: &y,
                title: "",
            },
        )
        .unwrap_err();
        assert!(e.to_string().contains(".svg or .png"), "{e}");
        assert!(write_fit_plot(
            &dir.path().join("x.svg"),
            &FitPlot {
                freq_hz: &f,
                measured: &m[..3],
                fitted: &y,
                title: ""
            }
        )
        .is_err());
        assert!(!dir.path().join("x.svg").exists());
    }
}
