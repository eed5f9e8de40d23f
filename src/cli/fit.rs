//! `mucurve fit FILE|FOLDER... [--core SPEC --turns N.. --method M --z0 R --empty FILE
//! --lead-inductance L | --solve-lead ...] --model SPEC|auto [--free-mu-inf] [--js J] [--joint]
//! [--json] [--plot OUT.svg] [-o FIT.json] [--summary OUT.csv|.parquet]`
//!
//! Inputs are μ tables written by `mucurve extract` (no --core needed) or analyser sweeps, which
//! go through the extract stage with the same options as `mucurve extract`. Each input is fitted
//! on its own, in parallel (with `--solve-lead`, the sweeps are windings of one core and make one
//! spectrum); with `--joint` one model is fitted to all inputs together (samples of one material,
//! what the library publishes).

use super::extract::{SweepPlan, WindingArgs};
use super::Failure;
use crate::error::Diagnostic;
use crate::extract::{self, table::HEADER as MU_TABLE_HEADER};
use crate::fit::analysis::{analyse, Analysis, FitRequest, ModelChoice};
use crate::fit::build_report::json_view;
use crate::fit::engine::FitOptions;
use crate::fit::report::SourceProvenance;
use crate::fit::sanity::SaturationPolarisation;
use crate::fit::source::{merged, SourceData};
use crate::fit::{summary, text_report};
use crate::ingest;
use crate::plot::fit_plot::{write_fit_plot, FitPlot};
use crate::units::parse_quantity;
use indicatif::{ProgressBar, ProgressStyle};
use rayon::prelude::*;
use std::io::IsTerminal;
use std::path::{Path, PathBuf};

#[derive(Debug, clap::Args)]
pub struct Args {
    /// μ tables (freq_hz,mu_prime,mu_double_prime from `mucurve extract`), analyser sweeps
    /// (with --core), or folders of them.
    #[arg(required = true, value_name = "FILE|FOLDER")]
    pub files: Vec<PathBuf>,
    /// Model: kinds joined by '+' (debye, cole-cole, cole-davidson, havriliak-negami, lorentz),
    /// or auto to choose by BIC.
    #[arg(long, value_name = "SPEC|auto", default_value = "auto")]
    pub model: String,
    /// Fit μ∞ instead of holding it at 1.
    #[arg(long)]
    pub free_mu_inf: bool,
    /// Saturation polarisation of the material for the Snoek check, e.g. 0.35T (default: the
    /// typical 0.3–0.5 T range).
    #[arg(long, value_name = "J")]
    pub js: Option<String>,
    /// Fit one model to all inputs together (samples of one material) instead of one each.
    #[arg(long)]
    pub joint: bool,
    /// The core, for analyser sweeps (as for mucurve extract): SHAPE:key=value,... with units,
    /// or a name from the cores file. Not needed for μ tables.
    #[arg(long, value_name = "SPEC")]
    pub core: Option<String>,
    // How sweeps become μ: the options of `mucurve extract` (unused for μ tables).
    #[command(flatten)]
    pub winding: WindingArgs,
    /// Print one JSON object per fit, one per line, instead of the text report.
    #[arg(long)]
    pub json: bool,
    /// Draw measured and fitted μ′, μ″ with the residuals (.svg or .png).
    #[arg(long, value_name = "OUT.svg")]
    pub plot: Option<PathBuf>,
    /// Write the fit report with provenance and residuals (what `mucurve publish` takes).
    #[arg(short = 'o', long = "output", value_name = "FIT.json")]
    pub output: Option<PathBuf>,
    /// Write one row per fit (.csv or .parquet).
    #[arg(long, value_name = "OUT.csv")]
    pub summary: Option<PathBuf>,
}

