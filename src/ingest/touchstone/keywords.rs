//! Version 2 keyword lines: `[Name] arguments` (Touchstone 2.0/2.1, IBIS Open Forum).
//! Names are case-insensitive; unknown names are refused so nothing is silently misread.

use crate::error::Diagnostic;

/// How a 2-port full matrix is listed: `21_12` (S11 S21 S12 S22, the v1 order) or `12_21`.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(super) enum TwoPortOrder {
    Order21_12,
    Order12_21,
}

/// Which part of the matrix each frequency lists (`[Matrix Format]`).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(super) enum MatrixFormat {
    Full,
    Lower,
    Upper,
}

#[derive(Debug, Clone, PartialEq)]
pub(super) enum Keyword {
    Version(String),
    NumberOfPorts(usize),
    TwoPortOrder(TwoPortOrder),
    NumberOfFrequencies(usize),
    NumberOfNoiseFrequencies(usize),
    /// The words after `[Reference]` on its own line (more may follow on later lines).
    Reference(Vec<String>),
    MatrixFormat(MatrixFormat),
    NetworkData,
    NoiseData,
    BeginInformation,
    EndInformation,
    End,
}

const KNOWN: &str = "[Version], [Number of Ports], [Two-Port Data Order], [Number of Frequencies], \
[Number of Noise Frequencies], [Reference], [Matrix Format], [Network Data], [Noise Data], \
[Begin Information], [End Information], [End]";

/// Parse a line that starts with `[` (comment already removed).
pub(super) fn parse_keyword(text: &str, line: usize) -> Result<Keyword, Diagnostic> {
    let Some((name, args)) = text.strip_prefix('[').and_then(|t| t.split_once(']')) else {
        return Err(Diagnostic::new(format!("keyword line '{}' has no closing ']'", text))
            .line(line)
            .expected("a keyword such as [Number of Ports] 2")
            .hint("close the bracket"));
    };
    let name = name
        .split_whitespace()
        .collect::<Vec<_>>()
        .join(" ")
        .to_ascii_lowercase();
    let args = args.trim();
    let keyword = match name.as_str() {
        "version" => Keyword::Version(single_word(&name, args, line)?.to_string()),
        "number of ports" => Keyword::NumberOfPorts(count(&name, args, line, 1)?),
        "two-port data order" => Keyword::TwoPortOrder(match single_word(&name, args, line)? {
            "21_12" => TwoPortOrder::Order21_12,
            "12_21" => TwoPortOrder::Order12_21,
            other => return Err(bad_argument(&name, other, "21_12 or 12_21", line)),
        }),
        "number of frequencies" => Keyword::NumberOfFrequencies(count(&name, args, line, 1)?),
        "number of noise frequencies" => Keyword::NumberOfNoiseFrequencies(count(&name, args, line, 0)?),
        "reference" => Keyword::Reference(args.split_whitespace().map(str::to_string).collect()),
        "matrix format" => Keyword::MatrixFormat(match single_word(&name, args, line)?.to_ascii_lowercase().as_str() {
            "full" => MatrixFormat::Full,
            "lower" => MatrixFormat::Lower,
            "upper" => MatrixFormat::Upper,
            other => return Err(bad_argument(&name, other, "Full, Lower or Upper", line)),
        }),
        "mixed-mode order" => {
            return Err(
                Diagnostic::new("mixed-mode (differential/common) data ([Mixed-Mode Order]) is not supported")
                    .line(line)
                    .expected("single-ended network data")
                    .hint("export single-ended S-parameters of the fixture ports instead"),
            )
        }
        "network data" => Keyword::NetworkData,
        "noise data" => Keyword::NoiseData,
        "begin information" => Keyword::BeginInformation,
        "end information" => Keyword::EndInformation,
        "end" => Keyword::End,
        _ => {
            return Err(Diagnostic::new(format!("unknown keyword '[{}]'", name))
                .line(line)
                .expected(format!("one of {}", KNOWN))
                .hint("check the spelling, or start the line with '!' if it is a comment"))
        }
    };
    Ok(keyword)
}

