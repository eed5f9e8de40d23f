//! CSV reader for network- and impedance-analyser exports, and for the tool's own normalised
//! sweep (`freq_hz,z_re_ohm,z_im_ohm` under a `#` block).
//!
//! # What is detected (and reported in [`Sweep::detected`])
//! - **Encoding**: UTF-8 with or without a byte-order mark, UTF-16 with one; anything else is
//!   read as Latin-1. Line ends LF, CRLF or CR.
//! - **Comments**: lines starting with `#` or `!` anywhere; blank lines; free-text lines above
//!   the header (the preamble).
//! - **Delimiter**: `,`, `;` or tab — the one that splits the most lines into the same number
//!   (≥ 2) of cells; a tie goes to tab, then `;`. Fields may be quoted (`"Freq, Hz"`); empty
//!   cells at the end of a line (trailing delimiters) are dropped.
//! - **Decimal comma**: accepted when the delimiter is `;` or tab (`1,5E6;12,3`). Numbers with
//!   both `.` and `,` (thousands separators) are refused.
//! - **Header**: the line just above the first line that starts with a number, or above a
//!   **units row** sitting there (`Hz;Ohm;deg`: most cells units, none a number).
//! - **Units** in a header cell: `Freq (MHz)`, `Frequency [Hz]`, `Frequency/kHz`, `freq_GHz`,
//!   `Z_re_ohm`, `S11 dB`; or from the units row. Frequency: Hz, kHz, MHz, GHz (any letter case,
//!   as in Touchstone); resistance: ohm, kohm, mohm, Mohm (also `Ω`); phase: deg (also `°`) or
//!   rad; `dB`; a plain ratio `U`, `-` or `lin`. Without a unit: Hz, ohm, degrees.
//! - **Reference impedance** for S data: a comment or preamble line `Z0 = 75`, `R0: 50 ohm`,
//!   `Zref = 50` or `Reference impedance 50 Ohm`; otherwise 50 Ω. (`--z0` is applied later.)
//!
//! # Header vocabulary
//! Names are compared without case, blanks or punctuation, after the unit is taken off;
//! `|X|` means the magnitude of X. Columns that match nothing are listed as not used.
//!
//! | role | header names |
//! |---|---|
//! | `freq` | `Freq`, `Frequency`, `f` |
//! | `zre` | `Re(Z)`, `Z re`, `Z_real`, `z_re_ohm`, `R`, `Rs`, `Resistance`, or `Re` with an ohm unit |
//! | `zim` | `Im(Z)`, `Z im`, `Z_imag`, `z_im_ohm`, `X`, `Xs`, `Reactance`, or `Im` with an ohm unit |
//! | `zmag` | `|Z|`, `Zmag`, `Mag(Z)`, `Z`, `Impedance`, or any magnitude with an ohm unit |
//! | `zphase` | `Z phase`, `Z_phase_deg`, `Phase(Z)`, `Z angle`, `θ(Z)` |
//! | `s11re` / `s11im` | `S11 re`, `Re(S11)`, `S11_real`, `S11 im`, `Im(S11)`, `S11_imag` |
//! | `s11db` | `S11 dB`, `S11 (dB)`, `dB(S11)`, `S11 logmag`, `|S11| [dB]` |
//! | `s11mag` | `|S11|`, `S11 mag`, `S11 magnitude`, `S11 lin`, `abs(S11)` |
//! | `s11phase` | `S11 phase`, `S11 (deg)`, `S11 ang [rad]`, `arg(S11)` |
//! | `s21…` | the same names with `S21` |
//!
//! A part without its quantity — `Phase`, `Angle`, `θ`, `Magnitude (dB)`, `Re` — is placed
//! only when that is unambiguous: a bare phase joins the one quantity that has a magnitude
//! column (`|Z|`, `Phase (rad)` reads as Z in polar form); a bare re/im/magnitude counts as Z
//! only with an ohm unit. S12 and S22 columns are recognised and not used.
//!
//! One quantity must be complete — re/im, magnitude/phase or dB/phase; when a file holds
//! several forms of it, re/im is preferred, then magnitude/phase. Z gives
//! [`SweepData::Impedance`], S11 [`SweepData::Reflection`], S21 [`SweepData::Transmission`].
//! A file holding two complete quantities (Z and S11, or S11 and S21) is ambiguous: choose with
//! `--columns`.
//!
//! # `--columns` (overrides detection)
//! `ROLE=COLUMN[:UNIT]` entries separated by commas. COLUMN is a 1-based column number or a
//! header name (the whole cell or the name without its unit, any letter case); UNIT overrides
//! the header's unit. Roles: `freq`, `zre`, `zim`, `zmag`, `zphase`, `s11re`, `s11im`,
//! `s11mag`, `s11db`, `s11phase`, `s21re`, `s21im`, `s21mag`, `s21db`, `s21phase`; aliases `f`
//! and `frequency`; `re`/`r` and `im`/`x` for Z; `zdeg`, `zrad`, `s11deg`, `s11rad`, `s21deg`,
//! `s21rad` for a phase in that unit. Examples:
//!
//! ```text
//! --columns "freq=1:MHz,zmag=2,zphase=3:rad"
//! --columns "freq=Frequency:MHz,re=Rs,im=Xs"
//! --columns "freq=1,s11db=2,s11deg=3"
//! ```
//!
//! The override replaces header guessing entirely (name every column you need). With column
//! numbers only, a file without any header line can be read.
//!
//! Every error carries the 1-based line (the header line for column problems); an unclear
//! header lists the columns seen and shows a `--columns` that would read the file. Frequency
//! order, repeats and finiteness are checked afterwards by [`super::validate`].

