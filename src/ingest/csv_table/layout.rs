//! From columns with roles to a layout: the frequency column and one complete pair (re/im,
//! magnitude/phase or dB/phase) of exactly one quantity, each with its unit. Header guessing and
//! `--columns` both end here, so both are checked the same way.

use super::roles::{Part, Quantity, Role};
use super::unit::Unit;
use crate::error::Diagnostic;
use crate::C64;

/// A column given a role by the header or by `--columns`, with the unit stated for it.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) struct Assigned {
    /// 0-based column index.
    pub index: usize,
    pub role: Role,
    pub unit: Option<Unit>,
}

/// A column in use, with the unit its numbers are in.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) struct Column {
    pub index: usize,
    pub role: Role,
    pub unit: Unit,
    /// True when no unit was stated and the role's default was taken.
    pub assumed: bool,
}

/// How the two value columns make a complex number.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) enum Form {
    /// Real and imaginary parts.
    Rect,
    /// Linear magnitude and phase.
    Polar,
    /// Magnitude in dB (20·log10) and phase.
    DbPolar,
}

/// The forms in the order preferred when a file holds more than one (re/im loses nothing).
const FORMS: [(Form, Part, Part); 3] = [
    (Form::Rect, Part::Re, Part::Im),
    (Form::Polar, Part::Mag, Part::Phase),
    (Form::DbPolar, Part::Db, Part::Phase),
];

#[derive(Debug, Clone, PartialEq)]
pub(super) struct Layout {
    pub freq: Column,
    pub quantity: Quantity,
    pub form: Form,
    pub values: [Column; 2],
}

impl Layout {
    pub fn columns(&self) -> [Column; 3] {
        [self.freq, self.values[0], self.values[1]]
    }

    /// The complex value from the two value cells as numbers in their column units:
    /// re + j·im; |v|·e^{jφ}; 10^(dB/20)·e^{jφ} (dB of a voltage ratio, 20·log10).
    pub fn value(&self, a: f64, b: f64) -> C64 {
        let (a, b) = (self.values[0].unit.to_si(a), self.values[1].unit.to_si(b));
        match self.form {
            Form::Rect => C64::new(a, b),
            Form::Polar => C64::from_polar(a, b),
            Form::DbPolar => C64::from_polar(10f64.powf(a / 20.0), b),
        }
    }
}

/// Why no layout could be made, for [`explain`].
#[derive(Debug, Clone, PartialEq)]
pub(super) enum Problem {
    NoFrequency,
    Duplicate {
        role: Role,
        first: usize,
        second: usize,
    },
    Several(Vec<Quantity>),
    /// A value column whose partner is missing (`needs` names the roles that would complete it).
    Missing {
        index: usize,
        role: String,
        needs: String,
    },
    /// A part that does not say its quantity, with the quantities it could belong to.
    Loose {
        index: usize,
        part: Part,
        candidates: Vec<Quantity>,
    },
    Nothing,
    BadUnit {
        index: usize,
        role: Role,
        unit: Unit,
    },
}

/// Choose the layout: one frequency column and one complete quantity.
pub(super) fn build(assigned: &[Assigned]) -> Result<Layout, Problem> {
    for (i, a) in assigned.iter().enumerate() {
        if let Some(b) = assigned[..i].iter().find(|b| b.role == a.role) {
            return Err(Problem::Duplicate {
                role: a.role,
                first: b.index,
                second: a.index,
            });
        }
    }
    let find = |role: Role| assigned.iter().find(|a| a.role == role);
    let complete: Vec<(Quantity, Form, &Assigned, &Assigned)> = Quantity::ALL
        .into_iter()
        .filter_map(|q| {
            FORMS.iter().find_map(|&(form, a, b)| {
                Some((q, form, find(Role::Value(q, a))?, find(Role::Value(q, b))?))
            })
        })
        .collect();
    let (quantity, form, a, b) = match complete.as_slice() {
        [one] => *one,
        [] => return Err(incomplete(assigned)),
        several => return Err(Problem::Several(several.iter().map(|c| c.0).collect())),
    };
    let freq = find(Role::Freq).ok_or(Problem::NoFrequency)?;
    Ok(Layout {
        freq: column(freq)?,
        quantity,
        form,
        values: [column(a)?, column(b)?],
    })
}

