//! `mucurve demo` as a library walk: prepare the raw measurements, read the manifest, then run
//! every pipeline stage that exists over every file, reporting each step through a callback so
//! that only the CLI prints. Output files go under the work folder, written atomically.

use super::generate;
use super::manifest::{self, Entry};
use super::release;
use super::DemoError;
use crate::error::Diagnostic;
use crate::extract::{self, band::hz, ExtractSetup, LeadCorrection, Measurement, MuSpectrum};
use crate::ingest::{self, ImpedanceSweep, Method, ReadOptions, SweepData};
use std::collections::BTreeSet;
use std::path::{Path, PathBuf};

/// Where the demo reads and writes.
#[derive(Debug, Clone, PartialEq)]
pub struct Options {
    /// The measurements folder (`raw_measurements/`).
    pub raw_dir: PathBuf,
    /// The work folder for results (`demo-output/`).
    pub out_dir: PathBuf,
    /// Where the demo library is published (replaced on every run; see
    /// [`super::release::fresh_library`]).
    pub library_dir: PathBuf,
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
    /// μ spectra extracted (one per core and fixture).
    pub extracted: usize,
    /// Fits made, versions published, versions vetted.
    pub fitted: usize,
    pub published: usize,
    pub vetted: usize,
    /// Files exported for other tools.
    pub exported: usize,
    /// `file: reason` for every file a stage could not handle.
    pub failures: Vec<String>,
}

/// What the demo has said in full so far: a warning met again (the size effect of a core,
/// reported by the extraction and again as the reason its material stays a draft) is said once
/// and afterwards referred to by its opening words.
#[derive(Debug, Default)]
pub(super) struct Said(BTreeSet<String>);

/// Characters of a warning kept, at most, when it is referred to again.
const BRIEF_CHARS: usize = 90;

impl Said {
    /// Whether `text` is said for the first time (it counts as said from now on).
    pub fn first_time(&mut self, text: &str) -> bool {
        self.0.insert(text.to_string())
    }

    /// `text` in full the first time; after that its opening words, up to a clause mark (or
    /// a space) within [`BRIEF_CHARS`].
    pub fn once(&mut self, text: &str) -> String {
        if self.first_time(text) || text.chars().count() <= BRIEF_CHARS {
            return text.to_string();
        }
        let head: String = text.chars().take(BRIEF_CHARS).collect();
        let clause = [": ", "; ", ", "].iter().filter_map(|m| head.rfind(m)).max();
        let cut = clause.filter(|&c| 2 * c > head.len()).or(head.rfind(' ')).unwrap_or(head.len());
        format!("{} … (as above)", &head[..cut])
    }
}

/// One measurement file as it moves through the stages.
pub(super) struct Item {
    pub entry: Entry,
    pub path: PathBuf,
    pub impedance: Option<ImpedanceSweep>,
}

/// Files of one core in one fixture, extracted together into one μ spectrum.
pub(super) struct Group {
    /// Output name, e.g. `driftwood_dw-2411-01_1+2t`.
    pub name: String,
    /// Indices into the items.
    pub members: Vec<usize>,
    pub lead: LeadCorrection,
    pub spectrum: Option<MuSpectrum>,
}

/// Run the demo.
pub fn run(opts: &Options, report: &mut dyn FnMut(Event)) -> Result<Summary, DemoError> {
    // Refuse before any work if the library folder holds something the demo must not replace.
    release::check_replaceable(&opts.library_dir)?;
    prepare_raw(opts, report)?;
    let entries = manifest::read(&opts.raw_dir.join(manifest::MANIFEST))?;
    report(Event::Detail(format!("manifest: {} files", entries.len())));
    let mut items: Vec<Item> = entries
        .into_iter()
        .map(|entry| Item { path: opts.raw_dir.join(&entry.file), entry, impedance: None })
        .collect();
    let mut summary = Summary { files: items.len(), ..Summary::default() };
    ingest_all(opts, &mut items, &mut summary, report)?;
    let mut groups = plan_groups(&items);
    let mut said = Said::default();
    extract_all(opts, &items, &mut groups, &mut said, &mut summary, report)?;
    let mut releases = release::plan_releases(&items, &groups);
    release::fit_all(&opts.out_dir, &items, &groups, &mut releases, &mut said, &mut summary, report)?;
    release::publish_and_vet(&opts.library_dir, &mut releases, &mut said, &mut summary, report)?;
    release::export_vetted(&opts.out_dir, &opts.library_dir, &releases, &mut summary, report)?;
    Ok(summary)
}

