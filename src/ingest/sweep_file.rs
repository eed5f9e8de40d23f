//! The normalised impedance CSV `freq_hz,z_re_ohm,z_im_ohm` with its leading `#` metadata block.
//!
//! Format (documented in DEVELOPERS.md as well):
//!
//! ```text
//! # format: mucurve impedance sweep 1
//! # tool_version: 0.1.0
//! # source_file: core7.s1p
//! # source_sha256: 3f5a…(64 hex digits)
//! # method: reflection            (or "none" when the file held impedance)
//! # z0_ohm: 50                     (or "none")
//! # detected: Touchstone v1, # MHZ S RI R 50     (one line per item, may repeat)
//! # correction: empty fixture subtracted: …       (one line per correction, may repeat)
//! # warning: 1 repeated frequency …               (one line per warning, may repeat)
//! # points: 201
//! freq_hz,z_re_ohm,z_im_ohm
//! 1e6,4.3552e1,8.7103e1
//! ```
//!
//! Every comment line is `# key: value`; keys are lower-case words with underscores, values are
//! one line (line breaks inside a value become spaces). Numbers are written with Rust's shortest
//! round-trip exponent form (`{:e}`), so reading them back gives the same f64 bit for bit.
//! The CSV reader reads the data back (it skips `#` lines); [`read_metadata`] reads the block.

use super::ImpedanceSweep;

/// The data header, exactly.
pub const HEADER: &str = "freq_hz,z_re_ohm,z_im_ohm";

/// Identifies the format and its version in the first metadata line.
pub const FORMAT: &str = "mucurve impedance sweep 1";

/// The metadata block as ordered key/value pairs (keys may repeat).
pub fn metadata(sweep: &ImpedanceSweep) -> Vec<(String, String)> {
    let mut m: Vec<(String, String)> = vec![
        ("format".into(), FORMAT.into()),
        ("tool_version".into(), crate::TOOL_VERSION.into()),
        ("source_file".into(), sweep.source.file_name()),
        ("source_sha256".into(), sweep.source.sha256.clone()),
        (
            "method".into(),
            sweep
                .method
                .map(|m| m.name().to_string())
                .unwrap_or_else(|| "none".into()),
        ),
        (
            "z0_ohm".into(),
            sweep
                .z0
                .map(|r| r.to_string())
                .unwrap_or_else(|| "none".into()),
        ),
    ];
    let many = |key: &str, items: &[String]| {
        items
            .iter()
            .map(|v| (key.to_string(), v.clone()))
            .collect::<Vec<_>>()
    };
    m.extend(many("detected", &sweep.detected));
    m.extend(many("correction", &sweep.corrections));
    m.extend(many("warning", &sweep.warnings));
    m.push(("points".into(), sweep.freq_hz.len().to_string()));
    m
}

/// The whole file as text: metadata block, header, one row per point, `\n` line ends.
pub fn write_sweep(sweep: &ImpedanceSweep) -> String {
    let mut out = String::new();
    for (k, v) in metadata(sweep) {
        out.push_str(&format!("# {}: {}\n", k, one_line(&v)));
    }
    out.push_str(HEADER);
    out.push('\n');
    for (f, z) in sweep.freq_hz.iter().zip(&sweep.z) {
        out.push_str(&format!("{:e},{:e},{:e}\n", f, z.re, z.im));
    }
    out
}

fn one_line(v: &str) -> String {
    v.split(['\r', '\n'])
        .filter(|s| !s.is_empty())
        .collect::<Vec<_>>()
        .join(" ")
}

/// The leading `# key: value` lines of a normalised sweep, in order. Stops at the first line
/// that is not a comment; comment lines without `key:` are skipped.
pub fn read_metadata(text: &str) -> Vec<(String, String)> {
    text.trim_start_matches('\u{feff}')
        .lines()
        .map_while(|l| l.trim_start().strip_prefix('#'))
        .filter_map(|l| {
            let (k, v) = l.split_once(':')?;
            let k = k.trim();
            let is_key = !k.is_empty()
                && k.chars()
                    .all(|c| c.is_ascii_lowercase() || c.is_ascii_digit() || c == '_');
            is_key.then(|| (k.to_string(), v.trim().to_string()))
        })
        .collect()
}

/// The first value of `key` in a metadata list.
pub fn meta_value<'a>(meta: &'a [(String, String)], key: &str) -> Option<&'a str> {
    meta.iter().find(|(k, _)| k == key).map(|(_, v)| v.as_str())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::ingest::{Method, SourceInfo};
    use crate::C64;
    use std::path::Path;

    fn sample() -> ImpedanceSweep {
        ImpedanceSweep {
            source: SourceInfo::from_bytes(Path::new("/data/core 7.s1p"), b"abc"),
            freq_hz: vec![1e6, 1.5e7, 2.0000000000000004e8],
            z: vec![
                C64::new(43.552, 87.103),
                C64::new(0.1 + 0.2, -1e-300),
                C64::new(-0.0, 1.0 / 3.0),
            ],
            method: Some(Method::Reflection),
            z0: Some(50.0),
            detected: vec![
                "Touchstone v1, # MHZ S RI R 50".into(),
                "method reflection (default for 1-port (S11) data)".into(),
            ],
            corrections: vec!["empty fixture subtracted: e.s1p (sha256 00)".into()],
            warnings: vec!["two\nlines".into()],
        }
    }

    #[test]
    fn header_metadata_and_rows() {
        let text = write_sweep(&sample());
        let lines: Vec<&str> = text.lines().collect();
        assert_eq!(lines[0], "# format: mucurve impedance sweep 1");
        assert!(lines.contains(&"# source_file: core 7.s1p"));
        // FIPS 180-4 test vector: SHA-256("abc").
        assert!(lines.contains(
            &"# source_sha256: ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
        ));
        assert!(lines.contains(&"# warning: two lines"));
        let h = lines.iter().position(|l| *l == HEADER).unwrap();
        assert!(lines[..h].iter().all(|l| l.starts_with("# ")));
        assert_eq!(lines[h + 1], "1e6,4.3552e1,8.7103e1");
        assert_eq!(lines.len(), h + 4);
    }

    #[test]
    fn numbers_round_trip_bit_for_bit() {
        let s = sample();
        let text = write_sweep(&s);
        let rows: Vec<Vec<f64>> = text
            .lines()
            .skip_while(|l| *l != HEADER)
            .skip(1)
            .map(|l| l.split(',').map(|x| x.parse::<f64>().unwrap()).collect())
            .collect();
        for (i, r) in rows.iter().enumerate() {
            assert_eq!(r[0].to_bits(), s.freq_hz[i].to_bits());
            assert_eq!(r[1].to_bits(), s.z[i].re.to_bits());
            assert_eq!(r[2].to_bits(), s.z[i].im.to_bits());
        }
    }

    #[test]
    fn metadata_reads_back_in_order() {
        let s = sample();
        let meta = read_metadata(&write_sweep(&s));
        assert_eq!(
            meta,
            metadata(&ImpedanceSweep {
                warnings: vec!["two lines".into()],
                ..s
            })
        );
        assert_eq!(meta_value(&meta, "method"), Some("reflection"));
        assert_eq!(meta_value(&meta, "z0_ohm"), Some("50"));
        assert_eq!(meta.iter().filter(|(k, _)| k == "detected").count(), 2);
        // Stops at the header; free comments without a key are skipped.
        let meta =
            read_metadata("# free text\n# a_b: 1: 2\nfreq_hz,z_re_ohm,z_im_ohm\n# late: x\n");
        assert_eq!(meta, vec![("a_b".to_string(), "1: 2".to_string())]);
    }
}
