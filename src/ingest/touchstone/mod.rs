//! Touchstone reader (IBIS Open Forum, an open standard: version 1.0/1.1 `.sNp` files and
//! version 2.0/2.1 files with `[Version]` keywords). Any number of ports is parsed into a
//! [`Network`] of S matrices at the port references; [`read_sweep`] keeps what the tool
//! measures with (1 or 2 ports, or a chosen pair of a larger network).
//!
//! Stages, one file each: `text` (bytes → lines, comments split off), `options` (the `#`
//! line), `keywords` + `scan` (version 2 header and the data sections), `records` (numbers
//! → one record per frequency, noise skipped), `matrix` (record → S), `sweep` (network →
//! [`Sweep`]).

use super::{IngestError, ReadOptions, SourceInfo, Sweep};
use crate::error::Diagnostic;
use crate::C64;
use std::path::Path;

mod keywords;
mod matrix;
mod options;
mod records;
mod scan;
mod sweep;
mod text;

/// A parsed Touchstone file: S matrices at the port references, whatever the file held.
#[derive(Debug, Clone, PartialEq)]
pub struct Network {
    /// "1.0", "1.1" (version 1 with one reference per port), "2.0" or "2.1".
    pub version: String,
    pub ports: usize,
    pub freq_hz: Vec<f64>,
    /// Per frequency, the row-major n×n S matrix at the references `z0`.
    pub s: Vec<Vec<C64>>,
    /// Reference impedance per port, ohms.
    pub z0: Vec<f64>,
    /// The option line as written (comment removed, blanks collapsed), e.g. "# MHz S RI R 50" or "#".
    pub option_line: String,
    /// Things read past that the user should know (noise data skipped, non-standard comments).
    pub notes: Vec<String>,
}

/// A network with what the reader saw, for [`read_sweep`]'s report.
struct Parsed {
    network: Network,
    /// "Touchstone v1.0, 2 ports, GHz, S, MA, R 50 50 (option line '#')".
    description: String,
    /// The line that fixed the port count (for refusals about ports).
    ports_line: usize,
}

/// Parse a whole Touchstone file. Version 1 files take their port count from the data layout
/// (or one reference per port on the option line); [`parse_with_ports`] takes it from the name.
pub fn parse(bytes: &[u8]) -> Result<Network, IngestError> {
    parse_with_ports(bytes, None)
}

/// Parse with the port count a version 1 file's name gives (`.s2p` → 2); version 2 files say
/// it themselves with `[Number of Ports]`.
pub fn parse_with_ports(bytes: &[u8], ports: Option<usize>) -> Result<Network, IngestError> {
    Ok(read_network(bytes, ports)?.network)
}

/// The N of a `.sNp` file name (also `.yNp`/`.zNp`, which some tools write).
pub fn ports_from_extension(path: &Path) -> Option<usize> {
    let ext = path.extension()?.to_string_lossy().to_ascii_lowercase();
    let digits = ext.strip_prefix(['s', 'y', 'z', 'h', 'g'])?.strip_suffix('p')?;
    digits.parse().ok().filter(|&n| n > 0)
}

/// True when the file should be read as Touchstone: a `.sNp`/`.ts` name, or content whose first
/// non-comment line is `[Version]` or a valid option line followed by data or a keyword.
pub fn looks_like_touchstone(path: &Path, bytes: &[u8]) -> bool {
    let ext = path
        .extension()
        .map(|e| e.to_string_lossy().to_ascii_lowercase())
        .unwrap_or_default();
    if ext == "ts" || ports_from_extension(path).is_some() {
        return true;
    }
    const SNIFF_BYTES: usize = 64 * 1024;
    let lines = text::split_lines(&bytes[..bytes.len().min(SNIFF_BYTES)]);
    let mut meaningful = lines.iter().filter(|l| !l.text.is_empty());
    match meaningful.next() {
        Some(first) if first.text.starts_with('[') => {
            matches!(
                keywords::parse_keyword(&first.text, first.no),
                Ok(keywords::Keyword::Version(_))
            )
        }
        Some(first) if first.text.starts_with('#') => {
            options::OptionLine::parse(&first.text, first.no).is_ok()
                && meaningful.next().map_or(true, |next| {
                    next.text
                        .starts_with(|c: char| c.is_ascii_digit() || "+-.[".contains(c))
                })
        }
        _ => false,
    }
}

