//! Stage 2 — impedance of a wound core → geometry-independent μ′/μ″, lead-inductance
//! correction, gap correction, validity band, and the inverse μ → Z.
//!
//! [`extract`] takes one or more impedance sweeps of the same core (one turn count each) and
//! returns a [`MuSpectrum`]: μ = μ′ − jμ″ on the first sweep's grid, with the band where it is
//! the material's. The steps (PHYSICS.md §2):
//! 1. each winding's validity band ([`band`]); the spectrum's band is where all are valid;
//! 2. the lead inductance: none, stated, or solved across windings ([`lead`]);
//! 3. per frequency, the core term of every winding (lead and stated C_p removed,
//!    [`winding::core_term`]) fitted by one μ_e in least squares: μ_e = Σ a*_k y_k / Σ |a_k|²,
//!    a_k = jω·M·N_k²·μ0/C1 (with an empty-fixture reference, μ_e = 1 + that);
//! 4. the gap removed: 1/μ = 1/μ_e − l_g/l_e ([`gap`]).

pub mod band;
pub mod gap;
pub mod lead;
pub mod self_resonance;
pub mod table;
pub mod winding;

pub use table::{read_mu_table, write_mu_table, MuTable};
pub use winding::{impedance, impedance_at, mu_at, Winding};

use crate::error::Diagnostic;
use crate::geometry::Core;
use crate::ingest::{fixture::interpolate_log_f, ImpedanceSweep, SourceInfo};
use crate::C64;
use band::hz;
use std::f64::consts::TAU;

crate::stage_error!(
    /// Anything that stops an extraction (mismatched files and turns, no valid band, ...).
    ExtractError
);

/// A lead inductance typical of 1–2 turn windings on small toroids, H: the bench files of
/// ../shared/external show tens of nH (about 30 nH solved from the 15.41×8×6.2 windings).
/// Used only to warn when a few-turn winding is read without a lead correction.
pub const TYPICAL_LEAD_H: f64 = 30e-9;
/// μ′ at the bottom of the band from which a spectrum is called MnZn-like [M: sintered MnZn
/// μ_i is typically 10³–10⁴, NiZn suppression grades 10¹–10³].
pub const MNZN_LIKE_MU: f64 = 1000.0;
/// Above this frequency MnZn's dimensional resonance makes μ geometry-dependent [M, PHYSICS.md §2].
pub const MNZN_DIMENSIONAL_HZ: f64 = 1e6;

/// One measured winding: its impedance sweep and its turns.
#[derive(Debug, Clone, PartialEq)]
pub struct Measurement {
    pub sweep: ImpedanceSweep,
    pub turns: f64,
}

/// What to do about the inductance of the leads outside the core.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum LeadCorrection {
    None,
    /// A stray series inductance stated by the user, H.
    Stated(f64),
    /// Solve it from windings of different turns.
    Solve,
}

/// Everything an extraction needs besides the sweeps.
#[derive(Debug, Clone, PartialEq)]
pub struct ExtractSetup {
    pub core: Core,
    /// Identical cores threaded in series on the winding (M ≥ 1).
    pub cores_in_series: u32,
    pub lead: LeadCorrection,
    /// The sweeps already had an empty-fixture sweep subtracted (ΔZ): μ = 1 + ΔZ/(jωL0).
    pub empty_reference: bool,
    /// A stated winding capacitance to remove from every winding, F.
    pub c_p: Option<f64>,
}

impl ExtractSetup {
    pub fn new(core: Core) -> ExtractSetup {
        ExtractSetup {
            core,
            cores_in_series: 1,
            lead: LeadCorrection::None,
            empty_reference: false,
            c_p: None,
        }
    }
}

/// Where the lead inductance came from.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum LeadSource {
    Stated,
    Solved,
}

/// The lead inductance used, with its spread over the band when solved.
#[derive(Debug, Clone, PartialEq)]
pub struct LeadResult {
    pub henry: f64,
    /// 16th and 84th percentile of the per-frequency solutions (equal to `henry` when stated).
    pub p16: f64,
    pub p84: f64,
    pub source: LeadSource,
}

/// What was found about one winding.
#[derive(Debug, Clone, PartialEq)]
pub struct WindingReport {
    pub source: SourceInfo,
    pub turns: f64,
    /// This winding's own valid band, Hz.
    pub band: Option<(f64, f64)>,
    pub f_sr: Option<f64>,
    pub c_p: Option<f64>,
    /// Why its band starts and ends where it does.
    pub reasons: Vec<String>,
}

