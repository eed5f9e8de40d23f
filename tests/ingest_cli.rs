//! `mucurve ingest` run as a user runs it: the real binary in a scratch folder.
//!
//! Good runs check the output against hand arithmetic (Pozar, *Microwave Engineering* §2.3:
//! Z = Z0(1+Γ)/(1−Γ)) and the documented file format; bad runs check that each malformed input
//! gets a clean, specific error (non-zero exit, no panic, the file named, the point or line named
//! where there is one, no output file left behind).

mod common;

use common::{mucurve_in, Run, Scratch};
use sha2::{Digest, Sha256};

const OUT: &str = "out.csv";
const HEADER: &str = "freq_hz,z_re_ohm,z_im_ohm";

/// A 1-port Touchstone v1 file: 1, 2, 3 MHz, Γ = 0.1+0.2j, 0.15+0.25j, 0.2+0.3j at 50 Ω.
const S1P: &str = "! invented test sweep\n# MHz S RI R 50\n1 0.1 0.2\n2 0.15 0.25\n3 0.2 0.3\n";

/// Impedance given directly, in the tool's own normalised layout.
const Z_CSV: &str = "freq_hz,z_re_ohm,z_im_ohm\n1e6,10.5,100.25\n2e6,11,200.5\n3e6,12.25,300.75\n";

/// Write `files` into a fresh scratch folder and run `mucurve ingest ARGS -o out.csv` there.
fn ingest(files: &[(&str, &str)], args: &[&str]) -> (Scratch, Run) {
    let dir = Scratch::new();
    for (name, text) in files {
        dir.write(name, text);
    }
    let mut all = vec!["ingest"];
    all.extend_from_slice(args);
    all.extend_from_slice(&["-o", OUT]);
    let run = mucurve_in(dir.dir.path(), &all);
    (dir, run)
}

/// The run must fail cleanly, leave no output, and say each of `expect` on stderr.
fn refused(files: &[(&str, &str)], args: &[&str], expect: &[&str]) {
    let (dir, run) = ingest(files, args);
    let run = run.failed();
    assert!(!dir.path(OUT).exists(), "a failed run left {}", OUT);
    for e in expect {
        assert!(
            run.stderr.contains(e),
            "stderr lacks '{}':\n{}",
            e,
            run.stderr
        );
    }
}

fn rows(text: &str) -> Vec<[f64; 3]> {
    text.lines()
        .skip_while(|l| *l != HEADER)
        .skip(1)
        .map(|l| {
            let v: Vec<f64> = l.split(',').map(|x| x.parse().unwrap()).collect();
            [v[0], v[1], v[2]]
        })
        .collect()
}

fn meta<'a>(text: &'a str, key: &str) -> Vec<&'a str> {
    let prefix = format!("# {}: ", key);
    text.lines()
        .take_while(|l| l.starts_with('#'))
        .filter_map(|l| l.strip_prefix(prefix.as_str()))
        .collect()
}

fn sha256(text: &str) -> String {
    Sha256::digest(text.as_bytes())
        .iter()
        .map(|b| format!("{:02x}", b))
        .collect()
}

// ---------------------------------------------------------------------------------------------
// Good runs

#[test]
fn impedance_csv_is_written_with_exact_header_and_metadata() {
    let (dir, run) = ingest(&[("z.csv", Z_CSV)], &["z.csv"]);
    let run = run.ok();
    let text = std::fs::read_to_string(dir.path(OUT)).unwrap();
    let lines: Vec<&str> = text.lines().collect();
    let h = lines
        .iter()
        .position(|l| *l == HEADER)
        .expect("exact header");
    assert!(
        lines[..h].iter().all(|l| l.starts_with("# ")),
        "only # lines before the header"
    );
    assert_eq!(meta(&text, "source_file"), ["z.csv"]);
    // SHA-256 of the source bytes, computed here with the sha2 crate.
    assert_eq!(meta(&text, "source_sha256"), [sha256(Z_CSV).as_str()]);
    assert_eq!(meta(&text, "method"), ["none"]);
    assert_eq!(meta(&text, "tool_version"), [env!("CARGO_PKG_VERSION")]);
    assert!(
        !meta(&text, "detected").is_empty(),
        "auto-detection must say what it chose"
    );
    assert_eq!(
        rows(&text),
        vec![
            [1e6, 10.5, 100.25],
            [2e6, 11.0, 200.5],
            [3e6, 12.25, 300.75]
        ]
    );
    assert!(
        run.stdout.contains("3 points") && run.stdout.contains("1 MHz to 3 MHz"),
        "{}",
        run.stdout
    );
}

