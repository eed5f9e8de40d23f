//! The one harness every CLI test uses: runs the real `mucurve` binary in a scratch folder.
#![allow(dead_code)]

pub mod tolerance;

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

/// A scratch folder that is removed when the test ends.
pub struct Scratch {
    pub dir: tempfile::TempDir,
}

impl Scratch {
    pub fn new() -> Self {
        Scratch {
            dir: tempfile::tempdir().expect("create scratch folder"),
        }
    }
    pub fn path(&self, name: &str) -> PathBuf {
        self.dir.path().join(name)
    }
    /// Write a file into the scratch folder and return its path.
    pub fn write(&self, name: &str, contents: impl AsRef<[u8]>) -> PathBuf {
        let p = self.path(name);
        if let Some(parent) = p.parent() {
            std::fs::create_dir_all(parent).unwrap();
        }
        std::fs::write(&p, contents).unwrap();
        p
    }
}

/// The finished run of the binary.
pub struct Run {
    pub code: i32,
    pub stdout: String,
    pub stderr: String,
}

impl Run {
    fn from(out: Output) -> Self {
        Run {
            code: out.status.code().unwrap_or(-1),
            stdout: String::from_utf8_lossy(&out.stdout).into_owned(),
            stderr: String::from_utf8_lossy(&out.stderr).into_owned(),
        }
    }
    /// Panic with both streams unless the command succeeded.
    pub fn ok(self) -> Self {
        assert_eq!(
            self.code, 0,
            "expected success\nstdout:\n{}\nstderr:\n{}",
            self.stdout, self.stderr
        );
        self
    }
    /// Panic unless the command failed cleanly: non-zero exit and no panic message.
    pub fn failed(self) -> Self {
        assert_ne!(
            self.code, 0,
            "expected failure\nstdout:\n{}\nstderr:\n{}",
            self.stdout, self.stderr
        );
        assert!(
            !self.stderr.contains("panicked"),
            "the binary panicked:\n{}",
            self.stderr
        );
        self
    }
}

/// Run `mucurve ARGS...` with `cwd` as working folder.
pub fn mucurve_in(cwd: &Path, args: &[&str]) -> Run {
    let out = Command::new(env!("CARGO_BIN_EXE_mucurve"))
        .args(args)
        .current_dir(cwd)
        .env("NO_COLOR", "1")
        .output()
        .expect("run the mucurve binary");
    Run::from(out)
}

/// Run `mucurve ARGS...` from the crate's own folder.
pub fn mucurve(args: &[&str]) -> Run {
    mucurve_in(Path::new(env!("CARGO_MANIFEST_DIR")), args)
}
