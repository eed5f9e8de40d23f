//! `mucurve ingest FILE [--method M] [--z0 OHMS] [--empty FILE | --open FILE --short FILE]
//! [--columns SPEC] [--ports I,J] -o OUT.csv`
//!
//! The raw arguments are first resolved into one checked [`Plan`] (numbers parsed, files found,
//! options that exclude each other refused); only then is anything read. [`SweepArgs`] is the
//! group of options every command that reads measurement files flattens into its own arguments.

use super::Failure;
use crate::error::Diagnostic;
use crate::ingest::{self, FixtureCorrection, ImpedanceSweep, IngestOptions, Method, ReadOptions};
use std::path::{Path, PathBuf};

/// How to read measurement files and turn them into impedance.
#[derive(Debug, Clone, Default, clap::Args)]
pub struct SweepArgs {
    /// Measurement set-up: reflection (1-port), series or shunt (2-port through).
    /// Default: reflection for 1-port data, series for 2-port data; not needed for impedance data.
    #[arg(long, value_name = "reflection|series|shunt")]
    pub method: Option<String>,
    /// Reference impedance replacing the file's, e.g. 50 or 75ohm.
    #[arg(long, value_name = "OHMS", allow_negative_numbers = true)]
    pub z0: Option<String>,
    /// Empty-fixture sweep to subtract (same format and set-up as the measurement).
    #[arg(long, value_name = "FILE")]
    pub empty: Option<PathBuf>,
    /// Open standard for open/short compensation (needs --short).
    #[arg(long, value_name = "FILE")]
    pub open: Option<PathBuf>,
    /// Short standard for open/short compensation (needs --open).
    #[arg(long, value_name = "FILE")]
    pub short: Option<PathBuf>,
    /// CSV column override when the header is ambiguous or unknown.
    #[arg(long, value_name = "SPEC")]
    pub columns: Option<String>,
    /// Port pair to keep from a Touchstone file with more than two ports, e.g. 1,3.
    #[arg(long, value_name = "I,J")]
    pub ports: Option<String>,
}

#[derive(Debug, clap::Args)]
pub struct Args {
    /// Measurement file: Touchstone (.s1p, .s2p, …) or a CSV export.
    pub file: PathBuf,
    #[command(flatten)]
    pub sweep: SweepArgs,
    /// Where to write freq_hz,z_re_ohm,z_im_ohm (with a leading # metadata block).
    #[arg(short = 'o', long = "output", value_name = "OUT.csv")]
    pub output: PathBuf,
}

/// The checked form of [`Args`].
#[derive(Debug, Clone, PartialEq)]
pub struct Plan {
    pub input: PathBuf,
    pub output: PathBuf,
    pub options: IngestOptions,
}

fn bad_option(option: &str, message: String, expected: &str, hint: &str) -> Failure {
    Failure::input(
        Diagnostic::new(format!("{}: {}", option, message))
            .expected(expected)
            .hint(hint)
            .to_string(),
    )
}

impl SweepArgs {
    /// Parse and check the options; every named file must exist.
    pub fn options(&self) -> Result<IngestOptions, Failure> {
        let method = match &self.method {
            Some(m) => Some(Method::parse(m).map_err(|e| {
                bad_option(
                    "--method",
                    e,
                    "reflection, series or shunt",
                    "e.g. --method series",
                )
            })?),
            None => None,
        };
        let z0 = match &self.z0 {
            Some(t) => Some(parse_z0(t)?),
            None => None,
        };
        let ports = match &self.ports {
            Some(t) => Some(parse_ports(t)?),
            None => None,
        };
        let fixture = match (&self.empty, &self.open, &self.short) {
            (None, None, None) => FixtureCorrection::None,
            (Some(e), None, None) => FixtureCorrection::Empty(existing(e, "--empty")?),
            (None, Some(o), Some(s)) => FixtureCorrection::OpenShort {
                open: existing(o, "--open")?,
                short: existing(s, "--short")?,
            },
            (None, Some(_), None) | (None, None, Some(_)) => {
                return Err(bad_option(
                    if self.open.is_some() {
                        "--open"
                    } else {
                        "--short"
                    },
                    "open/short compensation needs both standards".into(),
                    "--open FILE together with --short FILE",
                    "give both files, or use --empty for an empty-fixture sweep",
                ))
            }
            (Some(_), _, _) => {
                return Err(bad_option(
                    "--empty",
                    "cannot be combined with --open/--short".into(),
                    "one fixture correction: --empty FILE, or --open FILE --short FILE",
                    "choose the correction that matches how the fixture was characterised",
                ))
            }
        };
        Ok(IngestOptions {
            read: ReadOptions {
                columns: self.columns.clone(),
                ports,
            },
            method,
            z0,
            fixture,
        })
    }

