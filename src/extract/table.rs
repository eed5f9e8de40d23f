//! The μ table: `freq_hz,mu_prime,mu_double_prime` (μ = μ′ − jμ″, μ″ ≥ 0 for a lossy core)
//! after a block of `# key: value` lines holding the provenance and the valid band.
//!
//! The table holds only the points inside the valid band, so a reader that skips the comment
//! block cannot pick up points that are not the material's; `valid_band_hz` repeats the band
//! and the comment block says why it ends where it does.

use super::{ExtractError, LeadSource, MuSpectrum};
use crate::error::Diagnostic;
use crate::C64;

/// The header line, exactly.
pub const HEADER: &str = "freq_hz,mu_prime,mu_double_prime";

/// A μ table as read back.
#[derive(Debug, Clone, PartialEq)]
pub struct MuTable {
    pub freq_hz: Vec<f64>,
    /// μ′ − jμ″.
    pub mu: Vec<C64>,
    /// The band stated in the metadata, or the table's own range.
    pub valid: (f64, f64),
    /// Every `# key: value` line, in order (keys may repeat: `source`, `warning`, ...).
    pub meta: Vec<(String, String)>,
}

impl MuTable {
    /// All values of a metadata key.
    pub fn meta_values(&self, key: &str) -> Vec<&str> {
        self.meta
            .iter()
            .filter(|(k, _)| k == key)
            .map(|(_, v)| v.as_str())
            .collect()
    }
}

/// The metadata lines of a spectrum, without the leading `# `.
pub fn metadata(s: &MuSpectrum) -> Vec<(String, String)> {
    let e = s.core.effective();
    let mut m: Vec<(String, String)> = Vec::new();
    let mut put = |k: &str, v: String| m.push((k.to_string(), v));
    put("tool", format!("mucurve {} extract", crate::TOOL_VERSION));
    put(
        "quantity",
        "relative permeability mu = mu_prime - j*mu_double_prime; mu_double_prime >= 0 for a lossy core".into(),
    );
    put("table", "points inside the valid band only".into());
    put("valid_band_hz", format!("{} {}", s.valid.0, s.valid.1));
    put("core", s.core.spec());
    put("c1_per_m", format!("{:.5e}", e.c1));
    put("c2_per_m3", format!("{:.5e}", e.c2));
    put("le_m", format!("{:.5e}", e.le()));
    put("ae_m2", format!("{:.5e}", e.ae()));
    put("ve_m3", format!("{:.5e}", e.ve()));
    put("a_min_m2", format!("{:.5e}", e.a_min));
    put(
        "gap_total_m",
        if s.core.gap_m() == 0.0 {
            "0".into()
        } else {
            format!("{:e}", s.core.gap_m())
        },
    );
    put(
        "turns",
        s.turns
            .iter()
            .map(|t| t.to_string())
            .collect::<Vec<_>>()
            .join(","),
    );
    put("cores_in_series", s.cores_in_series.to_string());
    put("empty_fixture_reference", s.empty_reference.to_string());
    match &s.l_lead {
        None => put("lead_inductance_h", "none".into()),
        Some(l) => {
            put("lead_inductance_h", format!("{:.4e}", l.henry));
            let how = match l.source {
                LeadSource::Stated => "stated".to_string(),
                LeadSource::Solved => format!(
                    "solved across windings; 16th-84th percentile over the band {:.4e} to {:.4e}",
                    l.p16, l.p84
                ),
            };
            put("lead_inductance_from", how);
        }
    }
    if let Some(g) = &s.gap_estimate {
        put(
            "gap_estimate_m",
            format!(
                "{:.4e} (16th-84th percentile {:.4e} to {:.4e}; Im(1/mu) mismatch {:.3})",
                g.total_m, g.p16_m, g.p84_m, g.loss_mismatch
            ),
        );
    }
    put(
        "winding_capacitance_f",
        s.c_p
            .map(|c| format!("{:.4e}", c))
            .unwrap_or_else(|| "none".into()),
    );
    put(
        "self_resonance_hz",
        s.f_sr
            .map(|f| format!("{:.6e}", f))
            .unwrap_or_else(|| "none found".into()),
    );
    for (src, w) in s.sources.iter().zip(&s.windings) {
        put(
            "source",
            format!(
                "{} sha256={} turns={}",
                src.file_name(),
                src.sha256,
                w.turns
            ),
        );
        put(
            "band_of",
            format!("{}: {}", src.file_name(), w.reasons.join("; ")),
        );
    }
    for c in &s.corrections {
        put("correction", c.clone());
    }
    for w in &s.warnings {
        put("warning", w.clone());
    }
    // The warnings that block publishing as material data, repeated so a fit of the table
    // keeps them as such.
    for w in &s.sanity {
        put("sanity", w.clone());
    }
    m
}