mod auto;
mod columns_option;
mod dialect;
mod header;
mod layout;
mod roles;
mod text;
mod unit;
mod values;

use super::{IngestError, ReadOptions, SourceInfo, Sweep, SweepData};
use crate::error::Diagnostic;
use header::{Header, Located, Row};
use layout::{Form, Layout, Seen};
use roles::Quantity;
use text::Line;

/// Reference impedance of S data when the file states none, ohms (common practice).
pub const DEFAULT_Z0_OHM: f64 = 50.0;

/// Parse a CSV export into a sweep, saying in `Sweep::detected` what auto-detection chose.
pub fn read_sweep(
    bytes: &[u8],
    source: SourceInfo,
    opts: &ReadOptions,
) -> Result<Sweep, IngestError> {
    let decoded = text::decode(bytes);
    let lines = text::lines(&decoded);
    let content: Vec<Line> = lines
        .iter()
        .copied()
        .filter(|l| !l.text.trim().is_empty() && !text::is_comment(l.text))
        .collect();
    let first = content.first().ok_or_else(|| empty_file(&lines))?;
    let delimiter = dialect::sniff(&content).ok_or_else(|| no_delimiter(first))?;
    let texts: Vec<&str> = content.iter().map(|l| l.text).collect();
    let rows: Vec<Row> = content
        .iter()
        .zip(dialect::split_lines(&texts, delimiter))
        .map(|(l, cells)| Row {
            no: l.no,
            text: l.text,
            cells,
        })
        .filter(|r| !r.cells.is_empty())
        .collect();
    let entries = opts
        .columns
        .as_deref()
        .map(columns_option::parse)
        .transpose()?;
    let headerless_ok = entries
        .as_deref()
        .is_some_and(columns_option::numbered_only);
    let at = header::locate(&rows, delimiter, headerless_ok)?;
    let header = at
        .header
        .map(|h| Header::read(&rows[h], at.units.map(|u| &rows[u])))
        .transpose()?;
    let first_data = &rows[at.data];
    let (width, seen) = match &header {
        Some(h) => (
            h.cells.len(),
            Seen {
                labels: h.cells.iter().map(|c| c.text.clone()).collect(),
                line: h.line,
            },
        ),
        None => (
            first_data.cells.len(),
            Seen {
                labels: vec![String::new(); first_data.cells.len()],
                line: first_data.no,
            },
        ),
    };
    let layout = match (&entries, &header) {
        (Some(entries), _) => columns_option::layout(entries, header.as_ref(), width, &seen)?,
        (None, Some(h)) => auto::layout(h, &seen)?,
        (None, None) => {
            return Err(
                Diagnostic::new("no header line above the first row of numbers")
                    .line(first_data.no)
                    .into(),
            )
        }
    };
    let width_from = match &header {
        Some(h) => format!("the header on line {}", h.line),
        None => format!("the first data row on line {}", first_data.no),
    };
    let shape = values::Shape {
        delimiter,
        width,
        seen: &seen,
        width_from,
    };
    let read = values::read(&rows[at.data..], &layout, &shape)?;
    let reference = text::reference_impedance(&lines, seen.line)?;
    let z0 = reference.map_or(DEFAULT_Z0_OHM, |(z0, _)| z0);

    let mut detected = vec![
        dialect_summary(delimiter, read.decimal_comma, &at, &rows, header.as_ref()),
        columns_summary(&layout, &seen, entries.is_some()),
    ];
    let used: Vec<usize> = layout.columns().iter().map(|c| c.index).collect();
    let unused: Vec<String> = (0..width)
        .filter(|i| !used.contains(i))
        .map(|i| seen.label(i))
        .collect();
    if !unused.is_empty() {
        detected.push(format!("not used: {}", unused.join(", ")));
    }
    if layout.quantity != Quantity::Z {
        detected.push(match reference {
            Some((z0, line)) => format!("reference impedance {} ohm (line {})", z0, line),
            None => format!(
                "reference impedance {} ohm (not stated in the file; the default)",
                DEFAULT_Z0_OHM
            ),
        });
    }
    let data = match layout.quantity {
        Quantity::Z => SweepData::Impedance(read.values),
        Quantity::S11 => SweepData::Reflection {
            s11: read.values,
            z0,
        },
        Quantity::S21 => SweepData::Transmission {
            s21: read.values,
            z0: [z0, z0],
        },
    };
    Ok(Sweep {
        source,
        freq_hz: read.freq_hz,
        data,
        detected,
        warnings: Vec::new(),
    })
}