    /// The fixture files named, for checks against the output path.
    fn fixture_files(&self) -> impl Iterator<Item = &PathBuf> {
        [&self.empty, &self.open, &self.short].into_iter().flatten()
    }
}

fn parse_z0(text: &str) -> Result<f64, Failure> {
    let expected = "a positive resistance in ohms, e.g. 50 or 75ohm";
    let hint = "the reference is normally 50 Ω; use --z0 only when the file's own value is wrong or missing";
    let r = crate::units::parse_quantity(text, "ohm")
        .map_err(|e| bad_option("--z0", e, expected, hint))?;
    if r > 0.0 {
        Ok(r)
    } else {
        Err(bad_option(
            "--z0",
            format!("'{}' is not a positive resistance", text),
            expected,
            hint,
        ))
    }
}

fn parse_ports(text: &str) -> Result<(usize, usize), Failure> {
    let fail = || {
        bad_option(
            "--ports",
            format!("'{}' is not a pair of different port numbers", text),
            "two different 1-based port numbers separated by a comma, e.g. 1,2",
            "the first port is the one driven; for a 4-port export of one line use e.g. --ports 1,3",
        )
    };
    let (a, b) = text.split_once(',').ok_or_else(fail)?;
    let a: usize = a.trim().parse().map_err(|_| fail())?;
    let b: usize = b.trim().parse().map_err(|_| fail())?;
    if a == 0 || b == 0 || a == b {
        return Err(fail());
    }
    Ok((a, b))
}

/// The path, if it names an existing file.
fn existing(path: &Path, role: &str) -> Result<PathBuf, Failure> {
    let problem = if path.is_file() {
        return Ok(path.to_path_buf());
    } else if path.is_dir() {
        "is a folder, not a file"
    } else {
        "file not found"
    };
    Err(Failure::input(
        Diagnostic::new(format!("{} ({})", problem, role))
            .file(path)
            .expected("an existing Touchstone (.s1p, .s2p, …) or CSV file")
            .hint("check the path; relative paths start in the current folder")
            .to_string(),
    ))
}

/// Resolve the raw arguments; nothing is read yet.
pub fn plan(args: &Args) -> Result<Plan, Failure> {
    let input = existing(&args.file, "measurement")?;
    let options = args.sweep.options()?;
    let output = args.output.clone();
    let folder = match output.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    };
    if !folder.is_dir() {
        return Err(Failure::input(
            Diagnostic::new("the output folder does not exist")
                .file(&output)
                .expected("-o naming a file in an existing folder")
                .hint("create the folder first")
                .to_string(),
        ));
    }
    if output.is_dir() {
        return Err(Failure::input(
            Diagnostic::new("-o names a folder")
                .file(&output)
                .expected("-o OUT.csv, a file name")
                .to_string(),
        ));
    }
    for src in std::iter::once(&input).chain(args.sweep.fixture_files()) {
        if same_file(src, &output) {
            return Err(Failure::input(
                Diagnostic::new("the output would overwrite an input file")
                    .file(&output)
                    .expected("-o naming a new file")
                    .hint("raw measurements are kept as they are; write the normalised sweep elsewhere")
                    .to_string(),
            ));
        }
    }
    Ok(Plan {
        input,
        output,
        options,
    })
}