// Pozar §2.3: Z = Z0(1+Γ)/(1−Γ), computed here by hand arithmetic on (re, im) pairs.
#[test]
fn touchstone_reflection_matches_hand_arithmetic() {
    let (dir, run) = ingest(&[("core.s1p", S1P)], &["core.s1p"]);
    run.ok();
    let text = std::fs::read_to_string(dir.path(OUT)).unwrap();
    let got = rows(&text);
    for (i, (gr, gi)) in [(0.1, 0.2), (0.15, 0.25), (0.2, 0.3)]
        .into_iter()
        .enumerate()
    {
        // (1+Γ)/(1−Γ) = ((1+gr) + j gi)·((1−gr) + j gi)/|1−Γ|²
        let den = (1.0 - gr) * (1.0 - gr) + gi * gi;
        let re = 50.0 * ((1.0 + gr) * (1.0 - gr) - gi * gi) / den;
        let im = 50.0 * ((1.0 + gr) * gi + gi * (1.0 - gr)) / den;
        assert_eq!(got[i][0], (i + 1) as f64 * 1e6);
        assert!(
            (got[i][1] - re).abs() <= 1e-12 * re.abs()
                && (got[i][2] - im).abs() <= 1e-12 * im.abs(),
            "{:?}",
            got[i]
        );
    }
    assert_eq!(meta(&text, "method"), ["reflection"]);
    assert_eq!(meta(&text, "z0_ohm"), ["50"]);
    assert!(
        meta(&text, "detected")
            .iter()
            .any(|d| d.contains("default for 1-port")),
        "{}",
        text
    );
}

// --z0 replaces the file's reference: Γ = 0.2 at 75 Ω is 75·1.2/0.8 = 112.5 Ω (Pozar §2.3).
#[test]
fn z0_option_with_units_overrides_the_file() {
    let s1p = "# Hz S RI R 50\n1e6 0.2 0\n2e6 0.2 0\n3e6 0.2 0\n";
    let (dir, run) = ingest(&[("a.s1p", s1p)], &["a.s1p", "--z0", "75ohm"]);
    run.ok();
    let text = std::fs::read_to_string(dir.path(OUT)).unwrap();
    assert!(rows(&text)
        .iter()
        .all(|r| (r[1] - 112.5).abs() < 1e-12 && r[2].abs() < 1e-12));
    assert_eq!(meta(&text, "z0_ohm"), ["75"]);
}

// Segmented sweeps repeat the boundary frequency (common practice of analyser exports).
#[test]
fn repeated_boundary_frequency_is_merged_with_a_warning() {
    let z = "freq_hz,z_re_ohm,z_im_ohm\n1e6,1,10\n2e6,2,20\n2e6,4,22\n3e6,3,30\n";
    let (dir, run) = ingest(&[("seg.csv", z)], &["seg.csv"]);
    let run = run.ok();
    assert!(
        run.stderr
            .contains("warning: seg.csv: 1 repeated frequency"),
        "{}",
        run.stderr
    );
    let text = std::fs::read_to_string(dir.path(OUT)).unwrap();
    assert_eq!(rows(&text)[1], [2e6, 3.0, 21.0]);
    assert_eq!(meta(&text, "warning").len(), 1);
}

// Empty-fixture subtraction (PHYSICS.md §2), same grid: hand subtraction; the record names the
// file and its SHA-256 computed here with the sha2 crate.
#[test]
fn empty_fixture_is_subtracted_and_recorded() {
    let empty = "freq_hz,z_re_ohm,z_im_ohm\n1e6,0.5,0.25\n2e6,1,0.5\n3e6,0.25,0.75\n";
    let (dir, run) = ingest(
        &[("z.csv", Z_CSV), ("empty.csv", empty)],
        &["z.csv", "--empty", "empty.csv"],
    );
    let run = run.ok();
    let text = std::fs::read_to_string(dir.path(OUT)).unwrap();
    assert_eq!(
        rows(&text),
        vec![[1e6, 10.0, 100.0], [2e6, 10.0, 200.0], [3e6, 12.0, 300.0]]
    );
    let c = meta(&text, "correction");
    assert_eq!(c.len(), 1);
    assert!(
        c[0].contains(&format!("empty.csv (sha256 {})", sha256(empty))),
        "{}",
        c[0]
    );
    assert!(
        run.stdout.contains("correction: empty fixture subtracted"),
        "{}",
        run.stdout
    );
}

