//! One published version of a material: the struct, and its sealed JSON document.

use super::{canonical, model_json::model_from_report, schema, LibraryError};
use crate::error::Diagnostic;
use crate::fit::report::{
    Estimate, FitReport, FitStats, KkReport, ResidualPoint, RunnerUp, SourceProvenance, TermReport,
};
use crate::model::Model;
use serde::{Deserialize, Serialize};
use serde_json::Value;
use std::path::Path;

/// Version of the material file format; raise it when the shape changes.
pub const SCHEMA_VERSION: u32 = 1;

/// The model in the fit-report shape: spec string, μ∞, terms with named parameters and
/// standard errors, and the parameter correlation matrix.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ModelJson {
    pub spec: String,
    pub mu_inf: Estimate,
    pub terms: Vec<TermReport>,
    pub correlation: Vec<Vec<f64>>,
    /// Labels of the rows and columns of `correlation`, when the fit gave them.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub correlation_params: Vec<String>,
}

/// The frequency band the model was fitted over and is valid in.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Band {
    pub f_min_hz: f64,
    pub f_max_hz: f64,
}

/// The fit file a version was published from.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct FitFile {
    /// File name as given to `publish` (no folder).
    pub name: String,
    pub sha256: String,
    /// The fit report's own `source` text.
    pub source: String,
}

/// One immutable version of a material.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Material {
    pub schema_version: u32,
    pub material: String,
    pub version: u32,
    /// UTC, RFC 3339.
    pub created: String,
    pub tool_version: String,
    pub note: Option<String>,
    pub model: ModelJson,
    pub band: Band,
    pub stats: FitStats,
    pub kk: KkReport,
    /// Every warning of the fit, as it reported them (empty when clean).
    pub warnings: Vec<String>,
    /// The findings among `warnings` that block vetting (see [`FitReport::sanity`]); absent
    /// from files published before the list existed.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub sanity: Option<Vec<String>>,
    pub runner_up: Option<RunnerUp>,
    pub provenance: Vec<SourceProvenance>,
    pub residuals: Vec<ResidualPoint>,
    pub fit_file: FitFile,
    /// SHA-256 of the canonical document without this field.
    pub sha256: String,
}

impl Material {
    /// A version built from a fit; `version`, `created` and `sha256` are set when it is stored.
    pub fn from_fit(
        fit: &FitReport,
        fit_file: FitFile,
        material: &str,
        note: Option<String>,
    ) -> Material {
        Material {
            schema_version: SCHEMA_VERSION,
            material: material.to_string(),
            version: 0,
            created: String::new(),
            tool_version: crate::TOOL_VERSION.to_string(),
            note,
            model: ModelJson {
                spec: fit.model.clone(),
                mu_inf: fit.mu_inf,
                terms: fit.terms.clone(),
                correlation: fit.correlation.clone(),
                correlation_params: fit.correlation_params.clone(),
            },
            band: Band {
                f_min_hz: fit.f_min_hz,
                f_max_hz: fit.f_max_hz,
            },
            stats: fit.stats.clone(),
            kk: fit.kk.clone(),
            warnings: fit.warnings.clone(),
            sanity: fit.sanity.clone(),
            runner_up: fit.runner_up.clone(),
            provenance: fit.provenance.clone(),
            residuals: fit.residuals.clone(),
            fit_file,
            sha256: String::new(),
        }
    }

    /// The sealed JSON document of this version (its `sha256` recomputed).
    pub fn to_document(&self) -> Result<Value, LibraryError> {
        let doc = serde_json::to_value(self).map_err(|e| {
            Diagnostic::new(format!(
                "cannot represent material {} as JSON: {}",
                self.material, e
            ))
        })?;
        Ok(canonical::seal(doc))
    }

    /// The checked material in a document read from `file`: schema, self-hash and content must
    /// all hold. Every problem found is listed in the error.
    pub fn from_document(doc: &Value, file: &Path) -> Result<Material, LibraryError> {
        let mut problems = schema::validate(doc);
        if let Err(e) = canonical::check_seal(doc) {
            problems.push(e);
        }
        if problems.is_empty() {
            match serde_json::from_value::<Material>(doc.clone()) {
                Ok(m) => return Ok(m),
                Err(e) => problems.push(e.to_string()),
            }
        }
        Err(Diagnostic::new(format!("not a valid material file: {}", problems.join("; ")))
            .file(file)
            .hint("run `mucurve library verify`; restore the file from version control rather than editing it")
            .into())
    }

    /// Read and check one version file.
    pub fn read(path: &Path) -> Result<Material, LibraryError> {
        let bytes = std::fs::read(path)
            .map_err(|e| super::layout::io_error("cannot read material file", path, e))?;
        let doc: Value = serde_json::from_slice(&bytes).map_err(|e| {
            LibraryError(
                Diagnostic::new(format!("not JSON: {}", e))
                    .file(path)
                    .line(e.line())
                    .hint("restore the file from version control"),
            )
        })?;
        Material::from_document(&doc, path)
    }

    /// The model this version describes, ready to evaluate.
    pub fn to_model(&self) -> Result<Model, LibraryError> {
        model_from_report(&self.model.mu_inf, &self.model.terms).map_err(|e| {
            LibraryError(Diagnostic {
                message: format!("{}@{}: {}", self.material, self.version, e.0.message),
                ..e.0
            })
        })
    }

    /// `ID@N`.
    pub fn reference(&self) -> String {
        format!("{}@{}", self.material, self.version)
    }
}

/// The committed example material file (written by `mucurve publish`; its `sample` indices, its
/// empty `sanity` list and its self-hash were added afterwards with
/// tests/reference/material_schema_cases.py's canonical form), shared by unit tests.
#[cfg(test)]
pub(crate) const EXAMPLE_TEXT: &str = include_str!("../../tests/reference/material_example.json");

/// [`EXAMPLE_TEXT`] read and checked like any library file.
#[cfg(test)]
pub(crate) fn example_material() -> Material {
    let doc: Value = serde_json::from_str(EXAMPLE_TEXT).unwrap();
    Material::from_document(&doc, Path::new("material_example.json")).unwrap()
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The self-hash recomputed independently by Python's hashlib over its own canonical JSON
    /// (tests/reference/material_schema_cases.py) equals the stored one and this crate's.
    #[test]
    fn example_hash_agrees_with_python_hashlib() {
        let cases: Value = serde_json::from_str(include_str!(
            "../../tests/reference/material_schema_cases.json"
        ))
        .unwrap();
        let doc: Value = serde_json::from_str(EXAMPLE_TEXT).unwrap();
        assert_eq!(cases["example_sha256_python"], doc["sha256"]);
        assert_eq!(
            canonical::content_hash(&doc),
            cases["example_sha256_python"].as_str().unwrap()
        );
    }

    #[test]
    fn example_round_trips_through_the_struct_unchanged() {
        let m = example_material();
        assert_eq!(
            m.to_document().unwrap(),
            serde_json::from_str::<Value>(EXAMPLE_TEXT).unwrap()
        );
        assert_eq!(m.to_model().unwrap().spec(), m.model.spec);
    }
}