/// Parse a Touchstone file into a sweep: 1 port → S11, 2 ports → the 2×2 S matrix, more ports
/// only with a chosen pair (`opts.ports`). A 0 Hz point is dropped with a warning.
pub fn read_sweep(bytes: &[u8], source: SourceInfo, opts: &ReadOptions) -> Result<Sweep, IngestError> {
    let parsed = read_network(bytes, ports_from_extension(&source.path))?;
    sweep::to_sweep(parsed.network, parsed.description, parsed.ports_line, source, opts)
}

fn read_network(bytes: &[u8], ports_hint: Option<usize>) -> Result<Parsed, Diagnostic> {
    let lines = text::split_lines(bytes);
    let scanned = scan::scan(&lines)?;
    let recs = records::assemble(&scanned, ports_hint)?;
    let h = &scanned.header;
    let z0 = match &h.reference {
        Some(r) => r.clone(),
        None => h.option.references(recs.ports, h.option_no)?,
    };
    let converter = matrix::Converter::new(h, recs.ports, &z0)?;
    let s = recs
        .records
        .iter()
        .map(|r| converter.s_matrix(r))
        .collect::<Result<Vec<_>, _>>()?;
    let version = match &h.version {
        Some(v) => v.clone(),
        None if h.option.refs.len() > 1 => "1.1".to_string(),
        None => "1.0".to_string(),
    };
    let mut notes = Vec::new();
    notes.extend(noise_note(&scanned, recs.noise_points));
    notes.extend(port_impedance_note(&scanned.port_impedance_comments, &z0));
    let description = describe(&version, recs.ports, &h.option, &z0, &h.option_text);
    let network = Network {
        version,
        ports: recs.ports,
        freq_hz: recs.records.iter().map(|r| r.freq * h.option.unit_hz).collect(),
        s,
        z0,
        option_line: h.option_text.clone(),
        notes,
    };
    let ports_line = h.ports.map_or(h.option_no, |(_, no)| no);
    Ok(Parsed {
        network,
        description,
        ports_line,
    })
}

fn describe(version: &str, ports: usize, o: &options::OptionLine, z0: &[f64], option_text: &str) -> String {
    let refs: Vec<String> = z0.iter().map(|r| format!("{}", r)).collect();
    format!(
        "Touchstone v{}, {} port{}, {}, {}, {}, R {} (option line '{}')",
        version,
        ports,
        if ports == 1 { "" } else { "s" },
        o.unit_name,
        o.param_name(),
        o.format_name(),
        refs.join(" "),
        option_text
    )
}

fn noise_note(scanned: &scan::Scanned, skipped: usize) -> Vec<String> {
    let mut notes = Vec::new();
    if skipped > 0 {
        notes.push(format!(
            "skipped the noise parameters ({} frequencies); only network data are used",
            skipped
        ));
    }
    if let Some((declared, no)) = scanned.header.noise_frequencies {
        if declared != skipped {
            notes.push(format!(
                "[Number of Noise Frequencies] on line {} says {} but the file holds {} noise lines",
                no, declared, skipped
            ));
        }
    }
    notes
}

/// Some simulators write `! Port Impedance re im ...` comments per frequency. Comments carry no
/// meaning in the standard, so the data are read at the header's references; say so when the
/// comments disagree with them.
fn port_impedance_note(comments: &[(usize, String)], z0: &[f64]) -> Option<String> {
    let n = z0.len();
    for (no, text) in comments {
        let Ok(values) = text::numbers(text, *no) else { continue };
        let pairs: Vec<C64> = values.chunks_exact(2).map(|p| C64::new(p[0], p[1])).collect();
        let per_port: Vec<C64> = match pairs.len() {
            len if len == n => pairs,
            len if len == n * n => (0..n).map(|i| pairs[i * n + i]).collect(),
            _ => continue,
        };
        if let Some((port, z)) = per_port
            .iter()
            .enumerate()
            .find(|(i, z)| (**z - z0[*i]).norm() > 1e-9 * z0[*i])
        {
            return Some(format!(
                "'! Port Impedance' comments (first on line {}: {}{:+}j ohm at port {}) differ from the \
                 Touchstone reference ({} ohm); comments are not part of the standard, so the data are \
                 read at the header's reference",
                no,
                z.re,
                z.im,
                port + 1,
                z0[port]
            ));
        }
    }
    None
}

#[cfg(test)]
mod tests;