// Open/short compensation: Zs = 1 Ω, Zo = 1001 Ω, Zm = 101 Ω → 100/(1 − 0.1) = 111.11 Ω
// (hand arithmetic of the series-residual/parallel-stray model, common practice).
#[test]
fn open_short_compensation_matches_hand_arithmetic() {
    let csv = |v: &str| format!("freq_hz,z_re_ohm,z_im_ohm\n1e6,{v},0\n2e6,{v},0\n3e6,{v},0\n");
    let (dir, run) = ingest(
        &[
            ("m.csv", &csv("101")),
            ("o.csv", &csv("1001")),
            ("s.csv", &csv("1")),
        ],
        &["m.csv", "--open", "o.csv", "--short", "s.csv"],
    );
    run.ok();
    let text = std::fs::read_to_string(dir.path(OUT)).unwrap();
    assert!(
        rows(&text)
            .iter()
            .all(|r| (r[1] - 1000.0 / 9.0).abs() < 1e-9 && r[2].abs() < 1e-9),
        "{}",
        text
    );
    assert!(meta(&text, "correction")[0].starts_with("open/short compensation: open o.csv (sha256"));
}

#[test]
fn failed_run_keeps_an_existing_output_untouched() {
    let dir = Scratch::new();
    dir.write("bad.s1p", "# MHz S RI R 50\n2 0.1 0\n1 0.1 0\n3 0.1 0\n");
    dir.write(OUT, "previous contents\n");
    mucurve_in(dir.dir.path(), &["ingest", "bad.s1p", "-o", OUT]).failed();
    assert_eq!(
        std::fs::read_to_string(dir.path(OUT)).unwrap(),
        "previous contents\n"
    );
}

// ---------------------------------------------------------------------------------------------
// Malformed inputs: each gets a clean, specific error.

#[test]
fn bad_01_decreasing_frequency() {
    let s1p = "# MHz S RI R 50\n1 0.1 0\n3 0.1 0\n2 0.1 0\n4 0.1 0\n";
    refused(
        &[("dec.s1p", s1p)],
        &["dec.s1p"],
        &[
            "dec.s1p",
            "point 3",
            "frequency decreases: 2000000 Hz after 3000000 Hz",
        ],
    );
}

#[test]
fn bad_02_negative_frequency() {
    let z = "freq_hz,z_re_ohm,z_im_ohm\n-1e6,1,1\n1e6,1,1\n2e6,1,1\n";
    refused(
        &[("neg.csv", z)],
        &["neg.csv"],
        &["neg.csv", "point 1", "-1000000 Hz is not positive"],
    );
}

#[test]
fn bad_03_nan_value() {
    let z = "freq_hz,z_re_ohm,z_im_ohm\n1e6,1,1\n2e6,NaN,1\n3e6,1,1\n";
    refused(&[("nan.csv", z)], &["nan.csv"], &["nan.csv", "point 2: Z value NaN+1j at 2000000 Hz is not finite"]);
}

#[test]
fn bad_04_too_few_points() {
    refused(
        &[("two.s1p", "# MHz S RI R 50\n1 0.1 0\n2 0.1 0\n")],
        &["two.s1p"],
        &["two.s1p", "only 2 distinct frequency points", "at least 3"],
    );
}

#[test]
fn bad_05_missing_file() {
    refused(&[], &["nowhere.s1p"], &["nowhere.s1p", "file not found"]);
}

#[test]
fn bad_06_empty_file() {
    refused(
        &[("blank.s1p", "")],
        &["blank.s1p"],
        &["blank.s1p:1", "no option line"],
    );
    refused(&[("blank.csv", "")], &["blank.csv"], &["blank.csv:1", "the file is empty"]);
}

#[test]
fn bad_07_unknown_csv_header() {
    let csv = "when,what,why\n1,2,3\n4,5,6\n7,8,9\n";
    refused(
        &[("odd.csv", csv)],
        &["odd.csv"],
        &["odd.csv", "when", "what", "why", "--columns"],
    );
}

