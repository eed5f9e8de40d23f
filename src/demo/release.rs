//! The demo's last steps: fit one shared model per material to the spectra of its cores, publish
//! each fit into the demo library, and vet the versions that meet the library's rules.
//!
//! The story the steps tell: driftwood is first published from every lot it came in, including
//! the off-spec lot DW-2502; vetting refuses it because the samples disagree. It is published
//! again from the on-spec lots, vetted, and the first version is retired as superseded. The
//! MnZn-like material keeps its size-effect warning and stays a draft.

use super::materials::{self, Material};
use super::pipeline::{io_error, own_warnings, Event, Group, Item, Said, Summary};
use super::DemoError;
use crate::error::Diagnostic;
use crate::export::{self, Request};
use crate::extract::band::hz;
use crate::fit::analysis::{analyse, FitRequest, ModelChoice};
use crate::fit::engine::FitOptions;
use crate::fit::report::FitReport;
use crate::fit::sanity::SaturationPolarisation;
use crate::fit::source::SourceData;
use crate::ingest::ImpedanceSweep;
use crate::library::{material::Material as Version, vetting, Library};
use crate::model::{Model, Term, TermKind};
use std::path::{Path, PathBuf};

/// The time written into the demo library (2025-02-14T09:00:00Z, after the last measurement),
/// so the library is the same on every run.
pub const PUBLISHED_AT_UNIX: i64 = 1_739_523_600;
/// Who vets and retires in the demo's lifecycle events.
pub const BY: &str = "EMC bench (demo)";

/// One fit to publish: a material and the extracted spectra it rests on.
pub(super) struct Release {
    pub material: Material,
    /// File stem of the fit report, e.g. `driftwood_all-lots`.
    pub name: String,
    /// Indices into the groups.
    pub groups: Vec<usize>,
    /// True when an off-spec lot is among the sources.
    pub with_off_spec: bool,
    pub note: String,
    pub fit_path: Option<PathBuf>,
    pub version: Option<u32>,
    pub vetted: bool,
}

/// Per material: one release from its on-spec lots, preceded (when the material has an off-spec
/// lot) by one from every lot.
pub(super) fn plan_releases(items: &[Item], groups: &[Group]) -> Vec<Release> {
    let lot_of = |g: &Group| &items[g.members[0]].entry;
    let mut releases = Vec::new();
    for material in materials::materials() {
        let mine: Vec<usize> = (0..groups.len())
            .filter(|&g| groups[g].spectrum.is_some() && lot_of(&groups[g]).material == material.id)
            .collect();
        let on_spec: Vec<usize> = mine.iter().copied().filter(|&g| !lot_of(&groups[g]).off_spec).collect();
        let lots = |gs: &[usize]| {
            let mut l: Vec<&str> = gs.iter().map(|&g| lot_of(&groups[g]).lot.as_str()).collect();
            l.sort();
            l.dedup();
            l.join(", ")
        };
        let release = |name: &str, gs: Vec<usize>, with_off_spec: bool| Release {
            name: format!("{}_{}", material.id, name),
            note: format!("demo: {} from lots {}", material.id, lots(&gs)),
            material: material.clone(),
            groups: gs,
            with_off_spec,
            fit_path: None,
            version: None,
            vetted: false,
        };
        if mine.len() > on_spec.len() {
            releases.push(release("all-lots", mine.clone(), true));
        }
        if !on_spec.is_empty() {
            releases.push(release("on-spec-lots", on_spec, false));
        }
    }
    releases
}

/// A group's spectrum inside its valid band, with the provenance of every sweep behind it and
/// the manifest's lot, sample, date and notes on each. The reader's notes on each file (a merged
/// segment boundary, noise outside the band) were reported at ingest and concern the files, not
/// the material, so the demo's fits leave them out; the export stage would repeat every warning
/// of a fit on each file it writes.
fn source_data(items: &[Item], g: &Group) -> Option<SourceData> {
    let s = g.spectrum.as_ref()?;
    let members: Vec<&Item> = g.members.iter().map(|&m| &items[m]).filter(|i| i.impedance.is_some()).collect();
    let sweeps: Vec<&ImpedanceSweep> = members.iter().filter_map(|i| i.impedance.as_ref()).collect();
    let mut data = SourceData::from_spectrum(s, &sweeps, &g.name);
    data.warnings = own_warnings(s);
    for (p, item) in data.provenance.iter_mut().zip(&members) {
        let e = &item.entry;
        p.notes = Some(format!("lot {}, sample {}, measured {}: {}", e.lot, e.sample, e.date, e.notes));
    }
    Some(data)
}

