//! Units a CSV column may state, in its header cell or in a units row, and their scale to SI.

use std::fmt;

/// A column's unit. Frequencies and resistances carry their multiplier to Hz and ohms.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) enum Unit {
    Hertz(f64),
    Ohm(f64),
    Degree,
    Radian,
    Decibel,
    /// A plain ratio (a reflection or transmission coefficient): `-`, `U`, `lin`.
    Plain,
}

/// Words that spell ohm, longest first so `ohms` is not read as `ohm` + `s`.
const OHM_WORDS: [&str; 4] = ["ohms", "ohm", "Ω", "Ω"];

impl Unit {
    /// Recognise a unit as exports write it. Frequency units ignore letter case, as Touchstone's
    /// do (`MHZ`, `mhz`: nobody measures ferrites in millihertz); resistance prefixes keep it
    /// (`mohm` milli, `Mohm` mega).
    pub fn parse(text: &str) -> Option<Unit> {
        let t = text.trim();
        let unit = match t.to_lowercase().as_str() {
            "hz" => Unit::Hertz(1.0),
            "khz" => Unit::Hertz(1e3),
            "mhz" => Unit::Hertz(1e6),
            "ghz" => Unit::Hertz(1e9),
            "deg" | "deg." | "degree" | "degrees" | "°" => Unit::Degree,
            "rad" | "radian" | "radians" => Unit::Radian,
            "db" => Unit::Decibel,
            "-" | "u" | "lin" | "linear" => Unit::Plain,
            _ => return ohm(t),
        };
        Some(unit)
    }

    /// Convert a value in this unit to SI (Hz, ohm, radian; dB and ratios unchanged).
    pub fn to_si(self, value: f64) -> f64 {
        match self {
            Unit::Hertz(scale) | Unit::Ohm(scale) => value * scale,
            Unit::Degree => value.to_radians(),
            Unit::Radian | Unit::Decibel | Unit::Plain => value,
        }
    }
}

fn ohm(t: &str) -> Option<Unit> {
    let prefix = OHM_WORDS.iter().find_map(|w| {
        let cut = t.len().checked_sub(w.len())?;
        (t.is_char_boundary(cut) && t[cut..].eq_ignore_ascii_case(w)).then(|| &t[..cut])
    })?;
    if !matches!(prefix, "" | "m" | "k" | "K" | "M") {
        return None;
    }
    // The SI prefixes live in one place: crate::units.
    crate::units::parse_quantity(&format!("1{}ohm", prefix), "ohm")
        .ok()
        .map(Unit::Ohm)
}

impl fmt::Display for Unit {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let scaled = |scale: f64, names: [&str; 5]| {
            let i = [1e-3, 1.0, 1e3, 1e6, 1e9].iter().position(|&s| s == scale);
            i.map(|i| names[i].to_string())
                .unwrap_or_else(|| format!("×{}", scale))
        };
        let text = match *self {
            Unit::Hertz(s) => scaled(s, ["mHz", "Hz", "kHz", "MHz", "GHz"]),
            Unit::Ohm(s) => scaled(s, ["mohm", "ohm", "kohm", "Mohm", "Gohm"]),
            Unit::Degree => "deg".into(),
            Unit::Radian => "rad".into(),
            Unit::Decibel => "dB".into(),
            Unit::Plain => "lin".into(),
        };
        f.write_str(&text)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn frequency_units_ignore_case_like_touchstone() {
        assert_eq!(Unit::parse("MHz"), Some(Unit::Hertz(1e6)));
        assert_eq!(Unit::parse("mhz"), Some(Unit::Hertz(1e6)));
        assert_eq!(Unit::parse(" GHZ "), Some(Unit::Hertz(1e9)));
        assert_eq!(Unit::parse("kHz").map(|u| u.to_si(2.0)), Some(2000.0));
    }

    #[test]
    fn resistance_prefixes_keep_case() {
        assert_eq!(Unit::parse("Ohm"), Some(Unit::Ohm(1.0)));
        assert_eq!(Unit::parse("ohms"), Some(Unit::Ohm(1.0)));
        assert_eq!(Unit::parse("Ω"), Some(Unit::Ohm(1.0)));
        assert_eq!(Unit::parse("kOhm"), Some(Unit::Ohm(1e3)));
        assert_eq!(Unit::parse("mohm"), Some(Unit::Ohm(1e-3)));
        assert_eq!(Unit::parse("Mohm"), Some(Unit::Ohm(1e6)));
        assert_eq!(Unit::parse("Gohm"), None);
        assert_eq!(Unit::parse("Z"), None);
        assert_eq!(Unit::parse("S11"), None);
    }

    #[test]
    fn angles_decibels_and_ratios() {
        assert_eq!(Unit::parse("°"), Some(Unit::Degree));
        assert_eq!(Unit::parse("rad"), Some(Unit::Radian));
        assert_eq!(Unit::parse("dB"), Some(Unit::Decibel));
        assert_eq!(Unit::parse("U"), Some(Unit::Plain));
        assert!((Unit::Degree.to_si(180.0) - std::f64::consts::PI).abs() < 1e-15);
        assert_eq!(Unit::Hertz(1e6).to_string(), "MHz");
        assert_eq!(Unit::Ohm(1e3).to_string(), "kohm");
        // What is displayed parses back, so a suggested --columns can carry it.
        for u in [
            Unit::Hertz(1e9),
            Unit::Ohm(1e-3),
            Unit::Degree,
            Unit::Radian,
            Unit::Decibel,
            Unit::Plain,
        ] {
            assert_eq!(Unit::parse(&u.to_string()), Some(u));
        }
    }
}
