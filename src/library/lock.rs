//! The library-wide writer lock: an exclusive advisory lock (flock) on `<library>/.lock`.
//! The operating system drops it when the holder exits, even on kill -9, so a crashed writer
//! never blocks the next one.

use super::layout::{io_error, LOCK_FILE};
use super::LibraryError;
use fs2::FileExt;
use std::fs::{File, OpenOptions};
use std::path::Path;

/// Held while it lives; dropping it releases the lock.
pub struct LibraryLock {
    file: File,
}

impl LibraryLock {
    /// Create the library folder if needed and wait for the lock.
    pub fn acquire(library: &Path) -> Result<LibraryLock, LibraryError> {
        std::fs::create_dir_all(library)
            .map_err(|e| io_error("cannot create the library folder", library, e))?;
        let path = library.join(LOCK_FILE);
        let file = OpenOptions::new()
            .create(true)
            .truncate(false)
            .write(true)
            .open(&path)
            .map_err(|e| io_error("cannot open the library lock file", &path, e))?;
        file.lock_exclusive()
            .map_err(|e| io_error("cannot lock the library", &path, e))?;
        Ok(LibraryLock { file })
    }
}

impl Drop for LibraryLock {
    fn drop(&mut self) {
        // Closing the file releases the lock anyway; unlocking first just makes it prompt.
        let _ = FileExt::unlock(&self.file);
    }
}
