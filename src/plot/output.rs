//! Writing a figure as SVG or PNG, chosen by the file's extension. Both lay out their labels with
//! the built-in font ([`super::font`]). The file appears whole or not at all.

use super::PlotError;
use crate::error::Diagnostic;
use plotters::coord::Shift;
use plotters::prelude::*;
use std::path::Path;

/// Something that can draw itself on any plotters backend.
pub trait Figure {
    /// Pixel size of the figure.
    fn size(&self) -> (u32, u32);
    fn draw<DB: DrawingBackend>(&self, root: &DrawingArea<DB, Shift>) -> Result<(), String>;
}

/// Draw `fig` to `path` (`.svg` or `.png`).
pub fn write_figure(path: &Path, fig: &impl Figure) -> Result<(), PlotError> {
    let ext = path
        .extension()
        .map(|e| e.to_string_lossy().to_ascii_lowercase())
        .unwrap_or_default();
    if ext != "svg" && ext != "png" {
        return Err(Diagnostic::new("unknown plot format")
            .file(path)
            .expected("a file name ending in .svg or .png")
            .hint("e.g. --plot mu.svg")
            .into());
    }
    super::font::ensure_font()?;
    if ext == "svg" {
        let svg = render_svg(fig)?;
        return crate::fsutil::write_atomic(path, svg.as_bytes()).map_err(|e| PlotError(e.0));
    }
    write_png(path, fig)
}

/// The figure as SVG text (a font must be registered, see [`super::font`]).
pub fn render_svg(fig: &impl Figure) -> Result<String, PlotError> {
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, fig.size()).into_drawing_area();
        fig.draw(&root).map_err(drawing_error)?;
        root.present().map_err(|e| drawing_error(e.to_string()))?;
    }
    Ok(svg)
}

/// PNG through a temporary file beside the target (the bitmap encoder writes to a path), then
/// renamed into place.
fn write_png(path: &Path, fig: &impl Figure) -> Result<(), PlotError> {
    let folder = match path.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => std::path::PathBuf::from("."),
    };
    let io = |what: &str, e: std::io::Error| {
        PlotError(Diagnostic::new(format!("cannot {}: {}", what, e)).file(path))
    };
    let tmp = tempfile::Builder::new()
        .prefix(".plot")
        .suffix(".png")
        .tempfile_in(&folder)
        .map_err(|e| io("create a temporary file", e))?;
    crate::fsutil::readable_by_all(tmp.as_file()).map_err(|e| io("set permissions", e))?;
    {
        let root = BitMapBackend::new(tmp.path(), fig.size()).into_drawing_area();
        fig.draw(&root).map_err(drawing_error)?;
        root.present().map_err(|e| drawing_error(e.to_string()))?;
    }
    tmp.persist(path)
        .map_err(|e| io("rename into place", e.error))?;
    Ok(())
}

fn drawing_error(e: String) -> PlotError {
    Diagnostic::new(format!("the plot could not be drawn: {}", e)).into()
}