/// Complex permeability extracted from wound-core sweeps.
#[derive(Debug, Clone, PartialEq)]
pub struct MuSpectrum {
    pub freq_hz: Vec<f64>,
    /// μ′ − jμ″ at each frequency (μ″ ≥ 0 for a lossy core means `mu[i].im ≤ 0`).
    pub mu: Vec<C64>,
    /// Valid band (first, last frequency inside it), Hz.
    pub valid: (f64, f64),
    pub core: Core,
    /// Turns of each winding, in the order of `sources`.
    pub turns: Vec<f64>,
    pub cores_in_series: u32,
    pub l_lead: Option<LeadResult>,
    /// Winding capacitance: the stated one, or else the estimate of the most-turns winding
    /// that resonated inside its sweep, F.
    pub c_p: Option<f64>,
    /// That winding's self-resonance, Hz.
    pub f_sr: Option<f64>,
    pub empty_reference: bool,
    pub warnings: Vec<String>,
    /// The warnings that make the spectrum unfit to publish as material data (they are in
    /// `warnings` too): the size effect of an MnZn-like core, whose apparent μ above about
    /// 1 MHz belongs to this core, not to the material.
    pub sanity: Vec<String>,
    pub sources: Vec<SourceInfo>,
    /// Corrections the sweeps carried in (fixture subtraction, ...), in words.
    pub corrections: Vec<String>,
    pub windings: Vec<WindingReport>,
    /// The gap estimated against a solid core of the same material, when one was given.
    pub gap_estimate: Option<gap::GapEstimate>,
}

impl MuSpectrum {
    /// Indices of the points inside the valid band.
    pub fn valid_indices(&self) -> Vec<usize> {
        (0..self.freq_hz.len())
            .filter(|&i| self.in_band(self.freq_hz[i]))
            .collect()
    }
    pub fn in_band(&self, f: f64) -> bool {
        f >= self.valid.0 && f <= self.valid.1
    }
    /// μ″ ≥ 0 for a lossy core.
    pub fn mu_double_prime(&self, i: usize) -> f64 {
        -self.mu[i].im
    }
    /// Median μ′ over the valid points within [lo, hi] Hz.
    pub fn median_mu_prime(&self, lo: f64, hi: f64) -> Option<f64> {
        let v: Vec<f64> = self
            .valid_indices()
            .into_iter()
            .filter(|&i| self.freq_hz[i] >= lo && self.freq_hz[i] <= hi)
            .map(|i| self.mu[i].re)
            .collect();
        gap::percentile(&v, 50.0)
    }
    /// The apparent μ_e the winding saw (differs from `mu` only for a gapped core).
    pub fn apparent_mu(&self) -> Vec<C64> {
        let (lg, le) = (self.core.gap_m(), self.core.effective().le());
        self.mu.iter().map(|&m| gap::apparent(m, lg, le)).collect()
    }
}