#[test]
fn bad_08_z0_not_a_resistance() {
    refused(
        &[("core.s1p", S1P)],
        &["core.s1p", "--z0", "fifty"],
        &["--z0", "'fifty' is not a number"],
    );
    refused(
        &[("core.s1p", S1P)],
        &["core.s1p", "--z0", "-50"],
        &["--z0", "'-50' is not a positive resistance"],
    );
}

#[test]
fn bad_09_unknown_method() {
    refused(
        &[("core.s1p", S1P)],
        &["core.s1p", "--method", "transmission"],
        &["--method", "unknown method 'transmission'"],
    );
}

#[test]
fn bad_10_two_port_method_on_one_port_data() {
    refused(
        &[("core.s1p", S1P)],
        &["core.s1p", "--method", "series"],
        &["core.s1p", "--method series needs 2-port data"],
    );
}

#[test]
fn bad_11_empty_fixture_does_not_cover_the_band() {
    let empty = "freq_hz,z_re_ohm,z_im_ohm\n1e6,0,0\n1.5e6,0,0\n2e6,0,0\n";
    refused(
        &[("z.csv", Z_CSV), ("empty.csv", empty)],
        &["z.csv", "--empty", "empty.csv"],
        &[
            "z.csv",
            "point 3",
            "3000000 Hz is outside the empty-fixture sweep empty.csv (1000000 Hz to 2000000 Hz)",
        ],
    );
}

#[test]
fn bad_12_h_parameters() {
    refused(
        &[("h.s2p", "# MHz H RI R 50\n1 0 0 1 0 1 0 0 0\n")],
        &["h.s2p"],
        &["h.s2p:1", "H (hybrid) parameters", "not supported"],
    );
}

#[test]
fn bad_13_three_ports_without_a_pair() {
    let row = "1 0 0 0 0 0 0\n 0 0 0 0 0 0\n 0 0 0 0 0 0\n";
    let s3p = format!(
        "# MHz S RI R 50\n{}{}{}",
        row,
        row.replacen('1', "2", 1),
        row.replacen('1', "3", 1)
    );
    refused(
        &[("three.s3p", &s3p)],
        &["three.s3p"],
        &["three.s3p", "3 ports", "--ports"],
    );
}

#[test]
fn bad_14_number_of_frequencies_mismatch() {
    let ts = "[Version] 2.0\n# MHz S RI R 50\n[Number of Ports] 1\n[Number of Frequencies] 4\n[Network Data]\n1 0.1 0\n2 0.1 0\n3 0.1 0\n[End]\n";
    refused(
        &[("v2.ts", ts)],
        &["v2.ts"],
        &["v2.ts:4", "[Number of Frequencies] says 4 but the network data hold 3"],
    );
}

#[test]
fn bad_15_non_numeric_cell() {
    refused(
        &[("txt.s1p", "# MHz S RI R 50\n1 0.1 0\n2 0.1 abc\n3 0.1 0\n")],
        &["txt.s1p"],
        &["txt.s1p:3", "'abc' is not a finite number"],
    );
}

#[test]
fn bad_16_short_row() {
    let z = "freq_hz,z_re_ohm,z_im_ohm\n1e6,1,1\n2e6,1\n3e6,1,1\n";
    refused(&[("short.csv", z)], &["short.csv"], &["short.csv:3", "short row"]);
}

#[test]
fn bad_17_two_option_lines() {
    refused(
        &[(
            "twice.s1p",
            "# MHz S RI R 50\n# GHz S MA R 50\n1 0.1 0\n2 0.1 0\n3 0.1 0\n",
        )],
        &["twice.s1p"],
        &["twice.s1p:2", "a second option line"],
    );
}

#[test]
fn bad_18_complex_reference() {
    refused(
        &[(
            "cplx.s1p",
            "# MHz S RI R 50+5j\n1 0.1 0\n2 0.1 0\n3 0.1 0\n",
        )],
        &["cplx.s1p"],
        &["cplx.s1p:1", "complex reference impedance"],
    );
}

#[test]
fn bad_19_open_circuit_in_reflection() {
    // Γ = 1 is an open: no finite impedance (Pozar §2.3).
    refused(
        &[("open.s1p", "# MHz S RI R 50\n1 0.1 0\n2 1 0\n3 0.1 0\n")],
        &["open.s1p"],
        &["open.s1p", "point 2", "no finite impedance"],
    );
}

