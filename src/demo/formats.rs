//! Writers for the export styles the demo's instruments produce: Touchstone v1 and v2 (IBIS Open
//! Forum, an open standard) and three CSV styles seen in analyser exports. Pure text building.

use super::DemoError;
use crate::error::Diagnostic;
use crate::ingest::SweepData;
use crate::C64;

/// Frequency unit of a Touchstone option line.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum FreqUnit {
    Hz,
    MHz,
    GHz,
}

impl FreqUnit {
    fn name(self) -> &'static str {
        match self {
            FreqUnit::Hz => "Hz",
            FreqUnit::MHz => "MHz",
            FreqUnit::GHz => "GHz",
        }
    }
    /// The frequency in this unit, exactly for integer-Hz frequencies.
    fn format(self, f_hz: f64) -> String {
        match self {
            FreqUnit::Hz => format!("{:.0}", f_hz),
            FreqUnit::MHz => format!("{:.6}", f_hz / 1e6),
            FreqUnit::GHz => format!("{:.9}", f_hz / 1e9),
        }
    }
}

/// How a Touchstone file writes each complex number.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Pair {
    /// Real, imaginary.
    RI,
    /// Linear magnitude, angle in degrees.
    MA,
    /// Magnitude in dB (20·log10), angle in degrees.
    DB,
}

impl Pair {
    fn name(self) -> &'static str {
        match self {
            Pair::RI => "RI",
            Pair::MA => "MA",
            Pair::DB => "DB",
        }
    }
    fn format(self, v: C64) -> String {
        match self {
            Pair::RI => format!("{:.9} {:.9}", v.re, v.im),
            Pair::MA => format!("{:.9} {:.5}", v.norm(), v.arg().to_degrees()),
            Pair::DB => format!("{:.6} {:.5}", 20.0 * v.norm().log10(), v.arg().to_degrees()),
        }
    }
}

/// The layout of one exported file.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Layout {
    /// Touchstone 1.x (`.s1p`/`.s2p`), v1 2-port order S11 S21 S12 S22.
    TouchstoneV1 { unit: FreqUnit, pair: Pair },
    /// Touchstone 2.0 with `[Number of Frequencies]`, `[Reference]` and, for two ports,
    /// `[Two-Port Data Order] 12_21`.
    TouchstoneV2 { unit: FreqUnit, pair: Pair },
    /// `;`-separated, decimal comma: `Freq (MHz);|Z| (Ohm);Phase (deg)`.
    CsvZMagPhase,
    /// Tab-separated with a free-text preamble and CRLF line ends: `Freq (Hz)`, `S11 dB`, `S11 deg`.
    CsvS11DbTab,
    /// Comma-separated with `#` comments: `Freq (MHz),Re(Z),Im(Z)`.
    CsvZReIm,
}

impl Layout {
    /// File extension for data of `ports` ports.
    pub fn extension(self, ports: usize) -> String {
        match self {
            Layout::TouchstoneV1 { .. } | Layout::TouchstoneV2 { .. } => format!("s{}p", ports),
            _ => "csv".to_string(),
        }
    }
    /// Short words for the manifest and reports.
    pub fn describe(self) -> String {
        match self {
            Layout::TouchstoneV1 { unit, pair } => format!("Touchstone v1, # {} S {} R 50", unit.name(), pair.name()),
            Layout::TouchstoneV2 { unit, pair } => format!("Touchstone v2.0, # {} S {} R 50", unit.name(), pair.name()),
            Layout::CsvZMagPhase => "CSV ';' decimal comma, |Z| and phase".to_string(),
            Layout::CsvS11DbTab => "CSV tab with preamble, S11 dB/deg".to_string(),
            Layout::CsvZReIm => "CSV ',', Re(Z)/Im(Z)".to_string(),
        }
    }
}

/// `v` in fixed notation with `digits` significant digits (no exponent, as analyser CSVs write).
pub fn significant(v: f64, digits: i32) -> String {
    if v == 0.0 || !v.is_finite() {
        return format!("{:.1$}", v, (digits - 1).max(0) as usize);
    }
    let decimals = (digits - 1 - v.abs().log10().floor() as i32).max(0) as usize;
    format!("{:.1$}", v, decimals)
}

