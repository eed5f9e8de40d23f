//! `mucurve export` through the real binary: the CSV μ table, Touchstone 1- and 2-port files of
//! a wound core, the SPICE sub-circuit's content, and the refusals. Materials are published from
//! fit reports built in Rust (tests/library_fixture). Expected values come from the formulas of
//! PHYSICS.md written out here, not from the crate's model or geometry code.

mod common;
mod library_fixture;

use common::tolerance::ROUND_TRIP_REL;
use common::{mucurve_in, Run, Scratch};
use library_fixture as fx;
use mucurve::extract::read_mu_table;
use mucurve::ingest::convert::{s11_to_z, s21_series_to_z};
use mucurve::ingest::touchstone::parse;
use mucurve::model::{Model, Term};
use mucurve::C64;
use sha2::{Digest, Sha256};
use std::f64::consts::{PI, TAU};

/// μ0, H/m (CODATA 2018).
const MU0: f64 = 1.256_637_062_12e-6;

fn run(s: &Scratch, args: &[&str]) -> Run {
    mucurve_in(s.dir.path(), args)
}

/// Publish `model` as `id` into `lib` in the scratch folder.
fn publish(s: &Scratch, id: &str, model: &Model) {
    let name = format!("{}.fit.json", id);
    fx::write_fit(s.dir.path(), &name, &fx::fit(model, &[0.01, -0.01]));
    run(s, &["publish", &name, "--material", id, "--library", "lib"]).ok();
}

/// `mucurve export --library lib --material ID ARGS...`.
fn export(s: &Scratch, id: &str, args: &[&str]) -> Run {
    let mut v = vec!["export", "--library", "lib", "--material", id];
    v.extend(args);
    run(s, &v)
}

/// μ of the spin + wall model of the fixture, written from PHYSICS.md §4: μ∞ + Δμ₁/(1 + jx₁)
/// + Δμ₂/(1 − x₂² + j·d·x₂), convention μ′ − jμ″.
fn spin_wall_mu(f: f64) -> C64 {
    let x1 = f / 8e6;
    let x2 = f / 2e8;
    1.0 + 180.0 / C64::new(1.0, x1) + 40.0 / C64::new(1.0 - x2 * x2, 0.8 * x2)
}

/// Winding impedance on a rectangular toroid, PHYSICS.md §2: Z = jω·M·N²·μ0·h·ln(OD/ID)/2π·μ_e
/// with 1/μ_e = 1/μ + l_g/l_e and le = 2π·ln(r2/r1)/(1/r1 − 1/r2) (§1).
fn toroid_z(
    f: f64,
    mu: C64,
    (od, id, h): (f64, f64, f64),
    turns: f64,
    cores: f64,
    gap: f64,
) -> C64 {
    let l0 = cores * turns * turns * MU0 * h * (od / id).ln() / (2.0 * PI);
    let le = TAU * (od / id).ln() / (2.0 / id - 2.0 / od);
    let mu_e = 1.0 / (1.0 / mu + gap / le);
    C64::new(0.0, TAU * f) * l0 * mu_e
}

fn meta<'a>(text: &'a str, mark: &str, key: &str) -> Vec<&'a str> {
    let prefix = format!("{} {}: ", mark, key);
    text.lines()
        .filter_map(|l| l.strip_prefix(prefix.as_str()))
        .collect()
}

#[test]
fn csv_export_is_the_model_on_a_log_grid_with_its_provenance() {
    let s = Scratch::new();
    publish(&s, "spin-wall", &fx::spin_wall());
    export(
        &s,
        "spin-wall@1",
        &[
            "--format",
            "csv",
            "--freq",
            "1MHz..300MHz:25",
            "-o",
            "mu.csv",
        ],
    )
    .ok();
    let text = std::fs::read_to_string(s.path("mu.csv")).unwrap();
    let t = read_mu_table(&text).unwrap();
    assert_eq!(t.freq_hz.len(), 25);
    for (i, (&f, &mu)) in t.freq_hz.iter().zip(&t.mu).enumerate() {
        let want_f = 1e6 * 300f64.powf(i as f64 / 24.0);
        assert!((f - want_f).abs() < 1e-9 * want_f);
        let want = spin_wall_mu(f);
        assert!(
            (mu - want).norm() < 1e-12 * want.norm(),
            "{f} Hz: {mu} vs {want}"
        );
    }
    // Provenance: the material, the SHA-256 of its file's bytes, the tool, the caution.
    let file = std::fs::read(s.path("lib/spin-wall/v0001.json")).unwrap();
    let sha: String = Sha256::digest(&file)
        .iter()
        .map(|b| format!("{:02x}", b))
        .collect();
    assert_eq!(meta(&text, "#", "material"), ["spin-wall@1"]);
    assert_eq!(meta(&text, "#", "material_file_sha256"), [sha.as_str()]);
    assert!(
        meta(&text, "#", "tool")[0].starts_with(&format!("mucurve {}", env!("CARGO_PKG_VERSION")))
    );
    assert!(meta(&text, "#", "caution")[0].contains("standards"));
    assert_eq!(
        t.meta_values("valid_band_hz"),
        [format!("{} {}", fx::F_MIN, fx::F_MAX)]
    );
}