/// Saturation polarisations accepted, T (no soft magnetic material exceeds ~2.5 T).
const JS_RANGE_T: (f64, f64) = (0.01, 2.5);
/// File name endings taken from a folder: CSV tables and Touchstone files.
fn is_data_file(p: &Path) -> bool {
    let ext = p
        .extension()
        .map(|e| e.to_string_lossy().to_ascii_lowercase())
        .unwrap_or_default();
    let touchstone = ext.len() >= 3
        && ext.starts_with('s')
        && ext.ends_with('p')
        && ext[1..ext.len() - 1].chars().all(|c| c.is_ascii_digit());
    matches!(ext.as_str(), "csv" | "txt" | "ts") || touchstone
}

/// Where one source's data comes from.
#[derive(Debug, Clone)]
enum SourceSpec {
    Table(PathBuf),
    /// Windings of one core (one turn count each), extracted together.
    Sweeps(Vec<(PathBuf, f64)>),
}

/// One fit: a label and its sources.
#[derive(Debug, Clone)]
struct Job {
    label: String,
    /// File stem used to name this fit's output files when there are several fits.
    stem: String,
    sources: Vec<SourceSpec>,
}

fn bad(option: &str, message: impl Into<String>, expected: &str, hint: &str) -> Failure {
    Failure::input(
        Diagnostic::new(format!("{}: {}", option, message.into()))
            .expected(expected)
            .hint(hint)
            .to_string(),
    )
}

fn io_failure(path: &Path, what: &str, e: std::io::Error) -> Failure {
    Failure::input(
        Diagnostic::new(format!("cannot {}: {}", what, e))
            .file(path)
            .to_string(),
    )
}

fn parse_js(text: Option<&str>) -> Result<SaturationPolarisation, Failure> {
    let Some(t) = text else {
        return Ok(SaturationPolarisation::Typical);
    };
    let v = parse_quantity(t, "T").map_err(|e| {
        bad(
            "--js",
            e,
            "a saturation polarisation in tesla, e.g. 0.35T",
            "",
        )
    })?;
    if !(JS_RANGE_T.0..=JS_RANGE_T.1).contains(&v) {
        return Err(bad(
            "--js",
            format!("{} T is not a saturation polarisation", v),
            "0.01 T to 2.5 T; sintered ferrites are 0.2–0.5 T",
            "e.g. --js 0.35T",
        ));
    }
    Ok(SaturationPolarisation::Stated(v))
}

/// The files named, with folders replaced by their data files (sorted by name).
fn expand_inputs(files: &[PathBuf]) -> Result<Vec<PathBuf>, Failure> {
    let mut out = Vec::new();
    for f in files {
        if f.is_dir() {
            let mut inside: Vec<PathBuf> = std::fs::read_dir(f)
                .map_err(|e| io_failure(f, "read the folder", e))?
                .filter_map(|e| e.ok().map(|e| e.path()))
                .filter(|p| {
                    p.is_file()
                        && is_data_file(p)
                        && !p
                            .file_name()
                            .is_some_and(|n| n.to_string_lossy().starts_with('.'))
                })
                .collect();
            inside.sort();
            if inside.is_empty() {
                return Err(Failure::input(
                    Diagnostic::new("the folder holds no μ tables or sweeps")
                        .file(f)
                        .expected("files ending in .csv, .txt, .ts or .sNp")
                        .to_string(),
                ));
            }
            out.extend(inside);
        } else if f.is_file() {
            out.push(f.clone());
        } else {
            return Err(Failure::input(
                Diagnostic::new("no such file or folder")
                    .file(f)
                    .to_string(),
            ));
        }
    }
    Ok(out)
}

/// Whether `path` is a μ table: its first line that is not blank or a `#` comment is the header.
fn is_mu_table(path: &Path) -> Result<bool, Failure> {
    let bytes = std::fs::read(path).map_err(|e| io_failure(path, "read", e))?;
    let text = String::from_utf8_lossy(&bytes);
    Ok(text
        .lines()
        .map(str::trim)
        .find(|l| !l.is_empty() && !l.starts_with('#'))
        .is_some_and(|l| l == MU_TABLE_HEADER))
}

