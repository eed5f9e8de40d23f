//! `mucurve extract FILE... --core SPEC [--turns N[,N...]] [--cores M] [--method M] [--z0 R]
//! [--empty FILE] [--lead-inductance L | --solve-lead] [--gap L] [--solid MU.csv]
//! [--winding-capacitance C] [--plot OUT.svg] -o OUT.csv`
//!
//! Writes `freq_hz,mu_prime,mu_double_prime` for the points inside the valid band, after a `#`
//! block with the core, its IEC 60205 parameters, the corrections found and the sources.

use super::Failure;
use crate::error::Diagnostic;
use crate::extract::{
    self, band::hz, ExtractSetup, LeadCorrection, LeadSource, Measurement, MuSpectrum,
};
use crate::geometry::{cores_file, Core, CoresFile};
use crate::ingest::{self, FixtureCorrection, IngestOptions};
use crate::plot::mu_plot::{write_mu_plot, MuPlot};
use crate::units::parse_quantity;
use std::path::{Path, PathBuf};

#[derive(Debug, clap::Args)]
pub struct Args {
    /// Measurement files of the same core, one winding each (Touchstone or CSV). With --empty,
    /// μ = 1 + (Z − Z_empty)/(jωL0), the empty-fixture form.
    #[arg(required = true, value_name = "FILE")]
    pub files: Vec<PathBuf>,
    /// The core: SHAPE:key=value,... with units, e.g. toroid:od=25mm,id=15mm,h=10mm, or a name
    /// from the cores file. Shapes: toroid, split, flat, given, stack.
    #[arg(long, value_name = "SPEC")]
    pub core: String,
    #[command(flatten)]
    pub winding: WindingArgs,
    /// μ table of the same material measured on a solid core: estimate this core's gap.
    #[arg(long, value_name = "MU.csv")]
    pub solid: Option<PathBuf>,
    /// Also draw μ′ and μ″ with the valid band shaded (.svg or .png).
    #[arg(long, value_name = "OUT.svg")]
    pub plot: Option<PathBuf>,
    /// Where to write freq_hz,mu_prime,mu_double_prime.
    #[arg(short = 'o', long = "output", value_name = "OUT.csv")]
    pub output: PathBuf,
}

/// How measurement files of one core become μ, besides the core itself: the windings, how the
/// files are read and corrected, and the corrections of the extraction. `mucurve extract` and
/// `mucurve fit` flatten this one group, so their options are the same.
#[derive(Debug, Clone, clap::Args)]
pub struct WindingArgs {
    /// Cores file of named cores (TOML). Default: cores.toml in the current folder (beside the
    /// library folder), when there is one.
    #[arg(long, value_name = "FILE")]
    pub cores_file: Option<PathBuf>,
    /// Turns of each file's winding, in file order; a single value applies to every file.
    #[arg(long, value_name = "N[,N...]", default_value = "1")]
    pub turns: String,
    /// Identical cores threaded in series on the winding.
    #[arg(long, value_name = "M", default_value_t = 1)]
    pub cores: u32,
    #[command(flatten)]
    pub sweep: super::ingest::SweepArgs,
    /// Stray series inductance of the leads to subtract, e.g. 35nH.
    #[arg(long, value_name = "L", conflicts_with = "solve_lead")]
    pub lead_inductance: Option<String>,
    /// Solve the lead inductance together with μ from windings of different turns (the files
    /// are windings of one core and make one spectrum).
    #[arg(long)]
    pub solve_lead: bool,
    /// Total residual gap (sum over all faces) replacing the spec's, e.g. 16um.
    #[arg(long, value_name = "L")]
    pub gap: Option<String>,
    /// Winding capacitance to remove from every winding, e.g. 2.2pF.
    #[arg(long, value_name = "C")]
    pub winding_capacitance: Option<String>,
}

