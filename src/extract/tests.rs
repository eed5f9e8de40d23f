//! Extraction checks on synthetic sweeps made from a known μ(f) (model::Model) through the
//! ingest conversions of PHYSICS.md §3 (Pozar), with noise added where an instrument adds it.

use super::*;
use crate::ingest::{convert, method, Method, Sweep, SweepData};
use crate::model::{Model, Term};

/// 1e-4 noise on S (a calibrated analyser, common practice) keeps μ within 1 % in the band.
const NOISY_TOLERANCE: f64 = 0.01;
/// Lead solved from two noisy windings: L_lead within 2 %, μ within 3 % (the 1-turn winding,
/// mostly lead, carries the noise into μ).
const LEAD_TOLERANCE: f64 = 0.02;
const SOLVED_MU_TOLERANCE: f64 = 0.03;
/// Noise-free paths that only undo exact formulas.
const EXACT_TOLERANCE: f64 = 1e-6;

/// A NiZn-like invented material: μ∞ 2, a Debye relaxation of 300 at 20 MHz.
fn material() -> Model {
    Model {
        mu_inf: 2.0,
        terms: vec![Term::debye(300.0, 20e6)],
    }
}

pub(crate) fn log_grid(lo: f64, hi: f64, n: usize) -> Vec<f64> {
    (0..n)
        .map(|k| lo * (hi / lo).powf(k as f64 / (n - 1) as f64))
        .collect()
}

/// Deterministic pseudo-random numbers in [−1, 1) (a 64-bit LCG, Knuth's MMIX constants).
pub(crate) struct Lcg(pub u64);
impl Lcg {
    pub(crate) fn next(&mut self) -> f64 {
        self.0 = self
            .0
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        2.0 * ((self.0 >> 11) as f64 / (1u64 << 53) as f64) - 1.0
    }
    fn complex(&mut self, scale: f64) -> C64 {
        C64::new(scale * self.next(), scale * self.next())
    }
}

fn source(name: &str) -> SourceInfo {
    SourceInfo::from_bytes(std::path::Path::new(name), name.as_bytes())
}

/// What the instrument would record for impedances `z` through `m`, turned back into Z by ingest.
fn instrument(
    name: &str,
    freq: &[f64],
    z: &[C64],
    m: Method,
    noise: f64,
    seed: u64,
) -> ImpedanceSweep {
    let mut rng = Lcg(seed);
    let mut s = |to_s: &dyn Fn(C64) -> C64| -> Vec<C64> {
        z.iter().map(|&v| to_s(v) + rng.complex(noise)).collect()
    };
    let data = match m {
        Method::Reflection => SweepData::Reflection {
            s11: s(&|v| convert::z_to_s11(v, 50.0)),
            z0: 50.0,
        },
        Method::Series => SweepData::Transmission {
            s21: s(&|v| convert::z_to_s21_series(v, 50.0, 50.0)),
            z0: [50.0; 2],
        },
        Method::Shunt => SweepData::Transmission {
            s21: s(&|v| convert::z_to_s21_shunt(v, 50.0)),
            z0: [50.0; 2],
        },
    };
    let sweep = Sweep {
        source: source(name),
        freq_hz: freq.to_vec(),
        data,
        detected: vec![],
        warnings: vec![],
    };
    method::to_impedance(&sweep, Some(m), None).expect("synthetic sweep converts")
}

/// A winding of `w` on `core` around the material `mu`, measured through `m`.
fn measured(
    mu: &dyn Fn(f64) -> C64,
    core: &Core,
    w: &Winding,
    freq: &[f64],
    m: Method,
    noise: f64,
    seed: u64,
) -> Measurement {
    let z: Vec<C64> = freq
        .iter()
        .map(|&f| impedance_at(f, mu(f), core, w))
        .collect();
    Measurement {
        sweep: instrument(
            &format!("{}t-{}.s1p", w.turns, seed),
            freq,
            &z,
            m,
            noise,
            seed,
        ),
        turns: w.turns,
    }
}

fn truth(f: f64) -> C64 {
    material().mu(f)
}

fn core() -> Core {
    Core::parse("toroid:od=25mm,id=15mm,h=10mm").unwrap()
}

/// Largest relative error of μ over the valid band.
fn worst_error(s: &MuSpectrum) -> f64 {
    s.valid_indices()
        .iter()
        .map(|&i| (s.mu[i] - truth(s.freq_hz[i])).norm() / truth(s.freq_hz[i]).norm())
        .fold(0.0, f64::max)
}

