//! `--columns`: the user says which column holds what (syntax in the parent module's docs).
//! The override replaces header guessing entirely; units come from the override, else from the
//! header, else the role's default.

use super::header::Header;
use super::layout::{self, Assigned, Layout, Seen};
use super::roles::{vocabulary, Role};
use super::unit::Unit;
use crate::error::Diagnostic;

/// Which column an entry names: a 1-based number or a header name.
#[derive(Debug, Clone, PartialEq)]
pub(super) enum ColumnRef {
    Number(usize),
    Name(String),
}

/// One `ROLE=COLUMN[:UNIT]` entry.
#[derive(Debug, Clone, PartialEq)]
pub(super) struct Entry {
    pub role: Role,
    pub column: ColumnRef,
    pub unit: Option<Unit>,
}

const SYNTAX: &str =
    "ROLE=COLUMN[:UNIT] entries separated by commas, e.g. freq=1:MHz,zmag=2,zphase=3:rad";

fn syntax_error(message: String) -> Diagnostic {
    Diagnostic::new(format!("in --columns: {}", message))
        .expected(SYNTAX)
        .hint(format!(
            "roles: {}; COLUMN is a number from 1 or a header name",
            vocabulary()
        ))
}

/// Parse the option text.
pub(super) fn parse(spec: &str) -> Result<Vec<Entry>, Diagnostic> {
    let entries: Vec<Entry> = spec
        .split(',')
        .map(str::trim)
        .filter(|e| !e.is_empty())
        .map(entry)
        .collect::<Result<_, _>>()?;
    if entries.is_empty() {
        return Err(syntax_error("no entries given".into()));
    }
    Ok(entries)
}

fn entry(text: &str) -> Result<Entry, Diagnostic> {
    let (role_text, rest) = text
        .split_once('=')
        .ok_or_else(|| syntax_error(format!("'{}' has no '='", text)))?;
    let (role, role_unit) = Role::parse(role_text).ok_or_else(|| {
        syntax_error(format!("unknown role '{}' in '{}'", role_text.trim(), text))
    })?;
    let (column, unit) = match rest.rsplit_once(':') {
        Some((c, u)) => match Unit::parse(u) {
            Some(unit) => (c.trim(), Some(unit)),
            None if c.trim().parse::<usize>().is_ok() => {
                return Err(syntax_error(format!(
                    "unknown unit '{}' in '{}'",
                    u.trim(),
                    text
                )))
            }
            None => (rest.trim(), None),
        },
        None => (rest.trim(), None),
    };
    let unit = match (role_unit, unit) {
        (Some(a), Some(b)) if a != b => {
            return Err(syntax_error(format!(
                "'{}' names two different units",
                text
            )));
        }
        (a, b) => b.or(a),
    };
    if let Some(u) = unit.filter(|u| !role.fits(*u)) {
        return Err(syntax_error(format!(
            "'{}': {} is not a unit for {} (expected {})",
            text,
            u,
            role.name(),
            role.units_expected()
        )));
    }
    let column = match column.parse::<usize>() {
        Ok(0) => return Err(syntax_error(format!("'{}': columns count from 1", text))),
        Ok(n) => ColumnRef::Number(n),
        Err(_) if column.is_empty() => {
            return Err(syntax_error(format!("'{}' names no column", text)))
        }
        Err(_) => ColumnRef::Name(column.to_string()),
    };
    Ok(Entry { role, column, unit })
}

/// Whether every entry names its column by number, so a file without a header can be read.
pub(super) fn numbered_only(entries: &[Entry]) -> bool {
    entries
        .iter()
        .all(|e| matches!(e.column, ColumnRef::Number(_)))
}

/// The layout the override describes for this table.
pub(super) fn layout(
    entries: &[Entry],
    header: Option<&Header>,
    width: usize,
    seen: &Seen,
) -> Result<Layout, Diagnostic> {
    let assigned: Vec<Assigned> = entries
        .iter()
        .map(|e| {
            let index = resolve(&e.column, header, width, seen)?;
            let header_unit = header.and_then(|h| h.cells.get(index)).and_then(|c| c.unit);
            Ok(Assigned {
                index,
                role: e.role,
                unit: e.unit.or(header_unit),
            })
        })
        .collect::<Result<_, Diagnostic>>()?;
    layout::build(&assigned).map_err(|problem| {
        layout::explain(
            &problem,
            seen,
            format!("correct --columns ({}); roles: {}", SYNTAX, vocabulary()),
        )
    })
}

