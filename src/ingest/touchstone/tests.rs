//! Whole-file checks on small inline texts, one feature each. Expected values come from the
//! Touchstone 1.1/2.0 specifications (IBIS Open Forum: field order, defaults, normalisation,
//! two-port order, matrix formats) and Pozar, *Microwave Engineering* §4.3 (S11 = (Z−Z0)/(Z+Z0))
//! as quoted in PHYSICS.md §3.

use super::*;
use crate::ingest::SweepData;
use std::path::PathBuf;

fn c(re: f64, im: f64) -> C64 {
    C64::new(re, im)
}

fn close(a: C64, b: C64) -> bool {
    (a - b).norm() <= 1e-12 * (1.0 + b.norm())
}

fn net(text: &str) -> Network {
    match parse(text.as_bytes()) {
        Ok(n) => n,
        Err(e) => panic!("parse failed: {}", e),
    }
}

fn err(text: &str) -> Diagnostic {
    match parse(text.as_bytes()) {
        Ok(n) => panic!("expected an error, got {:?}", n),
        Err(e) => e.0,
    }
}

fn sweep(name: &str, text: &str, ports: Option<(usize, usize)>) -> Result<Sweep, IngestError> {
    let source = SourceInfo::from_bytes(&PathBuf::from(name), text.as_bytes());
    read_sweep(
        text.as_bytes(),
        source,
        &ReadOptions {
            ports,
            ..Default::default()
        },
    )
}

#[test]
fn one_port_ri_mhz_reads_frequency_and_s11() {
    let n = net("! a comment\n# MHz S RI R 50\n1 0.1 -0.2\n2.5 0.3 0.4 ! inline\n");
    assert_eq!((n.version.as_str(), n.ports), ("1.0", 1));
    assert_eq!(n.freq_hz, vec![1e6, 2.5e6]);
    assert_eq!(n.s, vec![vec![c(0.1, -0.2)], vec![c(0.3, 0.4)]]);
    assert_eq!(n.z0, vec![50.0]);
    assert_eq!(n.option_line, "# MHz S RI R 50");
}

// Defaults when fields are missing: GHz, S, MA, R 50 (Touchstone 1.1 option line).
#[test]
fn bare_option_line_means_ghz_s_ma_r50() {
    let n = net("#\n1 0.5 90\n");
    assert_eq!(n.freq_hz, vec![1e9]);
    assert!(close(n.s[0][0], c(0.0, 0.5)));
    assert_eq!(n.z0, vec![50.0]);
    let n = net("# ! only a comment after the hash\n2 1 180\n");
    assert!(close(n.s[0][0], c(-1.0, 0.0)));
}

#[test]
fn db_pairs_are_twenty_log_magnitudes_in_degrees() {
    let n = net("# Hz S DB\n10 -6.020599913279624 -90\n");
    assert_eq!(n.freq_hz, vec![10.0]);
    assert!(close(n.s[0][0], c(0.0, -0.5)), "{}", n.s[0][0]);
}

// Version 1 two-port order is S11 S21 S12 S22; version 2 follows [Two-Port Data Order].
#[test]
fn two_port_order_v1_and_v2() {
    let row = "1 0.1 0 0.5 0 0.25 0 0.2 0\n";
    let v1 = net(&format!("# GHz S RI\n{}", row));
    assert_eq!(v1.s[0], vec![c(0.1, 0.0), c(0.25, 0.0), c(0.5, 0.0), c(0.2, 0.0)]);
    let v2 = |order: &str| {
        net(&format!(
            "[Version] 2.0\n# GHz S RI\n[Number of Ports] 2\n[Two-Port Data Order] {}\n\
             [Number of Frequencies] 1\n[Network Data]\n{}[End]\n",
            order, row
        ))
    };
    assert_eq!(v2("21_12").s, v1.s);
    assert_eq!(
        v2("12_21").s[0],
        vec![c(0.1, 0.0), c(0.5, 0.0), c(0.25, 0.0), c(0.2, 0.0)]
    );
}

#[test]
fn v2_two_port_without_data_order_is_refused() {
    let e =
        err("[Version] 2.0\n#\n[Number of Ports] 2\n[Number of Frequencies] 1\n[Network Data]\n1 0 0 1 0 1 0 0 0\n");
    assert_eq!(e.line, Some(5));
    assert!(e.hint.contains("[Two-Port Data Order] 21_12"));
}