// PHYSICS.md §2 (Z = jωμ0N²μ/C1) with §3 reflection S11 = (Z−Z0)/(Z+Z0) [Pozar]; 1e-4 noise on
// S11 (a good calibrated analyser, common practice) maps to well under 1 % on μ in the band.
#[test]
fn synthetic_reflection_sweep_returns_known_mu() {
    let freq = log_grid(1e5, 3e8, 400);
    let m = measured(
        &truth,
        &core(),
        &Winding::turns(3.0),
        &freq,
        Method::Reflection,
        1e-4,
        1,
    );
    let s = extract(&[m], &ExtractSetup::new(core())).unwrap();
    // Nothing limits this sweep: |Z| stays in range, no resonance, and 1e-4 noise is not
    // taken for noise-dominated points.
    assert_eq!(s.valid, (freq[0], freq[freq.len() - 1]));
    assert!(worst_error(&s) < NOISY_TOLERANCE, "{}", worst_error(&s));
}

// Series-through S21 = 2Z0/(2Z0 + Z) [Pozar, PHYSICS.md §3]; its accurate range starts at 10 Ω
// (common practice), so the band starts where |Z| reaches 10 Ω.
#[test]
fn synthetic_series_sweep_returns_known_mu() {
    let freq = log_grid(1e5, 3e8, 400);
    let w = Winding::turns(3.0);
    let s = extract(
        &[measured(
            &truth,
            &core(),
            &w,
            &freq,
            Method::Series,
            1e-4,
            2,
        )],
        &ExtractSetup::new(core()),
    )
    .unwrap();
    let start = s.valid_indices()[0];
    let z = |i: usize| impedance_at(s.freq_hz[i], truth(s.freq_hz[i]), &core(), &w).norm();
    assert!(z(start) >= 10.0 && z(start - 1) < 10.0);
    assert!(worst_error(&s) < NOISY_TOLERANCE, "{}", worst_error(&s));
}

// Lead inductance (PHYSICS.md §2): 1 and 2 turns with 30 nH of lead each; solving it across the
// windings recovers the lead and μ, where the naive 1-turn reading is far off.
#[test]
fn synthetic_solve_lead_recovers_lead_and_mu() {
    let freq = log_grid(1e5, 3e8, 400);
    let w = |n: f64| Winding {
        l_lead: Some(30e-9),
        ..Winding::turns(n)
    };
    let ms = [
        measured(&truth, &core(), &w(1.0), &freq, Method::Reflection, 1e-4, 3),
        measured(&truth, &core(), &w(2.0), &freq, Method::Reflection, 1e-4, 4),
    ];
    let s = extract(
        &ms,
        &ExtractSetup {
            lead: LeadCorrection::Solve,
            ..ExtractSetup::new(core())
        },
    )
    .unwrap();
    let l = s.l_lead.as_ref().unwrap();
    assert!((l.henry / 30e-9 - 1.0).abs() < LEAD_TOLERANCE, "{:?}", l);
    assert!(worst_error(&s) < SOLVED_MU_TOLERANCE, "{}", worst_error(&s));
    let naive = extract(&ms[..1], &ExtractSetup::new(core())).unwrap();
    assert!(worst_error(&naive) > 10.0 * SOLVED_MU_TOLERANCE);
    assert!(
        naive
            .warnings
            .iter()
            .any(|w| w.contains("no lead correction")),
        "{:?}",
        naive.warnings
    );
}

// Self-resonance (PHYSICS.md §2): Z_N = N²Z1/(1 + jωC_pN²Z1); the band ends below f_SR, and a
// stated C_p is removed exactly.
#[test]
fn synthetic_self_resonance_limits_band_and_stated_cp_is_removed() {
    let freq = log_grid(1e5, 3e8, 500);
    let w = Winding {
        c_p: Some(3e-12),
        ..Winding::turns(12.0)
    };
    let m = [measured(
        &truth,
        &core(),
        &w,
        &freq,
        Method::Reflection,
        0.0,
        5,
    )];
    let s = extract(&m, &ExtractSetup::new(core())).unwrap();
    let f_sr = s.f_sr.expect("resonance inside the sweep");
    assert!(s.valid.1 < f_sr);
    // Inside the band the winding capacitance changes Z by at most DISTORTION_LIMIT, μ by about
    // as much again through its phase.
    assert!(
        worst_error(&s) < 2.0 * band::DISTORTION_LIMIT,
        "{}",
        worst_error(&s)
    );
    let stated = extract(
        &m,
        &ExtractSetup {
            c_p: Some(3e-12),
            ..ExtractSetup::new(core())
        },
    )
    .unwrap();
    assert!(
        worst_error(&stated) < EXACT_TOLERANCE,
        "{}",
        worst_error(&stated)
    );
}

