//! Numeric lines → one record per frequency. Records are counted by values, not lines, so
//! wrapped rows (version 1 with 3+ ports, version 2 anywhere) read the same as long ones; every
//! frequency starts on a new line. Version 1 two-port files may end in a noise block, which
//! starts where the frequency stops increasing on a five-number line; it is counted and skipped.

use super::keywords::MatrixFormat;
use super::scan::{DataLine, Scanned};
use crate::error::Diagnostic;

/// The numbers of one frequency, as written (frequency in the file's unit).
#[derive(Debug, Clone, PartialEq)]
pub(super) struct Record {
    pub no: usize,
    pub freq: f64,
    pub values: Vec<f64>,
}

#[derive(Debug, Clone, PartialEq)]
pub(super) struct Records {
    pub ports: usize,
    pub records: Vec<Record>,
    /// Noise-parameter frequencies that were skipped (version 1 block or `[Noise Data]`).
    pub noise_points: usize,
}

/// Numbers in one noise row: frequency, NFmin (dB), |Γopt|, ∠Γopt, Rn (Touchstone 1.1/2.0).
const NOISE_ROW_VALUES: usize = 5;

/// Complex entries each frequency lists for `ports` ports in `format`.
pub(super) fn entries(ports: usize, format: MatrixFormat) -> usize {
    match format {
        MatrixFormat::Full => ports * ports,
        MatrixFormat::Lower | MatrixFormat::Upper => ports * (ports + 1) / 2,
    }
}

pub(super) fn assemble(scanned: &Scanned, ports_hint: Option<usize>) -> Result<Records, Diagnostic> {
    let h = &scanned.header;
    if scanned.network.is_empty() {
        return Err(Diagnostic::new("the file holds no network data, only a header")
            .line(h.option_no)
            .expected("one line of numbers per frequency after the header")
            .hint("export the sweep again; the file may have been cut short"));
    }
    let ports = match (h.version.is_some(), h.ports) {
        (true, Some((n, _))) => n,
        _ => v1_ports(&scanned.network, ports_hint)?,
    };
    let per = 1 + 2 * entries(ports, h.matrix_format);
    let v1_noise_possible = h.version.is_none() && ports == 2;
    let mut records: Vec<Record> = Vec::new();
    let mut open: Option<Record> = None;
    let mut noise_points = 0;
    for (i, line) in scanned.network.iter().enumerate() {
        let rec = match open.take() {
            Some(mut rec) => {
                rec.values.extend_from_slice(&line.values);
                rec
            }
            None => {
                let freq = line.values[0];
                let after_last = records.last().is_some_and(|r| freq <= r.freq);
                if v1_noise_possible && after_last && line.values.len() == NOISE_ROW_VALUES {
                    noise_points = count_noise_rows(&scanned.network[i..])?;
                    break;
                }
                Record {
                    no: line.no,
                    freq,
                    values: line.values[1..].to_vec(),
                }
            }
        };
        if rec.values.len() + 1 > per {
            return Err(too_many(line, &rec, ports, per));
        }
        if rec.values.len() + 1 == per {
            records.push(rec);
        } else {
            open = Some(rec);
        }
    }
    if let Some(rec) = open {
        return Err(Diagnostic::new(format!(
            "the data of the last frequency ({}) stop after {} of {} numbers",
            rec.freq,
            rec.values.len() + 1,
            per
        ))
        .line(rec.no)
        .expected(format!("{} numbers per frequency for a {}-port file", per, ports))
        .hint("the file may have been cut short, or the number of ports is wrong"));
    }
    if !scanned.noise.is_empty() {
        noise_points = count_noise_rows(&scanned.noise)?;
    }
    check_frequency_count(scanned, records.len())?;
    Ok(Records {
        ports,
        records,
        noise_points,
    })
}

/// Version 1 port count: the file name's .sNp when known, else the layout of the first
/// frequency (its first line holds an odd count — the frequency and pairs — and its
/// continuation lines even counts).
fn v1_ports(lines: &[DataLine], hint: Option<usize>) -> Result<usize, Diagnostic> {
    if let Some(n) = hint {
        return Ok(n);
    }
    let first = &lines[0];
    let continuation: usize = lines[1..]
        .iter()
        .take_while(|l| l.values.len() % 2 == 0)
        .map(|l| l.values.len())
        .sum();
    let total = first.values.len() + continuation;
    let n = (((total.saturating_sub(1)) / 2) as f64).sqrt().round() as usize;
    if n == 0 || 1 + 2 * n * n != total {
        return Err(Diagnostic::new(format!(
            "cannot tell the number of ports: the first frequency has {} numbers",
            total
        ))
        .line(first.no)
        .expected("1 + 2·N² numbers per frequency for an N-port file (3 for 1 port, 9 for 2 ports)")
        .hint("name the file .sNp with N the number of ports (e.g. .s2p)"));
    }
    Ok(n)
}

fn too_many(line: &DataLine, rec: &Record, ports: usize, per: usize) -> Diagnostic {
    Diagnostic::new(format!(
        "this line brings the frequency {} (from line {}) to {} numbers, more than one frequency needs",
        rec.freq,
        rec.no,
        rec.values.len() + 1
    ))
    .line(line.no)
    .expected(format!(
        "{} numbers per frequency for a {}-port file (the frequency, then a pair per matrix entry)",
        per, ports
    ))
    .hint(
        "check the number of ports (the N in .sNp, or [Number of Ports]) and that each frequency starts on a new line",
    )
}

fn count_noise_rows(lines: &[DataLine]) -> Result<usize, Diagnostic> {
    for line in lines {
        if line.values.len() != NOISE_ROW_VALUES {
            return Err(
                Diagnostic::new(format!("a noise-parameter line with {} numbers", line.values.len()))
                    .line(line.no)
                    .expected("5 numbers per noise line: frequency, NFmin (dB), |Γopt|, ∠Γopt, Rn")
                    .hint("noise data follow the network data of a two-port file; check for a stray line"),
            );
        }
    }
    Ok(lines.len())
}

fn check_frequency_count(scanned: &Scanned, found: usize) -> Result<(), Diagnostic> {
    if let Some((declared, no)) = scanned.header.frequencies {
        if declared != found {
            return Err(Diagnostic::new(format!(
                "[Number of Frequencies] says {} but the network data hold {}",
                declared, found
            ))
            .line(no)
            .expected(format!("{} frequencies after [Network Data]", declared))
            .hint("correct the count, or look for missing or extra data lines"));
        }
    }
    Ok(())
}
