//! `mucurve bench [--sweeps N] [--points P] [--repeat R] [--export LOT.json]`: time the fit
//! engine on synthetic spin + wall (debye + lorentz) spectra with known parameters.
//!
//! Figures: one P-point fit (the full pipeline: starts read from the data, multi-start, best
//! optimum; and a single least-squares run from the primary start), and an N-sweep lot timed
//! three ways — single-start fits one after another (the figure to set beside scipy's fit time
//! from the same starts), full-pipeline fits one after another, and the whole process (fit,
//! Lin-KK, sanity, report) over all cores. `--export` writes the lot, the starts and our optima
//! for `tests/reference/scipy_bench.py`, which fits the same residual from the same starts with
//! scipy's `least_squares(method="lm")` and compares times and optima.

use super::Failure;
use crate::fit::analysis::{analyse, FitRequest, ModelChoice};
use crate::fit::build_report::SourceData;
use crate::fit::engine::{fit_from_starts, fit_model, starts_for, FitOptions, FitOutcome};
use crate::fit::problem::MuProblem;
use crate::fit::sanity::SaturationPolarisation;
use crate::fit::synthetic::{debye_lorentz_lot, SyntheticSweep};
use crate::model::{Model, TermKind};
use rayon::prelude::*;
use serde_json::json;
use std::path::PathBuf;
use std::time::Instant;

#[derive(Debug, clap::Args)]
pub struct Args {
    /// Sweeps in the lot.
    #[arg(long, default_value_t = 200)]
    pub sweeps: usize,
    /// Frequencies per sweep (log-spaced, 100 kHz to 1 GHz).
    #[arg(long, default_value_t = 1601)]
    pub points: usize,
    /// Relative complex Gaussian noise per component.
    #[arg(long, default_value_t = 0.005)]
    pub noise: f64,
    /// Repetitions of the single-fit timing (the median is reported).
    #[arg(long, default_value_t = 20)]
    pub repeat: usize,
    #[arg(long, default_value_t = 1)]
    pub seed: u64,
    /// Write the lot, starts and optima as JSON for tests/reference/scipy_bench.py.
    #[arg(long, value_name = "LOT.json")]
    pub export: Option<PathBuf>,
}

const KINDS: [TermKind; 2] = [TermKind::Debye, TermKind::Lorentz];

fn median_ms(mut v: Vec<f64>) -> f64 {
    v.sort_by(f64::total_cmp);
    1e3 * v[v.len() / 2]
}

/// The start the engine reads from the data first (the one scipy is given too).
fn primary_start(s: &SyntheticSweep, opts: &FitOptions) -> Model {
    starts_for(&s.freq_hz, &s.mu, &KINDS, opts).remove(0)
}

fn timed<T>(f: impl FnOnce() -> T) -> (T, f64) {
    let t = Instant::now();
    let out = f();
    (out, t.elapsed().as_secs_f64())
}

fn outcome_json(o: &FitOutcome) -> serde_json::Value {
    json!({ "cost": o.stats.cost, "external": o.model.to_params(), "iterations": o.stats.iterations, "converged": o.converged })
}

