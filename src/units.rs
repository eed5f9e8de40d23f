//! Engineering notation on input: `10MHz`, `25mm`, `35nH`, `2.2pF`, `8um`, `1.5k`.
//! Everything inside the crate is SI; this is the one place text with units becomes numbers.

/// SI prefix multipliers. `u` and `µ`/`μ` are micro; `M` is mega and `m` milli (case matters).
fn prefix_scale(p: &str) -> Option<f64> {
    Some(match p {
        "" => 1.0,
        "f" => 1e-15,
        "p" => 1e-12,
        "n" => 1e-9,
        "u" | "µ" | "μ" => 1e-6,
        "m" => 1e-3,
        "k" | "K" => 1e3,
        "M" => 1e6,
        "G" | "g" => 1e9,
        "T" => 1e12,
        _ => return None,
    })
}

/// Parse `text` as a quantity in `unit` (e.g. "Hz", "H", "F", "m", "ohm"), accepting an optional
/// SI prefix and the unit symbol in any letter case. A bare number is taken as SI.
/// Lengths also accept `in` (inch). Returns a short explanation on failure.
pub fn parse_quantity(text: &str, unit: &str) -> Result<f64, String> {
    let t = text.trim();
    if t.is_empty() {
        return Err(format!("empty value; expected a number with optional unit, e.g. 10{}", unit));
    }
    let split = t
        .char_indices()
        .find(|&(i, c)| {
            !(c.is_ascii_digit() || c == '.' || c == '+' || c == '-' || c == '_')
                && !((c == 'e' || c == 'E') && is_exponent(t, i))
        })
        .map(|(i, _)| i)
        .unwrap_or(t.len());
    let (num, suffix) = t.split_at(split);
    let value: f64 = num
        .replace('_', "")
        .parse()
        .map_err(|_| format!("'{}' is not a number with a unit; expected e.g. 10M{} or 1.5e6", text, unit))?;
    let suffix = suffix.trim();
    let scale = suffix_scale(suffix, unit)
        .ok_or_else(|| format!("unknown unit '{}' in '{}'; expected {} with an SI prefix (f p n u m k M G)", suffix, text, unit))?;
    let v = value * scale;
    if !v.is_finite() {
        return Err(format!("'{}' is not finite", text));
    }
    Ok(v)
}

fn is_exponent(t: &str, i: usize) -> bool {
    // 'e' is an exponent only when digits precede it and a digit or sign follows it.
    let before = t[..i].chars().last().map(|c| c.is_ascii_digit() || c == '.').unwrap_or(false);
    let after = t[i + 1..].chars().next().map(|c| c.is_ascii_digit() || c == '+' || c == '-').unwrap_or(false);
    before && after
}

fn suffix_scale(suffix: &str, unit: &str) -> Option<f64> {
    if suffix.is_empty() {
        return Some(1.0);
    }
    if unit == "m" && suffix.eq_ignore_ascii_case("in") {
        return Some(0.0254);
    }
    let unit_aliases: Vec<&str> = if unit == "ohm" { vec!["ohm", "ohms", "Ω", "R"] } else { vec![unit] };
    for alias in unit_aliases {
        if suffix.len() >= alias.len() {
            let (p, u) = suffix.split_at(suffix.len() - alias.len());
            if u.eq_ignore_ascii_case(alias) {
                // "m" alone for metres must not be read as milli.
                if let Some(s) = prefix_scale(p) {
                    return Some(s);
                }
            }
        }
    }
    // A prefix without the unit symbol ("10M", "35n").
    prefix_scale(suffix)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn prefixes_and_units() {
        assert_eq!(parse_quantity("10MHz", "Hz").unwrap(), 10e6);
        assert_eq!(parse_quantity("10 mhz", "Hz").unwrap(), 10e-3); // case of the prefix matters
        assert!((parse_quantity("35nH", "H").unwrap() - 35e-9).abs() < 1e-20);
        assert!((parse_quantity("25mm", "m").unwrap() - 0.025).abs() < 1e-15);
        assert!((parse_quantity("8um", "m").unwrap() - 8e-6).abs() < 1e-18);
        assert_eq!(parse_quantity("1m", "m").unwrap(), 1.0);
        assert!((parse_quantity("1in", "m").unwrap() - 0.0254).abs() < 1e-15);
        assert_eq!(parse_quantity("1.5e6", "Hz").unwrap(), 1.5e6);
        assert_eq!(parse_quantity("50", "ohm").unwrap(), 50.0);
        assert_eq!(parse_quantity("1kohm", "ohm").unwrap(), 1000.0);
        assert!(parse_quantity("abc", "Hz").is_err());
        assert!(parse_quantity("10 furlongs", "m").is_err());
    }
}
