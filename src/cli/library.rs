//! `mucurve library ...`: list, show, history, diff, promote, retire, catalog, verify.

use super::Failure;
use crate::library::{
    catalog::write_catalog, diff::diff, layout::DEFAULT_LIBRARY, query::HistoryEntry, vetting,
    Library, Status, VersionRef,
};
use std::path::PathBuf;

#[derive(Debug, clap::Args)]
pub struct Args {
    /// Library folder.
    #[arg(long, global = true, default_value = DEFAULT_LIBRARY)]
    pub library: PathBuf,
    #[command(subcommand)]
    pub command: Sub,
}

#[derive(Debug, clap::Subcommand)]
pub enum Sub {
    /// Every published version with its status.
    List {
        /// Only versions with this status: draft, vetted or retired.
        #[arg(long)]
        status: Option<String>,
        /// One JSON array instead of a table.
        #[arg(long)]
        json: bool,
    },
    /// One version (the latest when no @N is given), with the vetting rules' verdicts.
    Show {
        /// ID or ID@N.
        reference: String,
        /// The material file as JSON, plus its status.
        #[arg(long)]
        json: bool,
    },
    /// Publishes and lifecycle events of a material, oldest first.
    History { id: String },
    /// Parameter deltas and the largest curve deviation between two versions.
    Diff {
        /// ID@A (the reference).
        a: String,
        /// ID@B.
        b: String,
        #[arg(long)]
        json: bool,
    },
    /// Mark a draft version vetted, if it meets the vetting rules.
    Promote {
        /// ID@N.
        reference: String,
        /// Who vets it.
        #[arg(long)]
        by: String,
        /// Why (review, measurements seen, ...).
        #[arg(long)]
        why: String,
    },
    /// Retire a version.
    Retire {
        /// ID@N.
        reference: String,
        #[arg(long)]
        why: String,
        /// The version that replaces it (ID@M).
        #[arg(long)]
        superseded_by: Option<String>,
        /// Who retires it (default: the USER environment variable).
        #[arg(long)]
        by: Option<String>,
    },
    /// One row per version with key figures, to CSV or Parquet (by the file extension).
    Catalog {
        #[arg(short = 'o', long = "output")]
        output: PathBuf,
    },
    /// Re-hash every file, check schema, numbering and event logs; non-zero exit on any fault.
    Verify,
}

/// The library at `dir`; new versions and events are stamped with `SOURCE_DATE_EPOCH` (the
/// reproducible-builds convention, Unix seconds) when it is set, else with the clock.
pub fn open(dir: &std::path::Path) -> Library {
    let fixed = std::env::var("SOURCE_DATE_EPOCH")
        .ok()
        .and_then(|s| s.trim().parse::<i64>().ok());
    Library::new(dir).with_fixed_time(fixed)
}

pub fn run(args: Args) -> Result<(), Failure> {
    let lib = open(&args.library);
    match args.command {
        Sub::List { status, json } => list(
            &lib,
            status.as_deref().map(Status::parse).transpose()?,
            json,
        ),
        Sub::Show { reference, json } => show(&lib, &VersionRef::parse(&reference)?, json),
        Sub::History { id } => history(&lib, &id),
        Sub::Diff { a, b, json } => diff_cmd(&lib, &a, &b, json),
        Sub::Promote { reference, by, why } => {
            let (id, v) = VersionRef::parse_pinned(&reference)?;
            let e = lib.promote(&id, v, &by, &why)?;
            println!("{}@{} is vetted (event {} by {})", id, v, e.seq, e.by);
            Ok(())
        }
        Sub::Retire {
            reference,
            why,
            superseded_by,
            by,
        } => {
            let (id, v) = VersionRef::parse_pinned(&reference)?;
            let by = by
                .or_else(|| std::env::var("USER").ok())
                .unwrap_or_else(|| "unknown".into());
            let e = lib.retire(&id, v, &by, &why, superseded_by.as_deref())?;
            let successor = e
                .superseded_by
                .map(|s| format!(", superseded by {}", s))
                .unwrap_or_default();
            println!("{}@{} is retired (event {}{})", id, v, e.seq, successor);
            Ok(())
        }
        Sub::Catalog { output } => {
            let rows = write_catalog(&lib, &output)?;
            println!("wrote {} ({} version(s))", output.display(), rows);
            Ok(())
        }
        Sub::Verify => verify(&lib),
    }
}

fn to_json<T: serde::Serialize>(v: &T) -> Result<String, Failure> {
    serde_json::to_string_pretty(v).map_err(|e| Failure::input(format!("cannot write JSON: {}", e)))
}

fn list(lib: &Library, status: Option<Status>, json: bool) -> Result<(), Failure> {
    let rows = lib.list(status)?;
    if json {
        println!("{}", to_json(&rows)?);
        return Ok(());
    }
    println!(
        "{:<24} {:>4} {:<8} {:<20} {:<26} {:>8}  band",
        "material", "ver", "status", "created", "model", "rms"
    );
    for r in rows {
        println!(
            "{:<24} {:>4} {:<8} {:<20} {:<26} {:>7.2}%  {:.3e}–{:.3e} Hz",
            r.material,
            r.version,
            r.status,
            r.created,
            r.model,
            100.0 * r.rms_rel,
            r.f_min_hz,
            r.f_max_hz
        );
    }
    Ok(())
}

