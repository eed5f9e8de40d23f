//! The catalog: one row per version with its key figures, as CSV or Parquet (polars).

use super::diff::log_grid;
use super::material::{Band, Material};
use super::query::{Library, ListEntry};
use super::LibraryError;
use crate::error::Diagnostic;
use crate::model::Model;
use polars::prelude::*;
use std::path::Path;

/// Points of the log grid the μ″ peak is searched on (then refined by a parabola in log f).
pub const FIGURE_GRID_POINTS: usize = 1000;

/// Figures an engineer compares materials by.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct KeyFigures {
    /// μ′ at the low edge of the band.
    pub mu_prime_low: f64,
    /// Frequency of the largest μ″ inside the band.
    pub f_peak_mu_double_prime_hz: f64,
    /// That largest μ″.
    pub mu_double_prime_peak: f64,
}

/// Key figures of `model` over `band`.
pub fn key_figures(model: &Model, band: &Band) -> KeyFigures {
    let grid = log_grid(band.f_min_hz, band.f_max_hz, FIGURE_GRID_POINTS);
    let loss: Vec<f64> = grid.iter().map(|&f| -model.mu(f).im).collect();
    let (i, _) = loss
        .iter()
        .enumerate()
        .fold((0, f64::NEG_INFINITY), |best, (i, &v)| {
            if v > best.1 {
                (i, v)
            } else {
                best
            }
        });
    let (f_peak, peak) = if i > 0 && i + 1 < grid.len() {
        refine_peak(&grid[i - 1..=i + 1], &loss[i - 1..=i + 1], model)
    } else {
        (grid[i], loss[i])
    };
    KeyFigures {
        mu_prime_low: model.mu(band.f_min_hz).re,
        f_peak_mu_double_prime_hz: f_peak,
        mu_double_prime_peak: peak,
    }
}

/// Vertex of the parabola through three equally log-spaced points (the middle one highest).
fn refine_peak(f: &[f64], y: &[f64], model: &Model) -> (f64, f64) {
    let denom = y[0] - 2.0 * y[1] + y[2];
    if denom >= 0.0 {
        return (f[1], y[1]);
    }
    let step = (f[2] / f[1]).ln();
    let shift = 0.5 * (y[0] - y[2]) / denom;
    let fp = f[1] * (shift * step).exp();
    (fp, -model.mu(fp).im)
}

/// The catalog of every version in `library`.
pub fn catalog_frame(library: &Library) -> Result<DataFrame, LibraryError> {
    let rows: Vec<(ListEntry, KeyFigures)> = library
        .list(None)?
        .into_iter()
        .map(|e| {
            let m: Material = library.load(&e.material, Some(e.version))?;
            Ok((e, key_figures(&m.to_model()?, &m.band)))
        })
        .collect::<Result<_, LibraryError>>()?;
    let text = |name: &str, f: fn(&ListEntry) -> String| {
        Column::new(
            name.into(),
            rows.iter().map(|(e, _)| f(e)).collect::<Vec<_>>(),
        )
    };
    let num = |name: &str, f: &dyn Fn(&ListEntry, &KeyFigures) -> f64| {
        Column::new(
            name.into(),
            rows.iter().map(|(e, k)| f(e, k)).collect::<Vec<_>>(),
        )
    };
    DataFrame::new(vec![
        text("material", |e| e.material.clone()),
        Column::new(
            "version".into(),
            rows.iter().map(|(e, _)| e.version).collect::<Vec<u32>>(),
        ),
        text("status", |e| e.status.to_string()),
        text("model", |e| e.model.clone()),
        num("mu_prime_low", &|_, k| k.mu_prime_low),
        num("f_peak_mu_double_prime_hz", &|_, k| {
            k.f_peak_mu_double_prime_hz
        }),
        num("mu_double_prime_peak", &|_, k| k.mu_double_prime_peak),
        num("f_min_hz", &|e, _| e.f_min_hz),
        num("f_max_hz", &|e, _| e.f_max_hz),
        num("rms_rel", &|e, _| e.rms_rel),
        text("created", |e| e.created.clone()),
    ])
    .map_err(|e| Diagnostic::new(format!("cannot build the catalog table: {}", e)).into())
}

/// Write the catalog to `out` (`.csv` or `.parquet`, by extension); returns the row count.
pub fn write_catalog(library: &Library, out: &Path) -> Result<usize, LibraryError> {
    let ext = out
        .extension()
        .and_then(|e| e.to_str())
        .map(str::to_ascii_lowercase);
    let mut df = catalog_frame(library)?;
    let mut bytes = Vec::new();
    let written = match ext.as_deref() {
        Some("csv") => CsvWriter::new(&mut bytes).finish(&mut df).map(|_| ()),
        Some("parquet") => ParquetWriter::new(std::io::Cursor::new(&mut bytes))
            .finish(&mut df)
            .map(|_| ()),
        _ => {
            return Err(Diagnostic::new("unknown catalog format")
                .file(out)
                .expected("a file name ending in .csv or .parquet")
                .into());
        }
    };
    written.map_err(|e| {
        LibraryError(Diagnostic::new(format!("cannot encode the catalog: {}", e)).file(out))
    })?;
    crate::fsutil::write_atomic(out, &bytes).map_err(|e| LibraryError(e.0))?;
    Ok(df.height())
}
