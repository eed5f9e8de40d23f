//! Promoting and retiring versions (appending lifecycle events under the library lock).

use super::events::{Action, Event, EventLog};
use super::id::VersionRef;
use super::layout::events_path;
use super::lock::LibraryLock;
use super::query::Library;
use super::{vetting, LibraryError};
use crate::error::Diagnostic;

impl Library {
    /// Make draft `id@version` vetted, if every vetting rule holds; otherwise the error lists
    /// each failed rule with its numbers.
    pub fn promote(
        &self,
        id: &str,
        version: u32,
        by: &str,
        why: &str,
    ) -> Result<Event, LibraryError> {
        require_text("--by", by)?;
        require_text("--why", why)?;
        let _lock = LibraryLock::acquire(&self.root)?;
        let material = self.load(id, Some(version))?;
        let status = self.status(id, version)?;
        Action::Promote.apply(status).map_err(|e| {
            Diagnostic::new(format!("cannot promote {}: {}", material.reference(), e))
        })?;
        let failed = vetting::failures(&material);
        if !failed.is_empty() {
            let list: Vec<String> = failed
                .iter()
                .map(|r| format!("rule {} failed: {}", r.rule, r.detail))
                .collect();
            return Err(Diagnostic::new(format!("{} does not meet the vetting rules:\n  {}", material.reference(), list.join("\n  ")))
                .hint("refit or measure again and publish a new version; `mucurve library show ID@N` shows the figures")
                .into());
        }
        self.append_event(id, version, Action::Promote, by, why, None)
    }

    /// Retire `id@version` (draft or vetted), optionally naming its replacement `ID@M`, which
    /// must exist and must not itself be retired.
    pub fn retire(
        &self,
        id: &str,
        version: u32,
        by: &str,
        why: &str,
        superseded_by: Option<&str>,
    ) -> Result<Event, LibraryError> {
        require_text("--by", by)?;
        require_text("--why", why)?;
        let _lock = LibraryLock::acquire(&self.root)?;
        self.load(id, Some(version))?;
        let successor = match superseded_by {
            Some(text) => {
                let (sid, sv) = VersionRef::parse_pinned(text)?;
                if (sid.as_str(), sv) == (id, version) {
                    return Err(Diagnostic::new("a version cannot supersede itself").into());
                }
                self.load(&sid, Some(sv))?;
                if self.log(&sid)?.status.get(&sv) == Some(&super::Status::Retired) {
                    return Err(Diagnostic::new(format!(
                        "{}@{} is retired and cannot supersede anything",
                        sid, sv
                    ))
                    .into());
                }
                Some(format!("{}@{}", sid, sv))
            }
            None => None,
        };
        self.append_event(id, version, Action::Retire, by, why, successor)
    }

    fn append_event(
        &self,
        id: &str,
        version: u32,
        action: Action,
        by: &str,
        why: &str,
        superseded_by: Option<String>,
    ) -> Result<Event, LibraryError> {
        let path = events_path(&self.root, id);
        let mut log: EventLog = self.log(id)?;
        let event = Event {
            seq: log.events.len() as u64 + 1,
            at: self.now(),
            action,
            version,
            by: by.trim().to_string(),
            why: why.trim().to_string(),
            superseded_by,
            tool_version: crate::TOOL_VERSION.to_string(),
            prev_sha256: log.head(),
        };
        log.append(&path, event.clone())?;
        Ok(event)
    }
}

fn require_text(option: &str, value: &str) -> Result<(), LibraryError> {
    if value.trim().is_empty() {
        Err(Diagnostic::new(format!("{} must not be empty", option))
            .hint("say who decides and why; the event log keeps it")
            .into())
    } else {
        Ok(())
    }
}