/// Render `data` at `freq_hz` in `layout`; `preamble` lines describe the measurement and go into
/// comments (Touchstone `!`, CSV `#`) or the free-text preamble.
pub fn render(layout: Layout, preamble: &[String], freq_hz: &[f64], data: &SweepData) -> Result<String, DemoError> {
    let mismatch = || -> DemoError {
        Diagnostic::new(format!(
            "the demo scenario pairs {} data with the layout {}",
            data.describe(),
            layout.describe()
        ))
        .hint("fix the file plan in src/demo/scenario.rs")
        .into()
    };
    match layout {
        Layout::TouchstoneV1 { unit, pair } => touchstone_v1(unit, pair, preamble, freq_hz, data).ok_or_else(mismatch),
        Layout::TouchstoneV2 { unit, pair } => touchstone_v2(unit, pair, preamble, freq_hz, data).ok_or_else(mismatch),
        Layout::CsvZMagPhase => match data {
            SweepData::Impedance(z) => Ok(csv_z_mag_phase(preamble, freq_hz, z)),
            _ => Err(mismatch()),
        },
        Layout::CsvS11DbTab => match data {
            SweepData::Reflection { s11, z0 } => Ok(csv_s11_db_tab(preamble, *z0, freq_hz, s11)),
            _ => Err(mismatch()),
        },
        Layout::CsvZReIm => match data {
            SweepData::Impedance(z) => Ok(csv_z_re_im(preamble, freq_hz, z)),
            _ => Err(mismatch()),
        },
    }
}

/// The S values of each row in the file's order (v1 2-port: S11 S21 S12 S22; v2 12_21: S11 S12
/// S21 S22), with the reference impedance. None for data Touchstone here does not carry.
fn touchstone_rows(data: &SweepData, v1_order: bool) -> Option<(Vec<Vec<C64>>, f64, usize)> {
    match data {
        SweepData::Reflection { s11, z0 } => Some((s11.iter().map(|&s| vec![s]).collect(), *z0, 1)),
        SweepData::TwoPort { s, z0 } if z0[0] == z0[1] => {
            let rows = s.iter().map(|m| if v1_order { vec![m[0], m[2], m[1], m[3]] } else { m.to_vec() }).collect();
            Some((rows, z0[0], 2))
        }
        _ => None,
    }
}

fn data_lines(out: &mut String, unit: FreqUnit, pair: Pair, freq_hz: &[f64], rows: &[Vec<C64>]) {
    for (f, row) in freq_hz.iter().zip(rows) {
        out.push_str(&unit.format(*f));
        for v in row {
            out.push(' ');
            out.push_str(&pair.format(*v));
        }
        out.push('\n');
    }
}

fn touchstone_v1(unit: FreqUnit, pair: Pair, preamble: &[String], freq_hz: &[f64], data: &SweepData) -> Option<String> {
    let (rows, z0, _) = touchstone_rows(data, true)?;
    let mut out = String::new();
    for line in preamble {
        out.push_str(&format!("! {}\n", line));
    }
    out.push_str(&format!("# {} S {} R {}\n", unit.name(), pair.name(), z0));
    data_lines(&mut out, unit, pair, freq_hz, &rows);
    Some(out)
}

fn touchstone_v2(unit: FreqUnit, pair: Pair, preamble: &[String], freq_hz: &[f64], data: &SweepData) -> Option<String> {
    let (rows, z0, ports) = touchstone_rows(data, false)?;
    let mut out = String::from("[Version] 2.0\n");
    for line in preamble {
        out.push_str(&format!("! {}\n", line));
    }
    out.push_str(&format!("# {} S {} R {}\n", unit.name(), pair.name(), z0));
    out.push_str(&format!("[Number of Ports] {}\n", ports));
    if ports == 2 {
        out.push_str("[Two-Port Data Order] 12_21\n");
    }
    out.push_str(&format!("[Number of Frequencies] {}\n", freq_hz.len()));
    out.push_str(&format!("[Reference] {}\n", vec![z0.to_string(); ports].join(" ")));
    out.push_str("[Network Data]\n");
    data_lines(&mut out, unit, pair, freq_hz, &rows);
    out.push_str("[End]\n");
    Some(out)
}

