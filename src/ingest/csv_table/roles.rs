//! What a column holds: the role vocabulary shared by header guessing and `--columns`, and the
//! guess from a header name and unit.

use super::unit::Unit;

/// The measured quantity a value column belongs to.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord)]
pub(super) enum Quantity {
    Z,
    S11,
    S21,
}

impl Quantity {
    pub const ALL: [Quantity; 3] = [Quantity::Z, Quantity::S11, Quantity::S21];

    fn prefix(self) -> &'static str {
        match self {
            Quantity::Z => "z",
            Quantity::S11 => "s11",
            Quantity::S21 => "s21",
        }
    }
    pub fn label(self) -> &'static str {
        match self {
            Quantity::Z => "Z",
            Quantity::S11 => "S11",
            Quantity::S21 => "S21",
        }
    }
}

/// Which part of a complex value a column holds.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord)]
pub(super) enum Part {
    Re,
    Im,
    Mag,
    Db,
    Phase,
}

impl Part {
    /// In words, for messages.
    pub fn describe(self) -> &'static str {
        match self {
            Part::Re => "real part",
            Part::Im => "imaginary part",
            Part::Mag => "magnitude",
            Part::Db => "magnitude in dB",
            Part::Phase => "phase",
        }
    }

    fn suffix(self) -> &'static str {
        match self {
            Part::Re => "re",
            Part::Im => "im",
            Part::Mag => "mag",
            Part::Db => "db",
            Part::Phase => "phase",
        }
    }
}

/// A column's role: the frequency, or one part of Z, S11 or S21.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord)]
pub(super) enum Role {
    Freq,
    Value(Quantity, Part),
}

impl Role {
    /// Every role, in the order the documentation lists them. Z has no dB form.
    pub fn all() -> Vec<Role> {
        let mut roles = vec![Role::Freq];
        for q in Quantity::ALL {
            for p in [Part::Re, Part::Im, Part::Mag, Part::Db, Part::Phase] {
                if !(q == Quantity::Z && p == Part::Db) {
                    roles.push(Role::Value(q, p));
                }
            }
        }
        roles
    }

    /// The name used by `--columns` and in what detection reports: `freq`, `zre`, `s11db`, ...
    pub fn name(self) -> String {
        match self {
            Role::Freq => "freq".into(),
            Role::Value(q, p) => format!("{}{}", q.prefix(), p.suffix()),
        }
    }

    /// A role name as `--columns` takes it, with its aliases: `f`, `frequency`; `re`/`r` and
    /// `im`/`x` for Z; `zdeg`, `s11rad`, ... for a phase in the unit named.
    pub fn parse(text: &str) -> Option<(Role, Option<Unit>)> {
        let t = text.trim().to_ascii_lowercase();
        let z = |p| Some((Role::Value(Quantity::Z, p), None));
        let alias = match t.as_str() {
            "f" | "frequency" => Some((Role::Freq, None)),
            "re" | "r" => z(Part::Re),
            "im" | "x" => z(Part::Im),
            _ => None,
        };
        let named = || {
            Role::all()
                .into_iter()
                .find(|r| r.name() == t)
                .map(|r| (r, None))
        };
        let phase_in = || {
            let (stem, unit) = match (t.strip_suffix("deg"), t.strip_suffix("rad")) {
                (Some(stem), _) => (stem, Unit::Degree),
                (_, Some(stem)) => (stem, Unit::Radian),
                _ => return None,
            };
            let phase = format!("{}phase", stem);
            Role::all()
                .into_iter()
                .find(|r| r.name() == phase)
                .map(|r| (r, Some(unit)))
        };
        alias.or_else(named).or_else(phase_in)
    }

    /// Whether a column in this role may be in `unit`.
    pub fn fits(self, unit: Unit) -> bool {
        use Part::*;
        matches!(
            (self, unit),
            (Role::Freq, Unit::Hertz(_))
                | (Role::Value(Quantity::Z, Re | Im | Mag), Unit::Ohm(_))
                | (Role::Value(_, Phase), Unit::Degree | Unit::Radian)
                | (Role::Value(_, Db), Unit::Decibel)
                | (
                    Role::Value(Quantity::S11 | Quantity::S21, Re | Im | Mag),
                    Unit::Plain
                )
        )
    }

    /// The unit taken when neither the header nor `--columns` gives one.
    pub fn default_unit(self) -> Unit {
        match self {
            Role::Freq => Unit::Hertz(1.0),
            Role::Value(_, Part::Phase) => Unit::Degree,
            Role::Value(_, Part::Db) => Unit::Decibel,
            Role::Value(Quantity::Z, _) => Unit::Ohm(1.0),
            Role::Value(_, _) => Unit::Plain,
        }
    }

