//! The option line `# <unit> <parameter> <format> R <ohms>` (Touchstone v1.1 and v2.x; PHYSICS.md
//! §3). Fields may come in any order, in any case; a missing field takes its default
//! (GHz, S, MA, R 50). Several numbers after `R` give one reference per port (v1.1 style).

use super::text::number;
use crate::error::Diagnostic;

/// Network parameter kind. H and G (hybrid) are refused when the line is read.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(super) enum Param {
    S,
    Y,
    Z,
}

/// How each complex number is written: real/imaginary, magnitude/degrees, dB/degrees.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(super) enum Format {
    Ri,
    Ma,
    Db,
}

#[derive(Debug, Clone, PartialEq)]
pub(super) struct OptionLine {
    /// Hz per frequency unit of the file.
    pub unit_hz: f64,
    pub unit_name: &'static str,
    pub param: Param,
    pub format: Format,
    /// Numbers after `R`: none (default 50 Ω), one for every port, or one per port.
    pub refs: Vec<f64>,
}

/// The reference every port gets when the option line names none.
pub(super) const DEFAULT_REFERENCE_OHM: f64 = 50.0;

const UNITS: [(&str, &str, f64); 4] = [
    ("HZ", "Hz", 1.0),
    ("KHZ", "kHz", 1e3),
    ("MHZ", "MHz", 1e6),
    ("GHZ", "GHz", 1e9),
];
const EXPECTED: &str = "# <Hz|kHz|MHz|GHz> <S|Y|Z> <RI|MA|DB> R <ohms>, e.g. '# MHz S RI R 50'";

impl OptionLine {
    /// Parse the text of a line that starts with `#` (comment already removed).
    pub(super) fn parse(text: &str, line: usize) -> Result<OptionLine, Diagnostic> {
        let body = text.strip_prefix('#').unwrap_or(text);
        let mut unit: Option<(&'static str, f64)> = None;
        let mut param = None;
        let mut format = None;
        let mut refs: Option<Vec<f64>> = None;
        let mut tokens = body.split_whitespace().peekable();
        while let Some(token) = tokens.next() {
            let upper = token.to_ascii_uppercase();
            if let Some(&(_, name, hz)) = UNITS.iter().find(|(u, _, _)| *u == upper) {
                set_once(&mut unit, (name, hz), token, line)?;
            } else if let Some(p) = parse_param(&upper, token, line)? {
                set_once(&mut param, p, token, line)?;
            } else if let Some(f) = parse_format(&upper) {
                set_once(&mut format, f, token, line)?;
            } else if upper == "R" {
                let mut values = Vec::new();
                while let Some(next) = tokens.peek() {
                    if is_complex_reference(next) {
                        return Err(complex_reference(next, line));
                    }
                    if next.parse::<f64>().is_err() {
                        break;
                    }
                    values.push(positive_reference(number(next, line)?, line)?);
                    tokens.next();
                }
                if values.is_empty() {
                    return Err(
                        Diagnostic::new("'R' in the option line is not followed by a reference impedance")
                            .line(line)
                            .expected(EXPECTED)
                            .hint("write the reference in ohms after R, e.g. 'R 50'"),
                    );
                }
                set_once(&mut refs, values, token, line)?;
            } else if is_complex_reference(token) {
                return Err(complex_reference(token, line));
            } else {
                return Err(Diagnostic::new(format!("unknown field '{}' in the option line", token))
                    .line(line)
                    .expected(EXPECTED)
                    .hint("remove the field or start the line with '!' if it is a comment"));
            }
        }
        let (unit_name, unit_hz) = unit.unwrap_or(("GHz", 1e9));
        Ok(OptionLine {
            unit_hz,
            unit_name,
            param: param.unwrap_or(Param::S),
            format: format.unwrap_or(Format::Ma),
            refs: refs.unwrap_or_default(),
        })
    }

    /// The references of `ports` ports, from this line alone (v1 files, or v2 without
    /// `[Reference]`): one value for all, or one per port.
    pub(super) fn references(&self, ports: usize, line: usize) -> Result<Vec<f64>, Diagnostic> {
        match self.refs.len() {
            0 => Ok(vec![DEFAULT_REFERENCE_OHM; ports]),
            1 => Ok(vec![self.refs[0]; ports]),
            n if n == ports => Ok(self.refs.clone()),
            n => Err(Diagnostic::new(format!(
                "the option line gives {} reference impedances for a {}-port file",
                n, ports
            ))
            .line(line)
            .expected(format!("one value after R, or one per port ({})", ports))
            .hint("check the number of ports (the N in .sNp) and the values after R")),
        }
    }

    pub(super) fn param_name(&self) -> &'static str {
        match self.param {
            Param::S => "S",
            Param::Y => "Y",
            Param::Z => "Z",
        }
    }

    pub(super) fn format_name(&self) -> &'static str {
        match self.format {
            Format::Ri => "RI",
            Format::Ma => "MA",
            Format::Db => "DB",
        }
    }
}

fn set_once<T>(slot: &mut Option<T>, value: T, token: &str, line: usize) -> Result<(), Diagnostic> {
    if slot.is_some() {
        return Err(
            Diagnostic::new(format!("the option line sets '{}' a second time", token))
                .line(line)
                .expected(EXPECTED)
                .hint("keep one frequency unit, one parameter, one format and one R field"),
        );
    }
    *slot = Some(value);
    Ok(())
}

