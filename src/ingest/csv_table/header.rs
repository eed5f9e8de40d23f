//! Finding the header: the line just above the first row that starts with a number (or above a
//! units row that sits there), and reading each header cell as a name and a unit.

use super::dialect::{self, DELIMITERS};
use super::unit::Unit;
use crate::error::Diagnostic;

/// A non-blank, non-comment line split into cells.
#[derive(Debug, Clone, PartialEq)]
pub(super) struct Row<'a> {
    pub no: usize,
    pub text: &'a str,
    pub cells: Vec<String>,
}

/// One header cell: the text as written, the name without its unit, and the unit.
#[derive(Debug, Clone, PartialEq)]
pub(super) struct HeaderCell {
    pub text: String,
    pub name: String,
    pub unit: Option<Unit>,
}

impl HeaderCell {
    pub fn new(text: &str) -> Self {
        let (name, unit) = split_unit(text);
        HeaderCell {
            text: text.to_string(),
            name: name.to_string(),
            unit,
        }
    }
}

/// The header line, the units row under it if any, and the cells with units merged.
#[derive(Debug, Clone, PartialEq)]
pub(super) struct Header {
    pub line: usize,
    pub units_line: Option<usize>,
    pub cells: Vec<HeaderCell>,
}

/// Where the table is among the rows.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) struct Located {
    pub header: Option<usize>,
    pub units: Option<usize>,
    /// Index of the first data row.
    pub data: usize,
}

/// A unit in the name: `Freq (MHz)`, `Frequency [Hz]`, `Frequency/Hz`, `freq_GHz`, `S11 dB`.
/// A bracket that holds no unit stays in the name: `Re(Z)`.
pub(super) fn split_unit(text: &str) -> (&str, Option<Unit>) {
    let t = text.trim();
    for (open, close) in [('(', ')'), ('[', ']')] {
        if let Some(body) = t.strip_suffix(close) {
            if let Some(i) = body.rfind(open) {
                if let Some(unit) = Unit::parse(&body[i + open.len_utf8()..]) {
                    return (body[..i].trim(), Some(unit));
                }
            }
        }
    }
    if let Some(i) = t.rfind(['_', ' ', '/']) {
        let name = t[..i].trim();
        if let (false, Some(unit)) = (name.is_empty(), Unit::parse(&t[i + 1..])) {
            return (name, Some(unit));
        }
    }
    (t, None)
}

/// A name reduced for matching: lower case, letters and digits only, `|X|` spelled `xmag`.
pub(super) fn key(name: &str) -> String {
    let lower = name.trim().to_lowercase();
    let spelled = match lower.strip_prefix('|').and_then(|r| r.split_once('|')) {
        Some((inner, after)) => format!("{}mag{}", inner, after),
        None => lower,
    };
    spelled.chars().filter(|c| c.is_alphanumeric()).collect()
}

fn starts_with_number(row: &Row, decimal_comma: bool) -> bool {
    row.cells
        .first()
        .is_some_and(|c| dialect::number(c, decimal_comma).is_some())
}

/// Most of its cells are units and none is a number: `Hz;Ohm;deg`.
fn is_units_row(row: &Row) -> bool {
    let filled: Vec<&String> = row.cells.iter().filter(|c| !c.is_empty()).collect();
    let units = filled.iter().filter(|c| Unit::parse(c).is_some()).count();
    !filled.is_empty()
        && 2 * units >= filled.len()
        && filled.iter().all(|c| dialect::number(c, true).is_none())
}

/// Another delimiter that splits a line into `width` cells, for mixed-delimiter messages.
pub(super) fn other_delimiter(text: &str, delimiter: u8, width: usize) -> Option<u8> {
    DELIMITERS
        .into_iter()
        .find(|&d| d != delimiter && width >= 2 && dialect::split(text, d).len() == width)
}

