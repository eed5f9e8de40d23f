//! Stage 4 — the material library: immutable versioned JSON files, lifecycle events, integrity.
//! OWNER: library helper.

crate::stage_error!(
    /// A library operation refused or failed; nothing was changed.
    LibraryError
);
