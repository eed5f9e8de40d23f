//! Roles from the header names, when `--columns` is not given. A part that does not say its
//! quantity ("Phase") joins the one quantity that has a magnitude; anything still unclear is an
//! error that lists the columns and shows an override for this very file.

use super::header::{key, Header};
use super::layout::{self, Assigned, Layout, Problem, Seen};
use super::roles::{classify, vocabulary, Guess, Part, Quantity, Role};

/// The layout the header names, or a located explanation with an example `--columns`.
pub(super) fn layout(header: &Header, seen: &Seen) -> Result<Layout, crate::error::Diagnostic> {
    let guesses: Vec<Guess> = header
        .cells
        .iter()
        .map(|c| classify(&key(&c.name), c.unit))
        .collect();
    let mut assigned: Vec<Assigned> = Vec::new();
    for (index, guess) in guesses.iter().enumerate() {
        if let Guess::Known(role) = *guess {
            assigned.push(Assigned {
                index,
                role,
                unit: header.cells[index].unit,
            });
        }
    }
    let mut loose: Vec<(usize, Part, Vec<Quantity>)> = Vec::new();
    for (index, guess) in guesses.iter().enumerate() {
        let Guess::Loose(part) = *guess else { continue };
        let owners = if part == Part::Phase {
            quantities_with_magnitude(&assigned)
        } else {
            Vec::new()
        };
        match owners.as_slice() {
            [q] => assigned.push(Assigned {
                index,
                role: Role::Value(*q, part),
                unit: header.cells[index].unit,
            }),
            _ => loose.push((index, part, owners)),
        }
    }
    layout::build(&assigned).map_err(|problem| {
        let problem = match problem {
            Problem::Nothing | Problem::Missing { .. } => loose_problem(&loose).unwrap_or(problem),
            other => other,
        };
        layout::explain(&problem, seen, hint(&guesses, header))
    })
}

fn quantities_with_magnitude(assigned: &[Assigned]) -> Vec<Quantity> {
    let mut qs: Vec<Quantity> = assigned
        .iter()
        .filter_map(|a| match a.role {
            Role::Value(q, Part::Mag | Part::Db) => Some(q),
            _ => None,
        })
        .collect();
    qs.sort();
    qs.dedup();
    qs
}

/// When nothing complete was found, a column of unclear quantity is the likelier cause.
fn loose_problem(loose: &[(usize, Part, Vec<Quantity>)]) -> Option<Problem> {
    let unclear = loose
        .iter()
        .find(|(_, part, owners)| *part != Part::Phase || !owners.is_empty());
    if let Some((index, part, candidates)) = unclear {
        return Some(Problem::Loose {
            index: *index,
            part: *part,
            candidates: candidates.clone(),
        });
    }
    loose.first().map(|&(index, _, _)| Problem::Missing {
        index,
        role: "a phase".into(),
        needs: "a magnitude (zmag, s11db, s11mag, s21db or s21mag)".into(),
    })
}

fn hint(guesses: &[Guess], header: &Header) -> String {
    match example(guesses, header) {
        Some(example) => format!(
            "give the columns explicitly, e.g. --columns \"{}\" (roles: {}; a unit may follow ':')",
            example,
            vocabulary()
        ),
        None => format!(
            "a complex value needs two columns besides the frequency; this table has {}. Roles for --columns: {}",
            header.cells.len(),
            vocabulary()
        ),
    }
}

