//! Data rows → frequencies and complex values, with a located error for every bad cell.
//! Only the columns in use are read, so a text column (a marker label) does not stop the read.

use super::dialect;
use super::header::{other_delimiter, Row};
use super::layout::{Layout, Seen};
use crate::error::Diagnostic;
use crate::C64;

/// What the rows must look like.
pub(super) struct Shape<'a> {
    pub delimiter: u8,
    /// Cells a row may have (the header's, or the first data row's without a header).
    pub width: usize,
    pub seen: &'a Seen,
    /// "the header on line 3" or "the first data row on line 5", for short-row messages.
    pub width_from: String,
}

/// The numbers read.
#[derive(Debug, Clone, PartialEq)]
pub(super) struct Values {
    pub freq_hz: Vec<f64>,
    pub values: Vec<C64>,
    /// Whether any number used a decimal comma.
    pub decimal_comma: bool,
}

pub(super) fn read(rows: &[Row], layout: &Layout, shape: &Shape) -> Result<Values, Diagnostic> {
    let decimal_comma = dialect::allows_decimal_comma(shape.delimiter);
    let needed = layout
        .columns()
        .iter()
        .map(|c| c.index + 1)
        .max()
        .unwrap_or(0);
    let mut out = Values {
        freq_hz: Vec::with_capacity(rows.len()),
        values: Vec::with_capacity(rows.len()),
        decimal_comma: false,
    };
    for row in rows {
        if row.cells.len() > shape.width || row.cells.len() < needed {
            return Err(wrong_width(row, shape));
        }
        let mut numbers = [0.0; 3];
        for (slot, column) in numbers.iter_mut().zip(layout.columns()) {
            let cell = &row.cells[column.index];
            let (value, comma) = dialect::number(cell, decimal_comma)
                .ok_or_else(|| bad_cell(row, column.index, shape))?;
            *slot = value;
            out.decimal_comma |= comma;
        }
        out.freq_hz.push(layout.freq.unit.to_si(numbers[0]));
        out.values.push(layout.value(numbers[1], numbers[2]));
    }
    Ok(out)
}

fn wrong_width(row: &Row, shape: &Shape) -> Diagnostic {
    let n = row.cells.len();
    let what = if n > shape.width {
        "too many cells"
    } else {
        "a short row"
    };
    let hint = match other_delimiter(row.text, shape.delimiter, shape.width) {
        Some(other) => format!(
            "this line splits into {} cells on {}, the rest of the file on {}: the file mixes delimiters",
            shape.width,
            dialect::name(other),
            dialect::name(shape.delimiter)
        ),
        None if n > shape.width => "remove the extra cells, or name the extra columns in the header".to_string(),
        None => "the row may have been cut short; complete it or delete the line".to_string(),
    };
    Diagnostic::new(format!(
        "{}: this line has {} cell{}",
        what,
        n,
        if n == 1 { "" } else { "s" }
    ))
    .line(row.no)
    .expected(format!(
        "{} cells, as {} has",
        shape.width, shape.width_from
    ))
    .hint(hint)
}

fn bad_cell(row: &Row, index: usize, shape: &Shape) -> Diagnostic {
    let cell = row.cells[index].as_str();
    let column = shape.seen.label(index);
    let message = if cell.is_empty() {
        format!("{} is empty", column)
    } else {
        format!("{} holds '{}', which is not a number", column, cell)
    };
    let expected = if dialect::allows_decimal_comma(shape.delimiter) {
        "a number such as 12.5, 12,5 or -3.1e-2"
    } else {
        "a number such as 12.5 or -3.1e-2"
    };
    let hint = if cell.contains('.') && cell.contains(',') {
        "thousands separators are not supported; write the number without them".to_string()
    } else if let Some(other) = other_delimiter(row.text, shape.delimiter, shape.width) {
        format!(
            "this line splits on {} while the file uses {}: the file mixes delimiters",
            dialect::name(other),
            dialect::name(shape.delimiter)
        )
    } else if cell.is_empty() {
        "fill in the value or delete the line".to_string()
    } else {
        "correct the value or delete the line; text after the data (a footer, a second table) is not supported".to_string()
    };
    Diagnostic::new(message)
        .line(row.no)
        .expected(expected)
        .hint(hint)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::ingest::csv_table::layout::{build, Assigned};
    use crate::ingest::csv_table::roles::{Part, Quantity, Role};
    use crate::ingest::csv_table::unit::Unit;

    fn row(no: usize, text: &str, d: u8) -> Row<'_> {
        Row {
            no,
            text,
            cells: dialect::split(text, d),
        }
    }

    fn z_layout() -> Layout {
        let cols = [
            Assigned {
                index: 0,
                role: Role::Freq,
                unit: Some(Unit::Hertz(1e6)),
            },
            Assigned {
                index: 1,
                role: Role::Value(Quantity::Z, Part::Re),
                unit: None,
            },
            Assigned {
                index: 2,
                role: Role::Value(Quantity::Z, Part::Im),
                unit: Some(Unit::Ohm(1e3)),
            },
        ];
        build(&cols).unwrap()
    }

    fn seen() -> Seen {
        Seen {
            labels: vec![
                "Freq (MHz)".into(),
                "R".into(),
                "X (kOhm)".into(),
                "Note".into(),
            ],
            line: 1,
        }
    }

    fn shape(seen: &Seen, delimiter: u8, width: usize) -> Shape<'_> {
        Shape {
            delimiter,
            width,
            seen,
            width_from: "the header on line 1".into(),
        }
    }

    #[test]
    fn decimal_commas_units_and_unused_text_columns() {
        let seen = seen();
        let shape = shape(&seen, b';', 4);
        let rows = [
            row(2, "1,5;12,5;0,25;marker A", b';'),
            row(3, "2;13;0.5", b';'),
        ];
        let v = read(&rows, &z_layout(), &shape).unwrap();
        assert_eq!(v.freq_hz, vec![1.5e6, 2e6]);
        assert_eq!(v.values, vec![C64::new(12.5, 250.0), C64::new(13.0, 500.0)]);
        assert!(v.decimal_comma);
    }

    #[test]
    fn bad_rows_name_line_column_and_count() {
        let seen = seen();
        let shape = shape(&seen, b',', 3);
        let e = read(&[row(7, "1,n/a,3", b',')], &z_layout(), &shape).unwrap_err();
        assert_eq!(e.line, Some(7));
        assert_eq!(e.message, "column 2 'R' holds 'n/a', which is not a number");
        let e = read(&[row(8, "1,2", b',')], &z_layout(), &shape).unwrap_err();
        assert_eq!(e.message, "a short row: this line has 2 cells");
        assert!(e.expected.starts_with("3 cells"));
        let e = read(&[row(9, "1;2;3", b',')], &z_layout(), &shape).unwrap_err();
        assert!(e.hint.contains("mixes delimiters"), "{}", e.hint);
        let e = read(&[row(4, "1,2,3,4", b',')], &z_layout(), &shape).unwrap_err();
        assert!(e.message.starts_with("too many cells"));
        let e = read(&[row(5, "1,,3", b',')], &z_layout(), &shape).unwrap_err();
        assert!(e.message.ends_with("is empty"));
        let e = read(&[row(6, "1,\"1.000,5\",3", b',')], &z_layout(), &shape).unwrap_err();
        assert!(e.hint.contains("thousands"));
    }
}
