//! The shape every stage's error shares: where it happened, what was wrong, what was expected,
//! and what the user can do about it. Each stage wraps this in its own error type so a caller
//! can tell the stages apart, while the CLI prints all of them the same way.

use std::fmt;
use std::path::{Path, PathBuf};

/// A located, explained problem with the user's input or files.
#[derive(Debug, Clone, PartialEq)]
pub struct Diagnostic {
    /// The file the problem is in, when there is one.
    pub file: Option<PathBuf>,
    /// 1-based line number in that file, when it is known.
    pub line: Option<usize>,
    /// What is wrong, in one sentence.
    pub message: String,
    /// What the tool expected instead (may be empty).
    pub expected: String,
    /// What the user can do (may be empty).
    pub hint: String,
}

impl Diagnostic {
    pub fn new(message: impl Into<String>) -> Self {
        Diagnostic { file: None, line: None, message: message.into(), expected: String::new(), hint: String::new() }
    }
    pub fn file(mut self, file: impl AsRef<Path>) -> Self {
        self.file = Some(file.as_ref().to_path_buf());
        self
    }
    pub fn line(mut self, line: usize) -> Self {
        self.line = Some(line);
        self
    }
    pub fn expected(mut self, expected: impl Into<String>) -> Self {
        self.expected = expected.into();
        self
    }
    pub fn hint(mut self, hint: impl Into<String>) -> Self {
        self.hint = hint.into();
        self
    }
    /// Fill in the file only if the diagnostic does not name one yet (readers that work on
    /// text learn the file name from their caller).
    pub fn in_file(mut self, file: impl AsRef<Path>) -> Self {
        if self.file.is_none() {
            self.file = Some(file.as_ref().to_path_buf());
        }
        self
    }
}

impl fmt::Display for Diagnostic {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match (&self.file, self.line) {
            (Some(p), Some(l)) => write!(f, "{}:{}: ", p.display(), l)?,
            (Some(p), None) => write!(f, "{}: ", p.display())?,
            (None, Some(l)) => write!(f, "line {}: ", l)?,
            (None, None) => {}
        }
        write!(f, "{}", self.message)?;
        if !self.expected.is_empty() {
            write!(f, "\n  expected: {}", self.expected)?;
        }
        if !self.hint.is_empty() {
            write!(f, "\n  hint: {}", self.hint)?;
        }
        Ok(())
    }
}

/// Declares a stage's error type: a newtype over [`Diagnostic`] so each stage has its own type.
#[macro_export]
macro_rules! stage_error {
    ($(#[$meta:meta])* $name:ident) => {
        $(#[$meta])*
        #[derive(Debug, Clone, PartialEq, thiserror::Error)]
        #[error("{0}")]
        pub struct $name(pub $crate::error::Diagnostic);

        impl From<$crate::error::Diagnostic> for $name {
            fn from(d: $crate::error::Diagnostic) -> Self {
                $name(d)
            }
        }

        impl $name {
            /// The located explanation behind this error.
            pub fn diagnostic(&self) -> &$crate::error::Diagnostic {
                &self.0
            }
        }
    };
}