/// An override that reads this file: the roles the header did make clear, one quantity (the
/// first named, else S11 when a dB column is present, else Z), and freq/zre/zim as a last resort.
fn example(guesses: &[Guess], header: &Header) -> Option<String> {
    let width = header.cells.len();
    if width < 3 {
        return None;
    }
    let first_known = guesses.iter().find_map(|g| match g {
        Guess::Known(Role::Value(q, _)) => Some(*q),
        _ => None,
    });
    let has_db = guesses.contains(&Guess::Loose(Part::Db));
    let quantity = first_known.unwrap_or(if has_db { Quantity::S11 } else { Quantity::Z });
    let mut assigned: Vec<Assigned> = Vec::new();
    for (index, guess) in guesses.iter().enumerate() {
        let role = match *guess {
            Guess::Known(Role::Value(q, p)) if q == quantity => Role::Value(q, p),
            Guess::Known(Role::Freq) => Role::Freq,
            Guess::Loose(p) if !(quantity == Quantity::Z && p == Part::Db) => {
                Role::Value(quantity, p)
            }
            _ => continue,
        };
        if assigned.iter().all(|a| a.role != role) {
            assigned.push(Assigned {
                index,
                role,
                unit: header.cells[index].unit,
            });
        }
    }
    if assigned.iter().all(|a| a.role != Role::Freq) {
        let free = (0..width)
            .find(|i| assigned.iter().all(|a| a.index != *i))
            .unwrap_or(0);
        assigned.push(Assigned {
            index: free,
            role: Role::Freq,
            unit: None,
        });
    }
    if layout::build(&assigned).is_err() {
        let freq = assigned
            .iter()
            .find(|a| a.role == Role::Freq)
            .map_or(0, |a| a.index);
        let mut others = (0..width).filter(|&i| i != freq);
        let (re, im) = (others.next()?, others.next()?);
        assigned = vec![
            Assigned {
                index: freq,
                role: Role::Freq,
                unit: header.cells[freq].unit,
            },
            Assigned {
                index: re,
                role: Role::Value(Quantity::Z, Part::Re),
                unit: header.cells[re].unit,
            },
            Assigned {
                index: im,
                role: Role::Value(Quantity::Z, Part::Im),
                unit: header.cells[im].unit,
            },
        ];
    }
    assigned.sort_by_key(|a| a.index);
    // The override inherits the header's units, so name a unit where the header's is wrong,
    // and always for a frequency whose unit nobody stated.
    let entries: Vec<String> = assigned
        .iter()
        .map(|a| match a.unit {
            Some(u) if !a.role.fits(u) => format!(
                "{}={}:{}",
                a.role.name(),
                a.index + 1,
                a.role.default_unit()
            ),
            None if a.role == Role::Freq => {
                format!("freq={}:{}", a.index + 1, a.role.default_unit())
            }
            _ => format!("{}={}", a.role.name(), a.index + 1),
        })
        .collect();
    Some(entries.join(","))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::ingest::csv_table::header::HeaderCell;

    fn header(names: &[&str]) -> Header {
        Header {
            line: 3,
            units_line: None,
            cells: names.iter().map(|n| HeaderCell::new(n)).collect(),
        }
    }
    fn seen(h: &Header) -> Seen {
        Seen {
            labels: h.cells.iter().map(|c| c.text.clone()).collect(),
            line: h.line,
        }
    }
    fn roles(names: &[&str]) -> Result<Vec<String>, crate::error::Diagnostic> {
        let h = header(names);
        layout(&h, &seen(&h)).map(|l| {
            l.columns()
                .iter()
                .map(|c| format!("{}@{}", c.role.name(), c.index + 1))
                .collect()
        })
    }

    #[test]
    fn loose_phase_joins_the_only_magnitude() {
        assert_eq!(
            roles(&["Freq (MHz)", "|Z| (Ohm)", "Phase (deg)"]).unwrap(),
            ["freq@1", "zmag@2", "zphase@3"]
        );
        assert_eq!(
            roles(&["Frequency", "S11 (dB)", "Phase [rad]"]).unwrap(),
            ["freq@1", "s11db@2", "s11phase@3"]
        );
        assert_eq!(
            roles(&["freq_hz", "z_re_ohm", "z_im_ohm"]).unwrap(),
            ["freq@1", "zre@2", "zim@3"]
        );
        assert_eq!(
            roles(&["Freq", "Ls (H)", "Rs (Ohm)", "Xs (Ohm)", "Q"]).unwrap(),
            ["freq@1", "zre@3", "zim@4"]
        );
    }

    #[test]
    fn unclear_headers_show_an_override_for_the_file() {
        let e = roles(&["Frequency (Hz)", "Magnitude (dB)", "Phase (deg)"]).unwrap_err();
        assert_eq!(e.line, Some(3));
        assert!(
            e.message.contains("column 2 'Magnitude (dB)'"),
            "{}",
            e.message
        );
        assert!(
            e.hint.contains("--columns \"freq=1,s11db=2,s11phase=3\""),
            "{}",
            e.hint
        );

        let e = roles(&["Time", "Voltage", "Current"]).unwrap_err();
        assert!(
            e.message.contains("1 'Time', 2 'Voltage', 3 'Current'"),
            "{}",
            e.message
        );
        assert!(e.hint.contains("freq=1:Hz,zre=2,zim=3"), "{}", e.hint);

        let e = roles(&["Freq (Ohm)", "Re(Z)", "Im(Z)"]).unwrap_err();
        assert!(
            e.hint.contains("--columns \"freq=1:Hz,zre=2,zim=3\""),
            "{}",
            e.hint
        );

        let e = roles(&["Freq (Hz)", "Phase (deg)"]).unwrap_err();
        assert!(
            e.message
                .contains("holds a phase but no column holds a magnitude"),
            "{}",
            e.message
        );

        let e = roles(&["f", "R", "X", "Re(S11)", "Im(S11)"]).unwrap_err();
        assert!(e.message.contains("Z and S11"), "{}", e.message);
        assert!(e.hint.contains("freq=1:Hz,zre=2,zim=3\""), "{}", e.hint);
    }
}
