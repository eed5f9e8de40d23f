//! CSV exports in every style the reader claims, checked against direct arithmetic on the
//! numbers written in each file, and malformed exports checked for located, specific errors.
//!
//! Sources of the expected values:
//! - Euler's formula, v = |v|·e^{jφ} with φ[rad] = φ[deg]·π/180;
//! - decibels of a voltage-wave ratio, |S| = 10^(dB/20) (IEC 60027-3 [from memory]; common
//!   practice for S-parameters);
//! - Pozar, *Microwave Engineering*, as tabulated in PHYSICS.md §3: one-port
//!   Z = Z0(1+S11)/(1−S11); series-through Z = 2Z0(1−S21)/S21. The worked values (Z0 = 50 Ω:
//!   Z = 100 Ω ↔ S11 = 1/3, 50+j50 Ω ↔ 0.2+j0.4, 25 Ω ↔ −1/3; series 100 Ω ↔ S21 = 0.5,
//!   j100 Ω ↔ 0.5−j0.5, 300 Ω ↔ 0.25) are worked by hand from those formulas.

mod common;
use common::tolerance::CSV_ARITHMETIC_REL;

use mucurve::ingest::convert::{s11_to_z, s21_series_to_z};
use mucurve::ingest::{csv_table, IngestError, ReadOptions, SourceInfo, Sweep, SweepData};
use mucurve::C64;
use std::f64::consts::{FRAC_1_SQRT_2, PI};
use std::path::PathBuf;

fn path(name: &str) -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("tests/data/csv")
        .join(name)
}

fn read_with(name: &str, columns: Option<&str>) -> Result<Sweep, IngestError> {
    let p = path(name);
    let bytes = std::fs::read(&p).unwrap_or_else(|e| panic!("test data {}: {}", p.display(), e));
    let opts = ReadOptions {
        columns: columns.map(str::to_string),
        ..ReadOptions::default()
    };
    csv_table::read_sweep(&bytes, SourceInfo::from_bytes(&p, &bytes), &opts)
}

fn read(name: &str) -> Sweep {
    read_with(name, None).unwrap_or_else(|e| panic!("{}: {}", name, e))
}

fn assert_close(actual: C64, expected: C64, what: &str) {
    let err = (actual - expected).norm();
    assert!(
        err <= CSV_ARITHMETIC_REL * expected.norm(),
        "{}: got {}, expected {} (|error| {:e})",
        what,
        actual,
        expected,
        err
    );
}

fn assert_freqs(sweep: &Sweep, expected_hz: &[f64]) {
    assert_eq!(sweep.freq_hz.len(), expected_hz.len(), "point count");
    for (got, want) in sweep.freq_hz.iter().zip(expected_hz) {
        assert!(
            (got - want).abs() <= CSV_ARITHMETIC_REL * want,
            "frequency {} Hz, expected {} Hz",
            got,
            want
        );
    }
}

fn impedance(sweep: &Sweep) -> &[C64] {
    match &sweep.data {
        SweepData::Impedance(z) => z,
        other => panic!("expected impedance, got {}", other.describe()),
    }
}

fn reflection(sweep: &Sweep) -> (&[C64], f64) {
    match &sweep.data {
        SweepData::Reflection { s11, z0 } => (s11, *z0),
        other => panic!("expected S11, got {}", other.describe()),
    }
}

fn transmission(sweep: &Sweep) -> (&[C64], [f64; 2]) {
    match &sweep.data {
        SweepData::Transmission { s21, z0 } => (s21, *z0),
        other => panic!("expected S21, got {}", other.describe()),
    }
}

/// Euler's formula with the angle in degrees.
fn polar_deg(mag: f64, deg: f64) -> C64 {
    C64::from_polar(mag, deg * PI / 180.0)
}

/// |S| from dB of a wave ratio: 10^(dB/20).
fn from_db(db: f64) -> f64 {
    10f64.powf(db / 20.0)
}

/// Pozar: one-port Z = Z0(1+S11)/(1−S11), written out here rather than taken from the crate.
fn pozar_reflection_z(s11: C64, z0: f64) -> C64 {
    z0 * (1.0 + s11) / (1.0 - s11)
}

