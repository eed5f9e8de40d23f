//! Crash-safe file writes inside the library.

use super::layout::{entries, io_error, is_temp_name};
use super::LibraryError;
use crate::error::Diagnostic;
use std::io::Write;
use std::path::Path;

/// Create `path` with `bytes`, never replacing an existing file: write a temporary file beside
/// it, fsync it, move it into place with a no-replace rename (or a hard link), fsync the folder.
/// On any failure the temporary file is removed and `path` is untouched.
pub fn create_new(path: &Path, bytes: &[u8]) -> Result<(), LibraryError> {
    let dir = parent(path);
    let name = path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default();
    let mut tmp = tempfile::Builder::new()
        .prefix(&format!(".{}.", name))
        .suffix(".tmp")
        .tempfile_in(dir)
        .map_err(|e| io_error("cannot create a temporary file", dir, e))?;
    crate::fsutil::readable_by_all(tmp.as_file())
        .map_err(|e| io_error("cannot set permissions of", tmp.path(), e))?;
    tmp.write_all(bytes)
        .map_err(|e| io_error("cannot write", tmp.path(), e))?;
    tmp.as_file()
        .sync_all()
        .map_err(|e| io_error("cannot flush to disk", tmp.path(), e))?;
    tmp.persist_noclobber(path).map_err(|e| {
        if e.error.kind() == std::io::ErrorKind::AlreadyExists {
            LibraryError(Diagnostic::new("refusing to replace an existing file").file(path).hint("versions are immutable; this is a bug if it happens under the library lock"))
        } else {
            io_error("cannot move the new file into place", path, e.error)
        }
    })?;
    sync_dir(dir)
}

/// Replace `path` atomically (temporary file, fsync, rename, fsync folder).
pub fn replace(path: &Path, bytes: &[u8]) -> Result<(), LibraryError> {
    crate::fsutil::write_atomic(path, bytes).map_err(|e| LibraryError(e.0))?;
    sync_dir(parent(path))
}

/// Remove temporary files left in `dir` by interrupted writers. Call only under the library
/// lock, when no writer can be mid-write. Returns how many were removed.
pub fn remove_stale_temps(dir: &Path) -> Result<usize, LibraryError> {
    let mut removed = 0;
    for (name, path) in entries(dir)? {
        if is_temp_name(&name) && path.is_file() {
            std::fs::remove_file(&path)
                .map_err(|e| io_error("cannot remove a stale temporary file", &path, e))?;
            removed += 1;
        }
    }
    Ok(removed)
}

/// fsync a folder so a new name in it survives a power loss. File systems that cannot sync a
/// folder (EINVAL) are accepted; other errors are reported.
pub fn sync_dir(dir: &Path) -> Result<(), LibraryError> {
    let d = std::fs::File::open(dir).map_err(|e| io_error("cannot open folder", dir, e))?;
    match d.sync_all() {
        Err(e) if e.kind() != std::io::ErrorKind::InvalidInput => {
            Err(io_error("cannot flush folder", dir, e))
        }
        _ => Ok(()),
    }
}

fn parent(path: &Path) -> &Path {
    match path.parent() {
        Some(d) if !d.as_os_str().is_empty() => d,
        _ => Path::new("."),
    }
}
