//! The deterministic generator of `raw_measurements/`: for every planned file, the sample's true
//! permeability → the winding's impedance (gap, turns, self-capacitance, leads) → the S-parameters
//! the set-up presents → the analyser's noise → the export style. Byte-identical on every run: the
//! random streams are seeded from file and sample names, and all text is formatted by Rust.

use super::formats::{self, Layout};
use super::manifest::{self, Entry};
use super::materials::{self, Material};
use super::rng::{seed_from, SplitMix64};
use super::scenario::{self, Noise, Plan, Segment};
use super::DemoError;
use crate::error::Diagnostic;
use crate::extract::winding::{impedance_at, Winding};
use crate::geometry::Core;
use crate::ingest::convert::{s11_to_z, z_to_s11, z_to_s21_series};
use crate::ingest::{Method, SweepData};
use crate::model::Model;
use crate::C64;
use std::path::{Path, PathBuf};

/// Reference impedance of the bench analyser, Ω.
pub const Z0: f64 = 50.0;

/// One generated file: its name inside the measurements folder and its exact bytes.
#[derive(Debug, Clone, PartialEq)]
pub struct GeneratedFile {
    pub name: String,
    pub bytes: Vec<u8>,
}

/// The material a plan's lot is sold as.
pub fn plan_material(plan: &Plan) -> Result<Material, DemoError> {
    let lot =
        plan.lot().ok_or_else(|| Diagnostic::new(format!("plan {} names an unknown lot {}", plan.stem, plan.lot)))?;
    materials::material(lot.material)
        .ok_or_else(|| Diagnostic::new(format!("lot {} names an unknown material {}", lot.id, lot.material)).into())
}

/// The true spectrum of the plan's core: the nominal material, scaled for its lot, with the
/// core's own scatter drawn from a stream seeded by the sample id (so every file of one core
/// sees the same core).
pub fn sample_model(plan: &Plan) -> Result<Model, DemoError> {
    let material = plan_material(plan)?;
    let lot = plan.lot().ok_or_else(|| Diagnostic::new(format!("unknown lot {}", plan.lot)))?;
    let (g_mu, g_f) = SplitMix64::new(seed_from(plan.sample)).gaussian_pair();
    let mu_scale = lot.mu_scale * (1.0 + scenario::SAMPLE_SPREAD_MU * g_mu);
    let f_scale = lot.f_scale * (1.0 + scenario::SAMPLE_SPREAD_F * g_f);
    Ok(materials::scaled(&material.model, mu_scale, f_scale))
}

/// The plan's winding: its turns, the winding capacitance (if any) and the lead inductance.
pub fn winding(plan: &Plan) -> Winding {
    Winding {
        turns: plan.turns as f64,
        cores: 1,
        c_p: (plan.c_p_pf > 0.0).then_some(plan.c_p_pf * 1e-12),
        l_lead: Some(plan.lead_nh * 1e-9),
    }
}

/// The impedance the plan's fixture presents at each frequency for the spectrum `model`: μ
/// lowered by the core's gap, on N turns, shunted by C_p, in series with the leads — computed by
/// the extraction stage's forward model on the core the geometry stage reads from the spec.
pub fn true_impedance(plan: &Plan, model: &Model, freq_hz: &[f64]) -> Result<Vec<C64>, DemoError> {
    let core: Core = plan.core.core()?;
    let w = winding(plan);
    Ok(freq_hz.iter().map(|&f| impedance_at(f, model.mu(f), &core, &w)).collect())
}

/// A complex Gaussian deviate with standard deviation `sigma` (split evenly over re and im).
fn complex_noise(rng: &mut SplitMix64, sigma: f64) -> C64 {
    let (a, b) = rng.gaussian_pair();
    C64::new(a, b) * (sigma / std::f64::consts::SQRT_2)
}

/// One S-parameter as the analyser reads it: relative trace noise plus an absolute floor.
fn read_s(rng: &mut SplitMix64, s: C64, noise: &Noise) -> C64 {
    s * (1.0 + complex_noise(rng, noise.relative)) + complex_noise(rng, noise.floor)
}