#[test]
fn touchstone_one_and_two_port_give_back_the_wound_core_impedance() {
    let s = Scratch::new();
    publish(&s, "spin-wall", &fx::spin_wall());
    let dims = (25e-3, 15e-3, 10e-3);
    let cases: [(&str, &[&str], usize, f64); 4] = [
        ("core.s1p", &[], 1, 0.0),
        ("core.s2p", &["--cores", "2"], 2, 0.0),
        ("core.ts", &["--ports", "2", "--z0", "75"], 2, 0.0),
        ("split.s1p", &["--gap", "8um"], 1, 8e-6),
    ];
    for (out, extra, ports, gap) in cases {
        let mut args = vec![
            "--format",
            "touchstone",
            "--core",
            "toroid:od=25mm,id=15mm,h=10mm",
            "--turns",
            "3",
        ];
        args.extend(["--freq", "1MHz..1GHz:31", "-o", out]);
        args.extend(extra);
        export(&s, "spin-wall", &args).ok();
        let text = std::fs::read_to_string(s.path(out)).unwrap();
        let z0 = if extra.contains(&"75") { 75.0 } else { 50.0 };
        assert!(
            text.contains(&format!("\n# Hz S RI R {}\n", z0)),
            "{out}: option line"
        );
        assert_eq!(meta(&text, "!", "material"), ["spin-wall@1"]);
        let net = parse(text.as_bytes()).unwrap();
        assert_eq!((net.ports, net.freq_hz.len()), (ports, 31), "{out}");
        let cores = if extra.contains(&"--cores") { 2.0 } else { 1.0 };
        for (f, sm) in net.freq_hz.iter().zip(&net.s) {
            let want = toroid_z(*f, spin_wall_mu(*f), dims, 3.0, cores, gap);
            let got = if ports == 1 {
                s11_to_z(sm[0], z0)
            } else {
                s21_series_to_z(sm[2], z0, z0)
            };
            assert!(
                (got - want).norm() < ROUND_TRIP_REL * want.norm(),
                "{out} {f} Hz: {got} vs {want}"
            );
            if ports == 2 {
                // Series-through (PHYSICS.md §3): S11 = S22 = Z/(Z + 2Z0), S12 = S21.
                let s11 = want / (want + 2.0 * z0);
                assert!((sm[0] - s11).norm() < 1e-9 && sm[3] == sm[0] && sm[1] == sm[2]);
            }
        }
    }
}

#[test]
fn spice_netlist_holds_exact_sections_and_states_band_accuracy_and_caution() {
    let s = Scratch::new();
    publish(&s, "spin-wall", &fx::spin_wall());
    let core = "toroid:od=25mm,id=15mm,h=10mm";
    export(
        &s,
        "spin-wall",
        &[
            "--format",
            "spice",
            "--core",
            core,
            "--turns",
            "2",
            "--freq",
            "1MHz..1GHz:11",
            "-o",
            "c.cir",
        ],
    )
    .ok();
    let text = std::fs::read_to_string(s.path("c.cir")).unwrap();
    assert!(
        text.contains("\n.subckt spin_wall A B\n") && text.ends_with(".ends spin_wall\n"),
        "{text}"
    );
    assert_eq!(meta(&text, "*", "material"), ["spin-wall@1"]);
    assert_eq!(meta(&text, "*", "network_band_hz"), ["1000000 1000000000"]);
    assert!(
        meta(&text, "*", "network_accuracy")[0].starts_with("max |Z_net - Z_model|/|Z_model| = ")
    );
    assert!(
        !meta(&text, "*", "caution").is_empty()
            && meta(&text, "*", "material_file_sha256")[0].len() == 64
    );
    // The Debye section (PHYSICS.md §2 and circuit algebra): L = L0·Δμ, R = L·ω_r with
    // L0 = N²·μ0·h·ln(OD/ID)/2π.
    let l0 = 4.0 * MU0 * 10e-3 * (25.0f64 / 15.0).ln() / (2.0 * PI);
    let value = |name: &str| -> f64 {
        let line = text
            .lines()
            .find(|l| l.starts_with(&format!("{} ", name)))
            .unwrap_or_else(|| panic!("no {name}"));
        line.split_whitespace().nth(3).unwrap().parse().unwrap()
    };
    assert!(
        (value("L1") - l0 * 1.0).abs() < 1e-9 * l0,
        "mu_inf inductor"
    );
    assert!((value("L2") - l0 * 180.0).abs() < 1e-9 * l0 * 180.0);
    assert!((value("R1") - l0 * 180.0 * TAU * 8e6).abs() < 1e-9 * value("R1"));
    // Damped resonance: L = L0·Δμ, C = 1/(ω_r²L), R = L·ω_r/d.
    let l3 = l0 * 40.0;
    assert!((value("L3") - l3).abs() < 1e-9 * l3);
    assert!((value("C1") - 1.0 / ((TAU * 2e8).powi(2) * l3)).abs() < 1e-9 * value("C1"));
    assert!((value("R2") - l3 * TAU * 2e8 / 0.8).abs() < 1e-9 * value("R2"));
}

