//! One pass over the lines: the option line, version 2 keywords and their checks, and the
//! numeric lines sorted into network data and noise data. Records are assembled later, once the
//! number of ports is known.

use super::keywords::{parse_keyword, reference_values, Keyword, MatrixFormat, TwoPortOrder};
use super::options::OptionLine;
use super::text::{numbers, Line};
use crate::error::Diagnostic;

/// A numeric line of the data sections.
#[derive(Debug, Clone, PartialEq)]
pub(super) struct DataLine {
    pub no: usize,
    pub values: Vec<f64>,
}

/// Everything the header said, with the line each fact came from (for error messages).
#[derive(Debug, Clone, PartialEq)]
pub(super) struct Header {
    /// `Some("2.0" | "2.1")` for version 2 files, None for version 1.
    pub version: Option<String>,
    pub option: OptionLine,
    pub option_text: String,
    pub option_no: usize,
    /// `[Number of Ports]` and its line.
    pub ports: Option<(usize, usize)>,
    pub frequencies: Option<(usize, usize)>,
    pub noise_frequencies: Option<(usize, usize)>,
    pub reference: Option<Vec<f64>>,
    pub matrix_format: MatrixFormat,
    pub two_port_order: Option<TwoPortOrder>,
}

#[derive(Debug, Clone, PartialEq)]
pub(super) struct Scanned {
    pub header: Header,
    pub network: Vec<DataLine>,
    /// Version 2 `[Noise Data]` lines (version 1 noise is found among `network` later).
    pub noise: Vec<DataLine>,
    /// `! Port Impedance ...` comments some simulators write: (line, text after the words).
    pub port_impedance_comments: Vec<(usize, String)>,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Section {
    Header,
    Information,
    Network,
    Noise,
    End,
}

/// Supported `[Version]` arguments.
const VERSIONS: [&str; 2] = ["2.0", "2.1"];

#[derive(Default)]
struct Scanner {
    version: Option<String>,
    option: Option<(OptionLine, String, usize)>,
    ports: Option<(usize, usize)>,
    frequencies: Option<(usize, usize)>,
    noise_frequencies: Option<(usize, usize)>,
    reference: Option<Vec<f64>>,
    /// `[Reference]` still waiting for values on the following lines: (values so far, line).
    reference_open: Option<(Vec<f64>, usize)>,
    matrix_format: Option<MatrixFormat>,
    two_port_order: Option<TwoPortOrder>,
    network: Vec<DataLine>,
    noise: Vec<DataLine>,
    port_impedance_comments: Vec<(usize, String)>,
}

pub(super) fn scan(lines: &[Line]) -> Result<Scanned, Diagnostic> {
    let mut s = Scanner::default();
    let mut section = Section::Header;
    for line in lines {
        if section == Section::End {
            break;
        }
        s.note_port_impedance(line);
        if line.text.is_empty() {
            continue;
        }
        if section == Section::Information {
            if line.text.starts_with('[') && parse_keyword(&line.text, line.no)? == Keyword::EndInformation {
                section = Section::Header;
            }
            continue;
        }
        if s.reference_open.is_some() {
            s.continue_reference(line)?;
        } else if line.text.starts_with('[') {
            section = s.keyword(parse_keyword(&line.text, line.no)?, section, line.no)?;
        } else if line.text.starts_with('#') {
            s.option_line(line)?;
        } else {
            s.data_line(line, section)?;
        }
    }
    s.finish()
}

impl Scanner {
    fn port_count(&self) -> usize {
        self.ports.map_or(0, |(n, _)| n)
    }

    fn note_port_impedance(&mut self, line: &Line) {
        if let Some(comment) = &line.comment {
            let lower = comment.to_ascii_lowercase();
            if let Some(rest) = lower.strip_prefix("port impedance") {
                self.port_impedance_comments.push((line.no, rest.trim().to_string()));
            }
        }
    }

    fn option_line(&mut self, line: &Line) -> Result<(), Diagnostic> {
        if let Some((_, first, first_no)) = &self.option {
            return Err(Diagnostic::new(format!(
                "a second option line '{}' (the first, '{}', is on line {})",
                line.text, first, first_no
            ))
            .line(line.no)
            .expected("exactly one option line per file")
            .hint("delete the option line that does not describe the data"));
        }
        let option = OptionLine::parse(&line.text, line.no)?;
        let written = line.text.split_whitespace().collect::<Vec<_>>().join(" ");
        self.option = Some((option, written, line.no));
        Ok(())
    }