fn stem(p: &Path) -> String {
    p.file_stem()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_else(|| "input".into())
}

fn label(p: &Path) -> String {
    p.file_name()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_else(|| p.display().to_string())
}

/// Sort the inputs into fits.
fn plan_jobs(inputs: &[PathBuf], args: &Args) -> Result<Vec<Job>, Failure> {
    let mut tables = Vec::new();
    let mut sweeps = Vec::new();
    for p in inputs {
        if is_mu_table(p)? {
            tables.push(p.clone());
        } else {
            sweeps.push(p.clone());
        }
    }
    let mut specs: Vec<(String, String, SourceSpec)> = tables
        .iter()
        .map(|p| (label(p), stem(p), SourceSpec::Table(p.clone())))
        .collect();
    if !sweeps.is_empty() {
        if args.core.is_none() {
            return Err(Failure::input(
                Diagnostic::new(format!("{} is an analyser sweep, and turning it into μ needs the core", sweeps[0].display()))
                    .expected("--core SHAPE:key=value,... (as for mucurve extract), or a μ table written by mucurve extract")
                    .hint("e.g. --core toroid:od=25mm,id=15mm,h=10mm --turns 5")
                    .to_string(),
            ));
        }
        let turns = super::extract::parse_turns(&args.winding.turns, sweeps.len())?;
        let pairs: Vec<(PathBuf, f64)> = sweeps.into_iter().zip(turns).collect();
        if args.winding.solve_lead {
            let names: Vec<String> = pairs.iter().map(|(p, _)| label(p)).collect();
            specs.push((
                names.join("+"),
                stem(&pairs[0].0),
                SourceSpec::Sweeps(pairs),
            ));
        } else {
            specs.extend(
                pairs
                    .into_iter()
                    .map(|(p, n)| (label(&p), stem(&p), SourceSpec::Sweeps(vec![(p, n)]))),
            );
        }
    }
    if args.joint && specs.len() > 1 {
        let label = specs
            .iter()
            .map(|s| s.0.clone())
            .collect::<Vec<_>>()
            .join(" + ");
        let stem = specs[0].1.clone();
        return Ok(vec![Job {
            label,
            stem,
            sources: specs.into_iter().map(|s| s.2).collect(),
        }]);
    }
    Ok(specs
        .into_iter()
        .map(|(label, stem, s)| Job {
            label,
            stem,
            sources: vec![s],
        })
        .collect())
}

/// A μ table → the points inside its valid band, with the provenance its metadata records.
fn load_table(path: &Path) -> Result<SourceData, Failure> {
    let bytes = std::fs::read(path).map_err(|e| io_failure(path, "read", e))?;
    let text = String::from_utf8_lossy(&bytes);
    let table =
        extract::read_mu_table(&text).map_err(|e| Failure::input(e.0.in_file(path).to_string()))?;
    let inside: Vec<usize> = (0..table.freq_hz.len())
        .filter(|&i| table.freq_hz[i] >= table.valid.0 && table.freq_hz[i] <= table.valid.1)
        .collect();
    let core = table
        .meta_values("core")
        .first()
        .map(|s| s.to_string())
        .unwrap_or_else(|| "not stated".into());
    let mut corrections: Vec<String> = table
        .meta_values("correction")
        .iter()
        .map(|s| s.to_string())
        .collect();
    if let Some(l) = table
        .meta_values("lead_inductance_h")
        .first()
        .filter(|v| **v != "none")
    {
        let how = table
            .meta_values("lead_inductance_from")
            .first()
            .map(|s| format!(" ({s})"))
            .unwrap_or_default();
        corrections.push(format!("lead inductance {l} H removed{how}"));
    }
    let mut provenance: Vec<SourceProvenance> = table
        .meta_values("source")
        .iter()
        .filter_map(|v| parse_source_line(v))
        .map(|(file, sha256, turns)| SourceProvenance {
            file,
            sha256,
            method: None,
            core: core.clone(),
            turns,
            corrections: corrections.clone(),
            ..Default::default()
        })
        .collect();
    if provenance.is_empty() {
        // A table made by hand: the table itself is the source.
        provenance.push(SourceProvenance {
            file: label(path),
            sha256: ingest::sha256_hex(&bytes),
            core,
            corrections,
            notes: Some("μ table without source metadata".into()),
            ..Default::default()
        });
    }
    Ok(SourceData {
        label: label(path),
        freq_hz: inside.iter().map(|&i| table.freq_hz[i]).collect(),
        mu: inside.iter().map(|&i| table.mu[i]).collect(),
        provenance,
        warnings: table
            .meta_values("warning")
            .iter()
            .map(|s| s.to_string())
            .collect(),
        sanity: table
            .meta_values("sanity")
            .iter()
            .map(|s| s.to_string())
            .collect(),
    })
}

