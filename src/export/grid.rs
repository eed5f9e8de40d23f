//! The export frequency grid, `START..STOP:POINTS`, log-spaced, both ends included.

use super::ExportError;
use crate::error::Diagnostic;
use crate::units::parse_quantity;

/// Most points an export grid may have (a guard against a typo writing gigabytes).
pub const MAX_POINTS: usize = 1_000_000;

/// A log-spaced frequency grid.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FreqGrid {
    pub start_hz: f64,
    pub stop_hz: f64,
    pub points: usize,
}

const FORM: &str =
    "START..STOP:POINTS with 0 < START < STOP and 2 or more points, e.g. 1MHz..1GHz:201";

impl FreqGrid {
    /// A checked grid.
    pub fn new(start_hz: f64, stop_hz: f64, points: usize) -> Result<FreqGrid, ExportError> {
        let ok = start_hz.is_finite()
            && stop_hz.is_finite()
            && start_hz > 0.0
            && stop_hz > start_hz
            && (2..=MAX_POINTS).contains(&points);
        if !ok {
            return Err(Diagnostic::new(format!(
                "--freq: not a usable grid ({} Hz to {} Hz, {} points)",
                start_hz, stop_hz, points
            ))
            .expected(format!("{}; at most {} points", FORM, MAX_POINTS))
            .into());
        }
        Ok(FreqGrid {
            start_hz,
            stop_hz,
            points,
        })
    }

    /// Parse `START..STOP:POINTS`, frequencies with optional units (`1MHz..1GHz:201`).
    pub fn parse(text: &str) -> Result<FreqGrid, ExportError> {
        let bad = |why: String| -> ExportError {
            Diagnostic::new(format!("--freq {:?}: {}", text, why))
                .expected(FORM)
                .hint("frequencies take SI prefixes: 100kHz, 1MHz, 3GHz")
                .into()
        };
        let (range, points) = text
            .rsplit_once(':')
            .ok_or_else(|| bad("no ':POINTS' at the end".into()))?;
        let (start, stop) = range
            .split_once("..")
            .ok_or_else(|| bad("no '..' between START and STOP".into()))?;
        let start = parse_quantity(start, "Hz").map_err(|e| bad(format!("START: {}", e)))?;
        let stop = parse_quantity(stop, "Hz").map_err(|e| bad(format!("STOP: {}", e)))?;
        let points: usize = points
            .trim()
            .parse()
            .map_err(|_| bad(format!("POINTS {:?} is not a whole number", points.trim())))?;
        FreqGrid::new(start, stop, points)
    }

    /// The frequencies, log-spaced; the first and last are START and STOP exactly.
    pub fn freqs(&self) -> Vec<f64> {
        let n = self.points;
        let ratio = self.stop_hz / self.start_hz;
        let mut f: Vec<f64> = (0..n)
            .map(|i| round_significant(self.start_hz * ratio.powf(i as f64 / (n - 1) as f64), 12))
            .collect();
        f[n - 1] = self.stop_hz;
        f
    }

    /// (START, STOP).
    pub fn band(&self) -> (f64, f64) {
        (self.start_hz, self.stop_hz)
    }
}

impl std::fmt::Display for FreqGrid {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "{:e}..{:e}:{}", self.start_hz, self.stop_hz, self.points)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    // Log spacing by definition: 7 points over 1 MHz..1 GHz are two per decade, 1, √10, 10, …
    // MHz, with the ends exact.
    #[test]
    fn parses_and_spaces_logarithmically() {
        let g = FreqGrid::parse("1MHz..1GHz:7").unwrap();
        let f = g.freqs();
        assert_eq!((f[0], f[6]), (1e6, 1e9));
        for (i, want) in [(2, 1e7), (4, 1e8)] {
            assert!((f[i] - want).abs() < 1e-6 * want);
        }
        assert!((f[1] - 1e6 * 10f64.sqrt()).abs() < 1e-3);
        assert_eq!(
            FreqGrid::parse("100k..2e6:2").unwrap().freqs(),
            vec![1e5, 2e6]
        );
    }

    #[test]
    fn refuses_malformed_and_unphysical_grids() {
        for bad in [
            "",
            "1MHz..1GHz",
            "1MHz-1GHz:10",
            "1GHz..1MHz:10",
            "0..1GHz:10",
            "-1MHz..1GHz:10",
            "1MHz..1GHz:1",
            "1MHz..1GHz:x",
            "1MHz..1GHz:-5",
            "1MHz..1GHz:2000000",
            "1 furlong..1GHz:5",
        ] {
            let e = FreqGrid::parse(bad).expect_err(bad);
            assert!(e.0.expected.contains("START..STOP:POINTS"), "{bad}: {e}");
        }
    }
}

/// `x` rounded to `digits` significant digits, so decade points print as 1e7 rather than
/// 9999999.999999998 (the rounding is far below any analyser's frequency resolution).
fn round_significant(x: f64, digits: i32) -> f64 {
    if x == 0.0 || !x.is_finite() {
        return x;
    }
    let scale = 10f64.powi(digits - 1 - x.abs().log10().floor() as i32);
    (x * scale).round() / scale
}