// Empty-fixture form μ = 1 + (Z_meas − Z_empty)/(jωL0) [S: Radonić et al. 2010, PHYSICS.md §2]:
// a shorted coaxial fixture (one turn) whose empty reading is the air in the core's place plus
// 15 nH of connection; subtracting it through ingest::fixture and extracting with the +1 gives μ.
#[test]
fn synthetic_empty_fixture_reference_returns_known_mu() {
    let freq = log_grid(1e6, 3e8, 300);
    let c = Core::parse("toroid:od=20mm,id=10mm,h=10mm").unwrap();
    let w = Winding {
        l_lead: Some(15e-9),
        ..Winding::turns(1.0)
    };
    let meas = measured(&truth, &c, &w, &freq, Method::Reflection, 0.0, 6);
    let empty = measured(
        &|_| C64::new(1.0, 0.0),
        &c,
        &w,
        &freq,
        Method::Reflection,
        0.0,
        7,
    );
    let delta = crate::ingest::fixture::subtract_empty(meas.sweep, &empty.sweep).unwrap();
    let setup = ExtractSetup {
        empty_reference: true,
        ..ExtractSetup::new(c)
    };
    let s = extract(
        &[Measurement {
            sweep: delta,
            turns: 1.0,
        }],
        &setup,
    )
    .unwrap();
    assert!(worst_error(&s) < EXACT_TOLERANCE, "{}", worst_error(&s));
}

// Gap (PHYSICS.md §2): a split core with 2 × 5 µm: the material μ comes back, and the apparent
// μ_e the winding saw obeys 1/μ_e = 1/μ + l_g/l_e.
#[test]
fn synthetic_split_core_returns_material_mu() {
    let freq = log_grid(1e5, 3e8, 300);
    let c = Core::parse("split:od=25mm,id=15mm,h=10mm,gap=5um").unwrap();
    let m = measured(
        &truth,
        &c,
        &Winding::turns(4.0),
        &freq,
        Method::Reflection,
        0.0,
        8,
    );
    let s = extract(&[m], &ExtractSetup::new(c.clone())).unwrap();
    assert!(worst_error(&s) < EXACT_TOLERANCE);
    let i = s.valid_indices()[0];
    let e = s.apparent_mu()[i];
    assert!(((1.0 / e) - (1.0 / s.mu[i] + 10e-6 / c.effective().le())).norm() < 1e-12);
}

// Round trip extract∘inverse = identity at the library level, with M cores and a stated lead,
// through an impedance sweep (no set-up conversion).
#[test]
fn round_trip_extract_of_inverse_is_identity() {
    let freq = log_grid(1e6, 1e8, 100);
    let w = Winding {
        turns: 2.0,
        cores: 3,
        c_p: None,
        l_lead: Some(20e-9),
    };
    let mu: Vec<C64> = freq.iter().map(|&f| truth(f)).collect();
    let z = impedance(&freq, &mu, &core(), &w).unwrap();
    let sweep = ImpedanceSweep {
        source: source("z.csv"),
        freq_hz: freq.clone(),
        z,
        method: None,
        z0: None,
        detected: vec![],
        corrections: vec![],
        warnings: vec![],
    };
    let setup = ExtractSetup {
        cores_in_series: 3,
        lead: LeadCorrection::Stated(20e-9),
        ..ExtractSetup::new(core())
    };
    let s = extract(
        &[Measurement {
            sweep: sweep.clone(),
            turns: 2.0,
        }],
        &setup,
    )
    .unwrap();
    assert_eq!(s.valid_indices().len(), freq.len());
    assert!(worst_error(&s) < EXACT_TOLERANCE);

    // Refused inputs: solving the lead needs different turns; turns must be positive.
    let m = Measurement { sweep, turns: 1.0 };
    let solve = ExtractSetup {
        lead: LeadCorrection::Solve,
        ..ExtractSetup::new(core())
    };
    assert!(extract(&[m.clone(), m.clone()], &solve)
        .unwrap_err()
        .to_string()
        .contains("different turns"));
    let zero = extract(
        &[Measurement { turns: 0.0, ..m }],
        &ExtractSetup::new(core()),
    )
    .unwrap_err();
    assert!(zero.to_string().contains("turns must be positive"));
}

#[test]
fn table_round_trips_and_keeps_only_the_band() {
    let freq = log_grid(1e5, 3e8, 200);
    let m = measured(
        &truth,
        &core(),
        &Winding::turns(2.0),
        &freq,
        Method::Reflection,
        0.0,
        9,
    );
    let s = extract(&[m], &ExtractSetup::new(core())).unwrap();
    let text = write_mu_table(&s);
    let t = read_mu_table(&text).unwrap();
    assert_eq!(t.valid, s.valid);
    assert_eq!(t.freq_hz.len(), s.valid_indices().len());
    for (k, &i) in s.valid_indices().iter().enumerate() {
        assert_eq!((t.freq_hz[k], t.mu[k]), (s.freq_hz[i], s.mu[i]));
    }
    assert!(text.lines().any(|l| l == table::HEADER));
    assert!(t.meta_values("source")[0].contains("sha256="));
    let bad = read_mu_table("freq_hz,mu_prime,mu_double_prime\n1e6,abc,3\n").unwrap_err();
    assert_eq!(bad.0.line, Some(2));
}