    /// The units this role accepts, in words for messages.
    pub fn units_expected(self) -> &'static str {
        match self {
            Role::Freq => "Hz, kHz, MHz or GHz",
            Role::Value(_, Part::Phase) => "deg or rad",
            Role::Value(_, Part::Db) => "dB",
            Role::Value(Quantity::Z, _) => "ohm, kohm, mohm or Mohm",
            Role::Value(_, _) => "none (a plain ratio)",
        }
    }
}

/// All role names, for help texts.
pub(super) fn vocabulary() -> String {
    Role::all()
        .iter()
        .map(|r| r.name())
        .collect::<Vec<_>>()
        .join(", ")
}

/// What a header cell says about its column.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) enum Guess {
    Known(Role),
    /// A part without its quantity ("Phase", "Magnitude (dB)", "Re"): placed by its neighbours.
    Loose(Part),
    /// Understood and not needed: S12 and S22.
    Unused,
    Unknown,
}

const FREQ_WORDS: [&str; 3] = ["freq", "frequency", "f"];
/// Series-equivalent names of impedance analysers.
const RESISTANCE_WORDS: [&str; 3] = ["r", "rs", "resistance"];
const REACTANCE_WORDS: [&str; 3] = ["x", "xs", "reactance"];
/// Quantity words, matched at the start or end of a key (longest first).
const QUANTITY_WORDS: [(&str, Option<Quantity>); 6] = [
    ("impedance", Some(Quantity::Z)),
    ("s11", Some(Quantity::S11)),
    ("s21", Some(Quantity::S21)),
    ("s12", None),
    ("s22", None),
    ("z", Some(Quantity::Z)),
];
const PART_WORDS: [(&str, Part); 23] = [
    ("re", Part::Re),
    ("real", Part::Re),
    ("im", Part::Im),
    ("imag", Part::Im),
    ("imaginary", Part::Im),
    ("mag", Part::Mag),
    ("magnitude", Part::Mag),
    ("abs", Part::Mag),
    ("lin", Part::Mag),
    ("linmag", Part::Mag),
    ("db", Part::Db),
    ("logmag", Part::Db),
    ("dbmag", Part::Db),
    ("magdb", Part::Db),
    ("phase", Part::Phase),
    ("ph", Part::Phase),
    ("ang", Part::Phase),
    ("angle", Part::Phase),
    ("arg", Part::Phase),
    ("phi", Part::Phase),
    ("φ", Part::Phase),
    ("theta", Part::Phase),
    ("θ", Part::Phase),
];

fn part_word(word: &str) -> Option<Part> {
    PART_WORDS.iter().find(|(w, _)| *w == word).map(|&(_, p)| p)
}

/// Guess a column's role from its header key (see [`super::header::key`]) and unit.
pub(super) fn classify(key: &str, unit: Option<Unit>) -> Guess {
    if FREQ_WORDS.contains(&key) {
        return Guess::Known(Role::Freq);
    }
    let (quantity, part) = if RESISTANCE_WORDS.contains(&key) {
        (Some(Some(Quantity::Z)), Some(Part::Re))
    } else if REACTANCE_WORDS.contains(&key) {
        (Some(Some(Quantity::Z)), Some(Part::Im))
    } else if let Some((q, p)) = split_quantity(key) {
        (Some(q), p)
    } else {
        (None, part_word(key))
    };
    // The unit completes a name that leaves the part open: "S11 (dB)", "|S11| dB", "Z (ohm)".
    let part = match (part, unit) {
        (Some(Part::Mag) | None, Some(Unit::Decibel)) => Part::Db,
        (None, Some(Unit::Degree | Unit::Radian)) => Part::Phase,
        (None, _) if quantity == Some(Some(Quantity::Z)) || matches!(unit, Some(Unit::Ohm(_))) => {
            Part::Mag
        }
        (Some(p), _) => p,
        (None, _) => return Guess::Unknown,
    };
    match quantity {
        Some(None) => Guess::Unused,
        Some(Some(Quantity::Z)) if part == Part::Db => Guess::Unknown,
        Some(Some(q)) => Guess::Known(Role::Value(q, part)),
        None if part != Part::Phase && matches!(unit, Some(Unit::Ohm(_))) => {
            Guess::Known(Role::Value(Quantity::Z, part))
        }
        None => Guess::Loose(part),
    }
}