/// Step 4: fit every release (`--model auto`) and write its report as `fits/NAME.json`.
pub(super) fn fit_all(
    out_dir: &Path,
    items: &[Item],
    groups: &[Group],
    releases: &mut [Release],
    said: &mut Said,
    summary: &mut Summary,
    report: &mut dyn FnMut(Event),
) -> Result<(), DemoError> {
    let dir = out_dir.join("fits");
    report(Event::Step(format!(
        "Fit: one shared model per material, chosen by BIC among the candidate families -> {}",
        dir.display()
    )));
    std::fs::create_dir_all(&dir).map_err(|e| io_error(&dir, "create the folder", e))?;
    for r in releases.iter_mut() {
        let sources: Vec<SourceData> = r.groups.iter().filter_map(|&g| source_data(items, &groups[g])).collect();
        let req = FitRequest {
            model: ModelChoice::Auto,
            options: FitOptions::default(),
            js: SaturationPolarisation::Stated(r.material.j_s_tesla),
        };
        let fitted = analyse(&sources, &req).map_err(|e| e.to_string()).and_then(|a| {
            let path = dir.join(format!("{}.json", r.name));
            let text = serde_json::to_string_pretty(&a.report).map_err(|e| e.to_string())? + "\n";
            crate::fsutil::write_atomic(&path, text.as_bytes()).map_err(|e| e.to_string())?;
            Ok((a.report, path))
        });
        match fitted {
            Ok((fit, path)) => {
                summary.fitted += 1;
                report(Event::Detail(fit_line(r, sources.len(), &fit)));
                report(Event::Detail(format!("    {}", compare_with_truth(&fit, &r.material.model))));
                // Findings of earlier steps (the extraction's) were said there.
                for f in fit.sanity.iter().flatten().filter(|f| said.first_time(f)) {
                    report(Event::Warning(format!("{}: {}", r.name, f)));
                }
                r.fit_path = Some(path);
            }
            Err(reason) => {
                report(Event::Warning(format!("{}: not fitted: {}", r.name, reason)));
                summary.failures.push(format!("{}: {}", r.name, reason));
            }
        }
    }
    Ok(())
}

fn fit_line(r: &Release, sources: usize, fit: &FitReport) -> String {
    let runner = fit
        .runner_up
        .as_ref()
        .map(|u| format!(" (runner-up {}, ΔBIC {:.0})", u.model, u.delta_bic))
        .unwrap_or_default();
    let findings = match fit.sanity.as_ref().map_or(0, Vec::len) {
        0 => "no sanity findings".to_string(),
        1 => "1 sanity finding".to_string(),
        n => format!("{} sanity findings", n),
    };
    format!(
        "{:<26} {} sources: {}{}; rms {:.2} %, max {:.2} %; Kramers–Kronig {}; {}",
        r.name,
        sources,
        fit.model,
        runner,
        100.0 * fit.stats.rms_rel,
        100.0 * fit.stats.max_rel,
        if fit.kk.pass { "pass" } else { "FAIL" },
        findings
    )
}

/// The fitted model as a [`Model`] (None if the report names a kind this build does not know).
fn fitted_model(fit: &FitReport) -> Option<Model> {
    let terms = fit
        .terms
        .iter()
        .map(|t| {
            let kind = TermKind::parse(&t.kind).ok()?;
            let p: Option<Vec<f64>> = kind.param_names().iter().map(|n| t.params.get(*n).map(|e| e.value)).collect();
            Some(Term::from_params(kind, &p?))
        })
        .collect::<Option<Vec<Term>>>()?;
    Some(Model { mu_inf: fit.mu_inf.value, terms })
}

/// The fitted spectrum beside the invented truth, in figures that do not depend on the family
/// the fit chose: μ′ at the bottom of the fitted band and the μ″ peak.
fn compare_with_truth(fit: &FitReport, truth: &Model) -> String {
    let Some(model) = fitted_model(fit) else { return String::new() };
    let f_low = fit.f_min_hz;
    let peak = |m: &Model| {
        let f = materials::loss_peak_hz(m, fit.f_min_hz, fit.f_max_hz);
        (f, -m.mu(f).im)
    };
    let ((fp, lp), (tp, tl)) = (peak(&model), peak(truth));
    format!(
        "vs the demo's nominal truth ({}): μ′ {:.1} ({:.1}) at {}, peak μ″ {:.1} ({:.1}) at {} ({})",
        truth.spec(),
        model.mu(f_low).re,
        truth.mu(f_low).re,
        hz(f_low),
        lp,
        tl,
        hz(fp),
        hz(tp)
    )
}

