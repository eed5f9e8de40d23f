//! Bytes → numbered lines, comment lines, and a reference impedance stated in the preamble.
//!
//! Exports come as UTF-8 (with or without a byte-order mark), as UTF-16 from some Windows tools,
//! or in a single-byte code page (a `°` or `µ` in a header). Text that is not valid UTF-8 is read
//! as Latin-1, so every byte maps to one character and no cell is silently mangled.

use crate::error::Diagnostic;

/// One line of the file as written (line ending removed).
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) struct Line<'a> {
    /// 1-based line number in the file.
    pub no: usize,
    pub text: &'a str,
}

pub(super) fn decode(bytes: &[u8]) -> String {
    if let Some(rest) = bytes.strip_prefix(b"\xEF\xBB\xBF") {
        return utf8_or_latin1(rest);
    }
    if let Some(rest) = bytes.strip_prefix(b"\xFF\xFE") {
        return utf16(rest, u16::from_le_bytes);
    }
    if let Some(rest) = bytes.strip_prefix(b"\xFE\xFF") {
        return utf16(rest, u16::from_be_bytes);
    }
    utf8_or_latin1(bytes)
}

fn utf8_or_latin1(bytes: &[u8]) -> String {
    match std::str::from_utf8(bytes) {
        Ok(s) => s.to_string(),
        Err(_) => bytes.iter().map(|&b| b as char).collect(),
    }
}

fn utf16(bytes: &[u8], word: fn([u8; 2]) -> u16) -> String {
    let units: Vec<u16> = bytes.chunks_exact(2).map(|c| word([c[0], c[1]])).collect();
    String::from_utf16_lossy(&units)
}

/// Split on LF or CRLF; a file whose only separator is CR (old exports) splits on CR.
pub(super) fn lines(text: &str) -> Vec<Line<'_>> {
    let separator = if text.contains('\n') { '\n' } else { '\r' };
    text.split(separator)
        .enumerate()
        .map(|(i, raw)| Line {
            no: i + 1,
            text: raw.strip_suffix('\r').unwrap_or(raw),
        })
        .collect()
}

/// Comment lines start with `#` or `!` (leading blanks allowed), anywhere in the file.
pub(super) fn is_comment(text: &str) -> bool {
    let t = text.trim_start();
    t.starts_with('#') || t.starts_with('!')
}

/// Phrases that introduce a reference impedance, compared without letter case.
const REFERENCE_KEYS: [&str; 5] = ["reference impedance", "ref impedance", "zref", "z0", "r0"];

/// The value text after a reference-impedance key, and whether `=` or `:` separated it (then
/// the value must parse). A key must end at a blank, `=` or `:` (`R0805`, `z0_ohm` are not keys).
fn reference_value(body: &str) -> Option<(&str, bool)> {
    let lower = body.to_ascii_lowercase();
    let key = REFERENCE_KEYS.iter().find(|k| lower.starts_with(*k))?;
    let rest = &body[key.len()..];
    let value = rest.trim_start();
    match value.strip_prefix(['=', ':']) {
        Some(v) => Some((v, true)),
        None if value.len() < rest.len() => Some((value, false)),
        None => None,
    }
}

/// A reference impedance stated as `Z0 = 75`, `R0: 50 ohm` or `Reference impedance 50 Ohm` in
/// a comment line or a preamble line (before `header_line`). Returns ohms and the line.
pub(super) fn reference_impedance(
    lines: &[Line],
    header_line: usize,
) -> Result<Option<(f64, usize)>, Diagnostic> {
    let mut found: Option<(f64, usize)> = None;
    for line in lines
        .iter()
        .filter(|l| l.no < header_line || is_comment(l.text))
    {
        let body = line.text.trim().trim_start_matches(['#', '!']).trim();
        let Some((text, separated)) = reference_value(body) else {
            continue;
        };
        let value = crate::units::parse_quantity(text, "ohm")
            .ok()
            .filter(|v| *v > 0.0);
        let value = match (value, separated) {
            (Some(v), _) => v,
            // "Z0 calibration kit" is prose, not a value.
            (None, false) => continue,
            (None, true) => {
                return Err(Diagnostic::new(format!(
                    "the reference impedance '{}' is not a positive resistance",
                    body
                ))
                .line(line.no)
                .expected("a line such as '# Z0 = 50' or '# Z0 = 75 ohm'")
                .hint("correct the value, or delete the line and give --z0"))
            }
        };
        match found {
            Some((first, first_line)) if first != value => {
                return Err(Diagnostic::new(format!(
                    "two different reference impedances: {} ohm on line {} and {} ohm here",
                    first, first_line, value
                ))
                .line(line.no)
                .expected("one reference impedance per file")
                .hint("delete the wrong line, or give --z0 to set it"));
            }
            Some(_) => {}
            None => found = Some((value, line.no)),
        }
    }
    Ok(found)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn bom_utf16_and_latin1_decode() {
        assert_eq!(decode(b"\xEF\xBB\xBFf,z"), "f,z");
        assert_eq!(decode(b"Phase (\xB0)"), "Phase (°)");
        let utf16: Vec<u8> = [0xFF, 0xFE]
            .into_iter()
            .chain("f;Ω".encode_utf16().flat_map(|u| u.to_le_bytes()))
            .collect();
        assert_eq!(decode(&utf16), "f;Ω");
    }

    #[test]
    fn line_endings_and_numbers() {
        let text = "a\r\nb\r\n";
        let l = lines(text);
        assert_eq!((l[1].no, l[1].text), (2, "b"));
        let cr = lines("a\rb");
        assert_eq!((cr[1].no, cr[1].text), (2, "b"));
    }

    #[test]
    fn reference_impedance_from_comments_and_preamble() {
        let text = "Bench 3\nZ0 = 75 Ohm\n# R0: 75\nf,s11re,s11im\n1,0,0";
        let l = lines(text);
        assert_eq!(reference_impedance(&l, 4).unwrap(), Some((75.0, 2)));
        let bad = lines("# Z0 = fifty\nf,a,b");
        let e = reference_impedance(&bad, 2).unwrap_err();
        assert_eq!(e.line, Some(1));
        let clash = lines("# Z0 = 50\n# Z0 = 75\nf,a,b");
        assert_eq!(reference_impedance(&clash, 3).unwrap_err().line, Some(2));
        // A data line is neither a comment nor preamble: a column called Z0 is not read here.
        assert_eq!(reference_impedance(&lines("f,x\nz0:1,2"), 1).unwrap(), None);
        let prose = lines(
            "Reference impedance 75 Ohm\nZ0 calibration kit 3\n# z0_ohm: 20\n# R0805 part\nf,a,b",
        );
        assert_eq!(reference_impedance(&prose, 5).unwrap(), Some((75.0, 1)));
    }
}