    fn data_line(&mut self, line: &Line, section: Section) -> Result<(), Diagnostic> {
        let values = numbers(&line.text, line.no)?;
        if self.option.is_none() && self.version.is_none() {
            return Err(Diagnostic::new("data before the option line")
                .line(line.no)
                .expected("an option line such as '# MHz S RI R 50' before the first data line")
                .hint("add the option line the instrument would write ('#' alone means GHz S MA R 50)"));
        }
        let target = match (self.version.is_some(), section) {
            (false, _) | (true, Section::Network) => &mut self.network,
            (true, Section::Noise) => &mut self.noise,
            (true, _) => {
                return Err(Diagnostic::new("numbers outside the [Network Data] section")
                    .line(line.no)
                    .expected("a keyword line such as [Number of Frequencies] 101, or [Network Data] before the data")
                    .hint("version 2 files put their data after [Network Data]"))
            }
        };
        target.push(DataLine { no: line.no, values });
        Ok(())
    }

    fn keyword(&mut self, keyword: Keyword, section: Section, no: usize) -> Result<Section, Diagnostic> {
        if let Keyword::Version(v) = keyword {
            return self.version(v, no).map(|_| section);
        }
        if self.version.is_none() {
            return Err(Diagnostic::new("a version 2 keyword in a file without [Version]")
                .line(no)
                .expected("[Version] 2.0 (or 2.1) as the first keyword of a version 2 file")
                .hint("add '[Version] 2.0' before the option line, or remove the keyword for a version 1 file"));
        }
        match keyword {
            Keyword::NumberOfPorts(n) => set_once(&mut self.ports, (n, no), "[Number of Ports]", no)?,
            Keyword::TwoPortOrder(o) => set_once(&mut self.two_port_order, o, "[Two-Port Data Order]", no)?,
            Keyword::NumberOfFrequencies(n) => set_once(&mut self.frequencies, (n, no), "[Number of Frequencies]", no)?,
            Keyword::NumberOfNoiseFrequencies(n) => set_once(
                &mut self.noise_frequencies,
                (n, no),
                "[Number of Noise Frequencies]",
                no,
            )?,
            Keyword::MatrixFormat(f) => set_once(&mut self.matrix_format, f, "[Matrix Format]", no)?,
            Keyword::Reference(words) => self.start_reference(&words, no)?,
            Keyword::NetworkData => {
                self.check_ready_for_data(no)?;
                return Ok(Section::Network);
            }
            Keyword::NoiseData => {
                if section != Section::Network {
                    return Err(order_error("[Noise Data]", "after the [Network Data] section", no));
                }
                return Ok(Section::Noise);
            }
            Keyword::BeginInformation => return Ok(Section::Information),
            Keyword::EndInformation => return Err(order_error("[End Information]", "after [Begin Information]", no)),
            Keyword::End => return Ok(Section::End),
            Keyword::Version(_) => {}
        }
        if matches!(section, Section::Network | Section::Noise) {
            return Err(order_error("this keyword", "before [Network Data]", no));
        }
        Ok(section)
    }

    fn version(&mut self, v: String, no: usize) -> Result<(), Diagnostic> {
        if !VERSIONS.contains(&v.as_str()) {
            return Err(Diagnostic::new(format!("Touchstone version '{}' is not supported", v))
                .line(no)
                .expected("[Version] 2.0 or [Version] 2.1 (version 1 files have no [Version] line)")
                .hint("correct the version, or remove the line for a version 1 file"));
        }
        if self.version.is_some() || !self.network.is_empty() || self.ports.is_some() {
            return Err(order_error(
                "[Version]",
                "once, before any other keyword and the data",
                no,
            ));
        }
        self.version = Some(v);
        Ok(())
    }

    fn start_reference(&mut self, words: &[String], no: usize) -> Result<(), Diagnostic> {
        if self.reference.is_some() {
            return set_once(&mut self.reference, Vec::new(), "[Reference]", no);
        }
        if self.ports.is_none() {
            return Err(order_error("[Reference]", "after [Number of Ports]", no));
        }
        self.reference_open = Some((Vec::new(), no));
        self.add_reference_values(reference_values(words, no)?, no)
    }

