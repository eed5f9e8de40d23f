//! What a fit is made from: one spectrum inside its valid band, where it came from, and what
//! earlier stages had to say about it — built in one place from an extracted spectrum, for the
//! `fit` command and the demo alike.

use super::report::SourceProvenance;
use crate::extract::{LeadSource, MuSpectrum};
use crate::ingest::ImpedanceSweep;
use crate::C64;

/// One source of fitted data: a spectrum inside its valid band, where it came from, and what
/// earlier stages had to say about it.
#[derive(Debug, Clone, PartialEq)]
pub struct SourceData {
    /// The name the user knows it by (file name).
    pub label: String,
    /// Increasing frequencies and μ′ − jμ″.
    pub freq_hz: Vec<f64>,
    pub mu: Vec<C64>,
    /// The sweeps behind it (several when windings were combined into one spectrum).
    pub provenance: Vec<SourceProvenance>,
    /// Warnings from ingest and extraction, passed through.
    pub warnings: Vec<String>,
    /// The findings among `warnings` that block publishing as material data (see
    /// [`super::report::FitReport::sanity`]), e.g. the extraction's size effect of an
    /// MnZn-like core.
    pub sanity: Vec<String>,
}

impl SourceData {
    /// The points of `spectrum` inside its valid band, labelled `label`, with one provenance
    /// entry per sweep of `sweeps` (the impedance sweeps it was extracted from, in the order the
    /// extraction took them: their turns are the spectrum's `turns` in that order). Each entry
    /// names the sweep's own corrections and the lead correction; the warnings and sanity
    /// findings are the extraction's, which include each sweep's own, tagged with its file.
    pub fn from_spectrum(
        spectrum: &MuSpectrum,
        sweeps: &[&ImpedanceSweep],
        label: &str,
    ) -> SourceData {
        let idx = spectrum.valid_indices();
        let lead = spectrum.l_lead.as_ref().map(|l| match l.source {
            LeadSource::Solved => {
                format!("lead inductance {:.3e} H solved across windings", l.henry)
            }
            LeadSource::Stated => format!("lead inductance {:.3e} H (stated) removed", l.henry),
        });
        let provenance = sweeps
            .iter()
            .zip(&spectrum.turns)
            .map(|(sweep, &turns)| SourceProvenance {
                file: sweep.source.file_name(),
                sha256: sweep.source.sha256.clone(),
                method: sweep.method.map(|m| m.name().to_string()),
                core: spectrum.core.spec(),
                turns,
                corrections: sweep
                    .corrections
                    .iter()
                    .cloned()
                    .chain(lead.clone())
                    .collect(),
                ..Default::default()
            })
            .collect();
        SourceData {
            label: label.to_string(),
            freq_hz: idx.iter().map(|&i| spectrum.freq_hz[i]).collect(),
            mu: idx.iter().map(|&i| spectrum.mu[i]).collect(),
            provenance,
            warnings: spectrum.warnings.clone(),
            sanity: spectrum.sanity.clone(),
        }
    }
}

/// All sources' points merged in ascending frequency (stable, so equal frequencies keep the
/// sources' order): the data a shared model is fitted to.
pub fn merged(sources: &[SourceData]) -> (Vec<f64>, Vec<C64>) {
    let all = concatenated(sources);
    merge_order(sources).into_iter().map(|k| all[k]).unzip()
}

/// The merge as a permutation: merged point `k` is point `order[k]` of the sources' points
/// taken source by source. A fit's per-point results (residuals) map back to their sources by
/// it, instead of being computed again.
pub fn merge_order(sources: &[SourceData]) -> Vec<usize> {
    let freq: Vec<f64> = sources
        .iter()
        .flat_map(|s| s.freq_hz.iter().copied())
        .collect();
    let mut order: Vec<usize> = (0..freq.len()).collect();
    order.sort_by(|&a, &b| freq[a].total_cmp(&freq[b]));
    order
}

