//! Lifecycle events: draft → vetted → retired, one JSON object per line in `events.jsonl`.
//!
//! A version with no event is a draft. `promote` makes a draft vetted; `retire` ends a draft or
//! vetted version. Each line holds `seq` (1, 2, 3 …), `at` (UTC), `action`, `version`, `by`,
//! `why`, optionally `superseded_by` (`ID@N`), the tool version, and `prev_sha256`: the SHA-256
//! of the previous line's text (64 zeros on the first line), so an edit to an earlier line is
//! detected. The file is replaced atomically by its old lines plus the new one under the
//! library lock, so it is never seen half-written.

use super::canonical::sha256_hex;
use super::layout::io_error;
use super::{timefmt, LibraryError};
use crate::error::Diagnostic;
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;
use std::fmt;
use std::path::Path;

/// `prev_sha256` of the first event.
pub const CHAIN_START: &str = "0000000000000000000000000000000000000000000000000000000000000000";

/// Where a version stands in its lifecycle.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum Status {
    Draft,
    Vetted,
    Retired,
}

impl Status {
    pub const ALL: [Status; 3] = [Status::Draft, Status::Vetted, Status::Retired];

    pub fn name(self) -> &'static str {
        match self {
            Status::Draft => "draft",
            Status::Vetted => "vetted",
            Status::Retired => "retired",
        }
    }

    /// Parse `draft`, `vetted` or `retired`.
    pub fn parse(s: &str) -> Result<Status, LibraryError> {
        Status::ALL
            .into_iter()
            .find(|st| st.name() == s)
            .ok_or_else(|| {
                Diagnostic::new(format!("unknown status '{}'", s))
                    .expected("draft, vetted or retired")
                    .into()
            })
    }
}

impl fmt::Display for Status {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.pad(self.name())
    }
}

/// What an event does to a version.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum Action {
    Promote,
    Retire,
}

impl Action {
    /// The status after this action, or why it is not allowed from `from`.
    pub fn apply(self, from: Status) -> Result<Status, String> {
        match (self, from) {
            (Action::Promote, Status::Draft) => Ok(Status::Vetted),
            (Action::Retire, Status::Draft | Status::Vetted) => Ok(Status::Retired),
            (Action::Promote, s) => Err(format!(
                "only a draft can be promoted; this version is {}",
                s
            )),
            (Action::Retire, s) => Err(format!("this version is already {}", s)),
        }
    }
}

/// One line of the event log.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Event {
    pub seq: u64,
    pub at: String,
    pub action: Action,
    pub version: u32,
    pub by: String,
    pub why: String,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub superseded_by: Option<String>,
    pub tool_version: String,
    pub prev_sha256: String,
}

/// A material's event log as read and replayed.
#[derive(Debug, Clone, Default)]
pub struct EventLog {
    /// The lines exactly as stored (without newlines).
    pub lines: Vec<String>,
    pub events: Vec<Event>,
    /// Status of every published version (draft when no event names it).
    pub status: BTreeMap<u32, Status>,
}

impl EventLog {
    /// Read and check the log at `path` against the published `versions`. A missing file is an
    /// empty log. Any problem (unparsable line, broken sequence or hash chain, an event for an
    /// unknown version, an illegal transition) is an error naming the line.
    pub fn read(path: &Path, versions: &[u32]) -> Result<EventLog, LibraryError> {
        let text = match std::fs::read_to_string(path) {
            Ok(t) => t,
            Err(e) if e.kind() == std::io::ErrorKind::NotFound => String::new(),
            Err(e) => return Err(io_error("cannot read event log", path, e)),
        };
        let mut log = EventLog {
            status: versions.iter().map(|&v| (v, Status::Draft)).collect(),
            ..EventLog::default()
        };
        for (i, line) in text.lines().enumerate() {
            let bad = |msg: String| {
                LibraryError(Diagnostic::new(msg).file(path).line(i + 1).hint("restore the log from version control; events are appended by `mucurve library promote/retire` only"))
            };
            let event: Event =
                serde_json::from_str(line).map_err(|e| bad(format!("not an event: {}", e)))?;
            log.check_next(&event).map_err(bad)?;
            log.lines.push(line.to_string());
            log.events.push(event);
        }
        if !text.is_empty() && !text.ends_with('\n') {
            return Err(
                Diagnostic::new("the last line is not terminated (truncated write?)")
                    .file(path)
                    .into(),
            );
        }
        Ok(log)
    }