fn column(a: &Assigned) -> Result<Column, Problem> {
    let unit = a.unit.unwrap_or_else(|| a.role.default_unit());
    if !a.role.fits(unit) {
        return Err(Problem::BadUnit {
            index: a.index,
            role: a.role,
            unit,
        });
    }
    Ok(Column {
        index: a.index,
        role: a.role,
        unit,
        assumed: a.unit.is_none(),
    })
}

/// The first value column without its partner, or [`Problem::Nothing`].
fn incomplete(assigned: &[Assigned]) -> Problem {
    let mut values: Vec<&Assigned> = assigned.iter().filter(|a| a.role != Role::Freq).collect();
    values.sort_by_key(|a| a.index);
    let Some(first) = values.first() else {
        return Problem::Nothing;
    };
    let Role::Value(q, part) = first.role else {
        return Problem::Nothing;
    };
    let name = |p| Role::Value(q, p).name();
    let needs = match part {
        Part::Re => name(Part::Im),
        Part::Im => name(Part::Re),
        Part::Mag | Part::Db => name(Part::Phase),
        Part::Phase if q == Quantity::Z => name(Part::Mag),
        Part::Phase => format!("{} or {}", name(Part::Db), name(Part::Mag)),
    };
    Problem::Missing {
        index: first.index,
        role: first.role.name(),
        needs,
    }
}

/// The columns of the table as the user sees them, for messages.
pub(super) struct Seen {
    /// Header text per column ("" without a header).
    pub labels: Vec<String>,
    /// The line the columns are named on (the header, or the first data row).
    pub line: usize,
}

impl Seen {
    pub fn label(&self, index: usize) -> String {
        match self.labels.get(index).map(|s| s.as_str()) {
            Some(l) if !l.is_empty() => format!("column {} '{}'", index + 1, l),
            _ => format!("column {}", index + 1),
        }
    }
    pub fn list(&self) -> String {
        let cells: Vec<String> = self
            .labels
            .iter()
            .enumerate()
            .map(|(i, l)| format!("{} '{}'", i + 1, l))
            .collect();
        cells.join(", ")
    }
}

fn quantities(qs: &[Quantity]) -> String {
    qs.iter()
        .map(|q| q.label())
        .collect::<Vec<_>>()
        .join(" and ")
}

/// Turn a problem into a located message; `hint` says how to override.
pub(super) fn explain(problem: &Problem, seen: &Seen, hint: String) -> Diagnostic {
    let (message, expected) = match problem {
        Problem::NoFrequency => (
            format!("no frequency column among the columns: {}", seen.list()),
            "a column named Freq, Frequency or f, e.g. 'Freq (MHz)'".to_string(),
        ),
        Problem::Duplicate { role, first, second } => (
            format!("{} and {} both hold {}; which to use is ambiguous", seen.label(*first), seen.label(*second), role.name()),
            "one column per role".to_string(),
        ),
        Problem::Several(qs) => (
            format!("the columns hold {} completely; which to read is ambiguous (columns: {})", quantities(qs), seen.list()),
            "one measured quantity: Z, S11 or S21".to_string(),
        ),
        Problem::Missing { index, role, needs } => (
            format!("{} holds {} but no column holds {} to go with it", seen.label(*index), role, needs),
            "both halves of a complex value: re/im, magnitude/phase or dB/phase".to_string(),
        ),
        Problem::Loose { index, part, candidates } => {
            let to = match (candidates.is_empty(), part) {
                (true, Part::Db) => "S11 or S21".to_string(),
                (true, _) => "Z, S11 or S21".to_string(),
                (false, _) => quantities(candidates).replace(" and ", " or "),
            };
            (
                format!("{} holds a {} but does not say of which quantity: {}", seen.label(*index), part.describe(), to),
                "a name that says the quantity, e.g. 'S11 dB', '|Z| (ohm)', 'S21 phase [deg]'".to_string(),
            )
        }
        Problem::Nothing => (
            format!("cannot tell what the columns hold: {}", seen.list()),
            "a frequency column and the parts of Z (Re(Z)/Im(Z), R/X, |Z|/phase), S11 or S21 (re/im, dB/phase, mag/phase)"
                .to_string(),
        ),
        Problem::BadUnit { index, role, unit } => (
            format!("{} holds {} but its unit is {}", seen.label(*index), role.name(), unit),
            format!("{} for {}", role.units_expected(), role.name()),
        ),
    };
    Diagnostic::new(message)
        .line(seen.line)
        .expected(expected)
        .hint(hint)
}