fn concatenated(sources: &[SourceData]) -> Vec<(f64, C64)> {
    sources
        .iter()
        .flat_map(|s| s.freq_hz.iter().copied().zip(s.mu.iter().copied()))
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::extract::{self, ExtractSetup, LeadCorrection, Measurement, Winding};
    use crate::fit::synthetic::{log_freqs, spectrum, with_noise};
    use crate::geometry::Core;
    use crate::ingest::{Method, SourceInfo};
    use crate::model::{Model, Term};
    use std::path::Path;

    /// A `turns`-turn winding with 20 nH leads on a 25/15/10 mm toroid of `material`, as the
    /// extract stage's own inverse makes it (Z = jωN²L0μ + jωL_lead, PHYSICS.md §2).
    fn sweep(name: &str, material: &Model, turns: f64, core: &Core) -> ImpedanceSweep {
        let f = log_freqs(301, 1e5, 1e8);
        let mu = with_noise(&spectrum(material, &f), 0.002, turns as u64);
        let w = Winding {
            turns,
            cores: 1,
            c_p: None,
            l_lead: Some(20e-9),
        };
        ImpedanceSweep {
            source: SourceInfo::from_bytes(Path::new(name), name.as_bytes()),
            z: extract::impedance(&f, &mu, core, &w).unwrap(),
            freq_hz: f,
            method: Some(Method::Reflection),
            z0: Some(50.0),
            detected: vec![],
            corrections: vec![format!("open/short compensated ({name})")],
            warnings: vec![],
        }
    }

    /// Two windings of an MnZn-like core (μ_i ≈ 2000, PHYSICS.md §2 [M]) with the lead solved
    /// across them: one source with both files in its provenance, each with its own method,
    /// turns, correction and the solved lead, only points inside the valid band, and the size
    /// effect of the extraction kept as a sanity finding (in the μ table too).
    #[test]
    fn a_spectrum_becomes_one_source_with_a_provenance_entry_per_sweep() {
        let core = Core::parse("toroid:od=25mm,id=15mm,h=10mm").unwrap();
        let material = Model {
            mu_inf: 1.0,
            terms: vec![Term::debye(2000.0, 3e6)],
        };
        let sweeps = [
            sweep("core-1t.s1p", &material, 1.0, &core),
            sweep("core-2t.s1p", &material, 2.0, &core),
        ];
        let measurements: Vec<Measurement> = sweeps
            .iter()
            .zip([1.0, 2.0])
            .map(|(s, turns)| Measurement {
                sweep: s.clone(),
                turns,
            })
            .collect();
        let setup = ExtractSetup {
            lead: LeadCorrection::Solve,
            ..ExtractSetup::new(core.clone())
        };
        let s = extract::extract(&measurements, &setup).unwrap();
        let src = SourceData::from_spectrum(&s, &[&sweeps[0], &sweeps[1]], "core 1+2t");
        assert_eq!(src.label, "core 1+2t");
        assert_eq!(src.freq_hz.len(), s.valid_indices().len());
        assert!(src.freq_hz.iter().all(|&f| s.in_band(f)));
        let p = &src.provenance;
        assert_eq!(p.len(), 2);
        for (entry, (name, turns)) in p.iter().zip([("core-1t.s1p", 1.0), ("core-2t.s1p", 2.0)]) {
            assert_eq!((entry.file.as_str(), entry.turns), (name, turns));
            assert_eq!(entry.method.as_deref(), Some("reflection"));
            assert_eq!(entry.core, core.spec());
            assert_eq!(entry.corrections.len(), 2, "{:?}", entry.corrections);
            assert!(entry.corrections[0].contains(name));
            assert!(entry.corrections[1].contains("solved across windings"));
        }
        assert_eq!(src.sanity.len(), 1, "{:?}", src.warnings);
        assert!(src.sanity[0].contains("MnZn"), "{}", src.sanity[0]);
        assert!(src.warnings.contains(&src.sanity[0]));
        // The μ table keeps the finding as one, for a fit made from the table later.
        let table = extract::read_mu_table(&extract::write_mu_table(&s)).unwrap();
        assert_eq!(table.meta_values("sanity"), [src.sanity[0].as_str()]);
    }
}