/// Extract μ from one or more sweeps of the same core. See the module text for the steps.
pub fn extract(
    measurements: &[Measurement],
    setup: &ExtractSetup,
) -> Result<MuSpectrum, ExtractError> {
    check_inputs(measurements, setup)?;
    let core = &setup.core;
    let windings: Vec<Winding> = measurements
        .iter()
        .map(|m| Winding {
            turns: m.turns,
            cores: setup.cores_in_series,
            c_p: setup.c_p,
            l_lead: None,
        })
        .collect();

    let reports: Vec<WindingReport> = measurements
        .iter()
        .zip(&windings)
        .map(|(m, w)| winding_report(m, w, core))
        .collect();
    let valid = common_band(&reports)?;

    let (freq, z) = common_grid(measurements)?;
    let in_band: Vec<usize> = (0..freq.len())
        .filter(|&i| freq[i] >= valid.0 && freq[i] <= valid.1)
        .collect();
    if in_band.len() < band::MIN_POINTS {
        return Err(Diagnostic::new(format!(
            "only {} points of the first file's grid lie in the common valid band {} to {}",
            in_band.len(),
            hz(valid.0),
            hz(valid.1)
        ))
        .hint("give the sweep with the densest grid first")
        .into());
    }

    let l_lead = lead_result(setup, &freq, &z, measurements, &in_band)?;
    let windings: Vec<Winding> = windings
        .into_iter()
        .map(|w| Winding {
            l_lead: l_lead.as_ref().map(|l| l.henry),
            ..w
        })
        .collect();
    let base = if setup.empty_reference { 1.0 } else { 0.0 };
    let (lg, le) = (core.gap_m(), core.effective().le());
    let mu: Vec<C64> = (0..freq.len())
        .map(|i| {
            let (mut num, mut den) = (C64::new(0.0, 0.0), 0.0);
            for (k, w) in windings.iter().enumerate() {
                let a = C64::new(0.0, TAU * freq[i] * w.l0(core));
                num += a.conj() * winding::core_term(freq[i], z[k][i], w);
                den += a.norm_sqr();
            }
            gap::material(base + num / den, lg, le)
        })
        .collect();

    let resonant = reports
        .iter()
        .filter(|r| r.f_sr.is_some())
        .max_by(|a, b| a.turns.total_cmp(&b.turns));
    let mut spectrum = MuSpectrum {
        freq_hz: freq,
        mu,
        valid,
        core: core.clone(),
        turns: measurements.iter().map(|m| m.turns).collect(),
        cores_in_series: setup.cores_in_series,
        l_lead,
        c_p: setup.c_p.or(resonant.and_then(|r| r.c_p)),
        f_sr: resonant.and_then(|r| r.f_sr),
        empty_reference: setup.empty_reference,
        warnings: Vec::new(),
        sanity: Vec::new(),
        sources: measurements
            .iter()
            .map(|m| m.sweep.source.clone())
            .collect(),
        corrections: measurements
            .iter()
            .flat_map(|m| m.sweep.corrections.iter().cloned())
            .collect(),
        windings: reports,
        gap_estimate: None,
    };
    spectrum.sanity = size_effect(&spectrum).into_iter().collect();
    spectrum.warnings = warnings(&spectrum, measurements, setup);
    Ok(spectrum)
}

/// Estimate the total gap of the spectrum's core from its apparent μ_e and a μ table of the same
/// material measured on a solid core, over the frequencies both bands share.
pub fn estimate_gap_against(
    s: &MuSpectrum,
    solid: &MuTable,
) -> Result<gap::GapEstimate, ExtractError> {
    let (lo, hi) = (s.valid.0.max(solid.valid.0), s.valid.1.min(solid.valid.1));
    let idx: Vec<usize> = s
        .valid_indices()
        .into_iter()
        .filter(|&i| s.freq_hz[i] >= lo && s.freq_hz[i] <= hi)
        .collect();
    let freq: Vec<f64> = idx.iter().map(|&i| s.freq_hz[i]).collect();
    let no_overlap = || {
        ExtractError::from(
            Diagnostic::new(format!(
                "the solid core's μ table ({} to {}) does not overlap this band",
                hz(solid.valid.0),
                hz(solid.valid.1)
            ))
            .hint("measure both cores over a common band"),
        )
    };
    let mu_solid = interpolate_log_f(&solid.freq_hz, &solid.mu, &freq).map_err(|_| no_overlap())?;
    let apparent = s.apparent_mu();
    let mu_e: Vec<C64> = idx.iter().map(|&i| apparent[i]).collect();
    gap::estimate_gap(&mu_e, &mu_solid, s.core.effective().le()).ok_or_else(no_overlap)
}