// Version 1 n ≥ 3 ports: row-major, rows wrap onto continuation lines; values are counted.
#[test]
fn v1_three_port_continuation_lines_are_counted_by_values() {
    let text = "# GHz S RI R 50\n1 11 0 12 0 13 0\n 21 0 22 0\n 23 0\n 31 0 32 0 33 0\n2 1 0 0 0 0 0 0 0 1 0 0 0 0 0 0 0 1 0\n";
    let n = net(text);
    assert_eq!(n.ports, 3);
    assert_eq!(n.freq_hz, vec![1e9, 2e9]);
    let re: Vec<f64> = n.s[0].iter().map(|z| z.re).collect();
    assert_eq!(re, vec![11.0, 12.0, 13.0, 21.0, 22.0, 23.0, 31.0, 32.0, 33.0]);
}

#[test]
fn port_count_follows_the_file_name_for_version_1() {
    // Nine numbers on one line read as 2 ports by layout; the .s4p name makes it 4 ports.
    let text = "# GHz S RI\n1 1 0 2 0 3 0 4 0\n 5 0 6 0 7 0 8 0\n 9 0 10 0 11 0 12 0\n 13 0 14 0 15 0 16 0\n";
    assert_eq!(parse_with_ports(text.as_bytes(), Some(4)).unwrap().ports, 4);
    assert_eq!(parse(text.as_bytes()).unwrap().ports, 4);
    let e = parse_with_ports(text.as_bytes(), Some(2)).unwrap_err().0;
    assert_eq!(e.line, Some(4));
    assert!(
        e.message
            .contains("(from line 3) to 16 numbers, more than one frequency needs"),
        "{}",
        e.message
    );
    assert_eq!(ports_from_extension(Path::new("a b.S2P")), Some(2));
    assert_eq!(ports_from_extension(Path::new("x.s12p")), Some(12));
    assert_eq!(ports_from_extension(Path::new("x.csv")), None);
}

// Version 1 Z and Y are normalised to R: Z = z·R, Y = y/R (Touchstone 1.1); then
// S11 = (Z − Z0)/(Z + Z0) (Pozar §4.3).
#[test]
fn v1_z_and_y_are_unnormalised_then_converted() {
    let z = net("# MHz Z RI R 75\n1 1 0\n2 3 0\n");
    assert!(close(z.s[0][0], c(0.0, 0.0)));
    assert!(close(z.s[1][0], c(0.5, 0.0)), "{}", z.s[1][0]); // Z = 225: (225−75)/(225+75)
    let y = net("# MHz Y RI R 50\n1 1 0\n2 2 0\n");
    assert!(close(y.s[0][0], c(0.0, 0.0)));
    assert!(close(y.s[1][0], c(-1.0 / 3.0, 0.0)), "{}", y.s[1][0]); // Y = 2/50 → Z = 25
}

// Version 2 Z/Y are in ohms/siemens at the [Reference] impedances.
#[test]
fn v2_z_is_not_normalised() {
    let n = net("[Version] 2.0\n# MHz Z RI\n[Number of Ports] 1\n[Number of Frequencies] 1\n[Reference] 25\n[Network Data]\n1 75 0\n[End]\n");
    assert_eq!(n.z0, vec![25.0]);
    assert!(close(n.s[0][0], c(0.5, 0.0)));
}

#[test]
fn v1_1_per_port_references() {
    let n = net("# GHz S RI R 50 75\n1 0 0 1 0 1 0 0 0\n");
    assert_eq!((n.version.as_str(), n.z0.clone()), ("1.1", vec![50.0, 75.0]));
    let e = err("# GHz S RI R 50 75 100\n1 0 0 1 0 1 0 0 0\n");
    assert!(
        e.message.contains("3 reference impedances for a 2-port file"),
        "{}",
        e.message
    );
}

#[test]
fn v2_reference_on_following_lines_and_lower_matrix() {
    let text = "[Version] 2.1\n# GHz S RI R 50\n[Number of Ports] 3\n[Number of Frequencies] 1\n\
                [Reference]\n 50 ! port 1\n75\n  100 ! port 3\n[Matrix Format] Lower\n[Network Data]\n\
                1 11 0\n 21 0 22 0\n 31 0 32 0 33 0\n[End]\n";
    let n = net(text);
    assert_eq!((n.version.as_str(), n.z0.clone()), ("2.1", vec![50.0, 75.0, 100.0]));
    let re: Vec<f64> = n.s[0].iter().map(|z| z.re).collect();
    assert_eq!(re, vec![11.0, 21.0, 31.0, 21.0, 22.0, 32.0, 31.0, 32.0, 33.0]);
}

