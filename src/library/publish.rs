//! Publishing a fit as the next version of a material.

use super::fit_input::check_publishable;
use super::fit_input::read_fit_file;
use super::layout::{material_dir, version_path, versions};
use super::lock::LibraryLock;
use super::material::{FitFile, Material};
use super::query::Library;
use super::{canonical, store, validate_id, LibraryError};
use crate::error::Diagnostic;
use crate::fit::report::FitReport;
use std::path::{Path, PathBuf};

/// What `publish` wrote.
#[derive(Debug, Clone, PartialEq)]
pub struct Published {
    pub material: String,
    pub version: u32,
    pub path: PathBuf,
    /// Temporary files of interrupted earlier writers that were cleaned up.
    pub stale_temps_removed: usize,
}

impl Library {
    /// Read the fit file at `fit_path` and publish it as the next version of `id`. The id is
    /// checked before the file is read.
    pub fn publish_file(
        &self,
        fit_path: &Path,
        id: &str,
        note: Option<String>,
    ) -> Result<Published, LibraryError> {
        validate_id(id)?;
        let (fit, fit_file) = read_fit_file(fit_path)?;
        self.publish(&fit, fit_file, fit_path, id, note)
    }

    /// Store `fit` as the next version of `id`. Everything that can be checked without the
    /// library (id, completeness, schema) is checked first, so a refused publish writes nothing.
    pub fn publish(
        &self,
        fit: &FitReport,
        fit_file: FitFile,
        fit_path: &Path,
        id: &str,
        note: Option<String>,
    ) -> Result<Published, LibraryError> {
        validate_id(id)?;
        check_publishable(fit, fit_path)?;
        let mut material =
            Material::from_fit(fit, fit_file, id, note.filter(|n| !n.trim().is_empty()));
        material.version = 1;
        material.created = self.now();
        // Read the would-be file back exactly as `verify` will: schema, self-hash, struct.
        let bytes = canonical::pretty_bytes(&material.to_document()?);
        let reread = serde_json::from_slice(&bytes)
            .map_err(|e| Diagnostic::new(format!("cannot re-read the material document: {}", e)));
        if let Err(e) = reread
            .map_err(LibraryError)
            .and_then(|doc| Material::from_document(&doc, fit_path))
        {
            return Err(Diagnostic::new(format!("the fit cannot be published: {}", e.0.message))
                .file(fit_path)
                .hint("the fit report must hold finite numbers, SHA-256 hashes in lower-case hex and at least one term")
                .into());
        }

        let _lock = LibraryLock::acquire(&self.root)?;
        let dir = material_dir(&self.root, id);
        std::fs::create_dir_all(&dir)
            .map_err(|e| super::layout::io_error("cannot create the material folder", &dir, e))?;
        let stale_temps_removed = store::remove_stale_temps(&dir)?;
        material.version = versions(&self.root, id)?.last().map_or(1, |v| v + 1);
        material.created = self.now();
        let path = version_path(&self.root, id, material.version);
        store::create_new(&path, &canonical::pretty_bytes(&material.to_document()?))?;
        Ok(Published {
            material: id.to_string(),
            version: material.version,
            path,
            stale_temps_removed,
        })
    }
}