/// What the analyser records for the part `z` in the plan's set-up (PHYSICS.md §3).
fn measure(
    rng: &mut SplitMix64,
    z: &[C64],
    method: Method,
    ports: usize,
    noise: &Noise,
) -> Result<SweepData, DemoError> {
    match (method, ports) {
        (Method::Reflection, 1) => {
            Ok(SweepData::Reflection { s11: z.iter().map(|&z| read_s(rng, z_to_s11(z, Z0), noise)).collect(), z0: Z0 })
        }
        (Method::Series, 2) => {
            // A series element between equal ports: S21 = S12 = 2Z0/(2Z0 + Z), S11 = S22 = 1 − S21.
            let s = z
                .iter()
                .map(|&z| {
                    let s21 = z_to_s21_series(z, Z0, Z0);
                    let s11 = 1.0 - s21;
                    [read_s(rng, s11, noise), read_s(rng, s21, noise), read_s(rng, s21, noise), read_s(rng, s11, noise)]
                })
                .collect();
            Ok(SweepData::TwoPort { s, z0: [Z0, Z0] })
        }
        (m, p) => Err(Diagnostic::new(format!("the demo has no {}-port {} set-up", p, m.name())).into()),
    }
}

/// The data in the form the layout writes: impedance CSVs hold the analyser's own Z computed
/// from its (noisy) reflection reading; Touchstone and S11 CSVs hold S.
fn as_written(layout: Layout, measured: SweepData) -> SweepData {
    match (layout, measured) {
        (Layout::CsvZMagPhase | Layout::CsvZReIm, SweepData::Reflection { s11, z0 }) => {
            SweepData::Impedance(s11.iter().map(|&s| s11_to_z(s, z0)).collect())
        }
        (_, m) => m,
    }
}

fn segment_words(segments: &[Segment]) -> String {
    let fmt = |f: f64| {
        if f >= 1e9 {
            format!("{} GHz", f / 1e9)
        } else if f >= 1e6 {
            format!("{} MHz", f / 1e6)
        } else {
            format!("{} kHz", f / 1e3)
        }
    };
    let points: Vec<String> = segments.iter().map(|s| s.points.to_string()).collect();
    format!(
        "{} points in {} segment{} from {} to {}",
        points.join(" + "),
        segments.len(),
        if segments.len() == 1 { "" } else { "s" },
        fmt(segments[0].start_hz),
        fmt(segments[segments.len() - 1].stop_hz)
    )
}

/// Free-text lines describing the measurement (no commas, semicolons or tabs, so they cannot be
/// mistaken for data in any CSV style).
fn preamble(plan: &Plan) -> Vec<String> {
    let setup = match plan.method {
        Method::Series => "series-through (2-port) - wire from port 1 to port 2",
        _ => "reflection (1-port S11)",
    };
    vec![
        format!("{} - EMC bench - suppression core qualification", scenario::ORGANISATION),
        format!(
            "Sample {} from lot {} - {} - {} turn{}",
            plan.sample,
            plan.lot,
            plan.core.describe(),
            plan.turns,
            if plan.turns == 1 { "" } else { "s" }
        ),
        format!("Set-up: {} - analyser calibrated at the fixture plane", setup),
        format!("Measured {} - {}", plan.date, segment_words(plan.segments)),
    ]
}

/// Generate one planned file and its manifest row.
pub fn generate_file(plan: &Plan) -> Result<(GeneratedFile, Entry), DemoError> {
    let material = plan_material(plan)?;
    let model = sample_model(plan)?;
    let freq = scenario::frequencies(plan.segments);
    let z = true_impedance(plan, &model, &freq)?;
    let mut rng = SplitMix64::new(seed_from(plan.stem));
    let measured = measure(&mut rng, &z, plan.method, plan.ports(), &scenario::BENCH_NOISE)?;
    let text = formats::render(plan.layout, &preamble(plan), &freq, &as_written(plan.layout, measured))?;
    let lot = plan.lot().ok_or_else(|| Diagnostic::new(format!("unknown lot {}", plan.lot)))?;
    let entry = Entry {
        file: plan.file_name(),
        material: material.id.to_string(),
        lot: plan.lot.to_string(),
        sample: plan.sample.to_string(),
        core: plan.core.spec(),
        turns: plan.turns,
        method: plan.method.name().to_string(),
        lead_nh: plan.lead_nh,
        date: plan.date.to_string(),
        off_spec: lot.off_spec,
        notes: plan.notes.to_string(),
    };
    Ok((GeneratedFile { name: plan.file_name(), bytes: text.into_bytes() }, entry))
}