#[cfg(test)]
mod tests {
    use super::*;
    use Part::*;
    use Quantity::*;

    fn at(index: usize, role: Role, unit: Option<Unit>) -> Assigned {
        Assigned { index, role, unit }
    }

    #[test]
    fn rect_is_preferred_and_units_default() {
        let cols = [
            at(0, Role::Freq, Some(Unit::Hertz(1e6))),
            at(1, Role::Value(Z, Mag), None),
            at(2, Role::Value(Z, Phase), None),
            at(3, Role::Value(Z, Re), None),
            at(4, Role::Value(Z, Im), Some(Unit::Ohm(1e3))),
        ];
        let l = build(&cols).unwrap();
        assert_eq!((l.quantity, l.form), (Z, Form::Rect));
        assert_eq!(l.values[0].unit, Unit::Ohm(1.0));
        assert!(l.values[0].assumed && !l.values[1].assumed);
        assert_eq!(l.value(2.0, 3.0), C64::new(2.0, 3000.0));
    }

    // Decibels of a voltage ratio are 20·log10 (IEC 60027-3 [from memory]; common practice for S).
    #[test]
    fn db_polar_value() {
        let cols = [
            at(0, Role::Freq, None),
            at(1, Role::Value(S21, Db), None),
            at(2, Role::Value(S21, Phase), None),
        ];
        let l = build(&cols).unwrap();
        let v = l.value(-20.0, 90.0);
        assert!((v - C64::new(0.0, 0.1)).norm() < 1e-15);
    }

    #[test]
    fn problems() {
        let f = at(0, Role::Freq, None);
        let re = at(1, Role::Value(Z, Re), None);
        let im = at(2, Role::Value(Z, Im), None);
        assert_eq!(
            build(&[f, re]),
            Err(Problem::Missing {
                index: 1,
                role: "zre".into(),
                needs: "zim".into()
            })
        );
        let ph = at(1, Role::Value(S11, Phase), None);
        assert!(
            matches!(build(&[f, ph]), Err(Problem::Missing { needs, .. }) if needs == "s11db or s11mag")
        );
        assert_eq!(build(&[f]), Err(Problem::Nothing));
        assert_eq!(build(&[re, im]), Err(Problem::NoFrequency));
        let dup = at(3, Role::Value(Z, Re), None);
        assert!(matches!(
            build(&[f, re, im, dup]),
            Err(Problem::Duplicate {
                first: 1,
                second: 3,
                ..
            })
        ));
        let s = [
            at(3, Role::Value(S11, Re), None),
            at(4, Role::Value(S11, Im), None),
        ];
        assert_eq!(
            build(&[f, re, im, s[0], s[1]]),
            Err(Problem::Several(vec![Z, S11]))
        );
        let bad = at(0, Role::Freq, Some(Unit::Ohm(1.0)));
        assert!(matches!(
            build(&[bad, re, im]),
            Err(Problem::BadUnit { index: 0, .. })
        ));
    }
}
