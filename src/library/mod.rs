//! Stage 4 — the material library: immutable versioned JSON files, lifecycle events, integrity.
//!
//! A library is a plain folder (default `fitted_models/`) meant to be kept in git and reviewed
//! like code:
//!
//! ```text
//! fitted_models/
//!   .lock                 empty; held with an exclusive advisory lock by every writer
//!   <material-id>/
//!     v0001.json          version 1, immutable (created once, never replaced or renumbered)
//!     v0002.json          version 2, ...
//!     events.jsonl        lifecycle events (promote, retire), one JSON object per line
//! ```
//!
//! * A material id is `[a-z0-9][a-z0-9._-]{0,63}` ([`id`]); a version is `v` + at least four
//!   digits + `.json`, numbered 1, 2, 3 … without gaps ([`layout`]).
//! * A version file is the fit (model in the fit-report shape, band, statistics, residuals, KK
//!   and sanity results, provenance of every source sweep) plus `schema_version`, `material`,
//!   `version`, `created`, `tool_version`, `note` and `sha256`, the SHA-256 of the file's
//!   canonical content without that field ([`canonical`], [`material`]). Its JSON Schema is
//!   `material.schema.json` in this folder ([`schema`]).
//! * Writers take the library lock, write a temporary file beside the target, fsync it, move it
//!   into place without replacing anything (rename with no-replace, or hard link), and fsync the
//!   folder ([`store`]). A writer killed at any moment leaves at most a stray dot-file ending in
//!   `.tmp` (or starting with `.tmp`): readers ignore it, the next writer removes it, `verify`
//!   reports it.
//! * A version's status is draft until an event promotes it to vetted or retires it. The event
//!   log is append-only in meaning: each change rewrites it atomically as the old lines plus one,
//!   and each line carries the SHA-256 of the line before it ([`events`]). Publishing writes no
//!   event, so a version file alone is a complete, consistent draft.
//! * Vetting rules are in [`vetting`]; queries, diff, catalog and verify in their own files.

pub mod canonical;
pub mod catalog;
pub mod diff;
pub mod events;
pub mod fit_input;
pub mod id;
pub mod layout;
pub mod lifecycle;
pub mod lock;
pub mod material;
pub mod model_json;
pub mod publish;
pub mod query;
pub mod schema;
pub mod store;
pub mod timefmt;
pub mod verify;
pub mod vetting;

pub use events::{Event, Status};
pub use id::{validate_id, VersionRef};
pub use material::Material;
pub use query::Library;

crate::stage_error!(
    /// A library operation refused or failed; nothing was changed.
    LibraryError
);