/// `NAME sha256=HEX turns=N` as `mucurve extract` writes a source line (NAME may hold spaces).
fn parse_source_line(v: &str) -> Option<(String, String, f64)> {
    let (name, rest) = v.rsplit_once(" sha256=")?;
    let mut parts = rest.split_whitespace();
    let sha = parts.next()?.to_string();
    let turns = parts
        .find_map(|p| p.strip_prefix("turns="))
        .and_then(|t| t.parse().ok())
        .unwrap_or(0.0);
    Some((name.to_string(), sha, turns))
}

/// Sweeps of one core → μ inside the valid band, through the extract stage.
fn load_sweeps(files: &[(PathBuf, f64)], plan: &SweepPlan) -> Result<SourceData, Failure> {
    let measurements = plan.read(files)?;
    let s = extract::extract(&measurements, &plan.setup)?;
    let sweeps: Vec<&ingest::ImpedanceSweep> = measurements.iter().map(|m| &m.sweep).collect();
    let names: Vec<String> = files.iter().map(|(p, _)| label(p)).collect();
    Ok(SourceData::from_spectrum(&s, &sweeps, &names.join("+")))
}

/// Load the job's sources and fit them; the sources come back for the plot.
fn run_job(
    job: &Job,
    plan: Option<&SweepPlan>,
    req: &FitRequest,
) -> Result<(Analysis, Vec<SourceData>), Failure> {
    let sources = job
        .sources
        .iter()
        .map(|s| match s {
            SourceSpec::Table(p) => load_table(p),
            // plan_jobs refuses sweeps without --core, so the plan exists here.
            SourceSpec::Sweeps(files) => plan
                .ok_or_else(|| Failure::input("sweeps need --core"))
                .and_then(|p| load_sweeps(files, p)),
        })
        .collect::<Result<Vec<_>, _>>()?;
    let mut a = analyse(&sources, req)?;
    a.report.source = job.label.clone();
    Ok((a, sources))
}

/// The output path for fit `stem` when there are `n` fits: the path itself for one fit,
/// otherwise the input's stem inserted before the extension (`fit.json` → `fit-core-a.json`).
fn per_fit_path(path: &Path, stem: &str, n: usize) -> PathBuf {
    if n == 1 {
        return path.to_path_buf();
    }
    let base = path
        .file_stem()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_default();
    let name = match path.extension() {
        Some(e) => format!("{}-{}.{}", base, stem, e.to_string_lossy()),
        None => format!("{}-{}", base, stem),
    };
    path.with_file_name(name)
}

fn check_outputs(args: &Args, inputs: &[PathBuf]) -> Result<(), Failure> {
    let canon: Vec<PathBuf> = inputs
        .iter()
        .filter_map(|p| p.canonicalize().ok())
        .collect();
    for out in [&args.output, &args.plot, &args.summary]
        .into_iter()
        .flatten()
    {
        if out.canonicalize().is_ok_and(|c| canon.contains(&c)) {
            return Err(Failure::input(
                Diagnostic::new("the output would overwrite an input file")
                    .file(out)
                    .expected("a new file name")
                    .to_string(),
            ));
        }
    }
    Ok(())
}