fn show(lib: &Library, r: &VersionRef, json: bool) -> Result<(), Failure> {
    let m = lib.resolve(r)?;
    let status = lib.status(&m.material, m.version)?;
    let rules = vetting::evaluate(&m);
    if json {
        let mut doc = serde_json::to_value(&m).map_err(|e| Failure::input(e.to_string()))?;
        if let Some(o) = doc.as_object_mut() {
            o.insert("status".into(), serde_json::json!(status));
            o.insert("vetting".into(), serde_json::json!(rules));
        }
        println!("{}", to_json(&doc)?);
        return Ok(());
    }
    println!(
        "{}  status {}  created {}  tool {}",
        m.reference(),
        status,
        m.created,
        m.tool_version
    );
    if let Some(n) = &m.note {
        println!("note: {}", n);
    }
    println!(
        "model {}  band {:.4e} – {:.4e} Hz",
        m.model.spec, m.band.f_min_hz, m.band.f_max_hz
    );
    println!("  mu_inf = {}", estimate(&m.model.mu_inf));
    for (i, t) in m.model.terms.iter().enumerate() {
        // In the order the model defines them (delta_mu, f_hz, shape), not alphabetically.
        let order = crate::model::TermKind::parse(&t.kind)
            .map(|k| k.param_names())
            .unwrap_or(&[]);
        let mut params: Vec<_> = t.params.iter().collect();
        params.sort_by_key(|(name, _)| order.iter().position(|o| o == name).unwrap_or(usize::MAX));
        for (name, e) in params {
            println!("  term{}.{}.{} = {}", i + 1, t.kind, name, estimate(e));
        }
    }
    println!(
        "fit: rms_rel {:.3} %, max_rel {:.3} %, {} points; KK {}",
        100.0 * m.stats.rms_rel,
        100.0 * m.stats.max_rel,
        m.stats.points,
        if m.kk.pass { "pass" } else { "FAIL" }
    );
    for w in &m.warnings {
        let blocks = m.sanity.as_ref().is_some_and(|s| s.contains(w));
        println!("{}: {}", if blocks { "sanity" } else { "warning" }, w);
    }
    for p in &m.provenance {
        println!(
            "source: {} sha256 {} core {} turns {}",
            p.file,
            &p.sha256[..12.min(p.sha256.len())],
            p.core,
            p.turns
        );
    }
    println!("vetting rules:");
    for r in rules {
        println!(
            "  [{}] {}: {}",
            if r.pass { "pass" } else { "FAIL" },
            r.rule,
            r.detail
        );
    }
    Ok(())
}

fn estimate(e: &crate::fit::report::Estimate) -> String {
    match e.stderr {
        Some(s) => format!("{:.6e} ± {:.2e}", e.value, s),
        None => format!("{:.6e}", e.value),
    }
}

fn history(lib: &Library, id: &str) -> Result<(), Failure> {
    for HistoryEntry {
        at,
        version,
        what,
        by,
        why,
        superseded_by,
    } in lib.history(id)?
    {
        let mut line = format!("{}  {}@{}  {}", at, id, version, what);
        if let Some(b) = by {
            line += &format!(" by {}", b);
        }
        if let Some(w) = why {
            line += &format!(": {}", w);
        }
        if let Some(s) = superseded_by {
            line += &format!(" (superseded by {})", s);
        }
        println!("{}", line);
    }
    Ok(())
}

fn diff_cmd(lib: &Library, a: &str, b: &str, json: bool) -> Result<(), Failure> {
    let (ia, va) = VersionRef::parse_pinned(a)?;
    let (ib, vb) = VersionRef::parse_pinned(b)?;
    let d = diff(&lib.load(&ia, Some(va))?, &lib.load(&ib, Some(vb))?)?;
    if json {
        println!("{}", to_json(&d)?);
        return Ok(());
    }
    println!("{} ({})  →  {} ({})", d.a, d.model_a, d.b, d.model_b);
    let num = |x: Option<f64>| {
        x.map(|v| format!("{:.6e}", v))
            .unwrap_or_else(|| "—".into())
    };
    for p in &d.params {
        let rel = p
            .rel
            .map(|r| format!("{:+.3} %", 100.0 * r))
            .unwrap_or_default();
        println!(
            "  {:<28} {:>14} → {:>14}  {}",
            p.name,
            num(p.a),
            num(p.b),
            rel
        );
    }
    match &d.curve {
        Some(c) => println!(
            "largest |Δμ|/|μ| over the shared band {:.4e}–{:.4e} Hz: {:.3} % at {:.4e} Hz ({} log-spaced points)",
            c.f_lo_hz, c.f_hi_hz, c.max_pct, c.at_hz, c.points
        ),
        None => println!("the two versions' bands do not overlap: no curve comparison"),
    }
    Ok(())
}

fn verify(lib: &Library) -> Result<(), Failure> {
    let report = lib.verify();
    for n in &report.notes {
        println!("note: {}: {}", n.path.display(), n.message);
    }
    for f in &report.faults {
        println!("FAULT: {}: {}", f.path.display(), f.message);
    }
    println!(
        "checked {} material(s), {} version file(s), {} event(s): {} fault(s)",
        report.materials,
        report.versions,
        report.events,
        report.faults.len()
    );
    if report.ok() {
        Ok(())
    } else {
        Err(Failure::input(format!(
            "library {} has {} fault(s)",
            lib.root().display(),
            report.faults.len()
        )))
    }
}
