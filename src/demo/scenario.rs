//! The invented scenario: who measures what, on which cores, with which set-up and export style.
//! Everything here is fiction made up for the demo (organisation, people, lots, materials).

use super::cores::DemoCore;
use super::formats::{FreqUnit, Layout, Pair};
use crate::ingest::Method;

/// The invented organisation that qualifies the cores.
pub const ORGANISATION: &str = "Larchmere Field Telemetry";

/// What the organisation is doing, in a few sentences (goes into the generated README).
pub const STORY: &str = "Larchmere Field Telemetry (an invented company) builds solar-powered telemetry \
cabinets for remote weather and river-level stations. Their RS-485 and power leads run tens of metres \
outdoors and pick up lightning-induced transients, so the cable entries carry ferrite suppression \
cores. Before adding cores to the bill of materials, the EMC bench measures every candidate material \
on its own analyser: toroids wound with 1 to 3 turns (and one 10-turn winding), clip-on split sleeves \
closed around a short cable, reflection (1-port S11) and series-through (2-port S21) fixtures. Every \
material has at least two cores from the same lot so that a published model rests on two independent \
samples. Lot DW-2502 of driftwood arrived with visibly lower permeability and is kept as the off-spec case.";

/// One log-spaced sweep segment, both ends included (an analyser's segment table row).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Segment {
    pub start_hz: f64,
    pub stop_hz: f64,
    pub points: usize,
}

/// Two segments meeting at 10 MHz; the boundary frequency appears twice, as real exports do.
pub const TWO_SEGMENTS: &[Segment] =
    &[Segment { start_hz: 100e3, stop_hz: 10e6, points: 161 }, Segment { start_hz: 10e6, stop_hz: 1e9, points: 161 }];
/// One plain log sweep.
pub const ONE_SEGMENT: &[Segment] = &[Segment { start_hz: 100e3, stop_hz: 1e9, points: 301 }];
/// Three segments, finer in the middle decades; both boundaries repeat.
pub const THREE_SEGMENTS: &[Segment] = &[
    Segment { start_hz: 100e3, stop_hz: 3e6, points: 81 },
    Segment { start_hz: 3e6, stop_hz: 300e6, points: 181 },
    Segment { start_hz: 300e6, stop_hz: 1e9, points: 41 },
];

/// The frequencies of a segment table, rounded to whole hertz as analysers set them.
pub fn frequencies(segments: &[Segment]) -> Vec<f64> {
    segments
        .iter()
        .flat_map(|s| {
            let n = s.points.max(2);
            (0..n).map(move |i| (s.start_hz * (s.stop_hz / s.start_hz).powf(i as f64 / (n - 1) as f64)).round())
        })
        .collect()
}

/// A lot of cores of one material, as delivered.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Lot {
    pub id: &'static str,
    pub material: &'static str,
    /// Scale on every Δμ and every f_r of the nominal material (1, 1 for a lot on spec).
    pub mu_scale: f64,
    pub f_scale: f64,
    pub off_spec: bool,
}

pub const LOTS: &[Lot] = &[
    Lot { id: "DW-2411", material: "driftwood", mu_scale: 1.0, f_scale: 1.0, off_spec: false },
    // Off spec: 30 % less permeability, relaxation 35 % higher (Snoek: lower μ, higher f_r).
    Lot { id: "DW-2502", material: "driftwood", mu_scale: 0.70, f_scale: 1.35, off_spec: true },
    Lot { id: "DWC-2411", material: "driftwood", mu_scale: 1.0, f_scale: 1.0, off_spec: false },
    Lot { id: "SM-2410", material: "saltmarsh", mu_scale: 1.0, f_scale: 1.0, off_spec: false },
    Lot { id: "EM-2409", material: "emberstone", mu_scale: 1.0, f_scale: 1.0, off_spec: false },
    Lot { id: "KL-2412", material: "kelpline", mu_scale: 1.0, f_scale: 1.0, off_spec: false },
];

/// Sample-to-sample spread inside a lot (1σ, relative) of Δμ and f_r [common practice: μ_i of
/// ferrite is specified ±20–25 %, PHYSICS.md §8; cores of one lot scatter far less].
pub const SAMPLE_SPREAD_MU: f64 = 0.01;
pub const SAMPLE_SPREAD_F: f64 = 0.007;

/// The analyser's trace noise on each S-parameter: relative (1σ, complex) and an absolute floor.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Noise {
    pub relative: f64,
    pub floor: f64,
}

/// The bench analyser: about 0.004 dB / 0.03° of trace noise and a −74 dB floor.
pub const BENCH_NOISE: Noise = Noise { relative: 5e-4, floor: 2e-4 };