/// Find the header, an optional units row and the first data row. With `headerless_ok`
/// (`--columns` by number only) a table without a header is read from its first numeric row.
pub(super) fn locate(
    rows: &[Row],
    delimiter: u8,
    headerless_ok: bool,
) -> Result<Located, Diagnostic> {
    let decimal_comma = dialect::allows_decimal_comma(delimiter);
    let Some(data) = rows
        .iter()
        .position(|r| starts_with_number(r, decimal_comma))
    else {
        return Err(no_data_rows(rows));
    };
    let first = &rows[data];
    let (header, units) = match data {
        0 => (None, None),
        1 => (Some(0), None),
        _ if is_units_row(&rows[data - 1]) => (Some(data - 2), Some(data - 1)),
        _ => (Some(data - 1), None),
    };
    match header.map(|h| &rows[h]) {
        Some(h) if h.cells.len() >= 2 => Ok(Located { header, units, data }),
        _ if headerless_ok => Ok(Located { header: None, units: None, data }),
        Some(h) => Err(match other_delimiter(h.text, delimiter, first.cells.len()) {
            Some(other) => Diagnostic::new(format!(
                "mixed delimiters: this line splits on {} but the data rows below it on {}",
                dialect::name(other),
                dialect::name(delimiter)
            ))
            .line(h.no)
            .expected(format!("one delimiter ({}) throughout the file", dialect::name(delimiter)))
            .hint("re-export the file, or replace the delimiters on this line"),
            None => no_header(first).hint(format!(
                "line {} ('{}') is one cell of text, not column names; add a header line above line {}, \
                 or give --columns by column number, e.g. --columns \"freq=1:Hz,zre=2,zim=3\"",
                h.no,
                h.text.trim(),
                first.no
            )),
        }),
        None => Err(no_header(first)
            .hint("add a header line naming the columns, or give --columns by column number, e.g. --columns \"freq=1:Hz,zre=2,zim=3\"")),
    }
}

fn no_header(first: &Row) -> Diagnostic {
    Diagnostic::new("no header line above the first row of numbers")
        .line(first.no)
        .expected("a header naming the columns, e.g. 'Frequency (Hz),Re(Z),Im(Z)', above the data")
}

fn no_data_rows(rows: &[Row]) -> Diagnostic {
    match rows.iter().position(|r| r.cells.len() >= 2) {
        Some(h) => {
            let after = rows.get(h + 1).map(|r| {
                format!(
                    "; the next line ({}) starts with '{}'",
                    r.no,
                    r.cells.first().map_or("", |c| c.as_str())
                )
            });
            Diagnostic::new(format!(
                "line {} looks like a header, but no rows of numbers follow it{}",
                rows[h].no,
                after.unwrap_or_default()
            ))
            .line(rows.get(h + 1).unwrap_or(&rows[h]).no)
            .expected("rows of numbers under the header, one per frequency")
            .hint(
                "the export may have been cut short or saved without data; export the sweep again",
            )
        }
        None => Diagnostic::new("no table: no line holds two or more numbers")
            .line(rows.first().map_or(1, |r| r.no))
            .expected("a header line and rows of numbers separated by ',', ';' or tab")
            .hint("is this a measurement export? Touchstone files need a .s1p/.s2p/.ts name"),
    }
}

impl Header {
    /// Read the header row, taking units from the units row where the name gives none.
    pub fn read(header: &Row, units: Option<&Row>) -> Result<Header, Diagnostic> {
        let mut cells: Vec<HeaderCell> = header.cells.iter().map(|c| HeaderCell::new(c)).collect();
        if let Some(units) = units {
            if units.cells.len() > cells.len() {
                return Err(Diagnostic::new(format!(
                    "the units row has {} cells but the header above it has {}",
                    units.cells.len(),
                    cells.len()
                ))
                .line(units.no)
                .expected("one unit (or an empty cell) per header column")
                .hint("remove the extra cells, or name the extra columns in the header"));
            }
            for (i, (cell, text)) in cells.iter_mut().zip(&units.cells).enumerate() {
                merge_unit(cell, text, i, units.no)?;
            }
        }
        Ok(Header {
            line: header.no,
            units_line: units.map(|u| u.no),
            cells,
        })
    }
}