fn check_inputs(measurements: &[Measurement], setup: &ExtractSetup) -> Result<(), ExtractError> {
    if measurements.is_empty() {
        return Err(Diagnostic::new("no sweep to extract from")
            .hint("give at least one measurement file")
            .into());
    }
    for m in measurements {
        if !(m.turns > 0.0 && m.turns.is_finite()) {
            return Err(
                Diagnostic::new(format!("turns must be positive, got {}", m.turns))
                    .file(&m.sweep.source.path)
                    .into(),
            );
        }
        if m.sweep.freq_hz.len() != m.sweep.z.len() || m.sweep.freq_hz.len() < band::MIN_POINTS {
            return Err(
                Diagnostic::new(format!("the sweep holds {} points", m.sweep.z.len()))
                    .file(&m.sweep.source.path)
                    .expected(format!(
                        "at least {} points with one impedance each",
                        band::MIN_POINTS
                    ))
                    .into(),
            );
        }
    }
    if setup.cores_in_series == 0 {
        return Err(Diagnostic::new("--cores must be at least 1").into());
    }
    if let LeadCorrection::Stated(l) = setup.lead {
        if !(l >= 0.0 && l.is_finite()) {
            return Err(
                Diagnostic::new(format!("lead inductance must be ≥ 0, got {} H", l)).into(),
            );
        }
    }
    if let Some(c) = setup.c_p {
        if !(c >= 0.0 && c.is_finite()) {
            return Err(
                Diagnostic::new(format!("winding capacitance must be ≥ 0, got {} F", c)).into(),
            );
        }
    }
    if setup.lead == LeadCorrection::Solve {
        let first = measurements[0].turns;
        if measurements.len() < 2 || measurements.iter().all(|m| m.turns == first) {
            return Err(Diagnostic::new(
                "solving the lead inductance needs windings of different turns",
            )
            .expected("two or more files of the same core with different --turns, e.g. --turns 1,2")
            .hint("or state it with --lead-inductance, or use --empty with an empty-fixture sweep")
            .into());
        }
    }
    Ok(())
}

fn winding_report(m: &Measurement, w: &Winding, core: &Core) -> WindingReport {
    let s = &m.sweep;
    let r = band::analyse(&s.freq_hz, &s.z, w.l0(core), band::accurate_range(s.method));
    WindingReport {
        source: s.source.clone(),
        turns: m.turns,
        band: r.band.map(|(a, b)| (s.freq_hz[a], s.freq_hz[b])),
        f_sr: r.f_sr,
        c_p: r.c_p,
        reasons: r.reasons,
    }
}

/// Where every winding is valid.
fn common_band(reports: &[WindingReport]) -> Result<(f64, f64), ExtractError> {
    let describe = || {
        reports
            .iter()
            .map(|r| {
                let band = r
                    .band
                    .map(|(a, b)| format!("{} to {}", hz(a), hz(b)))
                    .unwrap_or_else(|| "none".into());
                format!(
                    "{} ({} turns): band {}; {}",
                    r.source.file_name(),
                    r.turns,
                    band,
                    r.reasons.join("; ")
                )
            })
            .collect::<Vec<_>>()
            .join("\n  ")
    };
    let bands: Option<Vec<(f64, f64)>> = reports.iter().map(|r| r.band).collect();
    let lo_hi = bands.map(|b| {
        (
            b.iter().map(|x| x.0).fold(f64::MIN, f64::max),
            b.iter().map(|x| x.1).fold(f64::MAX, f64::min),
        )
    });
    match lo_hi {
        Some((lo, hi)) if lo < hi => Ok((lo, hi)),
        _ => {
            let d = Diagnostic::new(format!(
                "no frequency band where the extraction measures the material:\n  {}",
                describe()
            ))
            .expected("a sweep whose |Z| lies in the set-up's accurate range, inductive, below self-resonance")
            .hint("more turns raise a tiny |Z|, fewer turns push the self-resonance up; check --method and the file");
            Err(match reports.first() {
                Some(r) if reports.len() == 1 => d.file(&r.source.path),
                _ => d,
            }
            .into())
        }
    }
}

/// The first sweep's grid over the range all sweeps cover, with every sweep's Z on it.
fn common_grid(measurements: &[Measurement]) -> Result<(Vec<f64>, Vec<Vec<C64>>), ExtractError> {
    let lo = measurements
        .iter()
        .map(|m| m.sweep.freq_hz[0])
        .fold(f64::MIN, f64::max);
    let hi = measurements
        .iter()
        .map(|m| m.sweep.freq_hz[m.sweep.freq_hz.len() - 1])
        .fold(f64::MAX, f64::min);
    let first = &measurements[0].sweep;
    let freq: Vec<f64> = first
        .freq_hz
        .iter()
        .copied()
        .filter(|&f| f >= lo && f <= hi)
        .collect();
    let z = measurements
        .iter()
        .map(|m| {
            interpolate_log_f(&m.sweep.freq_hz, &m.sweep.z, &freq).map_err(|_| {
                ExtractError::from(
                    Diagnostic::new("the sweeps do not overlap in frequency")
                        .file(&m.sweep.source.path)
                        .hint("measure every winding over the same band"),
                )
            })
        })
        .collect::<Result<Vec<_>, _>>()?;
    Ok((freq, z))
}

