//! The SPICE export checked by an independent circuit simulator: ngspice (the Debian package
//! `ngspice`, checked with ngspice-39, `ngspice -v`; installed in CI by .ci/run) runs an AC
//! analysis of the exported sub-circuit, and its |Z| must be within 1 % of the model's from
//! 1 MHz to 1 GHz (the acceptance check).
//!
//! Test deck: `V1 in 0 AC 1`, the sub-circuit from `in` to 0, `.ac dec 50 1meg 1g`, results
//! written with `wrdata`; Z = V(in)/(−I(V1)). `.options noopac` skips the DC operating point,
//! which a voltage source across an inductive two-pin does not have (ngspice manual, option
//! NOOPAC, for linear circuits).
//!
//! Without ngspice these tests FAIL, unless MUCURVE_SKIP_NGSPICE=1 is set.

mod common;
mod library_fixture;

use common::tolerance::NGSPICE_ABS_Z_REL;
use common::{mucurve_in, Scratch};
use library_fixture as fx;
use mucurve::extract::winding::{impedance_at, Winding};
use mucurve::geometry::Core;
use mucurve::model::{Model, Term};
use mucurve::C64;
use std::path::Path;
use std::process::Command;

/// Points per decade of the AC sweep.
const PER_DECADE: usize = 50;

/// True when ngspice can be run; panics with instructions when it cannot and skipping was not
/// asked for.
fn ngspice_available() -> bool {
    let found = Command::new("ngspice")
        .arg("-v")
        .output()
        .map(|o| o.status.success())
        .unwrap_or(false);
    if found {
        return true;
    }
    if std::env::var("MUCURVE_SKIP_NGSPICE").as_deref() == Ok("1") {
        eprintln!("ngspice not found; skipped because MUCURVE_SKIP_NGSPICE=1");
        return false;
    }
    panic!(
        "ngspice is not installed, so the SPICE export cannot be checked. Install it \
         (Debian/Ubuntu: apt-get install -y ngspice) or set MUCURVE_SKIP_NGSPICE=1 to skip."
    );
}

/// Run the AC deck on `netlist` (sub-circuit `name`) and return (f, Z) per point.
fn ngspice_ac(dir: &Path, netlist: &str, name: &str) -> Vec<(f64, C64)> {
    let out = dir.join("ac.txt");
    let deck = format!(
        "export check deck\n.include {}\nV1 in 0 AC 1\nX1 in 0 {}\n.options noopac\n\
         .control\nset wr_singlescale\noption numdgt=12\nac dec {} 1meg 1g\nwrdata {} v(in) i(v1)\nquit\n.endc\n.end\n",
        dir.join(netlist).display(),
        name,
        PER_DECADE,
        out.display()
    );
    let deck_path = dir.join("deck.cir");
    std::fs::write(&deck_path, deck).unwrap();
    let run = Command::new("ngspice")
        .arg("-b")
        .arg(&deck_path)
        .current_dir(dir)
        .output()
        .unwrap();
    let text = std::fs::read_to_string(&out).unwrap_or_else(|e| {
        panic!(
            "ngspice wrote no results ({e}):\n{}\n{}",
            String::from_utf8_lossy(&run.stdout),
            String::from_utf8_lossy(&run.stderr)
        )
    });
    // wrdata with a single scale: frequency, Re V, Im V, Re I, Im I.
    text.lines()
        .filter_map(|l| {
            let v: Vec<f64> = l
                .split_whitespace()
                .filter_map(|t| t.parse().ok())
                .collect();
            (v.len() == 5).then(|| (v[0], C64::new(v[1], v[2]) / -C64::new(v[3], v[4])))
        })
        .collect()
}

/// Publish `model`, export it as SPICE for `core` and `extra` options, run ngspice and compare
/// |Z| with the model's winding impedance.
fn check(model: &Model, core: &str, winding: Winding, extra: &[&str]) {
    if !ngspice_available() {
        return;
    }
    let s = Scratch::new();
    fx::write_fit(s.dir.path(), "m.fit.json", &fx::fit(model, &[0.01, -0.01]));
    mucurve_in(
        s.dir.path(),
        &[
            "publish",
            "m.fit.json",
            "--material",
            "m",
            "--library",
            "lib",
        ],
    )
    .ok();
    let turns = winding.turns.to_string();
    let mut args = vec![
        "export",
        "--library",
        "lib",
        "--material",
        "m@1",
        "--format",
        "spice",
        "--core",
        core,
    ];
    args.extend([
        "--turns",
        &turns,
        "--freq",
        "1MHz..1GHz:201",
        "--name",
        "core_m",
        "-o",
        "m.cir",
    ]);
    args.extend(extra);
    mucurve_in(s.dir.path(), &args).ok();
    let points = ngspice_ac(s.dir.path(), "m.cir", "core_m");
    assert_eq!(points.len(), 3 * PER_DECADE + 1, "AC points from ngspice");
    let core = Core::parse(core).unwrap();
    let mut worst = 0.0f64;
    for (f, z) in points {
        let want = impedance_at(f, model.mu(f), &core, &winding).norm();
        let rel = (z.norm() - want).abs() / want;
        assert!(
            rel < NGSPICE_ABS_Z_REL,
            "{f} Hz: ngspice |Z| = {} Ω, model {} Ω",
            z.norm(),
            want
        );
        worst = worst.max(rel);
    }
    eprintln!(
        "largest |Z| deviation, ngspice against the model: {:.2e}",
        worst
    );
}

#[test]
fn ngspice_matches_a_debye_plus_damped_resonance_core_within_1_percent() {
    check(
        &fx::spin_wall(),
        "toroid:od=25mm,id=15mm,h=10mm",
        Winding::turns(3.0),
        &[],
    );
}

#[test]
fn ngspice_matches_a_cole_cole_plus_havriliak_negami_core_within_1_percent() {
    let model = Model {
        mu_inf: 1.0,
        terms: vec![
            Term::cole_cole(300.0, 20e6, 0.7),
            Term::havriliak_negami(60.0, 3e8, 0.8, 0.6),
        ],
    };
    check(
        &model,
        "toroid:od=20mm,id=10mm,h=10mm",
        Winding::turns(2.0),
        &[],
    );
}

#[test]
fn ngspice_matches_a_gapped_two_core_winding_with_leads_and_capacitance_within_1_percent() {
    let model = Model {
        mu_inf: 1.0,
        terms: vec![
            Term::cole_davidson(250.0, 15e6, 0.5),
            Term::lorentz(30.0, 4e8, 1.2),
        ],
    };
    let winding = Winding {
        turns: 2.0,
        cores: 2,
        c_p: Some(1.5e-12),
        l_lead: Some(30e-9),
    };
    check(
        &model,
        "split:od=25mm,id=15mm,h=10mm,gap=4um",
        winding,
        &[
            "--cores",
            "2",
            "--winding-capacitance",
            "1.5pF",
            "--lead-inductance",
            "30nH",
        ],
    );
}