pub fn run(args: Args) -> Result<(), Failure> {
    if args.sweeps == 0 || args.points < 16 || args.repeat == 0 || !(args.noise >= 0.0) {
        return Err(Failure::input(
            "bench: need --sweeps ≥ 1, --points ≥ 16, --repeat ≥ 1 and --noise ≥ 0",
        ));
    }
    let opts = FitOptions::default();
    let lot = debye_lorentz_lot(args.sweeps, args.points, args.noise, args.seed);
    let first = &lot[0];
    let start0 = primary_start(first, &opts);
    let fit_err = |e: crate::fit::FitError| Failure::input(format!("bench fit failed: {e}"));

    let mut full = Vec::new();
    let mut single = Vec::new();
    for _ in 0..args.repeat {
        full.push(timed(|| fit_model(&first.freq_hz, &first.mu, &KINDS, &opts)).1);
        single.push(
            timed(|| {
                fit_from_starts(
                    &first.freq_hz,
                    &first.mu,
                    &KINDS,
                    std::slice::from_ref(&start0),
                    &opts,
                )
            })
            .1,
        );
    }
    println!("one {}-point debye+lorentz fit:", args.points);
    println!(
        "  full pipeline (starts from the data, multi-start)  {:8.3} ms (median of {})",
        median_ms(full),
        args.repeat
    );
    println!(
        "  one least-squares run from the primary start       {:8.3} ms",
        median_ms(single)
    );

    let starts: Vec<Model> = lot.iter().map(|s| primary_start(s, &opts)).collect();
    let (same_start, t_same) = timed(|| {
        lot.iter()
            .zip(&starts)
            .map(|(s, st)| {
                fit_from_starts(&s.freq_hz, &s.mu, &KINDS, std::slice::from_ref(st), &opts)
            })
            .collect::<Result<Vec<_>, _>>()
    });
    let same_start = same_start.map_err(fit_err)?;
    let (pipeline, t_pipe) = timed(|| {
        lot.iter()
            .map(|s| fit_model(&s.freq_hz, &s.mu, &KINDS, &opts))
            .collect::<Result<Vec<_>, _>>()
    });
    let pipeline = pipeline.map_err(fit_err)?;
    let request = FitRequest {
        model: ModelChoice::Kinds(KINDS.to_vec()),
        options: opts.clone(),
        js: SaturationPolarisation::Typical,
    };
    let (whole, t_whole) = timed(|| {
        lot.par_iter()
            .enumerate()
            .map(|(i, s)| {
                let src = SourceData {
                    label: format!("sweep-{i}"),
                    freq_hz: s.freq_hz.clone(),
                    mu: s.mu.clone(),
                    provenance: vec![],
                    warnings: vec![],
                    sanity: vec![],
                };
                analyse(std::slice::from_ref(&src), &request)
            })
            .collect::<Result<Vec<_>, _>>()
    });
    let whole = whole.map_err(fit_err)?;
    let n = lot.len() as f64;
    println!("{}-sweep lot ({} points each):", lot.len(), args.points);
    println!(
        "  single-start fits, one after another      {:8.3} s  ({:.3} ms per fit)",
        t_same,
        1e3 * t_same / n
    );
    println!(
        "  full-pipeline fits, one after another     {:8.3} s  ({:.3} ms per fit)",
        t_pipe,
        1e3 * t_pipe / n
    );
    println!(
        "  whole process (fit + Lin-KK + sanity + report), {} threads  {:8.3} s  ({:.3} ms per sweep)",
        rayon::current_num_threads(),
        t_whole,
        1e3 * t_whole / n
    );
    let better = pipeline
        .iter()
        .zip(&same_start)
        .filter(|(p, s)| p.stats.cost < s.stats.cost * (1.0 - 1e-9))
        .count();
    println!(
        "  the multi-start found a lower optimum than the single start on {} of {} sweeps",
        better,
        lot.len()
    );
    let kk_pass = whole.iter().filter(|a| a.report.kk.pass).count();
    println!("  Lin-KK passed on {} of {} sweeps", kk_pass, lot.len());

    if let Some(path) = &args.export {
        let problem = MuProblem::new(
            first.freq_hz.clone(),
            first.mu.clone(),
            KINDS.to_vec(),
            false,
            opts.mu_inf,
        )?;
        let sweeps: Vec<serde_json::Value> = lot
            .iter()
            .zip(&starts)
            .zip(same_start.iter().zip(&pipeline))
            .map(|((s, st), (one, many))| {
                json!({
                    "mu_re": s.mu.iter().map(|m| m.re).collect::<Vec<_>>(),
                    "mu_im": s.mu.iter().map(|m| m.im).collect::<Vec<_>>(),
                    "truth_external": s.truth.to_params(),
                    "start_external": st.to_params(),
                    "start_internal": problem.to_internal(st).to_vec(),
                    "ours_same_start": outcome_json(one),
                    "ours_pipeline": outcome_json(many),
                })
            })
            .collect();
        let doc = json!({
            "generator": format!("mucurve {} bench", crate::TOOL_VERSION),
            "kinds": KINDS.iter().map(|k| k.name()).collect::<Vec<_>>(),
            "free_mu_inf": false,
            "mu_inf_fixed": opts.mu_inf,
            "internal_names": problem.param_names(),
            "noise_rel": args.noise,
            "seed": args.seed,
            "freq_hz": first.freq_hz,
            "timing_s": { "same_start_sequential": t_same, "pipeline_sequential": t_pipe, "whole_process_parallel": t_whole, "threads": rayon::current_num_threads() },
            "sweeps": sweeps,
        });
        let text = serde_json::to_string(&doc)
            .map_err(|e| Failure::input(format!("cannot encode the lot: {e}")))?;
        crate::fsutil::write_atomic(path, text.as_bytes())?;
        println!("wrote {}", path.display());
    }
    Ok(())
}