/// One measurement file to generate.
#[derive(Debug, Clone, PartialEq)]
pub struct Plan {
    /// File name without extension; the extension follows from the layout and port count.
    pub stem: &'static str,
    pub lot: &'static str,
    pub sample: &'static str,
    pub core: DemoCore,
    pub turns: u32,
    pub method: Method,
    pub layout: Layout,
    pub segments: &'static [Segment],
    /// Lead and loop inductance outside the core, nH (the bench characterises each fixture's
    /// loop without a core, so the manifest states it).
    pub lead_nh: f64,
    /// Winding self-capacitance, pF. Only the many-turn winding has one that matters here: the
    /// 1–3 turn windings are spaced single-layer turns whose capacitance the demo neglects, so
    /// their sweeps are valid to the top of the band.
    pub c_p_pf: f64,
    pub date: &'static str,
    pub notes: &'static str,
}

impl Plan {
    /// Ports of the exported data: 2 for a series-through Touchstone, else 1.
    pub fn ports(&self) -> usize {
        match (self.method, self.layout) {
            (Method::Series, Layout::TouchstoneV1 { .. } | Layout::TouchstoneV2 { .. }) => 2,
            _ => 1,
        }
    }
    pub fn file_name(&self) -> String {
        format!("{}.{}", self.stem, self.layout.extension(self.ports()))
    }
    pub fn lot(&self) -> Option<&'static Lot> {
        LOTS.iter().find(|l| l.id == self.lot)
    }
}

const T25: DemoCore = DemoCore::toroid(25.0, 15.0, 10.0);
const T20: DemoCore = DemoCore::toroid(20.0, 10.0, 10.0);
const T16: DemoCore = DemoCore::toroid(16.0, 9.6, 6.3);
const T12: DemoCore = DemoCore::toroid(12.5, 7.5, 5.0);
const SPLIT17: DemoCore = DemoCore::split(17.5, 8.5, 28.0, 6.0);
const SPLIT13: DemoCore = DemoCore::split(13.0, 6.5, 20.0, 4.0);

const V1_MHZ_RI: Layout = Layout::TouchstoneV1 { unit: FreqUnit::MHz, pair: Pair::RI };
const V1_HZ_MA: Layout = Layout::TouchstoneV1 { unit: FreqUnit::Hz, pair: Pair::MA };
const V2_GHZ_DB: Layout = Layout::TouchstoneV2 { unit: FreqUnit::GHz, pair: Pair::DB };
const V2_MHZ_RI: Layout = Layout::TouchstoneV2 { unit: FreqUnit::MHz, pair: Pair::RI };