fn parse_param(upper: &str, token: &str, line: usize) -> Result<Option<Param>, Diagnostic> {
    match upper {
        "S" => Ok(Some(Param::S)),
        "Y" => Ok(Some(Param::Y)),
        "Z" => Ok(Some(Param::Z)),
        "H" | "G" => {
            let kind = if upper == "H" {
                "H (hybrid)"
            } else {
                "G (inverse hybrid)"
            };
            Err(Diagnostic::new(format!(
                "{} parameters ('{}' in the option line) are not supported",
                kind, token
            ))
            .line(line)
            .expected("S, Y or Z parameters")
            .hint("export the measurement as S-parameters (or Z/Y) from the instrument or simulator"))
        }
        _ => Ok(None),
    }
}

fn parse_format(upper: &str) -> Option<Format> {
    match upper {
        "RI" => Some(Format::Ri),
        "MA" => Some(Format::Ma),
        "DB" => Some(Format::Db),
        _ => None,
    }
}

fn is_complex_reference(token: &str) -> bool {
    token.starts_with('(') || token.to_ascii_lowercase().ends_with('j')
}

fn complex_reference(token: &str, line: usize) -> Diagnostic {
    Diagnostic::new(format!(
        "complex reference impedance '{}' is not part of the Touchstone standard",
        token
    ))
    .line(line)
    .expected("a real reference in ohms after R, e.g. 'R 50'")
    .hint("renormalise the data to a real reference (e.g. 50 ohm) in the tool that wrote the file")
}

fn positive_reference(value: f64, line: usize) -> Result<f64, Diagnostic> {
    if value > 0.0 {
        Ok(value)
    } else {
        Err(
            Diagnostic::new(format!("reference impedance {} ohm is not positive", value))
                .line(line)
                .expected("a positive resistance in ohms, e.g. 50")
                .hint("correct the value; S-parameters need a positive reference"),
        )
    }
}

/// A positive reference from a `[Reference]` value (shared with the keyword reader).
pub(super) fn reference_value(token: &str, line: usize) -> Result<f64, Diagnostic> {
    if is_complex_reference(token) {
        return Err(complex_reference(token, line));
    }
    positive_reference(number(token, line)?, line)
}

#[cfg(test)]
mod tests {
    use super::*;

    // Defaults GHz S MA R 50: Touchstone 1.1 / 2.0 specification, option line section.
    #[test]
    fn bare_hash_takes_the_standard_defaults() {
        let o = OptionLine::parse("#", 3).unwrap();
        assert_eq!((o.unit_hz, o.param, o.format), (1e9, Param::S, Format::Ma));
        assert_eq!(o.references(2, 3).unwrap(), vec![50.0, 50.0]);
    }

    #[test]
    fn fields_in_any_order_and_case_with_tabs() {
        let o = OptionLine::parse("#\tr 75 ri z mhz", 1).unwrap();
        assert_eq!((o.unit_hz, o.param, o.format), (1e6, Param::Z, Format::Ri));
        assert_eq!(o.refs, vec![75.0]);
        assert_eq!(OptionLine::parse("# khz", 1).unwrap().unit_hz, 1e3);
        assert_eq!(OptionLine::parse("# HZ", 1).unwrap().unit_hz, 1.0);
        assert_eq!(OptionLine::parse("# db", 1).unwrap().format, Format::Db);
    }

    #[test]
    fn per_port_references_must_match_the_port_count() {
        let o = OptionLine::parse("# GHz S MA R 50 75", 2).unwrap();
        assert_eq!(o.references(2, 2).unwrap(), vec![50.0, 75.0]);
        let e = o.references(3, 2).unwrap_err();
        assert!(e.message.contains("2 reference impedances for a 3-port"));
    }

    #[test]
    fn hybrid_parameters_are_refused_by_name() {
        let e = OptionLine::parse("# kHz H MA R 1", 2).unwrap_err();
        assert!(e.message.contains("H (hybrid)"), "{}", e.message);
        assert!(e.hint.contains("S-parameters"));
        assert!(OptionLine::parse("# GHz g RI", 2)
            .unwrap_err()
            .message
            .contains("G (inverse hybrid)"));
    }

    #[test]
    fn complex_and_bad_references_are_refused() {
        let e = OptionLine::parse("# GHz S RI R (50+50j)", 2).unwrap_err();
        assert!(e.message.contains("complex reference"), "{}", e.message);
        assert!(OptionLine::parse("# GHz S RI R", 2)
            .unwrap_err()
            .message
            .contains("not followed"));
        assert!(OptionLine::parse("# GHz S RI R 0", 2)
            .unwrap_err()
            .message
            .contains("not positive"));
        assert!(OptionLine::parse("# GHz S RI R 50 50+10j", 2)
            .unwrap_err()
            .message
            .contains("complex"));
    }

    #[test]
    fn unknown_or_repeated_fields_are_refused() {
        assert!(OptionLine::parse("# GHz S XY", 5)
            .unwrap_err()
            .message
            .contains("unknown field 'XY'"));
        assert!(OptionLine::parse("# GHz MHz", 5)
            .unwrap_err()
            .message
            .contains("second time"));
    }
}
