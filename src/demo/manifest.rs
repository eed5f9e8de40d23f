//! The manifest of `raw_measurements/`: one CSV row per file saying what was measured and how.
//! Columns: file, material, lot, sample, core (a core spec, e.g. `toroid:od=25mm,id=15mm,h=10mm`),
//! turns, method (reflection|series), lead_nh (the fixture's lead/loop inductance outside the core
//! as the bench characterised it, nH), date (ISO 8601), off_spec (true|false), notes.

use super::DemoError;
use crate::error::Diagnostic;
use serde::{Deserialize, Serialize};
use std::path::Path;

/// The manifest's file name inside the measurements folder.
pub const MANIFEST: &str = "manifest.csv";

const COLUMNS: &str = "file, material, lot, sample, core, turns, method, lead_nh, date, off_spec, notes";

/// One measurement file and what is known about it.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Entry {
    pub file: String,
    /// The material the cores are sold as (the demo knows it is true).
    pub material: String,
    pub lot: String,
    pub sample: String,
    /// Core spec in the `SHAPE:key=value,...` syntax of the command line.
    pub core: String,
    pub turns: u32,
    /// `reflection` or `series`.
    pub method: String,
    /// Lead/loop inductance of the fixture outside the core, nH.
    pub lead_nh: f64,
    pub date: String,
    /// True for the lot that does not meet its specification.
    pub off_spec: bool,
    pub notes: String,
}

/// The manifest as CSV text (header row, then one row per entry; fields quoted where needed).
pub fn to_csv(entries: &[Entry]) -> Result<String, DemoError> {
    let mut w = csv::WriterBuilder::new().terminator(csv::Terminator::Any(b'\n')).from_writer(Vec::new());
    for e in entries {
        w.serialize(e).map_err(|err| DemoError(Diagnostic::new(format!("cannot write the manifest: {}", err))))?;
    }
    let bytes =
        w.into_inner().map_err(|err| DemoError(Diagnostic::new(format!("cannot write the manifest: {}", err))))?;
    String::from_utf8(bytes).map_err(|err| DemoError(Diagnostic::new(format!("manifest is not UTF-8: {}", err))))
}

/// Read a manifest file, checking every row.
pub fn read(path: &Path) -> Result<Vec<Entry>, DemoError> {
    let bytes = std::fs::read(path).map_err(|e| {
        Diagnostic::new(format!("cannot read the manifest: {}", e))
            .file(path)
            .expected(format!("a CSV file with the columns {}", COLUMNS))
            .hint("run `mucurve demo --regenerate` to write raw_measurements/ and its manifest")
    })?;
    parse(&bytes).map_err(|e| DemoError(e.0.in_file(path)))
}

/// Parse manifest CSV bytes.
pub fn parse(bytes: &[u8]) -> Result<Vec<Entry>, DemoError> {
    let mut r = csv::ReaderBuilder::new().has_headers(true).from_reader(bytes);
    let mut entries = Vec::new();
    for row in r.deserialize::<Entry>() {
        let entry = row.map_err(|err| {
            let line = err.position().map(|p| p.line() as usize).unwrap_or(0);
            let d = Diagnostic::new(format!("unreadable manifest row: {}", err))
                .expected(format!("the columns {}; turns a whole number, off_spec true or false", COLUMNS));
            if line > 0 {
                d.line(line)
            } else {
                d
            }
        })?;
        entries.push(entry);
    }
    if entries.is_empty() {
        return Err(Diagnostic::new("the manifest lists no files")
            .expected(format!("a header row ({}) and one row per file", COLUMNS))
            .into());
    }
    Ok(entries)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn entry() -> Entry {
        Entry {
            file: "a.s1p".into(),
            material: "driftwood".into(),
            lot: "DW-1".into(),
            sample: "DW-1-01".into(),
            core: "toroid:od=25mm,id=15mm,h=10mm".into(),
            turns: 2,
            method: "reflection".into(),
            lead_nh: 24.0,
            date: "2024-11-19".into(),
            off_spec: false,
            notes: "leads, short".into(),
        }
    }

    // RFC 4180: fields holding the delimiter are quoted, and read back unchanged.
    #[test]
    fn specs_with_commas_round_trip_quoted() {
        let text = to_csv(&[entry()]).unwrap();
        assert!(text.starts_with("file,material,lot,sample,core,turns,method,lead_nh,date,off_spec,notes\n"));
        assert!(text.contains("\"toroid:od=25mm,id=15mm,h=10mm\""));
        assert_eq!(parse(text.as_bytes()).unwrap(), vec![entry()]);
    }

    #[test]
    fn a_bad_row_names_its_line() {
        let text = to_csv(&[entry()]).unwrap().replace(",2,reflection,", ",two,reflection,");
        let err = parse(text.as_bytes()).unwrap_err();
        assert_eq!(err.0.line, Some(2), "{}", err);
        assert!(err.to_string().contains("turns a whole number"));
    }
}
