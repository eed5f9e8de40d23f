//! Reading the library: materials, versions, statuses, listings and history.

use super::events::{EventLog, Status};
use super::id::{validate_id, VersionRef};
use super::layout::{self, events_path, version_path};
use super::material::Material;
use super::{timefmt, LibraryError};
use crate::error::Diagnostic;
use serde::Serialize;
use std::path::{Path, PathBuf};

/// A library folder.
#[derive(Debug, Clone)]
pub struct Library {
    pub root: PathBuf,
    /// When set, the time (Unix seconds, UTC) written into new versions and events instead of
    /// the clock: for reproducible libraries (the CLI takes it from `SOURCE_DATE_EPOCH`).
    pub fixed_time: Option<i64>,
}

/// One row of `library list`.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ListEntry {
    pub material: String,
    pub version: u32,
    pub status: Status,
    pub created: String,
    pub model: String,
    pub f_min_hz: f64,
    pub f_max_hz: f64,
    pub rms_rel: f64,
    pub note: Option<String>,
    pub path: PathBuf,
}

/// One line of `library history`: a publish or a lifecycle event.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct HistoryEntry {
    pub at: String,
    pub version: u32,
    /// `published`, `promote` or `retire`.
    pub what: String,
    pub by: Option<String>,
    /// The event's reason, or the publish note.
    pub why: Option<String>,
    pub superseded_by: Option<String>,
}

impl Library {
    pub fn new(root: impl Into<PathBuf>) -> Library {
        Library {
            root: root.into(),
            fixed_time: None,
        }
    }

    /// This library, stamping new versions and events with `unix_secs` instead of the clock.
    pub fn with_fixed_time(mut self, unix_secs: Option<i64>) -> Library {
        self.fixed_time = unix_secs;
        self
    }

    /// The timestamp for something written now.
    pub fn now(&self) -> String {
        self.fixed_time
            .map(timefmt::rfc3339_from_unix)
            .unwrap_or_else(timefmt::now_rfc3339)
    }

    pub fn root(&self) -> &Path {
        &self.root
    }

    /// Material ids, sorted.
    pub fn materials(&self) -> Result<Vec<String>, LibraryError> {
        layout::materials(&self.root)
    }

    /// Published versions of `id`, ascending; an error if there are none.
    pub fn versions(&self, id: &str) -> Result<Vec<u32>, LibraryError> {
        validate_id(id)?;
        let v = layout::versions(&self.root, id)?;
        if v.is_empty() {
            return Err(
                Diagnostic::new(format!("no material '{}' in the library", id))
                    .file(&self.root)
                    .hint("`mucurve library list` shows what is published")
                    .into(),
            );
        }
        Ok(v)
    }

    pub fn version_path(&self, id: &str, version: u32) -> PathBuf {
        version_path(&self.root, id, version)
    }

    /// One version, checked (schema, self-hash); the latest when `version` is `None`.
    pub fn load(&self, id: &str, version: Option<u32>) -> Result<Material, LibraryError> {
        let versions = self.versions(id)?;
        let v = match version {
            Some(v) if versions.contains(&v) => v,
            Some(v) => {
                return Err(
                    Diagnostic::new(format!("material '{}' has no version {}", id, v))
                        .expected(format!(
                            "one of 1..={}",
                            versions.last().copied().unwrap_or(0)
                        ))
                        .into(),
                )
            }
            None => versions[versions.len() - 1],
        };
        let path = self.version_path(id, v);
        let m = Material::read(&path)?;
        if m.material != id || m.version != v {
            return Err(Diagnostic::new(format!("the file holds {} but is stored as {}@{}", m.reference(), id, v))
                .file(&path)
                .hint("files must not be copied or renamed inside the library; run `mucurve library verify`")
                .into());
        }
        Ok(m)
    }

    /// The lifecycle status of `id@version`.
    pub fn status(&self, id: &str, version: u32) -> Result<Status, LibraryError> {
        self.log(id)?.status.get(&version).copied().ok_or_else(|| {
            Diagnostic::new(format!("material '{}' has no version {}", id, version)).into()
        })
    }

    /// [`Library::load`] for a parsed `ID[@N]`.
    pub fn resolve(&self, r: &VersionRef) -> Result<Material, LibraryError> {
        self.load(&r.material, r.version)
    }

    /// The checked event log of `id`, with the status of every version.
    pub fn log(&self, id: &str) -> Result<EventLog, LibraryError> {
        let versions = self.versions(id)?;
        EventLog::read(&events_path(&self.root, id), &versions)
    }

    /// The latest version of `id` that has `status`.
    pub fn latest_with_status(&self, id: &str, status: Status) -> Result<Material, LibraryError> {
        let log = self.log(id)?;
        match log.status.iter().rev().find(|(_, s)| **s == status) {
            Some((v, _)) => self.load(id, Some(*v)),
            None => Err(
                Diagnostic::new(format!("material '{}' has no {} version", id, status))
                    .hint(format!(
                        "`mucurve library history {}` shows its versions",
                        id
                    ))
                    .into(),
            ),
        }
    }

    /// Every version of every material, optionally only those with `status`.
    pub fn list(&self, status: Option<Status>) -> Result<Vec<ListEntry>, LibraryError> {
        let mut out = Vec::new();
        for id in self.materials()? {
            let log = match self.log(&id) {
                Ok(log) => log,
                Err(_) if layout::versions(&self.root, &id)?.is_empty() => continue,
                Err(e) => return Err(e),
            };
            for (&version, &st) in &log.status {
                if status.is_some_and(|want| want != st) {
                    continue;
                }
                let m = self.load(&id, Some(version))?;
                out.push(ListEntry {
                    material: id.clone(),
                    version,
                    status: st,
                    created: m.created,
                    model: m.model.spec,
                    f_min_hz: m.band.f_min_hz,
                    f_max_hz: m.band.f_max_hz,
                    rms_rel: m.stats.rms_rel,
                    note: m.note,
                    path: self.version_path(&id, version),
                });
            }
        }
        Ok(out)
    }

    /// Publishes and events of `id`, oldest first.
    pub fn history(&self, id: &str) -> Result<Vec<HistoryEntry>, LibraryError> {
        let log = self.log(id)?;
        let mut out = Vec::new();
        for &v in log.status.keys() {
            let m = self.load(id, Some(v))?;
            out.push(HistoryEntry {
                at: m.created,
                version: v,
                what: "published".into(),
                by: None,
                why: m.note,
                superseded_by: None,
            });
        }
        for e in log.events {
            let what = match e.action {
                super::events::Action::Promote => "promote",
                super::events::Action::Retire => "retire",
            };
            out.push(HistoryEntry {
                at: e.at,
                version: e.version,
                what: what.into(),
                by: Some(e.by),
                why: Some(e.why),
                superseded_by: e.superseded_by,
            });
        }
        // Stable: a publish stays before the events of the same second.
        out.sort_by(|a, b| a.at.cmp(&b.at));
        Ok(out)
    }
}