/// Pozar: series-through between equal ports, Z = 2Z0(1−S21)/S21.
fn pozar_series_z(s21: C64, z0: f64) -> C64 {
    2.0 * z0 * (1.0 - s21) / s21
}

/// What auto-detection reported must contain `text`.
fn assert_detected(sweep: &Sweep, text: &str) {
    let d = sweep.detected.join("\n");
    assert!(d.contains(text), "detected:\n{}\nlacks: {}", d, text);
}

/// Read `name` as impedance and compare it point by point with `expected`, worked from the
/// file's numbers by `formula`.
fn check_impedance(name: &str, freq_hz: &[f64], expected: &[C64], formula: &str) -> Sweep {
    let s = read(name);
    assert_freqs(&s, freq_hz);
    assert_eq!(impedance(&s).len(), expected.len());
    for (z, e) in impedance(&s).iter().zip(expected) {
        assert_close(*z, *e, formula);
    }
    s
}

/// S11 as read equals `direct` (worked from the file's numbers); the crate's `s11_to_z` gives
/// Pozar's Z = Z0(1+S11)/(1−S11) on `direct` and the hand-worked impedances `by_hand`.
fn check_reflection(s: &Sweep, z0: f64, direct: &[C64], by_hand: &[C64]) {
    assert_freqs(s, &[1e6, 2e6, 3e6]);
    let (s11, read_z0) = reflection(s);
    assert_eq!(read_z0, z0);
    assert_eq!(s11.len(), direct.len());
    for ((g, d), z) in s11.iter().zip(direct).zip(by_hand) {
        assert_close(*g, *d, "S11 from the file's numbers");
        let zr = s11_to_z(*g, read_z0);
        assert_close(
            zr,
            pozar_reflection_z(*d, z0),
            "Pozar Z = Z0(1+S11)/(1-S11)",
        );
        assert_close(zr, *z, "Pozar worked value");
    }
}

// ---------------------------------------------------------------- impedance styles

// The tool's own normalised sweep (issue #2 item 7, `# key: value` block as sweep_file writes
// it): Z = re + j·im, Hz and ohms as written.
#[test]
fn normalised_sweep_reads_as_written() {
    let rows = [(12.5, 31.4), (25.0, 62.8), (60.2, 150.1)];
    let z = rows.map(|(r, x)| C64::new(r, x));
    let s = check_impedance(
        "normalised_sweep.csv",
        &[1e6, 2e6, 5e6],
        &z,
        "Z = re + j im",
    );
    assert_detected(&s, "header on line 9");
}

// The normalised sweep as the project writes it reads back bit for bit: the writer uses Rust's
// shortest round-trip float form, which parses back to the same f64 (Rust `{:e}` / `str::parse`
// guarantee).
#[test]
fn normalised_sweep_writer_output_reads_back_exactly() {
    use mucurve::ingest::{sweep_file, ImpedanceSweep, Method};
    let freq_hz = vec![1.0 / 3.0 * 1e6, 2.000000000000001e6, 1.2345678901234567e9];
    let z = vec![
        C64::new(0.1 + 0.2, -1e-300),
        C64::new(-4.9e-324, 6.02214076e23),
        C64::new(1.0 / 7.0, 2.0_f64.sqrt()),
    ];
    let source = SourceInfo {
        path: PathBuf::from("core 7.s1p"),
        sha256: "ab".repeat(32),
    };
    let written = ImpedanceSweep {
        source: source.clone(),
        freq_hz: freq_hz.clone(),
        z: z.clone(),
        method: Some(Method::Reflection),
        z0: Some(75.0),
        detected: vec![
            "Touchstone v1, # MHZ S RI R 75".into(),
            "reference impedance 75 ohm (line 2)".into(),
        ],
        corrections: vec![],
        warnings: vec!["1 repeated frequency merged".into()],
    };
    let text = sweep_file::write_sweep(&written);
    let s = csv_table::read_sweep(text.as_bytes(), source, &ReadOptions::default()).unwrap();
    assert_eq!(s.freq_hz, freq_hz);
    assert_eq!(impedance(&s), z.as_slice());
}