#[test]
fn spice_netlist_of_a_broad_relaxation_states_its_debye_sum_accuracy() {
    let s = Scratch::new();
    let model = Model {
        mu_inf: 1.0,
        terms: vec![Term::cole_davidson(250.0, 30e6, 0.4)],
    };
    publish(&s, "broad", &model);
    export(
        &s,
        "broad",
        &[
            "--format",
            "spice",
            "--core",
            "toroid:od=20mm,id=10mm,h=10mm",
            "--freq",
            "1MHz..1GHz:11",
            "--name",
            "core_cd",
            "-o",
            "b.cir",
        ],
    )
    .ok();
    let text = std::fs::read_to_string(s.path("b.cir")).unwrap();
    let term = meta(&text, "*", "term");
    assert_eq!(term.len(), 1);
    assert!(
        term[0].starts_with("1 cole-davidson: sum of "),
        "{}",
        term[0]
    );
    let err: f64 = term[0].rsplit(' ').next().unwrap().parse().unwrap();
    assert!(err > 0.0 && err < 1e-3, "{}", term[0]);
    assert!(text.contains(".subckt core_cd A B"));
}

#[test]
fn refusals_explain_themselves_and_write_nothing() {
    let s = Scratch::new();
    publish(&s, "spin-wall", &fx::spin_wall());
    let core = "toroid:od=25mm,id=15mm,h=10mm";
    let cases: Vec<(Vec<&str>, &str)> = vec![
        (
            vec!["--format", "gerber", "-o", "o.csv"],
            "csv, touchstone or spice",
        ),
        (
            vec!["--format", "csv", "--freq", "1GHz..1MHz:10", "-o", "o.csv"],
            "START..STOP:POINTS",
        ),
        (
            vec!["--format", "csv", "--core", core, "-o", "o.csv"],
            "--core does not apply",
        ),
        (vec!["--format", "spice", "-o", "o.cir"], "need --core"),
        (
            vec![
                "--format", "spice", "--core", core, "--z0", "75", "-o", "o.cir",
            ],
            "--z0 does not apply",
        ),
        (
            vec!["--format", "touchstone", "--core", core, "-o", "o.s3p"],
            "3 ports",
        ),
        (
            vec![
                "--format",
                "touchstone",
                "--core",
                core,
                "--ports",
                "2",
                "-o",
                "o.s1p",
            ],
            "disagrees",
        ),
        (
            vec!["--format", "touchstone", "--core", core, "-o", "o.txt"],
            "port count",
        ),
        (
            vec![
                "--format",
                "touchstone",
                "--core",
                core,
                "--turns",
                "0",
                "-o",
                "o.s1p",
            ],
            "--turns",
        ),
        (
            vec![
                "--format",
                "touchstone",
                "--core",
                core,
                "--cores",
                "0",
                "-o",
                "o.s1p",
            ],
            "--cores",
        ),
        (
            vec![
                "--format",
                "touchstone",
                "--core",
                core,
                "--z0",
                "-50",
                "-o",
                "o.s1p",
            ],
            "--z0",
        ),
        (
            vec![
                "--format", "spice", "--core", core, "--name", "2 bad", "-o", "o.cir",
            ],
            "sub-circuit name",
        ),
        (
            vec![
                "--format",
                "spice",
                "--core",
                "toroid:od=5mm,id=15mm,h=10mm",
                "-o",
                "o.cir",
            ],
            "od",
        ),
    ];
    for (args, says) in cases {
        let out = export(&s, "spin-wall", &args).failed();
        assert!(out.stderr.contains(says), "{:?}: {}", args, out.stderr);
    }
    for (id, says) in [
        ("spin-wall@7", "no version 7"),
        ("no-such", "no material"),
        ("Bad/Id", "invalid material id"),
    ] {
        let out = export(&s, id, &["--format", "csv", "-o", "o.csv"]).failed();
        assert!(out.stderr.contains(says), "{id}: {}", out.stderr);
    }
    for name in ["o.csv", "o.cir", "o.s1p", "o.s3p", "o.txt"] {
        assert!(!s.path(name).exists(), "{name} was written");
    }
}