/// Everything the files of one core need to become μ: the checked form of [`WindingArgs`].
#[derive(Debug, Clone)]
pub struct SweepPlan {
    pub setup: ExtractSetup,
    pub options: IngestOptions,
}

impl WindingArgs {
    /// Check the options for the core `spec` (resolved through the cores file, with --gap
    /// applied); nothing is read but the cores file.
    pub fn plan(&self, spec: &str) -> Result<SweepPlan, Failure> {
        let core = resolve_core(spec, self.cores_file.as_deref(), self.gap.as_deref())?;
        let stated = quantity(
            "--lead-inductance",
            self.lead_inductance.as_ref(),
            "H",
            "e.g. 35nH",
            MOST_LEAD_H,
        )?;
        let lead = match (stated, self.solve_lead) {
            (Some(l), _) => LeadCorrection::Stated(l),
            (None, true) => LeadCorrection::Solve,
            (None, false) => LeadCorrection::None,
        };
        let c_p = quantity(
            "--winding-capacitance",
            self.winding_capacitance.as_ref(),
            "F",
            "e.g. 2.2pF",
            MOST_CP_F,
        )?;
        let options = self.sweep.options()?;
        let setup = ExtractSetup {
            core,
            cores_in_series: self.cores,
            lead,
            empty_reference: matches!(options.fixture, FixtureCorrection::Empty(_)),
            c_p,
        };
        Ok(SweepPlan { setup, options })
    }
}

impl SweepPlan {
    /// Read and correct each file, paired with its winding's turns.
    pub fn read(&self, files: &[(PathBuf, f64)]) -> Result<Vec<Measurement>, Failure> {
        files
            .iter()
            .map(|(f, n)| {
                Ok(Measurement {
                    sweep: ingest::ingest_file(f, &self.options)?,
                    turns: *n,
                })
            })
            .collect()
    }
}

/// Largest stray lead inductance accepted: leads of a bench winding are tens of nH
/// (../shared/external/README.md); 10 µH is a mistyped unit.
const MOST_LEAD_H: f64 = 10e-6;
/// Largest winding capacitance accepted: few-turn windings are 1–5 pF [from memory]; 1 nF is a
/// mistyped unit.
const MOST_CP_F: f64 = 1e-9;

fn bad(option: &str, message: impl Into<String>, expected: &str, hint: &str) -> Failure {
    Failure::input(
        Diagnostic::new(format!("{}: {}", option, message.into()))
            .expected(expected)
            .hint(hint)
            .to_string(),
    )
}

/// The core named by --core (through the cores file when it names one), with --gap applied.
pub fn resolve_core(
    spec: &str,
    cores_path: Option<&Path>,
    gap: Option<&str>,
) -> Result<Core, Failure> {
    let default = Path::new(cores_file::FILE_NAME);
    let file = match cores_path {
        Some(p) => Some(CoresFile::load(p)?),
        None if default.is_file() => Some(CoresFile::load(default)?),
        None => None,
    };
    let core = match &file {
        Some(f) => f.resolve(spec)?,
        None => Core::parse(spec)?,
    };
    match gap {
        None => Ok(core),
        Some(text) => {
            let g = crate::geometry::spec::parse_power(text, 1).map_err(|e| {
                bad(
                    "--gap",
                    e,
                    "the total residual gap with a unit, e.g. 16um",
                    "the sum over both faces of a split core",
                )
            })?;
            Ok(core.with_gap(g)?)
        }
    }
}

/// One turn count per file, or one for all.
pub fn parse_turns(text: &str, files: usize) -> Result<Vec<f64>, Failure> {
    let expected =
        "positive turn counts separated by commas, one per file or one for all, e.g. --turns 1,2";
    let values: Result<Vec<f64>, _> = text
        .split(',')
        .map(|t| {
            t.trim()
                .parse::<f64>()
                .ok()
                .filter(|n| *n > 0.0 && n.is_finite())
                .ok_or(t.trim().to_string())
        })
        .collect();
    let values = values.map_err(|t| {
        bad(
            "--turns",
            format!("'{}' is not a positive number of turns", t),
            expected,
            "e.g. --turns 8",
        )
    })?;
    match values.len() {
        1 => Ok(vec![values[0]; files]),
        n if n == files => Ok(values),
        n => Err(bad(
            "--turns",
            format!("{} values for {} files", n, files),
            expected,
            "give the turns in the same order as the files",
        )),
    }
}