/// Every file of `raw_measurements/`: the sweeps, `manifest.csv` and a README.
pub fn generate_all() -> Result<Vec<GeneratedFile>, DemoError> {
    let mut files = Vec::new();
    let mut entries = Vec::new();
    for plan in scenario::plans() {
        let (file, entry) = generate_file(&plan)?;
        files.push(file);
        entries.push(entry);
    }
    files.push(GeneratedFile { name: manifest::MANIFEST.to_string(), bytes: manifest::to_csv(&entries)?.into_bytes() });
    files.push(GeneratedFile { name: "README.md".to_string(), bytes: super::readme::render(&entries).into_bytes() });
    Ok(files)
}

/// Write every generated file into `dir` (created if missing), each atomically. Files in `dir`
/// that the generator does not write are left alone.
pub fn write_all(dir: &Path) -> Result<Vec<PathBuf>, DemoError> {
    std::fs::create_dir_all(dir).map_err(|e| {
        Diagnostic::new(format!("cannot create the folder: {}", e)).file(dir).hint("check the path and permissions")
    })?;
    let mut written = Vec::new();
    for f in generate_all()? {
        let path = dir.join(&f.name);
        crate::fsutil::write_atomic(&path, &f.bytes).map_err(|e| DemoError(e.0))?;
        written.push(path);
    }
    Ok(written)
}

/// How `dir` departs from what the generator writes: files missing or different (by name) and
/// files the generator does not write (`NAME (not generated)`, e.g. left from an older scenario).
pub fn differences(dir: &Path) -> Result<Vec<String>, DemoError> {
    let generated = generate_all()?;
    let mut out: Vec<String> = generated
        .iter()
        .filter(|f| std::fs::read(dir.join(&f.name)).map(|b| b != f.bytes).unwrap_or(true))
        .map(|f| f.name.clone())
        .collect();
    let listing = std::fs::read_dir(dir).map_err(|e| {
        Diagnostic::new(format!("cannot read the folder: {}", e)).file(dir).hint("check the path and permissions")
    })?;
    let mut extra: Vec<String> = listing
        .filter_map(|e| e.ok())
        .filter(|e| e.path().is_file())
        .map(|e| e.file_name().to_string_lossy().into_owned())
        .filter(|name| !generated.iter().any(|f| &f.name == name))
        .map(|name| format!("{} (not generated)", name))
        .collect();
    extra.sort();
    out.extend(extra);
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn differences_name_changed_missing_and_foreign_files() {
        let tmp = tempfile::tempdir().unwrap();
        let written = write_all(tmp.path()).unwrap();
        assert!(differences(tmp.path()).unwrap().is_empty());
        std::fs::write(&written[0], b"edited").unwrap();
        std::fs::remove_file(&written[1]).unwrap();
        std::fs::write(tmp.path().join("old_sweep.s1p"), b"# Hz S RI R 50").unwrap();
        let names = |p: &PathBuf| p.file_name().unwrap().to_string_lossy().into_owned();
        assert_eq!(
            differences(tmp.path()).unwrap(),
            vec![names(&written[0]), names(&written[1]), "old_sweep.s1p (not generated)".to_string()]
        );
    }

    #[test]
    fn generation_is_deterministic() {
        assert_eq!(generate_all().unwrap(), generate_all().unwrap());
    }

    // The noise model's size: with S-parameter noise of 0.05 % + 2e-4, a reflection reading of a
    // part near Z0 (the method's good range, PHYSICS.md §3 [common practice]) comes back within
    // about 1 %, one far below it (0.1 Ω) much worse — the behaviour real exports show.
    #[test]
    fn noise_is_small_in_the_good_range_and_large_far_from_it() {
        let spread = |z: C64| {
            let mut rng = SplitMix64::new(7);
            let zs = vec![z; 2000];
            let SweepData::Reflection { s11, .. } =
                measure(&mut rng, &zs, Method::Reflection, 1, &scenario::BENCH_NOISE).unwrap()
            else {
                panic!("reflection data expected")
            };
            let var = s11.iter().map(|&s| (s11_to_z(s, Z0) - z).norm_sqr()).sum::<f64>() / s11.len() as f64;
            var.sqrt() / z.norm()
        };
        assert!(spread(C64::new(30.0, 40.0)) < 0.01);
        assert!(spread(C64::new(0.02, 0.1)) > 0.1);
    }
}