pub(super) fn io_error(path: &Path, what: &str, e: std::io::Error) -> DemoError {
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
            "{} file(s) differ from what the generator writes ({}); the demo runs on the manifest as it is (--regenerate rewrites the generated files)",
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
    let exported_z = matches!(sweep.data, SweepData::Impedance(_));
    let mut z =
        ingest::method::to_impedance(&sweep, (!exported_z).then_some(method), None).map_err(|e| e.to_string())?;
    // An impedance export hides the set-up it was measured with; the manifest records it, and
    // the extraction's accurate |Z| range depends on it.
    z.method = z.method.or(Some(method));
    let stem = Path::new(&item.entry.file).file_stem().map(|s| s.to_string_lossy().into_owned()).unwrap_or_default();
    let out = dir.join(format!("{}.csv", stem));
    crate::fsutil::write_atomic(&out, ingest::sweep_file::write_sweep(&z).as_bytes()).map_err(|e| e.to_string())?;
    let (lo, hi) = z.z.iter().map(|v| v.norm()).fold((f64::MAX, 0.0f64), |(lo, hi), m| (lo.min(m), hi.max(m)));
    let line = format!(
        "{:<34} {:<8} -> Z ({}), {} points, {}..{}, |Z| {}..{}",
        item.entry.file,
        kind,
        if exported_z { "as exported" } else { method.name() },
        z.freq_hz.len(),
        hz(z.freq_hz.first().copied().unwrap_or(0.0)),
        hz(z.freq_hz.last().copied().unwrap_or(0.0)),
        ohm(lo),
        ohm(hi)
    );
    // The reader's warnings in short; the full text is in the sweep file's `# warning:` lines.
    let gists: Vec<&str> = z.warnings.iter().map(|w| gist(w)).collect();
    let line = if gists.is_empty() { line } else { format!("{}; noted: {}", line, gists.join("; ")) };
    item.impedance = Some(z);
    Ok(line)
}

/// Windings of the same core, method and leads but different turns are extracted together with
/// the lead inductance solved (it does not scale with N², the core term does); any other file is
/// extracted alone with the fixture's lead inductance from the manifest.
fn plan_groups(items: &[Item]) -> Vec<Group> {
    let mut groups: Vec<Group> = Vec::new();
    let key = |e: &Entry| (e.sample.clone(), e.core.clone(), e.method.clone(), e.lead_nh.to_bits());
    for (i, item) in items.iter().enumerate() {
        if item.impedance.is_none() {
            continue;
        }
        let same = groups.iter_mut().find(|g| {
            let first = &items[g.members[0]].entry;
            key(first) == key(&item.entry) && g.members.iter().all(|&m| items[m].entry.turns != item.entry.turns)
        });
        match same {
            Some(g) => g.members.push(i),
            None => groups.push(Group {
                name: String::new(),
                members: vec![i],
                lead: LeadCorrection::Stated(item.entry.lead_nh * 1e-9),
                spectrum: None,
            }),
        }
    }
    for g in groups.iter_mut() {
        let first = &items[g.members[0]].entry;
        let turns: Vec<String> = g.members.iter().map(|&m| items[m].entry.turns.to_string()).collect();
        g.name = format!("{}_{}_{}t", first.material, first.sample.to_ascii_lowercase(), turns.join("+"));
        if g.members.len() > 1 {
            g.lead = LeadCorrection::Solve;
        }
    }
    groups
}

/// Step 3: μ′/μ″ of every core, with its valid band, written as `freq_hz,mu_prime,mu_double_prime`.
fn extract_all(
    opts: &Options,
    items: &[Item],
    groups: &mut [Group],
    said: &mut Said,
    summary: &mut Summary,
    report: &mut dyn FnMut(Event),
) -> Result<(), DemoError> {
    let dir = opts.out_dir.join("mu");
    report(Event::Step(format!(
        "Extract: impedance -> complex permeability with the manifest's core and turns -> {}",
        dir.display()
    )));
    std::fs::create_dir_all(&dir).map_err(|e| io_error(&dir, "create the folder", e))?;
    for g in groups.iter_mut() {
        match extract_one(items, g, &dir) {
            Ok(lines) => {
                summary.extracted += 1;
                let mut lines = lines.into_iter();
                if let Some(first) = lines.next() {
                    report(Event::Detail(first));
                }
                for w in lines {
                    report(Event::Warning(said.once(&format!("{}: {}", g.name, w))));
                }
            }
            Err(reason) => {
                report(Event::Warning(format!("{}: not extracted: {}", g.name, reason)));
                summary.failures.push(format!("{}: {}", g.name, reason));
            }
        }
    }
    Ok(())
}