// Z = R + jX; the file is ';'-delimited with decimal commas, a free-text preamble, a '!'
// comment and CRLF line ends; MHz from the header.
#[test]
fn r_x_with_decimal_comma_and_preamble() {
    let rows = [(12.25, 31.4), (15.5, 41.75), (80.125, -12.5)];
    let z = rows.map(|(r, x)| C64::new(r, x));
    let s = check_impedance(
        "z_rx_semicolon_decimal_comma.csv",
        &[1.5e6, 2e6, 10e6],
        &z,
        "Z = R + jX",
    );
    assert_detected(&s, "delimiter ';', decimal comma, header on line 4");
    assert_detected(&s, "zre=col2 'R' [ohm, assumed]");
}

// Euler: Z = |Z|·e^{jφ}, |Z| in kΩ and φ in degrees from a units row; tab-delimited.
#[test]
fn magnitude_phase_degrees_from_units_row() {
    let rows = [(0.1, 30.0), (0.25, 60.0), (1.2, -45.0)];
    let z = rows.map(|(mag_kohm, deg)| polar_deg(mag_kohm * 1e3, deg));
    let s = check_impedance(
        "z_magphase_tab_units_row.csv",
        &[0.5e6, 1e6, 3e6],
        &z,
        "Z = |Z| e^{jφ}",
    );
    assert_detected(&s, "delimiter tab");
    assert_detected(&s, "header on line 2, units row on line 3");
    assert_detected(&s, "Z as magnitude/phase: freq=col1 'Frequency' [MHz], zmag=col2 '|Z|' [kohm], zphase=col3 'Phase' [deg]");
}

// Euler: Z = |Z|·e^{jφ} with φ in radians ("Phase (rad)"); kHz from `freq_kHz`; every field
// quoted and every line ending in a delimiter.
#[test]
fn magnitude_phase_radians_quoted_with_trailing_delimiters() {
    let rows = [(12.5, 0.5), (30.25, PI / 3.0), (95.0, -0.25)];
    let z = rows.map(|(mag, rad)| C64::from_polar(mag, rad));
    let s = check_impedance(
        "z_magphase_rad_quoted_trailing.csv",
        &[100e3, 250e3, 1e6],
        &z,
        "Z = |Z| e^{jφ}, φ in rad",
    );
    assert_eq!(impedance(&s)[1], C64::from_polar(30.25, 1.0471975511965976));
}

// Series-equivalent columns Rs/Xs are taken over |Z|/θ (re/im loses nothing to rounding);
// inductance, Q and a marker text column are not used and the report says so.
#[test]
fn impedance_analyser_export_prefers_rs_xs() {
    let rows = [(0.3, 0.628), (4.5, 6.29), (80.0, 56.5)];
    let z = rows.map(|(r, x)| C64::new(r, x));
    let s = check_impedance(
        "analyser_extra_columns.csv",
        &[1e5, 1e6, 1e7],
        &z,
        "Z = Rs + jXs",
    );
    assert_detected(&s, "not used: column 2 'Ls (H)', column 5 '|Z| (Ohm)', column 6 'θ (deg)', column 7 'Q', column 8 'Marker'");
}

// ---------------------------------------------------------------- S11 styles

// S11 = re + j·im at Z0 = 75 Ω from a '# Z0 = 75' comment; Pozar's Z = Z0(1+S11)/(1−S11)
// by hand: 0.2+j0.4 → 75+j75 Ω, 1/3 → 150 Ω, j → j75 Ω.
#[test]
fn s11_re_im_with_z0_comment_pozar() {
    let s = read("s11_ri_quoted_z0_75.csv");
    let rows = [(0.2, 0.4), (0.3333333333333333, 0.0), (0.0, 1.0)];
    let by_hand = [
        C64::new(75.0, 75.0),
        C64::new(150.0, 0.0),
        C64::new(0.0, 75.0),
    ];
    check_reflection(&s, 75.0, &rows.map(|(re, im)| C64::new(re, im)), &by_hand);
    assert_detected(&s, "reference impedance 75 ohm (line 2)");
}

/// Pozar worked values at Z0 = 50 Ω for the three S11 rows the dB and lin-mag files hold.
const S11_FILES_Z: [C64; 3] = [
    C64::new(100.0, 0.0),
    C64::new(50.0, 50.0),
    C64::new(25.0, 0.0),
];

