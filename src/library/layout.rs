//! Where things live inside a library folder, and how names are recognised.

use super::{id::validate_id, LibraryError};
use crate::error::Diagnostic;
use std::path::{Path, PathBuf};

/// The library folder used when `--library` is not given.
pub const DEFAULT_LIBRARY: &str = "fitted_models";
/// The lifecycle event log inside each material folder.
pub const EVENTS_FILE: &str = "events.jsonl";
/// The lock file at the top of the library.
pub const LOCK_FILE: &str = ".lock";

pub fn material_dir(library: &Path, id: &str) -> PathBuf {
    library.join(id)
}

pub fn version_file_name(version: u32) -> String {
    format!("v{:04}.json", version)
}

pub fn version_path(library: &Path, id: &str, version: u32) -> PathBuf {
    material_dir(library, id).join(version_file_name(version))
}

pub fn events_path(library: &Path, id: &str) -> PathBuf {
    material_dir(library, id).join(EVENTS_FILE)
}

/// The version number of a version file name, only for the exact form this crate writes
/// (so `v1.json` or `v0001.json.bak` are not mistaken for versions).
pub fn parse_version_file_name(name: &str) -> Option<u32> {
    let digits = name.strip_prefix('v')?.strip_suffix(".json")?;
    let v: u32 = digits.parse().ok()?;
    (digits.bytes().all(|b| b.is_ascii_digit()) && version_file_name(v) == name && v >= 1)
        .then_some(v)
}

/// A temporary file left by an interrupted write: a dot-file that starts or ends with `tmp`.
pub fn is_temp_name(name: &str) -> bool {
    name.starts_with('.') && (name.ends_with(".tmp") || name.starts_with(".tmp"))
}

/// The names in a folder (non-UTF-8 names are returned lossily so they can be reported).
pub fn entries(dir: &Path) -> Result<Vec<(String, PathBuf)>, LibraryError> {
    let read = std::fs::read_dir(dir).map_err(|e| io_error("cannot read folder", dir, e))?;
    let mut out = Vec::new();
    for entry in read {
        let entry = entry.map_err(|e| io_error("cannot read folder", dir, e))?;
        out.push((
            entry.file_name().to_string_lossy().into_owned(),
            entry.path(),
        ));
    }
    out.sort();
    Ok(out)
}

/// Published versions of one material, ascending. A missing material folder has none.
pub fn versions(library: &Path, id: &str) -> Result<Vec<u32>, LibraryError> {
    let dir = material_dir(library, id);
    if !dir.is_dir() {
        return Ok(Vec::new());
    }
    let mut v: Vec<u32> = entries(&dir)?
        .iter()
        .filter_map(|(name, _)| parse_version_file_name(name))
        .collect();
    v.sort_unstable();
    Ok(v)
}

/// Material ids present in the library (folders with a valid id as name), sorted.
pub fn materials(library: &Path) -> Result<Vec<String>, LibraryError> {
    if !library.is_dir() {
        return Err(Diagnostic::new("library folder not found")
            .file(library)
            .hint("publish a fit first (`mucurve publish FIT.json --material ID`) or pass --library DIR")
            .into());
    }
    Ok(entries(library)?
        .into_iter()
        .filter(|(name, path)| path.is_dir() && validate_id(name).is_ok())
        .map(|(name, _)| name)
        .collect())
}

/// An I/O failure on `path`, explained.
pub fn io_error(what: &str, path: &Path, e: std::io::Error) -> LibraryError {
    let hint = match e.kind() {
        std::io::ErrorKind::PermissionDenied => {
            "the library folder is not writable by you; check its permissions"
        }
        std::io::ErrorKind::NotFound => "check the --library folder and the material id",
        std::io::ErrorKind::ReadOnlyFilesystem => "the library is on a read-only file system",
        std::io::ErrorKind::StorageFull => "the disk is full; free space and run the command again",
        _ => "check that the folder exists, is writable and has free space",
    };
    LibraryError(
        Diagnostic::new(format!("{}: {}", what, e))
            .file(path)
            .hint(hint),
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn version_names_round_trip() {
        assert_eq!(version_file_name(7), "v0007.json");
        assert_eq!(parse_version_file_name("v0007.json"), Some(7));
        assert_eq!(parse_version_file_name("v12345.json"), Some(12345));
        for bad in [
            "v7.json",
            "v0000.json",
            "v0007.json.tmp",
            "v+007.json",
            "x0007.json",
            "v00a7.json",
        ] {
            assert_eq!(parse_version_file_name(bad), None, "{bad}");
        }
    }

    #[test]
    fn temp_names() {
        assert!(is_temp_name(".v0003.json.Ab12Cd.tmp"));
        assert!(is_temp_name(".tmpXyZ123"));
        assert!(!is_temp_name("v0003.json"));
        assert!(!is_temp_name(".lock"));
    }
}
