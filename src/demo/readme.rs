//! The README written beside the generated sweeps: the scenario, the materials' true models, and
//! what each file exercises.

use super::manifest::Entry;
use super::materials;
use super::scenario;

fn params(m: &materials::Material) -> String {
    let terms: Vec<String> = m
        .model
        .terms
        .iter()
        .map(|t| {
            let values: Vec<String> = t
                .kind
                .param_names()
                .iter()
                .zip(t.params())
                .map(|(n, v)| if *n == "f_hz" { format!("f_hz={:e}", v) } else { format!("{}={}", n, v) })
                .collect();
            format!("{}({})", t.kind.name(), values.join(", "))
        })
        .collect();
    format!("mu_inf={} + {}", m.model.mu_inf, terms.join(" + "))
}

/// Render the README for the given manifest rows (in plan order).
pub fn render(entries: &[Entry]) -> String {
    let mut out = String::new();
    out.push_str("# raw_measurements/ - the invented demo scenario\n\n");
    out.push_str("Written by `mucurve demo --regenerate` (src/demo/); do not edit by hand: the tests check that\n");
    out.push_str("these files are byte for byte what the generator writes. Everything here is fiction.\n\n");
    out.push_str(scenario::STORY);
    out.push_str("\n\n## Materials (the truth the pipeline should recover)\n\n");
    for m in materials::materials() {
        out.push_str(&format!(
            "- **{}**: {}. Model `{}`: {}; Snoek check assumes J_s = {} T.\n",
            m.id,
            m.description,
            m.model.spec(),
            params(&m),
            m.j_s_tesla
        ));
    }
    out.push_str(&format!(
        "\nEach core scatters around its lot (1 sigma: {:.1} % on delta_mu, {:.1} % on f_hz).\n",
        scenario::SAMPLE_SPREAD_MU * 100.0,
        scenario::SAMPLE_SPREAD_F * 100.0
    ));
    for lot in scenario::LOTS.iter().filter(|l| l.off_spec) {
        out.push_str(&format!(
            "Lot {} of {} is off spec: delta_mu x{:.2}, f_hz x{:.2}.\n",
            lot.id, lot.material, lot.mu_scale, lot.f_scale
        ));
    }
    out.push_str("Fixtures add lead inductance (tens of nH, stated per file in the manifest); the 10-turn winding\n");
    out.push_str("adds its self-capacitance and resonates inside the sweep; the analyser adds trace noise on every\n");
    out.push_str("S-parameter, so low impedances read by reflection are noisy.\n\n");
    out.push_str("## Files\n\n`manifest.csv` describes every file (core spec, turns, method, fixture lead inductance, lot, sample, date).\n\n");
    out.push_str("| file | sample | core | turns | method | export style |\n|---|---|---|---|---|---|\n");
    for (e, plan) in entries.iter().zip(scenario::plans()) {
        out.push_str(&format!(
            "| {} | {} | `{}` | {} | {} | {} |\n",
            e.file,
            e.sample,
            e.core,
            e.turns,
            e.method,
            plan.layout.describe()
        ));
    }
    out
}