    /// Check that `event` may follow the log as it stands, and apply it to `status`.
    fn check_next(&mut self, event: &Event) -> Result<(), String> {
        let expected_seq = self.events.len() as u64 + 1;
        if event.seq != expected_seq {
            return Err(format!(
                "event number {} where {} was expected",
                event.seq, expected_seq
            ));
        }
        if event.prev_sha256 != self.head() {
            return Err("prev_sha256 does not match the previous line: an earlier line was changed or removed".into());
        }
        if !timefmt::is_rfc3339_utc(&event.at) {
            return Err(format!(
                "'at' is {:?}; expected UTC like 2024-05-01T12:00:00Z",
                event.at
            ));
        }
        if event.by.trim().is_empty() || event.why.trim().is_empty() {
            return Err("every event needs 'by' and 'why'".into());
        }
        let from = *self.status.get(&event.version).ok_or_else(|| {
            format!(
                "event for version {}, which is not published",
                event.version
            )
        })?;
        let to = event
            .action
            .apply(from)
            .map_err(|e| format!("version {}: {}", event.version, e))?;
        self.status.insert(event.version, to);
        Ok(())
    }

    /// `prev_sha256` for the next event.
    pub fn head(&self) -> String {
        self.lines
            .last()
            .map(|l| sha256_hex(l.as_bytes()))
            .unwrap_or_else(|| CHAIN_START.to_string())
    }

    /// Check `event` against the log, then store the log plus it atomically at `path`.
    pub fn append(&mut self, path: &Path, event: Event) -> Result<(), LibraryError> {
        self.check_next(&event)
            .map_err(|e| LibraryError(Diagnostic::new(e).file(path)))?;
        let line = serde_json::to_string(&event)
            .map_err(|e| Diagnostic::new(format!("cannot write event: {}", e)))?;
        let mut text: String = self.lines.iter().map(|l| format!("{}\n", l)).collect();
        text.push_str(&line);
        text.push('\n');
        super::store::replace(path, text.as_bytes())?;
        self.lines.push(line);
        self.events.push(event);
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn event(log: &EventLog, action: Action, version: u32) -> Event {
        Event {
            seq: log.events.len() as u64 + 1,
            at: "2024-05-01T12:00:00Z".into(),
            action,
            version,
            by: "tester".into(),
            why: "unit test".into(),
            superseded_by: None,
            tool_version: "0".into(),
            prev_sha256: log.head(),
        }
    }

    #[test]
    fn lifecycle_goes_one_way() {
        assert_eq!(Action::Promote.apply(Status::Draft), Ok(Status::Vetted));
        assert_eq!(Action::Retire.apply(Status::Vetted), Ok(Status::Retired));
        assert_eq!(Action::Retire.apply(Status::Draft), Ok(Status::Retired));
        assert!(Action::Promote.apply(Status::Vetted).is_err());
        assert!(Action::Promote.apply(Status::Retired).is_err());
        assert!(Action::Retire.apply(Status::Retired).is_err());
    }

    #[test]
    fn a_written_log_reads_back_and_an_edit_breaks_the_chain() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("events.jsonl");
        let mut log = EventLog::read(&path, &[1, 2]).unwrap();
        let e = event(&log, Action::Promote, 1);
        log.append(&path, e).unwrap();
        let e = event(&log, Action::Retire, 1);
        log.append(&path, e).unwrap();
        let back = EventLog::read(&path, &[1, 2]).unwrap();
        assert_eq!(back.status[&1], Status::Retired);
        assert_eq!(back.status[&2], Status::Draft);
        assert!(
            EventLog::read(&path, &[2]).is_err(),
            "event for an unpublished version accepted"
        );

        let text = std::fs::read_to_string(&path)
            .unwrap()
            .replacen("unit test", "edited", 1);
        std::fs::write(&path, text).unwrap();
        let err = EventLog::read(&path, &[1, 2]).unwrap_err().to_string();
        assert!(err.contains(":2:") && err.contains("prev_sha256"), "{err}");
    }
}
