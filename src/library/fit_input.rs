//! Reading a fit file (`mucurve fit ... -o FIT.json`) for publishing.

use super::canonical::sha256_hex;
use super::layout::io_error;
use super::material::FitFile;
use super::LibraryError;
use crate::error::Diagnostic;
use crate::fit::report::FitReport;
use std::path::Path;

/// The fit report in `path` and a reference to the file (name and SHA-256 of its bytes).
pub fn read_fit_file(path: &Path) -> Result<(FitReport, FitFile), LibraryError> {
    let bytes = std::fs::read(path).map_err(|e| io_error("cannot read fit file", path, e))?;
    let fit: FitReport = serde_json::from_slice(&bytes).map_err(|e| {
        LibraryError(
            Diagnostic::new(format!("not a fit report: {}", e))
                .file(path)
                .line(e.line())
                .expected("the JSON object written by `mucurve fit ... -o FIT.json`"),
        )
    })?;
    let name = path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| path.display().to_string());
    let file = FitFile {
        name,
        sha256: sha256_hex(&bytes),
        source: fit.source.clone(),
    };
    Ok((fit, file))
}

/// Refuse fits that cannot make a complete material file: a library version must say where
/// every sweep came from and keep its residuals.
pub fn check_publishable(fit: &FitReport, path: &Path) -> Result<(), LibraryError> {
    let missing = match (fit.provenance.is_empty(), fit.residuals.is_empty()) {
        (true, true) => "provenance and residuals",
        (true, false) => "provenance",
        (false, true) => "residuals",
        (false, false) => return Ok(()),
    };
    Err(
        Diagnostic::new(format!("the fit report has no {}", missing))
            .file(path)
            .expected(
                "a fit written with `mucurve fit ... -o FIT.json` (the --json line omits them)",
            )
            .hint("rerun the fit with -o FIT.json and publish that file")
            .into(),
    )
}