    fn continue_reference(&mut self, line: &Line) -> Result<(), Diagnostic> {
        if line.text.starts_with('[') || line.text.starts_with('#') {
            let (got, start) = self.reference_open.clone().unwrap_or_default();
            return Err(Diagnostic::new(format!(
                "[Reference] on line {} gives {} value(s) for {} ports",
                start,
                got.len(),
                self.port_count()
            ))
            .line(line.no)
            .expected("one reference impedance per port, on the [Reference] line or the lines after it")
            .hint("add the missing reference impedances"));
        }
        let words: Vec<String> = line.text.split_whitespace().map(str::to_string).collect();
        self.add_reference_values(reference_values(&words, line.no)?, line.no)
    }

    fn add_reference_values(&mut self, values: Vec<f64>, no: usize) -> Result<(), Diagnostic> {
        let ports = self.port_count();
        let Some((mut got, start)) = self.reference_open.take() else {
            return Ok(());
        };
        got.extend(values);
        if got.len() > ports {
            return Err(
                Diagnostic::new(format!("[Reference] gives {} values for {} ports", got.len(), ports))
                    .line(no)
                    .expected(format!("{} reference impedances, one per port", ports))
                    .hint("remove the extra values or correct [Number of Ports]"),
            );
        }
        if got.len() == ports {
            self.reference = Some(got);
        } else {
            self.reference_open = Some((got, start));
        }
        Ok(())
    }

    fn check_ready_for_data(&self, no: usize) -> Result<(), Diagnostic> {
        if self.option.is_none() {
            return Err(order_error(
                "the option line (e.g. '# GHz S MA R 50')",
                "before [Network Data]",
                no,
            ));
        }
        let Some((ports, _)) = self.ports else {
            return Err(order_error("[Number of Ports]", "before [Network Data]", no));
        };
        if self.frequencies.is_none() {
            return Err(order_error("[Number of Frequencies]", "before [Network Data]", no));
        }
        let full = self.matrix_format.unwrap_or(MatrixFormat::Full) == MatrixFormat::Full;
        if ports == 2 && full && self.two_port_order.is_none() {
            return Err(Diagnostic::new("a version 2 two-port file without [Two-Port Data Order]")
                .line(no)
                .expected("[Two-Port Data Order] 12_21 or 21_12 before [Network Data]")
                .hint("add '[Two-Port Data Order] 21_12' if the data are listed S11 S21 S12 S22 (the version 1 order)"));
        }
        Ok(())
    }

    fn finish(self) -> Result<Scanned, Diagnostic> {
        if let Some((got, start)) = &self.reference_open {
            return Err(Diagnostic::new(format!(
                "[Reference] gives {} value(s) for {} ports",
                got.len(),
                self.port_count()
            ))
            .line(*start)
            .expected("one reference impedance per port")
            .hint("add the missing reference impedances"));
        }
        let Some((option, option_text, option_no)) = self.option else {
            return Err(Diagnostic::new("no option line found")
                .line(1)
                .expected("a line such as '# MHz S RI R 50' before the data")
                .hint("is this a Touchstone file? Add the option line the instrument would write"));
        };
        let header = Header {
            version: self.version,
            option,
            option_text,
            option_no,
            ports: self.ports,
            frequencies: self.frequencies,
            noise_frequencies: self.noise_frequencies,
            reference: self.reference,
            matrix_format: self.matrix_format.unwrap_or(MatrixFormat::Full),
            two_port_order: self.two_port_order,
        };
        Ok(Scanned {
            header,
            network: self.network,
            noise: self.noise,
            port_impedance_comments: self.port_impedance_comments,
        })
    }
}

fn set_once<T>(slot: &mut Option<T>, value: T, name: &str, no: usize) -> Result<(), Diagnostic> {
    if slot.is_some() {
        return Err(Diagnostic::new(format!("{} appears a second time", name))
            .line(no)
            .expected(format!("{} once in the header", name))
            .hint("delete the keyword line that does not describe the data"));
    }
    *slot = Some(value);
    Ok(())
}

fn order_error(what: &str, rule: &str, no: usize) -> Diagnostic {
    Diagnostic::new(format!("{} is out of place here", what))
        .line(no)
        .expected(format!("{} {}", what, rule))
        .hint("order the header as the Touchstone 2.x standard does: [Version], option line, [Number of Ports], ..., [Network Data]")
}
