//! Material ids and version references (`ID` or `ID@N`).

use super::LibraryError;
use crate::error::Diagnostic;
use std::fmt;

/// Longest accepted material id.
pub const ID_MAX_LEN: usize = 64;

const ID_RULE: &str = "1 to 64 characters: a lower-case letter or digit first, then lower-case letters, digits, '.', '_' or '-'";

/// Accept `[a-z0-9][a-z0-9._-]{0,63}` and nothing else, so an id is always a safe, portable
/// folder name (no separators, no `..`, no spaces, no case clashes).
pub fn validate_id(id: &str) -> Result<(), LibraryError> {
    let first_ok = |c: u8| c.is_ascii_lowercase() || c.is_ascii_digit();
    let rest_ok = |c: u8| first_ok(c) || matches!(c, b'.' | b'_' | b'-');
    let b = id.as_bytes();
    let valid = !b.is_empty()
        && b.len() <= ID_MAX_LEN
        && first_ok(b[0])
        && b[1..].iter().all(|&c| rest_ok(c));
    if valid {
        Ok(())
    } else {
        Err(Diagnostic::new(format!("invalid material id {:?}", id))
            .expected(ID_RULE)
            .hint("e.g. --material nizn-demo-a")
            .into())
    }
}

/// A material, optionally pinned to one version: `ID` or `ID@N`.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct VersionRef {
    pub material: String,
    pub version: Option<u32>,
}

impl VersionRef {
    /// Parse `ID` or `ID@N` (N ≥ 1); the id is validated.
    pub fn parse(text: &str) -> Result<VersionRef, LibraryError> {
        let (id, version) = match text.rsplit_once('@') {
            Some((id, n)) => {
                let v = n.parse::<u32>().ok().filter(|&v| v >= 1).ok_or_else(|| {
                    LibraryError(
                        Diagnostic::new(format!("invalid version {:?} in {:?}", n, text))
                            .expected("ID@N with N a whole number from 1")
                            .hint("e.g. nizn-demo-a@2"),
                    )
                })?;
                (id, Some(v))
            }
            None => (text, None),
        };
        validate_id(id)?;
        Ok(VersionRef {
            material: id.to_string(),
            version,
        })
    }

    /// Parse `ID@N`, where the version is required.
    pub fn parse_pinned(text: &str) -> Result<(String, u32), LibraryError> {
        let r = VersionRef::parse(text)?;
        match r.version {
            Some(v) => Ok((r.material, v)),
            None => Err(Diagnostic::new(format!("{:?} names no version", text))
                .expected("ID@N")
                .hint(format!(
                    "e.g. {}@1; `mucurve library history {}` lists the versions",
                    text, text
                ))
                .into()),
        }
    }
}

impl fmt::Display for VersionRef {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self.version {
            Some(v) => write!(f, "{}@{}", self.material, v),
            None => f.write_str(&self.material),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn accepts_the_documented_alphabet() {
        for ok in ["a", "0", "nizn-demo_a.2", &"x".repeat(64)] {
            assert!(validate_id(ok).is_ok(), "{ok}");
        }
    }

    #[test]
    fn refuses_hostile_ids() {
        let too_long = "x".repeat(65);
        for bad in [
            "",
            "..",
            ".",
            "a/b",
            "a\\b",
            "/etc",
            "A",
            "with space",
            "-a",
            "_a",
            ".hidden",
            "é",
            "a\0b",
            &too_long,
        ] {
            assert!(validate_id(bad).is_err(), "{bad:?} accepted");
        }
    }

    #[test]
    fn parses_references() {
        assert_eq!(
            VersionRef::parse("m@3").unwrap(),
            VersionRef {
                material: "m".into(),
                version: Some(3)
            }
        );
        assert_eq!(VersionRef::parse("m").unwrap().version, None);
        assert!(VersionRef::parse("m@0").is_err());
        assert!(VersionRef::parse("m@x").is_err());
        assert!(VersionRef::parse("../m@1").is_err());
        assert!(VersionRef::parse_pinned("m").is_err());
    }
}