fn single_word<'a>(name: &str, args: &'a str, line: usize) -> Result<&'a str, Diagnostic> {
    let mut words = args.split_whitespace();
    match (words.next(), words.next()) {
        (Some(w), None) => Ok(w),
        _ => Err(
            Diagnostic::new(format!("[{}] needs exactly one argument, found '{}'", name, args))
                .line(line)
                .expected(format!("[{}] <value>", name))
                .hint("write the value on the same line as the keyword"),
        ),
    }
}

fn count(name: &str, args: &str, line: usize, min: usize) -> Result<usize, Diagnostic> {
    let word = single_word(name, args, line)?;
    match word.parse::<usize>() {
        Ok(n) if n >= min => Ok(n),
        _ => Err(bad_argument(name, word, &format!("a whole number ≥ {}", min), line)),
    }
}

fn bad_argument(name: &str, got: &str, expected: &str, line: usize) -> Diagnostic {
    Diagnostic::new(format!("[{}] has the argument '{}'", name, got))
        .line(line)
        .expected(expected.to_string())
        .hint("correct the argument (Touchstone 2.x keyword syntax)")
}

/// Numbers of a `[Reference]` line, also used for its continuation lines.
pub(super) fn reference_values(words: &[String], line: usize) -> Result<Vec<f64>, Diagnostic> {
    words.iter().map(|w| super::options::reference_value(w, line)).collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    // Keyword spellings: Touchstone 2.0 specification (IBIS Open Forum), keyword list.
    #[test]
    fn keywords_are_case_and_space_insensitive() {
        assert_eq!(
            parse_keyword("[number  of PORTS] 4", 1).unwrap(),
            Keyword::NumberOfPorts(4)
        );
        assert_eq!(
            parse_keyword("[Version] 2.1", 1).unwrap(),
            Keyword::Version("2.1".into())
        );
        assert_eq!(
            parse_keyword("[Two-Port Data Order] 12_21", 1).unwrap(),
            Keyword::TwoPortOrder(TwoPortOrder::Order12_21)
        );
        assert_eq!(
            parse_keyword("[Matrix Format] lower", 1).unwrap(),
            Keyword::MatrixFormat(MatrixFormat::Lower)
        );
        assert_eq!(
            parse_keyword("[Reference] 50 75", 1).unwrap(),
            Keyword::Reference(vec!["50".into(), "75".into()])
        );
        assert_eq!(parse_keyword("[Reference]", 1).unwrap(), Keyword::Reference(vec![]));
        assert_eq!(parse_keyword("[END]", 1).unwrap(), Keyword::End);
    }

    #[test]
    fn bad_keywords_and_arguments_are_refused() {
        assert!(parse_keyword("[Mixed-Mode Order] D1,2 C1,2", 9)
            .unwrap_err()
            .message
            .contains("mixed-mode"));
        assert!(parse_keyword("[Colour] red", 9)
            .unwrap_err()
            .message
            .contains("unknown keyword"));
        assert!(parse_keyword("[Number of Ports] two", 9)
            .unwrap_err()
            .message
            .contains("'two'"));
        assert!(parse_keyword("[Number of Ports] 0", 9).is_err());
        assert!(parse_keyword("[Two-Port Data Order] 11_22", 9).is_err());
        assert!(parse_keyword("[Network Data", 9)
            .unwrap_err()
            .message
            .contains("closing"));
    }

    #[test]
    fn reference_words_become_positive_ohms() {
        let words: Vec<String> = vec!["50".into(), "0.01".into()];
        assert_eq!(reference_values(&words, 3).unwrap(), vec![50.0, 0.01]);
        assert!(reference_values(&["(50+5j)".to_string()], 3).is_err());
    }
}