/// Check that `dir` is missing or holds only demo materials (and the library's lock file) from an
/// earlier run, so that replacing it cannot lose anyone's work.
pub fn check_replaceable(dir: &Path) -> Result<(), DemoError> {
    if !dir.exists() {
        return Ok(());
    }
    let ours: Vec<&str> = materials::materials().iter().map(|m| m.id).collect();
    let entries = std::fs::read_dir(dir).map_err(|e| io_error(dir, "read the folder", e))?;
    for entry in entries {
        let name = entry.map_err(|e| io_error(dir, "read the folder", e))?.file_name().to_string_lossy().into_owned();
        if !ours.contains(&name.as_str()) && name != crate::library::layout::LOCK_FILE {
            return Err(Diagnostic::new(format!("the folder holds '{}', which is not a demo material", name))
                .file(dir)
                .expected(format!("no folder, or one holding only the demo materials ({})", ours.join(", ")))
                .hint(
                    "the demo replaces only a library of its own; with --regenerate it publishes into ./fitted_models, \
                     otherwise into DIR/fitted_models of --out DIR: move your library or choose another folder",
                )
                .into());
        }
    }
    Ok(())
}

/// Make `dir` an empty place for the demo library (see [`check_replaceable`]).
pub fn fresh_library(dir: &Path) -> Result<(), DemoError> {
    check_replaceable(dir)?;
    if dir.exists() {
        std::fs::remove_dir_all(dir).map_err(|e| io_error(dir, "clear the previous demo library", e))?;
    }
    Ok(())
}

/// Step 5: publish every fitted release into `library_dir`, then vet: promote what meets the
/// rules, report what does not, and retire the all-lots version a vetted one supersedes.
pub(super) fn publish_and_vet(
    library_dir: &Path,
    releases: &mut [Release],
    said: &mut Said,
    summary: &mut Summary,
    report: &mut dyn FnMut(Event),
) -> Result<(), DemoError> {
    report(Event::Step(format!("Publish: each fit as the next version of its material -> {}", library_dir.display())));
    fresh_library(library_dir)?;
    let lib = Library::new(library_dir).with_fixed_time(Some(PUBLISHED_AT_UNIX));
    for r in releases.iter_mut() {
        let Some(path) = &r.fit_path else { continue };
        match lib.publish_file(path, r.material.id, Some(r.note.clone())) {
            Ok(p) => {
                summary.published += 1;
                report(Event::Detail(format!("{}@{} <- {} ({})", p.material, p.version, r.name, r.note)));
                r.version = Some(p.version);
            }
            Err(e) => {
                report(Event::Warning(format!("{}: not published: {}", r.name, e)));
                summary.failures.push(format!("{}: {}", r.name, e));
            }
        }
    }
    report(Event::Step("Vet: promote the versions that meet the library's rules".to_string()));
    let mut vetted: Vec<(String, u32)> = Vec::new();
    for r in releases.iter_mut() {
        let (id, Some(v)) = (r.material.id, r.version) else { continue };
        let why = "demo: samples of the on-spec lots fitted by one causal model";
        match lib.promote(id, v, BY, why) {
            Ok(_) => {
                summary.vetted += 1;
                vetted.push((id.to_string(), v));
                r.vetted = true;
                report(Event::Detail(format!("{}@{} vetted", id, v)));
            }
            Err(e) => {
                let reasons = lib.load(id, Some(v)).map(|m| draft_reasons(&m, said)).unwrap_or_default();
                let reasons = if reasons.is_empty() { vec![e.0.message] } else { reasons };
                report(Event::Detail(format!("{}@{} stays draft:\n      {}", id, v, reasons.join("\n      "))));
            }
        }
    }
    for r in releases.iter().filter(|r| r.with_off_spec) {
        let (id, Some(v)) = (r.material.id, r.version) else { continue };
        let Some((_, newer)) = vetted.iter().find(|(m, n)| m == id && *n != v) else { continue };
        let successor = format!("{}@{}", id, newer);
        let why = "includes an off-spec lot; superseded by the on-spec version";
        lib.retire(id, v, BY, why, Some(&successor)).map_err(|e| DemoError(e.0))?;
        report(Event::Detail(format!("{}@{} retired, superseded by {}", id, v, successor)));
    }
    Ok(())
}