#[test]
fn v2_upper_matrix_mirrors_to_full() {
    let text = "[Version] 2.0\n#GHz S RI\n[Number of Ports] 2\n[Number of Frequencies] 1\n[Matrix Format] Upper\n\
                [Network Data]\n1 11 0 12 0 22 0\n";
    let re: Vec<f64> = net(text).s[0].iter().map(|z| z.re).collect();
    assert_eq!(re, vec![11.0, 12.0, 12.0, 22.0]);
}

#[test]
fn reference_count_must_match_the_ports() {
    let head = "[Version] 2.0\n#\n[Number of Ports] 2\n[Number of Frequencies] 1\n[Two-Port Data Order] 12_21\n";
    let e = err(&format!("{}[Reference] 50\n[Network Data]\n1 0 0 1 0 1 0 0 0\n", head));
    assert_eq!(e.line, Some(7));
    assert!(e.message.contains("1 value(s) for 2 ports"), "{}", e.message);
    let e = err(&format!(
        "{}[Reference] 50 50 50\n[Network Data]\n1 0 0 1 0 1 0 0 0\n",
        head
    ));
    assert!(e.message.contains("3 values for 2 ports"));
}

#[test]
fn number_of_frequencies_is_checked_against_the_data() {
    let e = err(
        "[Version] 2.0\n# MHz S RI\n[Number of Ports] 1\n[Number of Frequencies] 3\n[Network Data]\n1 0 0\n2 0 0\n",
    );
    assert_eq!(e.line, Some(4));
    assert!(e.message.contains("says 3 but the network data hold 2"));
}

// Version 1 noise data start where the frequency stops increasing (Touchstone 1.1, noise
// parameters); they must not be read as network data.
#[test]
fn v1_noise_block_is_skipped_not_misread() {
    let text = "# GHz S MA R 50\n2 .95 -26 3.57 157 .04 76 .66 -14\n22 .60 -144 1.30 40 .14 40 .56 -85\n\
                ! noise\n4 .7 .64 69 .38\n18 2.7 .46 -33 .40\n";
    let n = net(text);
    assert_eq!(n.freq_hz, vec![2e9, 22e9]);
    assert!(n.notes.iter().any(|m| m.contains("noise parameters (2 frequencies)")));
    let e = err("# GHz S MA R 50\n2 .95 -26 3.57 157 .04 76 .66 -14\n1 .7 .64 69 .38\n3 1 2 3\n");
    assert_eq!(e.line, Some(4));
}

#[test]
fn v2_noise_data_are_skipped() {
    let text = "[Version] 2.0\n# GHz S MA R 50\n[Number of Ports] 2\n[Two-Port Data Order] 21_12\n\
                [Number of Frequencies] 1\n[Number of Noise Frequencies] 1\n[Network Data]\n\
                2 .95 -26 3.57 157 .04 76 .66 -14\n[Noise Data]\n4 .7 .64 69 19\n[End]\n";
    let n = net(text);
    assert_eq!(n.freq_hz.len(), 1);
    assert_eq!(n.notes.len(), 1, "{:?}", n.notes);
}

#[test]
fn information_block_is_skipped() {
    let text = "[Version] 2.0\n# MHz S RI\n[Number of Ports] 1\n[Number of Frequencies] 1\n\
                [Begin Information]\nanything 1 2 here\n[End Information]\n[Network Data]\n1 0.5 0\n";
    assert_eq!(net(text).s[0][0], c(0.5, 0.0));
}

#[test]
fn bom_crlf_tabs_lower_case_latin1_and_blank_lines() {
    let bytes = b"\xEF\xBB\xBF! caf\xE9 latin-1\r\n#\tmhz\ts\tri\tr\t50\r\n1\t0.1\t0\r\n\r\n! gap\r\n2\t0.2\t0\r\n";
    let n = parse(bytes).unwrap();
    assert_eq!(n.freq_hz, vec![1e6, 2e6]);
    assert_eq!(n.s[1][0], c(0.2, 0.0));
}

#[test]
fn malformed_files_get_located_errors() {
    let cases: &[(&str, usize, &str)] = &[
        ("# GHz S RI\n# GHz S RI\n1 0 0\n", 2, "second option line"),
        ("# GHz S RI R (50+50j)\n1 0 0\n", 1, "complex reference"),
        ("# kHz H MA R 1\n2 .95 -26 3.57 157 .04 76 .66 -14\n", 1, "H (hybrid)"),
        ("1 0 0\n", 1, "data before the option line"),
        ("# GHz S RI\n1 0 x\n", 2, "'x' is not a finite number"),
        ("# GHz S RI\n[Number of Ports] 1\n", 2, "without [Version]"),
        ("# GHz S RI\n", 1, "no network data"),
        ("! nothing\n", 1, "no option line"),
        ("# GHz S RI\n1 0 0 1 0 1 0 0 0\n2 0 0 1 0 1 0\n", 3, "stop after 7 of 9"),
        ("[Version] 3.0\n", 1, "version '3.0'"),
        (
            "[Version] 2.0\n#\n[Number of Ports] 1\n[Number of Frequencies] 1\n1 0 0\n",
            5,
            "outside the [Network Data]",
        ),
    ];
    for &(text, line, words) in cases {
        let e = err(text);
        assert_eq!(e.line, Some(line), "{:?}: {}", text, e.message);
        assert!(
            e.message.contains(words),
            "{:?}: '{}' lacks '{}'",
            text,
            e.message,
            words
        );
        assert!(!e.expected.is_empty() && !e.hint.is_empty(), "{:?}", e);
    }
}