/// A non-negative quantity no larger than `most` (a bare number is SI, so `35` would be 35 H:
/// refuse what cannot be meant).
fn quantity(
    option: &str,
    text: Option<&String>,
    unit: &str,
    example: &str,
    most: f64,
) -> Result<Option<f64>, Failure> {
    match text {
        None => Ok(None),
        Some(t) => {
            let v = parse_quantity(t, unit).map_err(|e| bad(option, e, example, ""))?;
            if !(0.0..=most).contains(&v) {
                return Err(bad(
                    option,
                    format!("'{}' is {} {}, outside 0 to {} {}", t, v, unit, most, unit),
                    example,
                    "a bare number is in SI units; add a prefix, e.g. n or p",
                ));
            }
            Ok(Some(v))
        }
    }
}

fn check_output(output: &Path, inputs: &[&Path]) -> Result<(), Failure> {
    let same =
        |a: &Path| matches!((a.canonicalize(), output.canonicalize()), (Ok(x), Ok(y)) if x == y);
    if inputs.iter().any(|p| same(p)) {
        return Err(Failure::input(
            Diagnostic::new("the output would overwrite an input file")
                .file(output)
                .expected("-o naming a new file")
                .to_string(),
        ));
    }
    Ok(())
}

pub fn run(args: Args) -> Result<(), Failure> {
    let plan = args.winding.plan(&args.core)?;
    let turns = parse_turns(&args.winding.turns, args.files.len())?;
    let mut inputs: Vec<&Path> = args.files.iter().map(PathBuf::as_path).collect();
    inputs.extend(args.solid.as_deref());
    check_output(&args.output, &inputs)?;
    if let Some(p) = &args.plot {
        check_output(p, &inputs)?;
    }
    let solid = match &args.solid {
        None => None,
        Some(p) => {
            let text = std::fs::read_to_string(p).map_err(|e| {
                Failure::input(
                    Diagnostic::new(format!("cannot read the μ table: {}", e))
                        .file(p)
                        .to_string(),
                )
            })?;
            Some(
                extract::read_mu_table(&text)
                    .map_err(|e| Failure::input(e.0.in_file(p).to_string()))?,
            )
        }
    };

    let files: Vec<(PathBuf, f64)> = args.files.iter().cloned().zip(turns).collect();
    let mut spectrum = extract::extract(&plan.read(&files)?, &plan.setup)?;
    if let Some(t) = &solid {
        spectrum.gap_estimate = Some(extract::estimate_gap_against(&spectrum, t)?);
    }

    if let Some(p) = &args.plot {
        let title = format!("μ′, μ″ — {}", spectrum.core.spec());
        write_mu_plot(
            p,
            &MuPlot {
                freq_hz: &spectrum.freq_hz,
                mu: &spectrum.mu,
                valid: spectrum.valid,
                title: &title,
            },
        )?;
    }
    crate::fsutil::write_atomic(&args.output, extract::write_mu_table(&spectrum).as_bytes())?;
    for w in &spectrum.warnings {
        eprintln!("warning: {}", w);
    }
    print!("{}", summary(&spectrum, &args));
    Ok(())
}

