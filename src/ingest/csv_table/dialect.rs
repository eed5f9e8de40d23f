//! The CSV dialect: which delimiter splits the cells, how one line becomes cells (the `csv`
//! crate, so quoted fields may hold delimiters), and how a cell becomes a number.

use super::text::Line;
use std::collections::HashMap;

/// The delimiters tried, in the order that wins a tie: a tab or `;` in a line that also splits
/// on `,` is the real delimiter, since `,` is then the decimal comma (`1,5E6;12,3`).
pub(super) const DELIMITERS: [u8; 3] = [b'\t', b';', b','];

/// Lines looked at to choose the delimiter; the rest of the file must follow suit.
const SNIFF_LINES: usize = 500;

/// The delimiter that gives the most lines the same number (two or more) of cells.
pub(super) fn sniff(lines: &[Line]) -> Option<u8> {
    let sample: Vec<&str> = lines.iter().take(SNIFF_LINES).map(|l| l.text).collect();
    let mut best: Option<(usize, u8)> = None;
    for &delimiter in &DELIMITERS {
        let mut lines_by_width: HashMap<usize, usize> = HashMap::new();
        for cells in split_lines(&sample, delimiter) {
            if cells.len() >= 2 {
                *lines_by_width.entry(cells.len()).or_default() += 1;
            }
        }
        let score = lines_by_width.values().copied().max().unwrap_or(0);
        if score > 0 && best.is_none_or(|(s, _)| score > s) {
            best = Some((score, delimiter));
        }
    }
    best.map(|(_, d)| d)
}

/// Each line's cells, trimmed, with empty cells at the end (trailing delimiters) dropped.
/// One csv reader takes all lines (building a reader per line costs more than the parse);
/// when a quoted field runs over a line end (a stray quote), each line is read on its own
/// instead, so one bad line cannot swallow the rest.
pub(super) fn split_lines(lines: &[&str], delimiter: u8) -> Vec<Vec<String>> {
    let joined = lines.join("\n");
    let mut reader = reader(joined.as_bytes(), delimiter);
    let mut out = Vec::with_capacity(lines.len());
    for (i, record) in reader.records().enumerate() {
        match record {
            Ok(r) if r.position().map(|p| p.line()) == Some(i as u64 + 1) => out.push(cells(&r)),
            _ => break,
        }
    }
    if out.len() == lines.len() {
        out
    } else {
        lines.iter().map(|l| split(l, delimiter)).collect()
    }
}

/// One line's cells, as [`split_lines`] gives them.
pub(super) fn split(text: &str, delimiter: u8) -> Vec<String> {
    let mut record = csv::StringRecord::new();
    match reader(text.as_bytes(), delimiter).read_record(&mut record) {
        Ok(true) => cells(&record),
        _ => Vec::new(),
    }
}

fn reader(bytes: &[u8], delimiter: u8) -> csv::Reader<&[u8]> {
    csv::ReaderBuilder::new()
        .has_headers(false)
        .flexible(true)
        .delimiter(delimiter)
        .from_reader(bytes)
}

fn cells(record: &csv::StringRecord) -> Vec<String> {
    let mut cells: Vec<String> = record.iter().map(clean).collect();
    while cells.last().is_some_and(|c| c.is_empty()) {
        cells.pop();
    }
    cells
}

/// Trim blanks; a quoted cell preceded by a blank (`1, "a"`) is not unquoted by the csv
/// parser, so strip those quotes here.
fn clean(cell: &str) -> String {
    let t = cell.trim();
    match t.strip_prefix('"').and_then(|t| t.strip_suffix('"')) {
        Some(inner) => inner.trim().to_string(),
        None => t.to_string(),
    }
}

/// How to print a delimiter in messages.
pub(super) fn name(delimiter: u8) -> &'static str {
    match delimiter {
        b'\t' => "tab",
        b';' => "';'",
        _ => "','",
    }
}

/// A cell as a number: `1.5e6`, `-3`, and with `decimal_comma` also `1,5E6`. The flag says
/// whether the comma was used. Cells with both `.` and `,` (thousands separators) are refused.
pub(super) fn number(cell: &str, decimal_comma: bool) -> Option<(f64, bool)> {
    let t = cell.trim();
    if let Ok(v) = t.parse::<f64>() {
        return Some((v, false));
    }
    if decimal_comma && t.matches(',').count() == 1 && !t.contains('.') {
        return t.replace(',', ".").parse().ok().map(|v| (v, true));
    }
    None
}

/// Whether a decimal comma can be told from a delimiter in this dialect.
pub(super) fn allows_decimal_comma(delimiter: u8) -> bool {
    delimiter != b','
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::ingest::csv_table::text::lines;

    #[test]
    fn quoted_fields_keep_delimiters_and_trailing_cells_drop() {
        assert_eq!(
            split("\"Freq, Hz\",\"Re(Z)\", \"Im(Z)\" ,", b','),
            vec!["Freq, Hz", "Re(Z)", "Im(Z)"]
        );
        assert_eq!(split("1;2;;", b';'), vec!["1", "2"]);
        assert_eq!(split("1;;3", b';'), vec!["1", "", "3"]);
        assert!(split("", b',').is_empty());
        // A stray quote does not swallow the lines after it.
        let lines = ["a;\"b", "1;2", "3;4"];
        assert_eq!(
            split_lines(&lines, b';'),
            vec![vec!["a", "b"], vec!["1", "2"], vec!["3", "4"]]
        );
        assert_eq!(
            split_lines(&["x,\"y,z\"", "1,2"], b','),
            vec![vec!["x", "y,z"], vec!["1", "2"]]
        );
    }

    #[test]
    fn sniff_prefers_semicolon_when_comma_is_decimal() {
        let text = "Freq;R;X\n1,5E6;12,3;4,5\n2,5E6;13,1;5,5";
        assert_eq!(sniff(&lines(text)), Some(b';'));
        let text = "Measured on bench 2, port 1\nf,re,im\n1e6,1,2\n2e6,1,2";
        assert_eq!(sniff(&lines(text)), Some(b','));
        assert_eq!(sniff(&lines("f\tre\tim\n1\t2,5\t3")), Some(b'\t'));
        assert_eq!(sniff(&lines("just words\nmore words")), None);
    }

    #[test]
    fn numbers_with_point_or_comma() {
        assert_eq!(number("1.5e6", false), Some((1.5e6, false)));
        assert_eq!(number("+2", false), Some((2.0, false)));
        assert_eq!(number("1,5E6", true), Some((1.5e6, true)));
        assert_eq!(number("-0,25", true), Some((-0.25, true)));
        assert_eq!(number("1,5", false), None);
        assert_eq!(number("1.000,5", true), None);
        assert_eq!(number("n/a", true), None);
        assert_eq!(number("", true), None);
    }
}