#[test]
fn port_impedance_comments_that_disagree_are_noted() {
    let n = net("# GHz S RI\n1 0.1 0.2\n! Port Impedance 30 -10\n");
    assert!(
        n.notes.iter().any(|m| m.contains("line 3") && m.contains("30-10j")),
        "{:?}",
        n.notes
    );
    assert!(net("# GHz S RI\n1 0.1 0.2\n! Port Impedance 50 0\n").notes.is_empty());
}

#[test]
fn detection_by_name_or_content() {
    let p = |s: &str| PathBuf::from(s);
    assert!(looks_like_touchstone(&p("a.s1p"), b""));
    assert!(looks_like_touchstone(&p("a.TS"), b""));
    assert!(looks_like_touchstone(&p("a.txt"), b"! c\n# MHz S RI R 50\n1 0 0\n"));
    assert!(looks_like_touchstone(&p("a.dat"), b"\xEF\xBB\xBF[Version] 2.0\n"));
    assert!(!looks_like_touchstone(
        &p("a.csv"),
        b"# exported by an analyser\nfreq,re,im\n1,0,0\n"
    ));
    assert!(!looks_like_touchstone(&p("a.csv"), b"#\nfreq;re;im\n"));
    assert!(!looks_like_touchstone(&p("a.csv"), b"freq,re,im\n1,0,0\n"));
}

#[test]
fn sweep_keeps_one_and_two_ports() {
    let s = sweep("m.s1p", "# MHz S RI R 75\n1 0.1 0\n", None).unwrap();
    assert_eq!(
        s.data,
        SweepData::Reflection {
            s11: vec![c(0.1, 0.0)],
            z0: 75.0
        }
    );
    assert!(
        s.detected[0].starts_with("Touchstone v1.0, 1 port, MHz, S, RI, R 75"),
        "{:?}",
        s.detected
    );
    let s = sweep("m.s2p", "# MHz S RI R 50 75\n1 0.1 0 0.5 0 0.25 0 0.2 0\n", None).unwrap();
    let SweepData::TwoPort { s: m, z0 } = s.data else {
        panic!("not a two-port")
    };
    assert_eq!(z0, [50.0, 75.0]);
    assert_eq!(m[0], [c(0.1, 0.0), c(0.25, 0.0), c(0.5, 0.0), c(0.2, 0.0)]);
}

#[test]
fn sweep_refuses_more_ports_unless_a_pair_is_chosen() {
    let text = "# GHz S RI R 50\n1 11 0 12 0 13 0\n 21 0 22 0 23 0\n 31 0 32 0 33 0\n";
    let e = sweep("m.s3p", text, None).unwrap_err().0;
    assert!(e.message.contains("3 ports") && e.hint.contains("--ports"), "{}", e);
    let s = sweep("m.s3p", text, Some((3, 1))).unwrap();
    let SweepData::TwoPort { s: m, .. } = s.data else {
        panic!("not a two-port")
    };
    let re: Vec<f64> = m[0].iter().map(|z| z.re).collect();
    assert_eq!(re, vec![33.0, 31.0, 13.0, 11.0]);
    assert!(s.detected.iter().any(|d| d.contains("kept ports 3,1 of 3")));
    assert!(sweep("m.s3p", text, Some((1, 4)))
        .unwrap_err()
        .0
        .message
        .contains("not a pair"));
    assert!(sweep("m.s1p", "# GHz S RI\n1 0 0\n", Some((1, 2))).is_err());
}

#[test]
fn sweep_drops_the_dc_point_with_a_warning() {
    let s = sweep("m.s1p", "# Hz S RI\n0 1 0\n10 0.5 0\n", None).unwrap();
    assert_eq!(s.freq_hz, vec![10.0]);
    assert_eq!(s.data.len(), 1);
    assert!(s.warnings.iter().any(|w| w.contains("dropped the 0 Hz point")));
}