/// The short report printed after a successful run.
fn summary(s: &MuSpectrum, args: &Args) -> String {
    let e = s.core.effective();
    // IEC 60205 cl. 2.1 practice: C1, C2 to five significant figures, le, Ae, Ve to three.
    let mut out = format!(
        "core {}: C1 = {} /mm, C2 = {} /mm3, le = {} mm, Ae = {} mm2, Ve = {} mm3\n",
        s.core.spec(),
        sig(e.c1 * 1e-3, 5),
        sig(e.c2 * 1e-9, 5),
        sig(e.le() * 1e3, 3),
        sig(e.ae() * 1e6, 3),
        sig(e.ve() * 1e9, 3)
    );
    if s.core.gap_m() > 0.0 {
        out += &format!(
            "  gap: {:.3} um in total; μ written is the material's (1/μ = 1/μ_e − l_g/l_e)\n",
            s.core.gap_m() * 1e6
        );
    }
    for w in &s.windings {
        let band = w
            .band
            .map(|(a, b)| format!("{} to {}", hz(a), hz(b)))
            .unwrap_or_else(|| "none".into());
        out += &format!(
            "  {} (N = {}): band {}\n",
            w.source.file_name(),
            w.turns,
            band
        );
        for r in &w.reasons {
            out += &format!("    {}\n", r);
        }
        if let (Some(f), Some(c)) = (w.f_sr, w.c_p) {
            out += &format!(
                "    self-resonance {}, winding capacitance ≈ {:.3} pF\n",
                hz(f),
                c * 1e12
            );
        }
    }
    match &s.l_lead {
        Some(l) if l.source == LeadSource::Solved => {
            out += &format!(
                "  lead inductance solved: {:.2} nH (16th–84th percentile over the band {:.2} to {:.2} nH)\n",
                l.henry * 1e9,
                l.p16 * 1e9,
                l.p84 * 1e9
            )
        }
        Some(l) => out += &format!("  lead inductance subtracted: {:.2} nH (stated)\n", l.henry * 1e9),
        None => {}
    }
    if let Some(g) = &s.gap_estimate {
        out += &format!(
            "  gap estimated against the solid core: {:.3} um in total (16th–84th percentile {:.3} to {:.3} um)\n",
            g.total_m * 1e6,
            g.p16_m * 1e6,
            g.p84_m * 1e6
        );
    }
    let n = s.valid_indices().len();
    out += &format!(
        "  valid band: {} to {} ({} points written)\n",
        hz(s.valid.0),
        hz(s.valid.1),
        n
    );
    if let Some(m) = s.median_mu_prime(s.valid.0, s.valid.1) {
        out += &format!("  median μ′ in the band: {:.4}\n", m);
    }
    if !s.warnings.is_empty() {
        out += &format!("  {} warning(s), see stderr\n", s.warnings.len());
    }
    out += &format!("wrote {}\n", args.output.display());
    if let Some(p) = &args.plot {
        out += &format!("wrote {}\n", p.display());
    }
    out
}

/// `x` rounded to `n` significant figures, in plain notation.
fn sig(x: f64, n: i32) -> String {
    if x == 0.0 || !x.is_finite() {
        return format!("{}", x);
    }
    let decimals = (n - 1 - x.abs().log10().floor() as i32).max(0) as usize;
    let p = 10f64.powi(n - 1 - x.abs().log10().floor() as i32);
    format!("{:.*}", decimals, (x * p).round() / p)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn turns_one_per_file_or_one_for_all() {
        assert_eq!(parse_turns("1,2", 2).unwrap(), vec![1.0, 2.0]);
        assert_eq!(parse_turns("8", 3).unwrap(), vec![8.0; 3]);
        assert!(parse_turns("1,2,3", 2).is_err());
        assert!(parse_turns("0", 1).is_err());
        assert!(parse_turns("two", 1).is_err());
    }

    // IEC 60205 cl. 2.1 rounding practice (PHYSICS.md §1): five figures for C1, three for le.
    #[test]
    fn iec_significant_figures() {
        assert_eq!(sig(0.906472, 5), "0.90647");
        assert_eq!(sig(43.5519, 3), "43.6");
        assert_eq!(sig(2092.5, 3), "2090");
        assert_eq!(sig(0.0188669, 5), "0.018867");
    }
}