#[test]
fn bad_20_open_without_short() {
    refused(
        &[("core.s1p", S1P), ("o.s1p", S1P)],
        &["core.s1p", "--open", "o.s1p"],
        &["--open", "needs both standards"],
    );
}

#[test]
fn bad_21_s21_only_needs_a_method() {
    let csv = "freq_hz,s21_re,s21_im\n1e6,0.9,0\n2e6,0.8,0\n3e6,0.7,0\n";
    refused(
        &[("thru.csv", csv)],
        &["thru.csv"],
        &["thru.csv", "only S21", "--method series"],
    );
}

#[test]
fn bad_22_output_folder_missing_or_same_as_input() {
    let (dir, run) = ingest(&[("core.s1p", S1P)], &["core.s1p"]);
    run.ok();
    let r = mucurve_in(
        dir.dir.path(),
        &["ingest", "core.s1p", "-o", "no/such/folder/x.csv"],
    )
    .failed();
    assert!(
        r.stderr.contains("output folder does not exist"),
        "{}",
        r.stderr
    );
    let r = mucurve_in(dir.dir.path(), &["ingest", "core.s1p", "-o", "core.s1p"]).failed();
    assert!(
        r.stderr.contains("would overwrite an input file"),
        "{}",
        r.stderr
    );
    assert_eq!(std::fs::read_to_string(dir.path("core.s1p")).unwrap(), S1P);
}

#[test]
fn bad_23_port_pair_not_a_pair() {
    refused(
        &[("core.s1p", S1P)],
        &["core.s1p", "--ports", "2,2"],
        &["--ports", "'2,2' is not a pair"],
    );
}

// A passive part has |Γ| ≤ 1 (Pozar §2.3); more is reported with the count, not refused.
#[test]
fn reflection_above_one_is_a_warning_not_an_error() {
    let s1p = "# MHz S RI R 50\n1 0.5 0\n2 1.01 0\n3 0 -1.02\n";
    let (dir, run) = ingest(&[("hot.s1p", s1p)], &["hot.s1p"]);
    let run = run.ok();
    assert!(
        run.stderr.contains("warning: hot.s1p: 2 of 3 points have |S11| > 1 (largest 1.020000 at 3000000 Hz)"),
        "{}",
        run.stderr
    );
    let text = std::fs::read_to_string(dir.path(OUT)).unwrap();
    assert_eq!(meta(&text, "warning").len(), 1);
}

// Series-through between 50 Ω ports (Pozar §4.3): S21 = 0.5 → Z = 2·50·(1 − 0.5)/0.5 = 100 Ω;
// S21 = 0.4j → Z = 100/(0.4j) − 100 = −100 − 250j Ω. Reflection on the same file reads S11:
// Γ = 0.2 → 50·1.2/0.8 = 75 Ω.
#[test]
fn two_port_defaults_to_series_and_reflection_reads_s11() {
    let s2p = "# MHz S RI R 50\n1 0.2 0 0.5 0 0.5 0 0.2 0\n2 0.2 0 0 0.4 0 0.4 0.2 0\n3 0.2 0 0.5 0 0.5 0 0.2 0\n";
    let (dir, run) = ingest(&[("thru.s2p", s2p)], &["thru.s2p"]);
    run.ok();
    let text = std::fs::read_to_string(dir.path(OUT)).unwrap();
    let r = rows(&text);
    assert!((r[0][1] - 100.0).abs() < 1e-12 && r[0][2].abs() < 1e-12, "{:?}", r[0]);
    assert!((r[1][1] + 100.0).abs() < 1e-12 && (r[1][2] + 250.0).abs() < 1e-12, "{:?}", r[1]);
    assert_eq!(meta(&text, "method"), ["series"]);
    let run = mucurve_in(dir.dir.path(), &["ingest", "thru.s2p", "--method", "reflection", "-o", "refl.csv"]).ok();
    assert!(run.stdout.contains("method: reflection"), "{}", run.stdout);
    let text = std::fs::read_to_string(dir.path("refl.csv")).unwrap();
    assert!(rows(&text).iter().all(|r| (r[1] - 75.0).abs() < 1e-12 && r[2].abs() < 1e-12));
}
