//! Writing output files so that a reader never sees a partial file: write a temporary file in
//! the same folder, flush and fsync it, rename it over the target, fsync the folder.

use crate::error::Diagnostic;
use std::io::Write;
use std::path::Path;

crate::stage_error!(
    /// An output file that could not be written; the target is left as it was.
    WriteError
);

/// Atomically replace (or create) `path` with `bytes`.
pub fn write_atomic(path: &Path, bytes: &[u8]) -> Result<(), WriteError> {
    let fail = |what: &str, e: std::io::Error| {
        WriteError(
            Diagnostic::new(format!("cannot {}: {}", what, e))
                .file(path)
                .hint("check that the folder exists, is writable and has free space"),
        )
    };
    let dir = match path.parent() {
        Some(d) if !d.as_os_str().is_empty() => d.to_path_buf(),
        _ => std::path::PathBuf::from("."),
    };
    let mut tmp = tempfile::NamedTempFile::new_in(&dir).map_err(|e| fail("create a temporary file", e))?;
    readable_by_all(tmp.as_file()).map_err(|e| fail("set permissions", e))?;
    tmp.write_all(bytes).map_err(|e| fail("write", e))?;
    tmp.as_file().sync_all().map_err(|e| fail("flush to disk", e))?;
    tmp.persist(path).map_err(|e| fail("rename into place", e.error))?;
    if let Ok(d) = std::fs::File::open(&dir) {
        let _ = d.sync_all();
    }
    Ok(())
}

/// Temporary files are created owner-only (0600); an output file should read like any other
/// file the user creates, so widen it to 0644 before it takes the target's name.
pub fn readable_by_all(file: &std::fs::File) -> std::io::Result<()> {
    #[cfg(unix)]
    {
        use std::os::unix::fs::PermissionsExt;
        file.set_permissions(std::fs::Permissions::from_mode(0o644))?;
    }
    #[cfg(not(unix))]
    let _ = file;
    Ok(())
}