/// Split a key into its quantity word and the part the rest names: "zmag" → (Z, mag),
/// "res11" → (S11, re), "s11" → (S11, none). The rest must be empty or a part word, so a
/// "zoom" column is no impedance. `Some(None)` as quantity is a port pair the tool does not use.
fn split_quantity(key: &str) -> Option<(Option<Quantity>, Option<Part>)> {
    QUANTITY_WORDS.iter().find_map(|&(word, q)| {
        let rest = key.strip_prefix(word).or_else(|| key.strip_suffix(word))?;
        if rest.is_empty() {
            Some((q, None))
        } else {
            part_word(rest).map(|p| (q, Some(p)))
        }
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use Part::*;
    use Quantity::*;

    fn known(q: Quantity, p: Part) -> Guess {
        Guess::Known(Role::Value(q, p))
    }

    #[test]
    fn impedance_names() {
        assert_eq!(classify("zre", Some(Unit::Ohm(1.0))), known(Z, Re));
        assert_eq!(classify("rez", None), known(Z, Re));
        assert_eq!(classify("imz", None), known(Z, Im));
        assert_eq!(classify("rs", None), known(Z, Re));
        assert_eq!(classify("x", None), known(Z, Im));
        assert_eq!(classify("zmag", None), known(Z, Mag));
        assert_eq!(classify("z", None), known(Z, Mag));
        assert_eq!(classify("impedance", Some(Unit::Ohm(1.0))), known(Z, Mag));
        assert_eq!(classify("zphase", Some(Unit::Radian)), known(Z, Phase));
        assert_eq!(classify("mag", Some(Unit::Ohm(1.0))), known(Z, Mag));
        assert_eq!(classify("zoom", None), Guess::Unknown);
    }

    #[test]
    fn scattering_names() {
        assert_eq!(classify("s11re", None), known(S11, Re));
        assert_eq!(classify("res11", None), known(S11, Re));
        assert_eq!(classify("s21real", None), known(S21, Re));
        assert_eq!(classify("s11", Some(Unit::Decibel)), known(S11, Db));
        assert_eq!(classify("s11mag", Some(Unit::Decibel)), known(S11, Db));
        assert_eq!(classify("s11mag", None), known(S11, Mag));
        assert_eq!(classify("s21phase", Some(Unit::Degree)), known(S21, Phase));
        assert_eq!(classify("s11", Some(Unit::Degree)), known(S11, Phase));
        assert_eq!(classify("s11", None), Guess::Unknown);
        assert_eq!(classify("s12db", None), Guess::Unused);
    }

    #[test]
    fn loose_parts_and_frequency() {
        assert_eq!(
            classify("freq", Some(Unit::Hertz(1e6))),
            Guess::Known(Role::Freq)
        );
        assert_eq!(classify("phase", Some(Unit::Radian)), Guess::Loose(Phase));
        assert_eq!(classify("θ", None), Guess::Loose(Phase));
        assert_eq!(classify("magnitude", Some(Unit::Decibel)), Guess::Loose(Db));
        assert_eq!(classify("time", None), Guess::Unknown);
        assert_eq!(classify("ls", None), Guess::Unknown);
    }

    #[test]
    fn override_role_names_and_aliases() {
        assert_eq!(Role::parse("freq"), Some((Role::Freq, None)));
        assert_eq!(Role::parse("R"), Some((Role::Value(Z, Re), None)));
        assert_eq!(Role::parse("s11db"), Some((Role::Value(S11, Db), None)));
        assert_eq!(
            Role::parse("s21deg"),
            Some((Role::Value(S21, Phase), Some(Unit::Degree)))
        );
        assert_eq!(
            Role::parse("zrad"),
            Some((Role::Value(Z, Phase), Some(Unit::Radian)))
        );
        assert_eq!(Role::parse("zdb"), None);
        assert_eq!(Role::all().len(), 15);
        assert!(vocabulary().starts_with("freq, zre, zim, zmag, zphase, s11re"));
    }

    #[test]
    fn units_fit_roles() {
        assert!(Role::Freq.fits(Unit::Hertz(1e6)));
        assert!(!Role::Freq.fits(Unit::Ohm(1.0)));
        assert!(Role::Value(Z, Re).fits(Unit::Ohm(1e3)));
        assert!(!Role::Value(S11, Re).fits(Unit::Ohm(1.0)));
        assert!(Role::Value(S21, Phase).fits(Unit::Radian));
        assert!(!Role::Value(S21, Db).fits(Unit::Degree));
    }
}