fn lead_result(
    setup: &ExtractSetup,
    freq: &[f64],
    z: &[Vec<C64>],
    measurements: &[Measurement],
    in_band: &[usize],
) -> Result<Option<LeadResult>, ExtractError> {
    Ok(match setup.lead {
        LeadCorrection::None => None,
        LeadCorrection::Stated(l) => Some(LeadResult {
            henry: l,
            p16: l,
            p84: l,
            source: LeadSource::Stated,
        }),
        LeadCorrection::Solve => {
            let turns: Vec<f64> = measurements.iter().map(|m| m.turns).collect();
            let s = lead::solve(freq, z, &turns, in_band.iter().copied()).ok_or_else(|| {
                ExtractError::from(Diagnostic::new(
                    "the lead inductance could not be solved in the valid band",
                ))
            })?;
            Some(LeadResult {
                henry: s.l_lead,
                p16: s.p16,
                p84: s.p84,
                source: LeadSource::Solved,
            })
        }
    })
}

/// The size effect of an MnZn-like core: above about 1 MHz its apparent μ is this core's.
fn size_effect(s: &MuSpectrum) -> Option<String> {
    let low_mu = s
        .valid_indices()
        .iter()
        .take(5)
        .map(|&i| s.mu[i].re)
        .collect::<Vec<_>>();
    let mu_low = gap::percentile(&low_mu, 50.0).unwrap_or(0.0);
    (mu_low >= MNZN_LIKE_MU && s.valid.1 > MNZN_DIMENSIONAL_HZ).then(|| {
        format!(
            "μ′ ≈ {:.0} at the bottom of the band looks like MnZn ferrite: above about {} its dimensional resonance and \
             eddy currents make the apparent μ depend on this core's size, so treat that part as this core's, not the material's",
            mu_low,
            hz(MNZN_DIMENSIONAL_HZ)
        )
    })
}

/// Things the user should know about the result (the [`MuSpectrum::sanity`] findings among them).
fn warnings(s: &MuSpectrum, measurements: &[Measurement], setup: &ExtractSetup) -> Vec<String> {
    let mut out: Vec<String> = Vec::new();
    for m in measurements {
        for w in &m.sweep.warnings {
            out.push(format!("{}: {}", m.sweep.source.file_name(), w));
        }
    }
    let idx = s.valid_indices();
    let band_mu: Vec<f64> = idx.iter().map(|&i| s.mu[i].re).collect();
    let mu_med = gap::percentile(&band_mu, 50.0).unwrap_or(f64::NAN);
    let min_turns = s.turns.iter().copied().fold(f64::INFINITY, f64::min);
    if s.l_lead.is_none() && !s.empty_reference {
        let l_core = setup.core.l0(min_turns) * s.cores_in_series as f64 * mu_med;
        let share = TYPICAL_LEAD_H / l_core;
        if share > 0.05 {
            out.push(format!(
                "no lead correction: a typical lead of {:.0} nH would be {:.0} % of the {}-turn winding's inductance; \
                 use --lead-inductance, --empty, or --solve-lead with windings of different turns",
                TYPICAL_LEAD_H * 1e9,
                share * 100.0,
                min_turns
            ));
        }
    }
    if let Some(l) = &s.l_lead {
        let l_core = setup.core.l0(min_turns) * s.cores_in_series as f64 * mu_med;
        let share = l.henry / (l.henry + l_core);
        if share > 0.3 {
            out.push(format!(
                "the lead inductance is {:.0} % of the {}-turn winding's measured inductance: the result rests on it",
                share * 100.0,
                min_turns
            ));
        }
    }
    out.extend(s.sanity.iter().cloned());
    let negative = idx
        .iter()
        .filter(|&&i| s.mu_double_prime(i) < -0.02 * s.mu[i].norm())
        .count();
    if negative * 10 > idx.len() {
        out.push(format!(
            "μ″ < 0 (an active material, impossible) at {} of {} points in the band: check the calibration, the lead \
             correction and the set-up",
            negative,
            idx.len()
        ));
    }
    if setup.core.gap_unknown() {
        out.push(
            "split core without a stated gap: the μ written is the apparent μ_e of the core, not the material's".into(),
        );
    }
    out
}

#[cfg(test)]
mod tests;