fn merge_unit(
    cell: &mut HeaderCell,
    text: &str,
    index: usize,
    line: usize,
) -> Result<(), Diagnostic> {
    if text.is_empty() {
        return Ok(());
    }
    let unit = Unit::parse(text).ok_or_else(|| {
        Diagnostic::new(format!(
            "unknown unit '{}' in column {} of the units row",
            text,
            index + 1
        ))
        .line(line)
        .expected("Hz, kHz, MHz, GHz, ohm, kohm, deg, rad, dB, U or an empty cell")
        .hint("correct the unit, or give it with --columns, e.g. freq=1:MHz")
    })?;
    match cell.unit {
        Some(named) if named != unit => Err(Diagnostic::new(format!(
            "column {} '{}' names the unit {} but the units row says {}",
            index + 1,
            cell.text,
            named,
            unit
        ))
        .line(line)
        .expected("the same unit in the header and the units row")
        .hint("correct one of them, or give the unit with --columns")),
        _ => {
            cell.unit = Some(unit);
            Ok(())
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn rows(text: &str, d: u8) -> Vec<Row<'_>> {
        text.lines()
            .enumerate()
            .map(|(i, t)| Row {
                no: i + 1,
                text: t,
                cells: dialect::split(t, d),
            })
            .collect()
    }

    #[test]
    fn units_inside_names() {
        assert_eq!(split_unit("Freq (MHz)"), ("Freq", Some(Unit::Hertz(1e6))));
        assert_eq!(
            split_unit("Frequency [Hz]"),
            ("Frequency", Some(Unit::Hertz(1.0)))
        );
        assert_eq!(split_unit("freq_GHz"), ("freq", Some(Unit::Hertz(1e9))));
        assert_eq!(
            split_unit("Frequency/kHz"),
            ("Frequency", Some(Unit::Hertz(1e3)))
        );
        assert_eq!(split_unit("Z_re_ohm"), ("Z_re", Some(Unit::Ohm(1.0))));
        assert_eq!(
            split_unit("S21 phase [deg]"),
            ("S21 phase", Some(Unit::Degree))
        );
        assert_eq!(split_unit("S11 dB"), ("S11", Some(Unit::Decibel)));
        assert_eq!(split_unit("Re(Z)"), ("Re(Z)", None));
        assert_eq!(split_unit("Re(Z) (Ohm)"), ("Re(Z)", Some(Unit::Ohm(1.0))));
        assert_eq!(split_unit("Phase(°)"), ("Phase", Some(Unit::Degree)));
        assert_eq!(split_unit("dB"), ("dB", None));
    }

    #[test]
    fn keys() {
        assert_eq!(key("|Z|"), "zmag");
        assert_eq!(key("|S11|"), "s11mag");
        assert_eq!(key("Re(Z)"), "rez");
        assert_eq!(key("Z_re"), "zre");
        assert_eq!(key("S21 phase"), "s21phase");
        assert_eq!(key("Θ"), "θ");
    }

    #[test]
    fn header_found_after_preamble_and_units_row_merged() {
        let r = rows(
            "Bench export\nDate;today\nFreq;|Z|;Phase\nMHz;kOhm;rad\n1;2;3",
            b';',
        );
        let at = locate(&r, b';', false).unwrap();
        assert_eq!(
            at,
            Located {
                header: Some(2),
                units: Some(3),
                data: 4
            }
        );
        let h = Header::read(&r[2], Some(&r[3])).unwrap();
        assert_eq!(h.cells[1].unit, Some(Unit::Ohm(1e3)));
        assert_eq!(h.cells[2].unit, Some(Unit::Radian));
        assert_eq!(h.units_line, Some(4));
    }

    #[test]
    fn missing_header_and_data_are_named_by_line() {
        let r = rows("1,2,3\n4,5,6", b',');
        assert_eq!(locate(&r, b',', false).unwrap_err().line, Some(1));
        assert_eq!(locate(&r, b',', true).unwrap().header, None);
        let r = rows("f,re,im", b',');
        let e = locate(&r, b',', false).unwrap_err();
        assert!(e.message.contains("no rows of numbers"), "{}", e.message);
        let r = rows("f;re;im\n1,2,3", b',');
        let e = locate(&r, b',', false).unwrap_err();
        assert!(e.message.contains("mixed delimiters"), "{}", e.message);
    }

    #[test]
    fn unknown_or_conflicting_units_row() {
        let r = rows("Freq,R,X\nHz,furlong,ohm\n1,2,3", b',');
        let at = locate(&r, b',', false).unwrap();
        let e = Header::read(&r[at.header.unwrap()], Some(&r[1])).unwrap_err();
        assert_eq!(e.line, Some(2));
        assert!(e.message.contains("furlong"));
        let r = rows("Freq (MHz),R,X\nHz,ohm,ohm\n1,2,3", b',');
        assert!(Header::read(&r[0], Some(&r[1]))
            .unwrap_err()
            .message
            .contains("units row says Hz"));
    }
}