// S11 = 10^(dB/20)·e^{jφ}, then Pozar's Z = Z0(1+S11)/(1−S11) at the default 50 Ω.
#[test]
fn s11_db_deg_pozar() {
    let s = read("s11_db_deg.csv");
    let rows = [
        (-9.54242509439325, 0.0),
        (-6.9897000433601875, 63.43494882292201),
        (-9.54242509439325, 180.0),
    ];
    check_reflection(
        &s,
        50.0,
        &rows.map(|(db, deg)| polar_deg(from_db(db), deg)),
        &S11_FILES_Z,
    );
    assert_detected(&s, "reference impedance 50 ohm (not stated");
}

// S11 = |S11|·e^{jφ} with decimal commas and GHz from `Freq/GHz`; same worked impedances.
#[test]
fn s11_linear_magnitude_deg_semicolon_pozar() {
    let s = read("s11_linmag_deg_semicolon.csv");
    let rows = [
        (0.447213595499958, 63.43494882292201),
        (0.3333333333333333, 0.0),
        (0.3333333333333333, 180.0),
    ];
    let by_hand = [S11_FILES_Z[1], S11_FILES_Z[0], S11_FILES_Z[2]];
    check_reflection(
        &s,
        50.0,
        &rows.map(|(mag, deg)| polar_deg(mag, deg)),
        &by_hand,
    );
}

// ---------------------------------------------------------------- S21 styles

/// Pozar series-through worked values at 50 Ω ports for the three S21 rows of every S21 file.
const S21_FILES_Z: [C64; 3] = [
    C64::new(100.0, 0.0),
    C64::new(0.0, 100.0),
    C64::new(300.0, 0.0),
];

fn check_series(s: &Sweep, direct: [C64; 3]) {
    assert_freqs(s, &[1e6, 2e6, 3e6]);
    let (s21, z0) = transmission(s);
    assert_eq!(z0, [50.0, 50.0]);
    for ((t, d), z) in s21.iter().zip(direct).zip(S21_FILES_Z) {
        assert_close(*t, d, "S21 from the file's numbers");
        let zs = s21_series_to_z(*t, z0[0], z0[1]);
        assert_close(
            zs,
            pozar_series_z(d, 50.0),
            "Pozar series Z = 2Z0(1-S21)/S21",
        );
        assert_close(zs, z, "Pozar worked value");
    }
}

// S21 = re + j·im, tab-delimited, `freq_Hz`, `S21_real`, `S21_imag`.
#[test]
fn s21_re_im_series_pozar() {
    let s = read("s21_ri_tab.csv");
    check_series(
        &s,
        [C64::new(0.5, 0.0), C64::new(0.5, -0.5), C64::new(0.25, 0.0)],
    );
}

// S21 = 10^(dB/20)·e^{jφ}; every line ends in a delimiter.
#[test]
fn s21_db_deg_trailing_delimiters_series_pozar() {
    let s = read("s21_db_deg_trailing.csv");
    let rows = [
        (-6.020599913279624, 0.0),
        (-3.0102999566398116, -45.0),
        (-12.041199826559248, 0.0),
    ];
    check_series(&s, rows.map(|(db, deg)| polar_deg(from_db(db), deg)));
}

// S21 = |S21|·e^{jφ}, φ in rad from a units row (`Hz,U,rad`); a 'Reference impedance: 50 Ohm'
// comment.
#[test]
fn s21_magnitude_radians_units_row_series_pozar() {
    let s = read("s21_mag_rad_units_row.csv");
    let rows = [(0.5, 0.0), (FRAC_1_SQRT_2, -PI / 4.0), (0.25, 0.0)];
    check_series(&s, rows.map(|(m, rad)| C64::from_polar(m, rad)));
    assert_detected(&s, "reference impedance 50 ohm (line 1)");
}

// ---------------------------------------------------------------- --columns