fn csv_z_mag_phase(preamble: &[String], freq_hz: &[f64], z: &[C64]) -> String {
    let comma = |s: String| s.replace('.', ",");
    let mut out = String::new();
    for line in preamble {
        out.push_str(&format!("# {}\r\n", line));
    }
    out.push_str("Freq (MHz);|Z| (Ohm);Phase (deg)\r\n");
    for (f, v) in freq_hz.iter().zip(z) {
        out.push_str(&format!(
            "{};{};{}\r\n",
            comma(format!("{:.6}", f / 1e6)),
            comma(significant(v.norm(), 7)),
            comma(format!("{:.4}", v.arg().to_degrees()))
        ));
    }
    out
}

fn csv_s11_db_tab(preamble: &[String], z0: f64, freq_hz: &[f64], s11: &[C64]) -> String {
    let mut out = String::new();
    for line in preamble {
        out.push_str(line);
        out.push_str("\r\n");
    }
    out.push_str(&format!("Reference impedance {} Ohm\r\n\r\n", z0));
    out.push_str("Freq (Hz)\tS11 dB\tS11 deg\r\n");
    for (f, s) in freq_hz.iter().zip(s11) {
        out.push_str(&format!("{:.0}\t{:.5}\t{:.4}\r\n", f, 20.0 * s.norm().log10(), s.arg().to_degrees()));
    }
    out
}

fn csv_z_re_im(preamble: &[String], freq_hz: &[f64], z: &[C64]) -> String {
    let mut out = String::new();
    for line in preamble {
        out.push_str(&format!("# {}\n", line));
    }
    out.push_str("Freq (MHz),Re(Z),Im(Z)\n");
    for (f, v) in freq_hz.iter().zip(z) {
        out.push_str(&format!("{:.6},{},{}\n", f / 1e6, significant(v.re, 7), significant(v.im, 7)));
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn significant_digits_in_fixed_notation() {
        assert_eq!(significant(123.456789, 7), "123.4568");
        assert_eq!(significant(0.0123456789, 4), "0.01235");
        assert_eq!(significant(-98765.4321, 3), "-98765");
        assert_eq!(significant(0.0, 3), "0.00");
    }

    // Touchstone 2.0 (IBIS Open Forum): [Version] first, option line, [Number of Ports],
    // [Two-Port Data Order] required for two ports, [Number of Frequencies] equal to the data
    // rows, [Network Data] ... [End]; 12_21 writes N11 N12 N21 N22.
    #[test]
    fn touchstone_v2_two_port_keywords_and_order() {
        let s = vec![[C64::new(0.1, 0.0), C64::new(0.2, 0.0), C64::new(0.3, 0.0), C64::new(0.4, 0.0)]];
        let data = SweepData::TwoPort { s, z0: [50.0, 50.0] };
        let text = render(Layout::TouchstoneV2 { unit: FreqUnit::GHz, pair: Pair::RI }, &[], &[1e6], &data).unwrap();
        let lines: Vec<&str> = text.lines().collect();
        assert_eq!(lines[0], "[Version] 2.0");
        assert!(lines.contains(&"[Two-Port Data Order] 12_21"));
        assert!(lines.contains(&"[Number of Frequencies] 1"));
        let row = lines[lines.iter().position(|l| *l == "[Network Data]").unwrap() + 1];
        assert_eq!(row, "0.001000000 0.100000000 0.000000000 0.200000000 0.000000000 0.300000000 0.000000000 0.400000000 0.000000000");
        // Touchstone 1.x two-port order is S11 S21 S12 S22.
        let v1 = render(Layout::TouchstoneV1 { unit: FreqUnit::MHz, pair: Pair::MA }, &[], &[1e6], &data).unwrap();
        assert!(v1.contains("# MHz S MA R 50\n1.000000 0.100000000 0.00000 0.300000000 0.00000 0.200000000"));
    }

    #[test]
    fn decimal_comma_csv_has_no_stray_dots() {
        let data = SweepData::Impedance(vec![C64::new(3.0, 4.0)]);
        let text = render(Layout::CsvZMagPhase, &[], &[2.5e6], &data).unwrap();
        assert_eq!(text, "Freq (MHz);|Z| (Ohm);Phase (deg)\r\n2,500000;5,000000;53,1301\r\n");
    }

    #[test]
    fn mismatched_data_and_layout_is_an_error() {
        let data = SweepData::Impedance(vec![C64::new(3.0, 4.0)]);
        assert!(render(Layout::CsvS11DbTab, &[], &[1e6], &data).is_err());
    }
}