fn empty_file(lines: &[Line]) -> IngestError {
    let only_comments = lines.iter().any(|l| text::is_comment(l.text));
    let message = if only_comments {
        "the file holds only comments, no table"
    } else {
        "the file is empty"
    };
    Diagnostic::new(message)
        .line(
            lines
                .iter()
                .rev()
                .find(|l| !l.text.trim().is_empty())
                .map_or(1, |l| l.no),
        )
        .expected(
            "a header line naming the columns and rows of numbers, e.g. 'Freq (Hz),Re(Z),Im(Z)'",
        )
        .hint("export the sweep again; check the export finished and was saved as CSV")
        .into()
}

fn no_delimiter(first: &Line) -> IngestError {
    Diagnostic::new("no delimiter: no line splits into two or more cells on ',', ';' or tab")
        .line(first.no)
        .expected("a table with cells separated by ',', ';' or tab")
        .hint("space-separated tables are not read; Touchstone files need a .s1p/.s2p/.ts name")
        .into()
}

fn dialect_summary(
    delimiter: u8,
    decimal_comma: bool,
    at: &Located,
    rows: &[Row],
    header: Option<&Header>,
) -> String {
    let decimal = if decimal_comma {
        "decimal comma"
    } else {
        "decimal point"
    };
    let head = match header {
        Some(h) => match h.units_line {
            Some(u) => format!("header on line {}, units row on line {}", h.line, u),
            None => format!("header on line {}", h.line),
        },
        None => "no header line (columns by number from --columns)".to_string(),
    };
    let data = &rows[at.data..];
    let span = match (data.first(), data.last()) {
        (Some(a), Some(b)) => format!("{} rows on lines {}–{}", data.len(), a.no, b.no),
        _ => "no rows".to_string(),
    };
    format!(
        "CSV: delimiter {}, {}, {}; {}",
        dialect::name(delimiter),
        decimal,
        head,
        span
    )
}

fn columns_summary(layout: &Layout, seen: &Seen, from_option: bool) -> String {
    let form = match layout.form {
        Form::Rect => "re/im",
        Form::Polar => "magnitude/phase",
        Form::DbPolar => "dB/phase",
    };
    let columns: Vec<String> = layout
        .columns()
        .iter()
        .map(|c| {
            let label = seen
                .labels
                .get(c.index)
                .filter(|l| !l.is_empty())
                .map(|l| format!(" '{}'", l))
                .unwrap_or_default();
            let assumed = if c.assumed { ", assumed" } else { "" };
            format!(
                "{}=col{}{} [{}{}]",
                c.role.name(),
                c.index + 1,
                label,
                c.unit,
                assumed
            )
        })
        .collect();
    let source = if from_option { " (from --columns)" } else { "" };
    format!(
        "{} as {}{}: {}",
        layout.quantity.label(),
        form,
        source,
        columns.join(", ")
    )
}