/// Why `m` cannot be vetted: each failed rule with its figures, the sanity findings one per line
/// (each said once in the demo's output).
fn draft_reasons(m: &Version, said: &mut Said) -> Vec<String> {
    let mut out = Vec::new();
    for rule in vetting::failures(m) {
        match (rule.rule, &m.sanity) {
            ("sanity", Some(findings)) if !findings.is_empty() => {
                out.push("rule sanity failed:".to_string());
                out.extend(findings.iter().map(|f| format!("   {}", said.once(f))));
            }
            _ => out.push(format!("rule {} failed: {}", rule.rule, rule.detail)),
        }
    }
    out
}

/// The part the organisation puts on its cable entries: one pass of the cable through the clip-on
/// sleeve, with the short loop of a cable entry as lead.
pub const CABLE_ENTRY_CORE: &str = "split:od=17.5mm,id=8.5mm,h=28mm,gap=6um";
pub const CABLE_ENTRY_LEAD: &str = "20nH";

/// Step 7: for every vetted version, the cable-entry part as a SPICE sub-circuit and as a
/// series-through Touchstone file, through the export stage.
pub(super) fn export_vetted(
    out_dir: &Path,
    library_dir: &Path,
    releases: &[Release],
    summary: &mut Summary,
    report: &mut dyn FnMut(Event),
) -> Result<(), DemoError> {
    let dir = out_dir.join("exports");
    report(Event::Step(format!(
        "Export: each vetted material as the cable-entry part (1 turn through {}, {} lead) -> {}",
        CABLE_ENTRY_CORE,
        CABLE_ENTRY_LEAD,
        dir.display()
    )));
    std::fs::create_dir_all(&dir).map_err(|e| io_error(&dir, "create the folder", e))?;
    let core = crate::geometry::Core::parse(CABLE_ENTRY_CORE).map_err(|e| DemoError(e.0))?;
    for r in releases.iter().filter(|r| r.vetted) {
        let (id, Some(v)) = (r.material.id, r.version) else { continue };
        for (format, ext) in [("spice", "lib"), ("touchstone", "s2p")] {
            let req = Request {
                library: library_dir.to_path_buf(),
                material: format!("{}@{}", id, v),
                format: format.to_string(),
                freq: Some("1MHz..1GHz:201".to_string()),
                core: Some(core.clone()),
                turns: Some("1".to_string()),
                cores: None,
                lead_inductance: Some(CABLE_ENTRY_LEAD.to_string()),
                winding_capacitance: None,
                z0: None,
                ports: None,
                name: None,
                output: dir.join(format!("{}_cable-entry.{}", id, ext)),
            };
            let done = export::plan(&req).map_err(|e| e.to_string()).and_then(|plan| {
                let out = export::render(&plan);
                crate::fsutil::write_atomic(&plan.output, out.text.as_bytes()).map_err(|e| e.to_string())?;
                Ok((plan, out.summary))
            });
            match done {
                Ok((plan, what)) => {
                    summary.exported += 1;
                    report(Event::Detail(format!("{}: {}", plan.output.display(), what)));
                    for w in &plan.warnings {
                        report(Event::Warning(format!("{}@{} {}: {}", id, v, format, w)));
                    }
                }
                Err(reason) => {
                    report(Event::Warning(format!("{}@{} {}: not exported: {}", id, v, format, reason)));
                    summary.failures.push(format!("{}@{} {}: {}", id, v, format, reason));
                }
            }
        }
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn only_a_library_of_demo_materials_is_replaced() {
        let tmp = tempfile::tempdir().unwrap();
        let lib = tmp.path().join("lib");
        fresh_library(&lib).unwrap(); // nothing there: nothing to do
        std::fs::create_dir_all(lib.join("driftwood")).unwrap();
        std::fs::write(lib.join("driftwood/v0001.json"), "{}").unwrap();
        fresh_library(&lib).unwrap();
        assert!(!lib.exists());
        std::fs::create_dir_all(lib.join("driftwood")).unwrap();
        std::fs::create_dir_all(lib.join("our-real-material")).unwrap();
        let err = fresh_library(&lib).unwrap_err();
        assert!(err.to_string().contains("our-real-material"), "{}", err);
        assert!(lib.join("our-real-material").exists() && lib.join("driftwood").exists());
    }
}