// A header that does not say S11 or S21 is read once --columns says so (header names without
// their units); Pozar worked values 100 Ω and 50+j50 Ω.
#[test]
fn columns_override_by_header_name() {
    let s = read_with(
        "generic_mag_phase.csv",
        Some("freq=Frequency,s11db=Magnitude,s11deg=Phase (deg)"),
    )
    .unwrap();
    let (s11, z0) = reflection(&s);
    let rows = [
        (-9.54242509439325, 0.0),
        (-6.9897000433601875, 63.43494882292201),
    ];
    for ((g, (db, deg)), z) in s11.iter().zip(rows).zip(S11_FILES_Z) {
        assert_close(*g, polar_deg(from_db(db), deg), "S11 = 10^(dB/20) e^{jφ}");
        assert_close(s11_to_z(*g, z0), z, "Pozar worked value");
    }
    assert_detected(&s, "S11 as dB/phase (from --columns)");
}

// Column numbers read a file that has no header at all, with the units given in the option.
#[test]
fn columns_override_by_number_reads_a_headerless_file() {
    let s = read_with(
        "headerless_numbers.csv",
        Some("freq=1:MHz,zre=2,zim=3:kohm"),
    )
    .unwrap();
    assert_freqs(&s, &[1e6, 2e6]);
    assert_close(
        impedance(&s)[0],
        C64::new(12.5, 31.4e3),
        "Z = re + j im·1000",
    );
    assert_detected(&s, "no header line");
}

// The override's unit replaces the header's; aliases r/x name Z's parts.
#[test]
fn columns_override_unit_wins_over_header() {
    let s = read_with(
        "z_rx_semicolon_decimal_comma.csv",
        Some("freq=1:kHz,r=2,x=3"),
    )
    .unwrap();
    assert_freqs(&s, &[1.5e3, 2e3, 10e3]);
    assert_close(impedance(&s)[2], C64::new(80.125, -12.5), "Z = R + jX");
}

// ---------------------------------------------------------------- malformed files

struct Bad {
    file: &'static str,
    line: usize,
    message: &'static str,
    /// Text the expected/hint lines must hold ("" for no check).
    advice: &'static str,
}

const MALFORMED: &[Bad] = &[
    Bad { file: "bad_unknown_header.csv", line: 2, message: "cannot tell what the columns hold: 1 'Time', 2 'Voltage', 3 'Current'", advice: "--columns \"freq=1:Hz,zre=2,zim=3\"" },
    Bad { file: "bad_no_header.csv", line: 2, message: "no header line above the first row of numbers", advice: "line 1 ('Sweep of sample 4') is one cell of text" },
    Bad { file: "bad_non_numeric_cell.csv", line: 3, message: "column 2 'Re(Z)' holds 'n/a', which is not a number", advice: "a number such as" },
    Bad { file: "bad_short_row.csv", line: 3, message: "a short row: this line has 2 cells", advice: "3 cells, as the header on line 1 has" },
    Bad { file: "bad_empty.csv", line: 1, message: "the file is empty", advice: "a header line naming the columns" },
    Bad { file: "bad_only_comments.csv", line: 2, message: "the file holds only comments, no table", advice: "" },
    Bad { file: "bad_only_header.csv", line: 2, message: "line 2 looks like a header, but no rows of numbers follow it", advice: "rows of numbers under the header" },
    Bad { file: "bad_mixed_delimiters.csv", line: 3, message: "a short row: this line has 1 cell", advice: "splits into 3 cells on ';', the rest of the file on ','" },
    Bad { file: "bad_mixed_header_delimiter.csv", line: 1, message: "mixed delimiters: this line splits on ';' but the data rows below it on ','", advice: "one delimiter" },
    Bad { file: "bad_phase_without_magnitude.csv", line: 1, message: "column 2 'Phase (deg)' holds a phase but no column holds a magnitude", advice: "" },
    Bad { file: "bad_re_without_im.csv", line: 1, message: "column 2 'Re(Z)' holds zre but no column holds zim to go with it", advice: "--columns" },
    Bad { file: "bad_two_quantities.csv", line: 1, message: "the columns hold Z and S11 completely", advice: "--columns \"freq=1:Hz,zre=2,zim=3\"" },
    Bad { file: "bad_unit_mismatch.csv", line: 1, message: "column 1 'Freq (Ohm)' holds freq but its unit is ohm", advice: "--columns \"freq=1:Hz,zre=2,zim=3\"" },
    Bad { file: "bad_long_row.csv", line: 3, message: "too many cells: this line has 4 cells", advice: "3 cells, as the header on line 1 has" },
    Bad { file: "bad_units_row.csv", line: 2, message: "unknown unit 'furlong' in column 2 of the units row", advice: "Hz, kHz, MHz, GHz, ohm" },
    Bad { file: "bad_z0_comment.csv", line: 1, message: "the reference impedance 'Z0 = fifty' is not a positive resistance", advice: "# Z0 = 50" },
    Bad { file: "bad_thousands_separator.csv", line: 3, message: "column 2 'R' holds '1.025,5', which is not a number", advice: "thousands separators" },
    Bad { file: "bad_empty_cell.csv", line: 3, message: "column 2 'Re(Z)' is empty", advice: "fill in the value" },
    Bad { file: "bad_duplicate_role.csv", line: 1, message: "column 2 'R' and column 3 'Rs' both hold zre", advice: "--columns \"freq=1:Hz,zre=2,zim=4\"" },
    Bad { file: "bad_no_delimiter.csv", line: 1, message: "no delimiter", advice: "',', ';' or tab" },
    Bad { file: "generic_mag_phase.csv", line: 1, message: "column 2 'Magnitude (dB)' holds a magnitude in dB but does not say of which quantity: S11 or S21", advice: "--columns \"freq=1,s11db=2,s11phase=3\"" },
];