/// Write one fit's files; returns what was written, for the user.
fn write_outputs(
    args: &Args,
    job: &Job,
    a: &Analysis,
    sources: &[SourceData],
    n: usize,
) -> Result<Vec<PathBuf>, Failure> {
    let mut written = Vec::new();
    if let Some(o) = &args.output {
        let path = per_fit_path(o, &job.stem, n);
        let mut text = serde_json::to_string_pretty(&a.report)
            .map_err(|e| Failure::input(format!("cannot encode the fit report: {e}")))?;
        text.push('\n');
        crate::fsutil::write_atomic(&path, text.as_bytes())?;
        written.push(path);
    }
    if let Some(p) = &args.plot {
        let path = per_fit_path(p, &job.stem, n);
        let (freq, measured) = merged(sources);
        let fitted = a.outcome.fitted(&freq);
        let title = format!("{} fitted to {}", a.report.model, job.label);
        write_fit_plot(
            &path,
            &FitPlot {
                freq_hz: &freq,
                measured: &measured,
                fitted: &fitted,
                title: &title,
            },
        )?;
        written.push(path);
    }
    Ok(written)
}

fn candidates_text(a: &Analysis) -> String {
    if a.candidates.is_empty() {
        return String::new();
    }
    let mut ok: Vec<(&str, f64, &str)> = a
        .candidates
        .iter()
        .filter_map(|c| {
            let mark = match (c.terms_above_noise, c.determined) {
                (false, _) => " †",
                (true, false) => " *",
                (true, true) => "",
            };
            c.bic.as_ref().ok().map(|b| (c.spec.as_str(), *b, mark))
        })
        .collect();
    ok.sort_by(|x, y| x.1.total_cmp(&y.1));
    let chosen = a.report.stats.bic;
    let mut out = String::from(
        "candidates (BIC relative to the chosen model; * = some parameter not determined, chosen only \
         if no determined candidate is within ΔBIC 10; † = a term smaller than the misfit, never chosen):\n",
    );
    for (spec, bic, mark) in ok {
        out += &format!("  {:<36} {:>10.1}{}\n", spec, bic - chosen, mark);
    }
    for c in a.candidates.iter().filter(|c| c.bic.is_err()) {
        out += &format!(
            "  {:<36} not fitted: {}\n",
            c.spec,
            c.bic.as_ref().err().map(String::as_str).unwrap_or("")
        );
    }
    out
}

