//! Bytes → numbered lines with comments split off. Touchstone text is ASCII by the standard;
//! real files carry a UTF-8 byte-order mark, CRLF endings or a Latin-1 byte in a comment, so
//! the bytes are decoded lossily and nothing outside comments depends on the encoding.

/// One line of the file: the part before `!` (trimmed) and the comment after it, if any.
#[derive(Debug, Clone, PartialEq)]
pub(super) struct Line {
    /// 1-based line number in the file.
    pub no: usize,
    pub text: String,
    pub comment: Option<String>,
}

const UTF8_BOM: &[u8] = b"\xEF\xBB\xBF";

/// Split the file into lines (LF, CRLF, or bare CR as the only separator).
pub(super) fn split_lines(bytes: &[u8]) -> Vec<Line> {
    let bytes = bytes.strip_prefix(UTF8_BOM).unwrap_or(bytes);
    let decoded = String::from_utf8_lossy(bytes);
    let separator = if decoded.contains('\n') { '\n' } else { '\r' };
    decoded
        .split(separator)
        .enumerate()
        .map(|(i, raw)| {
            let raw = raw.strip_suffix('\r').unwrap_or(raw);
            let (text, comment) = match raw.split_once('!') {
                Some((t, c)) => (t, Some(c.trim().to_string())),
                None => (raw, None),
            };
            Line {
                no: i + 1,
                text: text.trim().to_string(),
                comment,
            }
        })
        .collect()
}

/// Parse one whitespace-separated number of a data or keyword line.
pub(super) fn number(token: &str, line: usize) -> Result<f64, crate::error::Diagnostic> {
    let value: Option<f64> = token.parse().ok();
    match value {
        Some(v) if v.is_finite() => Ok(v),
        _ => {
            let hint = if token.contains(',') {
                "Touchstone numbers use a decimal point and are separated by spaces or tabs"
            } else {
                "check the line for a stray word or a value split in two"
            };
            Err(
                crate::error::Diagnostic::new(format!("'{}' is not a finite number", token))
                    .line(line)
                    .expected("numbers such as 50, -3.2, 1.5e9")
                    .hint(hint),
            )
        }
    }
}

/// All numbers of a line's text.
pub(super) fn numbers(text: &str, line: usize) -> Result<Vec<f64>, crate::error::Diagnostic> {
    text.split_whitespace().map(|t| number(t, line)).collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn bom_crlf_comments_and_latin1_are_handled() {
        let bytes = b"\xEF\xBB\xBF! caf\xE9\r\n# GHz S RI\r\n1 2 3 ! tail\r\n";
        let lines = split_lines(bytes);
        assert_eq!(lines[0].text, "");
        assert!(lines[0].comment.as_deref().unwrap().starts_with("caf"));
        assert_eq!(lines[1].text, "# GHz S RI");
        assert_eq!(
            lines[2],
            Line {
                no: 3,
                text: "1 2 3".into(),
                comment: Some("tail".into())
            }
        );
    }

    #[test]
    fn bare_cr_files_split_into_lines() {
        let lines = split_lines(b"# MHz S RI\r1 0.5 0\r");
        assert_eq!(lines[1].text, "1 0.5 0");
        assert_eq!(lines[1].no, 2);
    }

    #[test]
    fn numbers_reject_words_and_non_finite_values() {
        assert_eq!(numbers("1e9\t.95 -26", 4).unwrap(), vec![1e9, 0.95, -26.0]);
        let e = numbers("1 abc", 7).unwrap_err();
        assert_eq!(e.line, Some(7));
        assert!(e.message.contains("'abc'"));
        assert!(number("inf", 1).is_err());
        assert!(number("0,5", 1).unwrap_err().hint.contains("decimal point"));
    }
}