fn same_file(a: &Path, b: &Path) -> bool {
    match (a.canonicalize(), b.canonicalize()) {
        (Ok(x), Ok(y)) => x == y,
        _ => false,
    }
}

pub fn run(args: Args) -> Result<(), Failure> {
    let plan = plan(&args)?;
    let sweep = ingest::ingest_file(&plan.input, &plan.options)?;
    crate::fsutil::write_atomic(
        &plan.output,
        ingest::sweep_file::write_sweep(&sweep).as_bytes(),
    )?;
    for w in &sweep.warnings {
        eprintln!("warning: {}: {}", plan.input.display(), w);
    }
    print!("{}", summary(&sweep, &plan));
    Ok(())
}

/// The short report printed after a successful run.
fn summary(s: &ImpedanceSweep, plan: &Plan) -> String {
    let band = match (s.freq_hz.first(), s.freq_hz.last()) {
        (Some(&a), Some(&b)) => format!("{} to {}", fmt_hz(a), fmt_hz(b)),
        _ => String::new(),
    };
    let mut out = format!(
        "read {}: {} points, {}\n",
        plan.input.display(),
        s.freq_hz.len(),
        band
    );
    for d in &s.detected {
        out.push_str(&format!("  detected: {}\n", d));
    }
    match (s.method, s.z0) {
        (Some(m), Some(r)) => out.push_str(&format!("  method: {}, z0 {} Ω\n", m.name(), r)),
        _ => out.push_str("  method: none (the file holds impedance)\n"),
    }
    for c in &s.corrections {
        out.push_str(&format!("  correction: {}\n", c));
    }
    if !s.warnings.is_empty() {
        out.push_str(&format!("  {} warning(s), see stderr\n", s.warnings.len()));
    }
    out.push_str(&format!("wrote {}\n", plan.output.display()));
    out
}

/// A frequency with an SI prefix for people to read, e.g. `1.5 MHz`.
fn fmt_hz(f: f64) -> String {
    let (scale, prefix) = [(1e9, "G"), (1e6, "M"), (1e3, "k")]
        .into_iter()
        .find(|&(s, _)| f >= s)
        .unwrap_or((1.0, ""));
    let v = f / scale;
    format!("{} {}Hz", (v * 1e6).round() / 1e6, prefix)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn option_values_are_checked_before_any_work() {
        let args = SweepArgs {
            z0: Some("75ohm".into()),
            ports: Some("1, 3".into()),
            method: Some("Shunt".into()),
            ..Default::default()
        };
        let o = args.options().unwrap();
        assert_eq!(
            (o.z0, o.read.ports, o.method),
            (Some(75.0), Some((1, 3)), Some(Method::Shunt))
        );
        for bad in [
            SweepArgs {
                z0: Some("-50".into()),
                ..Default::default()
            },
            SweepArgs {
                z0: Some("fifty".into()),
                ..Default::default()
            },
            SweepArgs {
                ports: Some("2,2".into()),
                ..Default::default()
            },
            SweepArgs {
                ports: Some("0,1".into()),
                ..Default::default()
            },
            SweepArgs {
                method: Some("transmission".into()),
                ..Default::default()
            },
            SweepArgs {
                open: Some("Cargo.toml".into()),
                ..Default::default()
            },
            SweepArgs {
                empty: Some("no-such-file.s1p".into()),
                ..Default::default()
            },
        ] {
            assert!(bad.options().is_err(), "{:?} should be refused", bad);
        }
    }

    #[test]
    fn frequencies_read_with_prefixes() {
        assert_eq!(fmt_hz(1.5e6), "1.5 MHz");
        assert_eq!(fmt_hz(1e9), "1 GHz");
        assert_eq!(fmt_hz(300e3), "300 kHz");
        assert_eq!(fmt_hz(20.0), "20 Hz");
    }
}