fn resolve(
    column: &ColumnRef,
    header: Option<&Header>,
    width: usize,
    seen: &Seen,
) -> Result<usize, Diagnostic> {
    let located = |message: String| {
        Diagnostic::new(format!("in --columns: {}", message))
            .line(seen.line)
            .expected(format!(
                "a column number from 1 to {} or a header name; columns: {}",
                width,
                seen.list()
            ))
            .hint(SYNTAX)
    };
    match column {
        ColumnRef::Number(n) if *n <= width => Ok(n - 1),
        ColumnRef::Number(n) => Err(located(format!(
            "there is no column {}; the table has {}",
            n, width
        ))),
        ColumnRef::Name(name) => {
            let Some(header) = header else {
                return Err(located(format!(
                    "'{}' names a column, but the file has no header line",
                    name
                )));
            };
            let matches: Vec<usize> = (0..header.cells.len())
                .filter(|&i| {
                    let c = &header.cells[i];
                    c.text.trim().eq_ignore_ascii_case(name)
                        || c.name.trim().eq_ignore_ascii_case(name)
                })
                .collect();
            match matches.as_slice() {
                [one] => Ok(*one),
                [] => Err(located(format!("no column is named '{}'", name))),
                _ => Err(located(format!(
                    "several columns are named '{}'; give its number instead",
                    name
                ))),
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::ingest::csv_table::header::HeaderCell;
    use crate::ingest::csv_table::roles::{Part, Quantity};

    #[test]
    fn numbers_names_and_units() {
        let e = parse("freq=1:MHz, zmag=2 ,zphase=3:rad,").unwrap();
        assert_eq!(e.len(), 3);
        assert_eq!(
            e[0],
            Entry {
                role: Role::Freq,
                column: ColumnRef::Number(1),
                unit: Some(Unit::Hertz(1e6))
            }
        );
        assert_eq!(e[2].unit, Some(Unit::Radian));
        assert!(numbered_only(&e));
        let e = parse("freq=Frequency:MHz,re=Rs,im=Xs,s11deg=4").unwrap();
        assert_eq!(e[1].column, ColumnRef::Name("Rs".into()));
        assert_eq!(e[3].role, Role::Value(Quantity::S11, Part::Phase));
        assert_eq!(e[3].unit, Some(Unit::Degree));
        assert!(!numbered_only(&e));
    }

    fn error(spec: &str) -> String {
        parse(spec).unwrap_err().message
    }

    #[test]
    fn syntax_errors_say_what_is_wrong() {
        assert!(error("").contains("no entries"));
        assert!(error("freq").contains("no '='"));
        assert!(error("foo=1").contains("unknown role 'foo'"));
        assert!(error("freq=1:furlong").contains("unknown unit 'furlong'"));
        assert!(error("freq=0").contains("count from 1"));
        assert!(error("zre=2:deg").contains("not a unit for zre"));
        assert!(error("s11deg=2:rad").contains("two different units"));
    }

    #[test]
    fn columns_resolve_against_the_header() {
        let header = Header {
            line: 2,
            units_line: None,
            cells: ["Frequency (kHz)", "Rs", "Xs"]
                .iter()
                .map(|n| HeaderCell::new(n))
                .collect(),
        };
        let seen = Seen {
            labels: header.cells.iter().map(|c| c.text.clone()).collect(),
            line: 2,
        };
        let l = layout(
            &parse("freq=frequency,zre=Rs,zim=3").unwrap(),
            Some(&header),
            3,
            &seen,
        )
        .unwrap();
        assert_eq!(l.freq.unit, Unit::Hertz(1e3));
        assert_eq!((l.values[0].index, l.values[1].index), (1, 2));
        let e = layout(
            &parse("freq=1,zre=4,zim=3").unwrap(),
            Some(&header),
            3,
            &seen,
        )
        .unwrap_err();
        assert_eq!(e.line, Some(2));
        assert!(e.message.contains("no column 4"));
        let e = layout(
            &parse("freq=1,zre=Rp,zim=3").unwrap(),
            Some(&header),
            3,
            &seen,
        )
        .unwrap_err();
        assert!(e.message.contains("no column is named 'Rp'"));
        let e = layout(&parse("freq=1,zre=2").unwrap(), Some(&header), 3, &seen).unwrap_err();
        assert!(e.message.contains("no column holds zim"), "{}", e.message);
    }
}