/// The whole file: metadata, header, the points inside the valid band.
pub fn write_mu_table(s: &MuSpectrum) -> String {
    let mut out = String::new();
    for (k, v) in metadata(s) {
        // A value never spans lines: a newline inside would end the comment.
        out += &format!("# {}: {}\n", k, v.replace(['\n', '\r'], " "));
    }
    out += HEADER;
    out.push('\n');
    for i in s.valid_indices() {
        out += &format!(
            "{},{:e},{:e}\n",
            s.freq_hz[i],
            s.mu[i].re,
            s.mu_double_prime(i)
        );
    }
    out
}

/// Read a μ table written by [`write_mu_table`] (or by hand in the same form).
pub fn read_mu_table(text: &str) -> Result<MuTable, ExtractError> {
    let mut meta = Vec::new();
    let mut freq = Vec::new();
    let mut mu = Vec::new();
    let mut header_seen = false;
    for (n, raw) in text.lines().enumerate() {
        let line = raw.trim();
        let at = |msg: String| Diagnostic::new(msg).line(n + 1);
        if line.is_empty() {
            continue;
        }
        if let Some(c) = line.strip_prefix('#') {
            if let Some((k, v)) = c.split_once(':') {
                meta.push((k.trim().to_string(), v.trim().to_string()));
            }
            continue;
        }
        if !header_seen {
            if line != HEADER {
                return Err(at(format!("unexpected header '{}'", line))
                    .expected(HEADER)
                    .into());
            }
            header_seen = true;
            continue;
        }
        let cols: Vec<&str> = line.split(',').map(str::trim).collect();
        let nums: Option<Vec<f64>> = cols
            .iter()
            .map(|c| c.parse::<f64>().ok().filter(|v| v.is_finite()))
            .collect();
        let Some([f, re, dd]) = nums.as_deref().and_then(|v| <[f64; 3]>::try_from(v).ok()) else {
            return Err(at(format!("'{}' is not three finite numbers", line))
                .expected(HEADER)
                .into());
        };
        if f <= 0.0 || freq.last().map(|&p| f <= p).unwrap_or(false) {
            return Err(at(format!("frequency {} Hz is not positive and increasing", f)).into());
        }
        freq.push(f);
        mu.push(C64::new(re, -dd));
    }
    if !header_seen || freq.is_empty() {
        return Err(Diagnostic::new("no μ table found")
            .expected(format!("a header line '{}' and rows below it", HEADER))
            .into());
    }
    let stated = meta
        .iter()
        .find(|(k, _)| k == "valid_band_hz")
        .and_then(|(_, v)| {
            let p: Vec<f64> = v
                .split_whitespace()
                .filter_map(|x| x.parse().ok())
                .collect();
            (p.len() == 2 && p[0] <= p[1]).then(|| (p[0], p[1]))
        });
    let valid = stated.unwrap_or((freq[0], freq[freq.len() - 1]));
    Ok(MuTable {
        freq_hz: freq,
        mu,
        valid,
        meta,
    })
}
