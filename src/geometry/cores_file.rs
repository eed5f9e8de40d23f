//! A cores file: named cores in TOML, kept beside the material library, so a bench's usual
//! cores are written once:
//!
//! ```toml
//! [cores.bench-toroid]
//! spec = "toroid:od=25mm,id=15mm,h=10mm"
//! description = "25/15/10 test toroid"   # optional
//! ```

use super::{parse_core, Core, GeometryError};
use crate::error::Diagnostic;
use serde::Deserialize;
use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

/// The name of the cores file inside a library folder.
pub const FILE_NAME: &str = "cores.toml";

const EXPECTED: &str =
    "[cores.NAME] tables with spec = \"SHAPE:key=value,...\" and an optional description";

#[derive(Debug, Clone, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct CoreEntry {
    pub spec: String,
    #[serde(default)]
    pub description: String,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct Raw {
    #[serde(default)]
    cores: BTreeMap<String, CoreEntry>,
}

#[derive(Debug, Clone, PartialEq, Default)]
pub struct CoresFile {
    pub path: PathBuf,
    pub cores: BTreeMap<String, CoreEntry>,
}

impl CoresFile {
    pub fn load(path: &Path) -> Result<CoresFile, GeometryError> {
        let text = std::fs::read_to_string(path).map_err(|e| {
            Diagnostic::new(format!("cannot read the cores file: {}", e))
                .file(path)
                .expected(EXPECTED)
        })?;
        CoresFile::parse(&text, path)
    }

    /// Parse the text of a cores file; every entry's spec is checked now, so a bad entry is
    /// reported with its line rather than when it is first used.
    pub fn parse(text: &str, path: &Path) -> Result<CoresFile, GeometryError> {
        let raw: Raw = toml::from_str(text).map_err(|e| {
            let mut d = Diagnostic::new(e.message().trim().to_string())
                .file(path)
                .expected(EXPECTED);
            if let Some(span) = e.span() {
                d = d.line(line_of(text, span.start));
            }
            GeometryError(d)
        })?;
        let file = CoresFile {
            path: path.to_path_buf(),
            cores: raw.cores,
        };
        for (name, entry) in &file.cores {
            let at = text
                .find(&format!("cores.{}", name))
                .map(|o| line_of(text, o));
            let locate = |d: Diagnostic| {
                let d = d.file(path);
                match at {
                    Some(l) => d.line(l),
                    None => d,
                }
            };
            if name.is_empty() || name.contains([':', ',', '=']) {
                return Err(locate(Diagnostic::new(format!(
                    "core name '{}' may not contain ':', ',' or '='",
                    name
                )))
                .into());
            }
            file.resolve(&entry.spec)
                .map_err(|e| GeometryError(locate(e.0)))?;
        }
        Ok(file)
    }

    /// The spec of a named core.
    pub fn lookup(&self, name: &str) -> Option<String> {
        self.cores.get(name.trim()).map(|e| e.spec.clone())
    }

    /// Parse a spec that may be, or contain, names from this file.
    pub fn resolve(&self, spec: &str) -> Result<Core, GeometryError> {
        parse_core(spec, &|n| self.lookup(n)).map_err(|e| {
            let mut d = e.0;
            if d.hint.is_empty() || d.message.contains("not a known core name") {
                let names: Vec<&str> = self.cores.keys().map(String::as_str).collect();
                d.hint = format!(
                    "cores in {}: {}",
                    self.path.display(),
                    if names.is_empty() {
                        "none".into()
                    } else {
                        names.join(", ")
                    }
                );
            }
            GeometryError(d)
        })
    }
}

fn line_of(text: &str, offset: usize) -> usize {
    text.get(..offset).unwrap_or(text).matches('\n').count() + 1
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn named_cores_resolve_and_nest() {
        let text = "[cores.small]\nspec = \"toroid:od=10mm,id=5mm,h=5mm\"\n\n[cores.pair]\nspec = \"stack:small,n=2\"\ndescription = \"two small ones\"\n";
        let f = CoresFile::parse(text, Path::new("cores.toml")).unwrap();
        let pair = f.resolve("pair").unwrap();
        let small = f.resolve("small").unwrap();
        assert!((pair.effective().c1 * 2.0 / small.effective().c1 - 1.0).abs() < 1e-14);
        let e = f.resolve("large").unwrap_err().to_string();
        assert!(
            e.contains("small, pair") || e.contains("pair, small"),
            "{}",
            e
        );
    }

    #[test]
    fn bad_cores_files_name_the_line() {
        let e = CoresFile::parse(
            "[cores.a]\nspec = \"toroid:od=10mm\"\n",
            Path::new("c.toml"),
        )
        .unwrap_err();
        assert_eq!(e.0.line, Some(1), "{}", e);
        assert!(e.to_string().contains("id: missing"));
        let e = CoresFile::parse("[cores.a]\nspek = \"x\"\n", Path::new("c.toml")).unwrap_err();
        assert!(
            e.0.line.is_some() && e.to_string().contains("spek"),
            "{}",
            e
        );
        let e = CoresFile::parse("[cores.a]\nspec = \"a\"\n", Path::new("c.toml")).unwrap_err();
        assert!(e.to_string().contains("loop"), "{}", e);
    }
}