/// Every file of the scenario, in manifest order.
#[rustfmt::skip]
pub fn plans() -> Vec<Plan> {
    use Method::{Reflection, Series};
    let p = |stem, lot, sample, core, turns, method, layout, segments, lead_nh, c_p_pf, date, notes| Plan {
        stem,
        lot,
        sample,
        core,
        turns,
        method,
        layout,
        segments,
        lead_nh,
        c_p_pf,
        date,
        notes,
    };
    vec![
        p("driftwood_dw2411-01_t25_1t", "DW-2411", "DW-2411-01", T25, 1, Reflection, V1_MHZ_RI, TWO_SEGMENTS, 24.0, 0.0,
          "2024-11-19", "1 turn of 0.8 mm wire, SMA reflection fixture; leads about 15 mm"),
        p("driftwood_dw2411-01_t25_2t", "DW-2411", "DW-2411-01", T25, 2, Reflection, V1_HZ_MA, TWO_SEGMENTS, 24.0, 0.0,
          "2024-11-19", "same core and leads rewound with 2 turns, for the lead correction"),
        p("driftwood_dw2411-02_t25_3t", "DW-2411", "DW-2411-02", T25, 3, Series, V2_GHZ_DB, THREE_SEGMENTS, 18.0, 0.0,
          "2024-11-20", "3 turns on the series-through fixture (1 turn is too small a part for it below 10 MHz)"),
        p("driftwood_dw2411-02_t25_2t", "DW-2411", "DW-2411-02", T25, 2, Reflection, Layout::CsvZMagPhase, TWO_SEGMENTS, 28.0, 0.0,
          "2024-11-20", "impedance export of the reflection set-up"),
        p("driftwood_dw2411-03_t12_10t", "DW-2411", "DW-2411-03", T12, 10, Reflection, Layout::CsvZReIm, ONE_SEGMENT, 12.0, 3.2,
          "2024-11-21", "10 turns of 0.3 mm enamelled wire; self-resonance inside the sweep"),
        p("driftwood_dw2502-01_t25_1t", "DW-2502", "DW-2502-01", T25, 1, Reflection, V1_MHZ_RI, TWO_SEGMENTS, 23.0, 0.0,
          "2025-02-11", "incoming inspection of the new lot"),
        p("driftwood_dw2502-02_t25_2t", "DW-2502", "DW-2502-02", T25, 2, Reflection, Layout::CsvS11DbTab, TWO_SEGMENTS, 30.0, 0.0,
          "2025-02-11", "second core of the new lot; trace export"),
        p("driftwood_dwc2411-01_s17_1t", "DWC-2411", "DWC-2411-01", SPLIT17, 1, Reflection, V2_MHZ_RI, TWO_SEGMENTS, 26.0, 0.0,
          "2024-11-26", "clip-on sleeve closed around a 7 mm cable stub, latch fully shut"),
        p("driftwood_dwc2411-02_s17_1t", "DWC-2411", "DWC-2411-02", SPLIT17, 1, Series, V1_MHZ_RI, TWO_SEGMENTS, 20.0, 0.0,
          "2024-11-26", "clip-on sleeve on the series-through fixture"),
        p("saltmarsh_sm2410-01_t16_2t", "SM-2410", "SM-2410-01", T16, 2, Reflection, V1_HZ_MA, THREE_SEGMENTS, 29.0, 0.0,
          "2024-10-08", "VHF candidate for the radio lead"),
        p("saltmarsh_sm2410-02_t16_2t", "SM-2410", "SM-2410-02", T16, 2, Series, V2_GHZ_DB, TWO_SEGMENTS, 25.0, 0.0,
          "2024-10-08", "series-through fixture"),
        p("saltmarsh_sm2410-02_t16_3t", "SM-2410", "SM-2410-02", T16, 3, Reflection, Layout::CsvZReIm, TWO_SEGMENTS, 33.0, 0.0,
          "2024-10-09", "same core rewound with 3 turns"),
        p("emberstone_em2409-01_t20_1t", "EM-2409", "EM-2409-01", T20, 1, Reflection, V1_MHZ_RI, TWO_SEGMENTS, 22.0, 0.0,
          "2024-09-17", "low-band candidate for the mains input; expect size effects above 1 MHz"),
        p("emberstone_em2409-02_t20_1t", "EM-2409", "EM-2409-02", T20, 1, Reflection, Layout::CsvZMagPhase, ONE_SEGMENT, 21.0, 0.0,
          "2024-09-17", "impedance export of the reflection set-up"),
        p("kelpline_kl2412-01_s13_1t", "KL-2412", "KL-2412-01", SPLIT13, 1, Reflection, V1_HZ_MA, TWO_SEGMENTS, 24.0, 0.0,
          "2024-12-03", "clip-on sleeve around a 6 mm cable stub"),
        p("kelpline_kl2412-02_s13_1t", "KL-2412", "KL-2412-02", SPLIT13, 1, Reflection, Layout::CsvS11DbTab, THREE_SEGMENTS, 22.0, 0.0,
          "2024-12-03", "second sleeve of the lot; trace export"),
        p("kelpline_kl2412-02_s13_2t", "KL-2412", "KL-2412-02", SPLIT13, 2, Series, V1_HZ_MA, TWO_SEGMENTS, 27.0, 0.0,
          "2024-12-04", "cable looped twice through the sleeve, series-through fixture"),
    ]
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn segment_boundaries_repeat_one_frequency_and_grids_stay_increasing_otherwise() {
        let f = frequencies(TWO_SEGMENTS);
        assert_eq!(f.len(), 322);
        assert_eq!((f[0], f[321]), (100e3, 1e9));
        let repeats = f.windows(2).filter(|w| w[1] == w[0]).count();
        let decreasing = f.windows(2).filter(|w| w[1] < w[0]).count();
        assert_eq!((repeats, decreasing), (1, 0));
        assert_eq!(frequencies(THREE_SEGMENTS).windows(2).filter(|w| w[1] == w[0]).count(), 2);
        assert_eq!(frequencies(ONE_SEGMENT).windows(2).filter(|w| w[1] <= w[0]).count(), 0);
    }

    #[test]
    fn every_plan_has_a_known_lot_and_unique_file_name_and_every_material_two_samples() {
        let plans = plans();
        let mut names: Vec<String> = plans.iter().map(|p| p.file_name()).collect();
        names.sort();
        names.dedup();
        assert_eq!(names.len(), plans.len());
        for p in &plans {
            assert!(p.lot().is_some(), "{} names an unknown lot", p.stem);
        }
        for m in super::super::materials::materials() {
            let mut samples: Vec<&str> = plans
                .iter()
                .filter(|p| p.lot().map(|l| l.material == m.id && !l.off_spec).unwrap_or(false))
                .map(|p| p.sample)
                .collect();
            samples.sort();
            samples.dedup();
            assert!(samples.len() >= 2, "{} has samples {:?}", m.id, samples);
        }
    }
}
