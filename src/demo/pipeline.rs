//! `mucurve demo` as a library walk: prepare the raw measurements, read the manifest, then run
//! every pipeline stage that exists over every file, reporting each step through a callback so
//! that only the CLI prints. Output files go under the work folder, written atomically.

use super::generate;
use super::manifest::{self, Entry};
use super::DemoError;
use crate::error::Diagnostic;
use crate::ingest::{self, ImpedanceSweep, Method, ReadOptions};
use std::path::{Path, PathBuf};

/// Where the demo reads and writes.
#[derive(Debug, Clone, PartialEq)]
pub struct Options {
    /// The measurements folder (`raw_measurements/`).
    pub raw_dir: PathBuf,
    /// The work folder for results (`demo-output/`).
    pub out_dir: PathBuf,
    /// Rewrite the measurements folder from the generator first.
    pub regenerate: bool,
}

/// What the demo tells its user as it goes.
#[derive(Debug, Clone, PartialEq)]
pub enum Event {
    /// A new step begins.
    Step(String),
    /// One line of what a step did.
    Detail(String),
    /// Something the user should look at.
    Warning(String),
}

/// How the run ended.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Summary {
    pub files: usize,
    pub ingested: usize,
    /// `file: reason` for every file a stage could not handle.
    pub failures: Vec<String>,
}

/// One measurement file as it moves through the stages.
struct Item {
    entry: Entry,
    path: PathBuf,
    impedance: Option<ImpedanceSweep>,
}

/// Run the demo.
pub fn run(opts: &Options, report: &mut dyn FnMut(Event)) -> Result<Summary, DemoError> {
    prepare_raw(opts, report)?;
    let entries = manifest::read(&opts.raw_dir.join(manifest::MANIFEST))?;
    report(Event::Detail(format!("manifest: {} files", entries.len())));
    let mut items: Vec<Item> = entries
        .into_iter()
        .map(|entry| Item { path: opts.raw_dir.join(&entry.file), entry, impedance: None })
        .collect();
    let mut summary = Summary { files: items.len(), ..Summary::default() };
    ingest_all(opts, &mut items, &mut summary, report)?;
    Ok(summary)
}

fn io_error(path: &Path, what: &str, e: std::io::Error) -> DemoError {
    Diagnostic::new(format!("cannot {}: {}", what, e)).file(path).hint("check the path and permissions").into()
}

/// Step 1: the measurements exist (regenerated if asked) and whether they are the generator's.
fn prepare_raw(opts: &Options, report: &mut dyn FnMut(Event)) -> Result<(), DemoError> {
    if opts.regenerate {
        report(Event::Step(format!("Regenerating {} from the demo generator", opts.raw_dir.display())));
        let written = generate::write_all(&opts.raw_dir)?;
        report(Event::Detail(format!("wrote {} files (deterministic: the same bytes on every run)", written.len())));
        return Ok(());
    }
    report(Event::Step(format!("Checking the raw measurements in {}", opts.raw_dir.display())));
    if !opts.raw_dir.join(manifest::MANIFEST).is_file() {
        return Err(Diagnostic::new("no demo measurements here")
            .file(&opts.raw_dir)
            .expected(format!("a folder holding {} and the sweeps it lists", manifest::MANIFEST))
            .hint("run the demo from the project folder, or pass --regenerate to write the measurements here")
            .into());
    }
    let differ = generate::differences(&opts.raw_dir)?;
    if differ.is_empty() {
        report(Event::Detail("every file is byte for byte what the generator writes".into()));
    } else {
        report(Event::Warning(format!(
            "{} file(s) differ from the generator ({}); the demo runs on them as they are (--regenerate restores them)",
            differ.len(),
            differ.join(", ")
        )));
    }
    Ok(())
}

/// Step 2: every file to impedance, written as the normalised sweep CSV.
fn ingest_all(
    opts: &Options,
    items: &mut [Item],
    summary: &mut Summary,
    report: &mut dyn FnMut(Event),
) -> Result<(), DemoError> {
    let dir = opts.out_dir.join("impedance");
    report(Event::Step(format!("Ingest: reading every sweep and converting it to impedance -> {}", dir.display())));
    std::fs::create_dir_all(&dir).map_err(|e| io_error(&dir, "create the folder", e))?;
    for item in items.iter_mut() {
        match ingest_one(item, &dir) {
            Ok(line) => {
                summary.ingested += 1;
                report(Event::Detail(line));
                if let Some(z) = &item.impedance {
                    for w in &z.warnings {
                        report(Event::Warning(format!("{}: {}", item.entry.file, w)));
                    }
                }
            }
            Err(reason) => {
                report(Event::Warning(format!("{}: not ingested: {}", item.entry.file, reason)));
                summary.failures.push(format!("{}: {}", item.entry.file, reason));
            }
        }
    }
    Ok(())
}

fn ingest_one(item: &mut Item, dir: &Path) -> Result<String, String> {
    let method = Method::parse(&item.entry.method)?;
    let sweep = ingest::read_sweep(&item.path, &ReadOptions::default()).map_err(|e| e.to_string())?;
    let kind = sweep.data.describe();
    // Impedance exports need no set-up; S data is converted with the manifest's method.
    let method = if kind == "Z" { None } else { Some(method) };
    let z = ingest::method::to_impedance(&sweep, method, None).map_err(|e| e.to_string())?;
    let stem = Path::new(&item.entry.file).file_stem().map(|s| s.to_string_lossy().into_owned()).unwrap_or_default();
    let out = dir.join(format!("{}.csv", stem));
    crate::fsutil::write_atomic(&out, ingest::sweep_file::write_sweep(&z).as_bytes()).map_err(|e| e.to_string())?;
    let (lo, hi) = z.z.iter().map(|v| v.norm()).fold((f64::MAX, 0.0f64), |(lo, hi), m| (lo.min(m), hi.max(m)));
    let line = format!(
        "{:<34} {:<8} -> Z ({}), {} points, {}..{}, |Z| {}..{}",
        item.entry.file,
        kind,
        z.method.map(|m| m.name()).unwrap_or("as exported"),
        z.freq_hz.len(),
        hz(z.freq_hz.first().copied().unwrap_or(0.0)),
        hz(z.freq_hz.last().copied().unwrap_or(0.0)),
        ohm(lo),
        ohm(hi)
    );
    item.impedance = Some(z);
    Ok(line)
}

/// A frequency in words with an SI prefix ("100 kHz", "1 GHz").
fn hz(f: f64) -> String {
    let (v, unit) = if f >= 1e9 {
        (f / 1e9, "GHz")
    } else if f >= 1e6 {
        (f / 1e6, "MHz")
    } else if f >= 1e3 {
        (f / 1e3, "kHz")
    } else {
        (f, "Hz")
    };
    let text = super::formats::significant(v, 3);
    let text = if text.contains('.') { text.trim_end_matches('0').trim_end_matches('.') } else { &text };
    format!("{} {}", text, unit)
}

/// An impedance magnitude in ohms with three significant digits.
fn ohm(z: f64) -> String {
    if z >= 1e3 {
        format!("{} kOhm", super::formats::significant(z / 1e3, 3))
    } else {
        format!("{} Ohm", super::formats::significant(z, 3))
    }
}
