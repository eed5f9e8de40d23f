//! `verify`: re-hash every version file, check it against the schema and its place, check the
//! numbering and every event log. Faults make verify fail; notes (stray temporary files left by
//! an interrupted writer, files that are not part of the library) do not.

use super::events::EventLog;
use super::id::{validate_id, VersionRef};
use super::layout::{self, entries, is_temp_name, parse_version_file_name, EVENTS_FILE, LOCK_FILE};
use super::material::Material;
use super::query::Library;
use super::LibraryError;
use serde::Serialize;
use std::path::{Path, PathBuf};

/// A problem or remark about one file.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Finding {
    pub path: PathBuf,
    pub message: String,
}

#[derive(Debug, Clone, Default, PartialEq, Serialize)]
pub struct VerifyReport {
    pub faults: Vec<Finding>,
    pub notes: Vec<Finding>,
    pub materials: usize,
    pub versions: usize,
    pub events: usize,
}

impl VerifyReport {
    pub fn ok(&self) -> bool {
        self.faults.is_empty()
    }
    fn fault(&mut self, path: &Path, message: impl Into<String>) {
        self.faults.push(Finding {
            path: path.to_path_buf(),
            message: message.into(),
        });
    }
    fn note(&mut self, path: &Path, message: impl Into<String>) {
        self.notes.push(Finding {
            path: path.to_path_buf(),
            message: message.into(),
        });
    }
    fn fault_from(&mut self, path: &Path, e: &LibraryError) {
        let d = e.diagnostic();
        let msg = match d.line {
            Some(l) => format!("line {}: {}", l, d.message),
            None => d.message.clone(),
        };
        self.fault(d.file.as_deref().unwrap_or(path), msg);
    }
}

const STRAY_TEMP: &str = "stray temporary file of an interrupted write (ignored; removed by the next publish, safe to delete)";

impl Library {
    /// Check the whole library; never stops at the first problem.
    pub fn verify(&self) -> VerifyReport {
        let mut report = VerifyReport::default();
        let top = match entries(&self.root) {
            Ok(t) => t,
            Err(e) => {
                report.fault_from(&self.root, &e);
                return report;
            }
        };
        for (name, path) in top {
            if path.is_dir() && validate_id(&name).is_ok() {
                report.materials += 1;
                self.verify_material(&name, &mut report);
            } else if path.is_dir() {
                report.fault(
                    &path,
                    "folder name is not a valid material id; every command ignores it",
                );
            } else if is_temp_name(&name) {
                report.note(&path, STRAY_TEMP);
            } else if name != LOCK_FILE {
                report.note(&path, "not part of the library (ignored)");
            }
        }
        report
    }

    fn verify_material(&self, id: &str, report: &mut VerifyReport) {
        let dir = layout::material_dir(&self.root, id);
        let listing = match entries(&dir) {
            Ok(l) => l,
            Err(e) => return report.fault_from(&dir, &e),
        };
        let mut versions = Vec::new();
        for (name, path) in &listing {
            if let Some(v) = parse_version_file_name(name) {
                versions.push(v);
                report.versions += 1;
                check_version_file(id, v, path, report);
            } else if is_temp_name(name) {
                report.note(path, STRAY_TEMP);
            } else if name != EVENTS_FILE {
                report.note(path, "not part of the library (ignored)");
            }
        }
        versions.sort_unstable();
        for (expected, &v) in (1u32..).zip(&versions) {
            if v != expected {
                report.fault(
                    &dir,
                    format!(
                        "version {} is missing (versions are numbered 1, 2, 3 … without gaps)",
                        expected
                    ),
                );
                break;
            }
        }
        if versions.is_empty() {
            report.note(
                &dir,
                "material folder without versions (an interrupted first publish?)",
            );
        }
        let events_path = dir.join(EVENTS_FILE);
        match EventLog::read(&events_path, &versions) {
            Ok(log) => {
                report.events += log.events.len();
                for e in log
                    .events
                    .iter()
                    .filter_map(|e| e.superseded_by.as_ref().map(|s| (e.seq, s)))
                {
                    if let Err(err) = self.check_successor(e.1) {
                        report.fault(
                            &events_path,
                            format!(
                                "event {}: superseded_by {}: {}",
                                e.0,
                                e.1,
                                err.diagnostic().message
                            ),
                        );
                    }
                }
            }
            Err(e) => report.fault_from(&events_path, &e),
        }
    }

    fn check_successor(&self, text: &str) -> Result<(), LibraryError> {
        let r = VersionRef::parse(text)?;
        self.versions(&r.material)?
            .contains(&r.version.unwrap_or(0))
            .then_some(())
            .ok_or_else(|| {
                crate::error::Diagnostic::new(format!("{} is not published", text)).into()
            })
    }
}

fn check_version_file(id: &str, version: u32, path: &Path, report: &mut VerifyReport) {
    match Material::read(path) {
        Ok(m) if m.material != id => report.fault(
            path,
            format!(
                "names material '{}' but lies in folder '{}'",
                m.material, id
            ),
        ),
        Ok(m) if m.version != version => report.fault(
            path,
            format!(
                "holds version {} but is named for version {}",
                m.version, version
            ),
        ),
        Ok(_) => {}
        Err(e) => report.fault_from(path, &e),
    }
}