// Issue #2 item 8: every error names the line, what was expected and a hint; never a panic.
#[test]
fn malformed_files_give_located_specific_errors() {
    for bad in MALFORMED {
        let e = match read_with(bad.file, None) {
            Ok(s) => panic!("{}: read without error: {:?}", bad.file, s.detected),
            Err(e) => e.0,
        };
        assert_eq!(e.line, Some(bad.line), "{}: wrong line in: {}", bad.file, e);
        assert!(
            e.message.contains(bad.message),
            "{}: message was: {}",
            bad.file,
            e.message
        );
        assert!(
            !e.expected.is_empty() && !e.hint.is_empty(),
            "{}: no expected/hint: {}",
            bad.file,
            e
        );
        let advice = format!("{}\n{}", e.expected, e.hint);
        assert!(
            advice.contains(bad.advice),
            "{}: expected/hint were:\n{}",
            bad.file,
            advice
        );
    }
}

// The header-less file is an error without --columns (checked above) and with names in it.
#[test]
fn columns_override_errors_are_specific() {
    let e = read_with("s11_db_deg.csv", Some("freq=1,zz=2"))
        .unwrap_err()
        .0;
    assert!(
        e.message.contains("in --columns: unknown role 'zz'"),
        "{}",
        e.message
    );
    assert!(e.hint.contains("s11db"), "{}", e.hint);

    let e = read_with("s11_db_deg.csv", Some("freq=1,s11db=2,s11deg=5"))
        .unwrap_err()
        .0;
    assert_eq!(e.line, Some(2));
    assert!(
        e.message.contains("there is no column 5; the table has 3"),
        "{}",
        e.message
    );

    let e = read_with("s11_db_deg.csv", Some("freq=1,s11db=2,s11deg=Angle"))
        .unwrap_err()
        .0;
    assert!(
        e.message.contains("no column is named 'Angle'"),
        "{}",
        e.message
    );
    assert!(e.expected.contains("3 'S11 phase [deg]'"), "{}", e.expected);

    let e = read_with("headerless_numbers.csv", Some("freq=Freq,zre=2,zim=3"))
        .unwrap_err()
        .0;
    assert_eq!(e.line, Some(1));

    let e = read_with("s11_db_deg.csv", Some("freq=1,s11db=2"))
        .unwrap_err()
        .0;
    assert!(
        e.message
            .contains("holds s11db but no column holds s11phase"),
        "{}",
        e.message
    );
}

// Through the path-based dispatcher the error also names the file: "file:line: message".
#[test]
fn dispatcher_errors_name_file_and_line() {
    let p = path("bad_short_row.csv");
    let e = mucurve::ingest::read_sweep(&p, &ReadOptions::default()).unwrap_err();
    let text = e.to_string();
    assert!(
        text.starts_with(&format!("{}:3: a short row", p.display())),
        "{}",
        text
    );
}