/// Extract one group; returns its summary line followed by the extraction's warnings.
fn extract_one(items: &[Item], g: &mut Group, dir: &Path) -> Result<Vec<String>, String> {
    let first = &items[g.members[0]].entry;
    let core = crate::geometry::Core::parse(&first.core).map_err(|e| e.to_string())?;
    let measurements: Vec<Measurement> = g
        .members
        .iter()
        .filter_map(|&m| {
            items[m].impedance.clone().map(|sweep| Measurement { sweep, turns: items[m].entry.turns as f64 })
        })
        .collect();
    let setup = ExtractSetup { lead: g.lead, ..ExtractSetup::new(core) };
    let s = extract::extract(&measurements, &setup).map_err(|e| e.to_string())?;
    crate::fsutil::write_atomic(&dir.join(format!("{}.csv", g.name)), extract::write_mu_table(&s).as_bytes())
        .map_err(|e| e.to_string())?;
    let lead = match (&s.l_lead, g.lead) {
        (Some(l), LeadCorrection::Solve) => {
            format!("lead solved {:.1} nH ({:.1}..{:.1})", l.henry * 1e9, l.p16 * 1e9, l.p84 * 1e9)
        }
        (Some(l), _) => format!("lead {:.0} nH from the manifest", l.henry * 1e9),
        (None, _) => "no lead correction".to_string(),
    };
    let valid = s.valid_indices();
    let peak = valid.iter().copied().max_by(|&a, &b| s.mu_double_prime(a).total_cmp(&s.mu_double_prime(b)));
    let mut line = format!(
        "{:<34} {}; band {}..{}; μ′ {:.0} at {}",
        g.name,
        lead,
        hz(s.valid.0),
        hz(s.valid.1),
        valid.first().map(|&i| s.mu[i].re).unwrap_or(f64::NAN),
        hz(s.valid.0)
    );
    if let Some(i) = peak {
        line += &format!("; peak μ″ {:.0} at {}", s.mu_double_prime(i), hz(s.freq_hz[i]));
    }
    if let (Some(f), Some(c)) = (s.f_sr, s.c_p) {
        line += &format!("; self-resonance {} (C_p {:.1} pF)", hz(f), c * 1e12);
    }
    let mut lines = vec![line];
    lines.extend(own_warnings(&s));
    g.spectrum = Some(s);
    Ok(lines)
}

/// The extraction's own warnings about a spectrum, without the reader's notes on each sweep that
/// it repeats (`FILE: ...`): those were reported at ingest and concern the files (a merged
/// segment boundary, noise at near-short impedances outside the valid band), not the material.
pub(super) fn own_warnings(s: &MuSpectrum) -> Vec<String> {
    let from_reader = |w: &str| s.sources.iter().any(|src| w.starts_with(&format!("{}: ", src.file_name())));
    s.warnings.iter().filter(|w| !from_reader(w)).cloned().collect()
}

/// The head of a warning: up to its first comma or parenthesis ("23 of 321 points have |S11| > 1").
fn gist(w: &str) -> &str {
    w.split([',', '(']).next().unwrap_or(w).trim()
}

/// An impedance magnitude in ohms with three significant digits.
fn ohm(z: f64) -> String {
    if z >= 1e3 {
        format!("{} kOhm", super::formats::significant(z / 1e3, 3))
    } else {
        format!("{} Ohm", super::formats::significant(z, 3))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_warning_is_said_in_full_once_then_by_its_opening_clause() {
        let mut said = Said::default();
        let long = "core-a: μ′ ≈ 2265 at the bottom of the band looks like MnZn ferrite: above about 1 MHz its \
                    dimensional resonance makes the apparent μ this core's";
        assert_eq!(said.once(long), long);
        assert_eq!(said.once(long), "core-a: μ′ ≈ 2265 at the bottom of the band looks like MnZn ferrite … (as above)");
        assert!(!said.first_time(long));
        // Short ones are repeated as they are.
        assert_eq!(said.once("1 repeated frequency"), said.once("1 repeated frequency"));
    }
}