pub fn run(args: Args) -> Result<(), Failure> {
    let request = FitRequest {
        model: ModelChoice::parse(&args.model)?,
        options: FitOptions {
            free_mu_inf: args.free_mu_inf,
            ..FitOptions::default()
        },
        js: parse_js(args.js.as_deref())?,
    };
    let inputs = expand_inputs(&args.files)?;
    check_outputs(&args, &inputs)?;
    let jobs = plan_jobs(&inputs, &args)?;
    let plan = args
        .core
        .as_deref()
        .map(|core| args.winding.plan(core))
        .transpose()?;
    let progress = if jobs.len() > 1 && std::io::stderr().is_terminal() {
        let pb = ProgressBar::new(jobs.len() as u64);
        if let Ok(style) = ProgressStyle::with_template("fitting {bar:40} {pos}/{len} {elapsed}") {
            pb.set_style(style);
        }
        pb
    } else {
        ProgressBar::hidden()
    };
    let results: Vec<Result<(Analysis, Vec<SourceData>), Failure>> = jobs
        .par_iter()
        .map(|j| {
            let r = run_job(j, plan.as_ref(), &request);
            progress.inc(1);
            r
        })
        .collect();
    progress.finish_and_clear();

    let n = jobs.len();
    let mut reports = Vec::new();
    let mut failed = Vec::new();
    for (job, result) in jobs.iter().zip(results) {
        let (a, sources) = match result {
            Ok(x) => x,
            Err(f) => {
                failed.push(f);
                continue;
            }
        };
        let written = write_outputs(&args, job, &a, &sources, n)?;
        if args.json {
            let line = serde_json::to_string(&json_view(&a.report))
                .map_err(|e| Failure::input(format!("cannot encode the fit report: {e}")))?;
            println!("{line}");
            written
                .iter()
                .for_each(|p| eprintln!("wrote {}", p.display()));
        } else {
            print!("{}", text_report::render(&a.report));
            print!("{}", candidates_text(&a));
            written
                .iter()
                .for_each(|p| println!("wrote {}", p.display()));
            if n > 1 {
                println!();
            }
        }
        reports.push(a.report);
    }
    if let Some(s) = &args.summary {
        if !reports.is_empty() {
            let rows = summary::write_summary(s, &reports)?;
            let msg = format!("wrote {} ({} rows)", s.display(), rows);
            if args.json {
                eprintln!("{msg}");
            } else {
                println!("{msg}");
            }
        }
    }
    match failed.len() {
        0 => Ok(()),
        1 if n == 1 => Err(failed.remove(0)),
        k => {
            for f in &failed {
                eprintln!("error: {}", f);
            }
            Err(Failure::input(format!(
                "{} of {} fits failed (errors above)",
                k, n
            )))
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn source_lines_parse_with_spaces_in_names() {
        let (f, s, t) = parse_source_line("core a 2t.s1p sha256=abc123 turns=2").unwrap();
        assert_eq!(
            (f.as_str(), s.as_str(), t),
            ("core a 2t.s1p", "abc123", 2.0)
        );
        assert!(parse_source_line("no hash here").is_none());
    }

    #[test]
    fn per_fit_paths_keep_one_name_for_one_fit() {
        assert_eq!(
            per_fit_path(Path::new("out/fit.json"), "a", 1),
            PathBuf::from("out/fit.json")
        );
        assert_eq!(
            per_fit_path(Path::new("out/fit.json"), "core-a", 3),
            PathBuf::from("out/fit-core-a.json")
        );
    }

    /// Option names are a contract: `fit` accepts the same correction options as `extract`
    /// (issue: fitting engine, item 3), with `-o`, `--plot`, `--model` and `--json` besides.
    #[test]
    fn extract_and_fit_take_the_same_correction_options() {
        use clap::CommandFactory;
        let cli = crate::cli::Cli::command();
        let flags = |name: &str| -> Vec<String> {
            let cmd = cli.find_subcommand(name).unwrap();
            cmd.get_arguments()
                .flat_map(|a| {
                    a.get_long()
                        .map(|l| format!("--{l}"))
                        .into_iter()
                        .chain(a.get_short().map(|c| format!("-{c}")))
                })
                .collect()
        };
        let (extract, fit) = (flags("extract"), flags("fit"));
        for flag in [
            "--core",
            "--cores-file",
            "--turns",
            "--cores",
            "--method",
            "--z0",
            "--empty",
            "--open",
            "--short",
            "--columns",
            "--ports",
            "--lead-inductance",
            "--solve-lead",
            "--gap",
            "--winding-capacitance",
            "--plot",
            "-o",
        ] {
            assert!(extract.iter().any(|f| f == flag), "extract lacks {flag}");
            assert!(fit.iter().any(|f| f == flag), "fit lacks {flag}");
        }
        for flag in ["--model", "--json"] {
            assert!(fit.iter().any(|f| f == flag), "fit lacks {flag}");
        }
    }

    #[test]
    fn data_files_by_extension() {
        for ok in ["a.csv", "b.S1P", "c.s2p", "d.ts", "e.s12p"] {
            assert!(is_data_file(Path::new(ok)), "{ok}");
        }
        for no in ["a.json", "b.sp", "c.svg", "readme"] {
            assert!(!is_data_file(Path::new(no)), "{no}");
        }
    }
}
