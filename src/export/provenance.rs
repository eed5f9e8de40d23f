//! The `key: value` provenance block every export starts with, written after each format's
//! comment mark (`#` CSV, `!` Touchstone, `*` SPICE).

use super::plan::{ExportPlan, Target};
use crate::model::Model;

/// The caution every export of a prediction carries.
pub const CAUTION: &str = "model prediction for engineering estimates, not a measurement or a certification; surge, EFT and EMP protection must be designed and verified to the applicable standards, local codes and licensed engineering practice";

/// `mu_inf=…; kind(name=value, …); …`, the model as published.
pub fn describe_model(model: &Model) -> String {
    let mut parts = vec![format!("mu_inf={}", model.mu_inf)];
    for t in &model.terms {
        let params: Vec<String> = t
            .kind
            .param_names()
            .iter()
            .zip(t.params())
            .map(|(n, v)| format!("{}={}", n, v))
            .collect();
        parts.push(format!("{}({})", t.kind.name(), params.join(", ")));
    }
    parts.join("; ")
}

/// The provenance of `plan`, in writing order (keys may repeat, e.g. `warning`).
pub fn lines(plan: &ExportPlan) -> Vec<(String, String)> {
    let s = &plan.source;
    let m = &s.material;
    let mut out: Vec<(String, String)> = Vec::new();
    let mut put = |k: &str, v: String| out.push((k.to_string(), v.replace(['\n', '\r'], " ")));
    put(
        "tool",
        format!(
            "mucurve {} export --format {}",
            crate::TOOL_VERSION,
            plan.target.format().name()
        ),
    );
    put("material", m.reference());
    put(
        "material_status",
        match &s.status {
            Ok(st) => st.name().to_string(),
            Err(_) => "unknown".into(),
        },
    );
    put("material_file", s.path.display().to_string());
    put("material_file_sha256", s.file_sha256.clone());
    put(
        "material_sha256",
        format!("{} (the file's own content hash)", m.sha256),
    );
    put("material_created", m.created.clone());
    put("material_tool_version", m.tool_version.clone());
    put("model", describe_model(&s.model));
    put(
        "valid_band_hz",
        format!("{} {}", m.band.f_min_hz, m.band.f_max_hz),
    );
    put(
        "grid_hz",
        format!(
            "{} to {}, {} points, log-spaced",
            plan.grid.start_hz, plan.grid.stop_hz, plan.grid.points
        ),
    );
    if let Some(d) = plan.target.device() {
        let e = d.core.effective();
        put("core", d.core.spec());
        put("c1_per_m", format!("{:.5e}", e.c1));
        put("le_m", format!("{:.5e}", e.le()));
        put("gap_total_m", format!("{:e}", d.core.gap_m()));
        put("turns", d.winding.turns.to_string());
        put("cores_in_series", d.winding.cores.to_string());
        put(
            "l0_h",
            format!(
                "{:.6e} (M*N^2*mu0/C1, the winding with mu = 1)",
                d.winding.l0(&d.core)
            ),
        );
        put(
            "lead_inductance_h",
            d.winding
                .l_lead
                .map_or("none".into(), |l| format!("{:e}", l)),
        );
        put(
            "winding_capacitance_f",
            d.winding.c_p.map_or("none".into(), |c| format!("{:e}", c)),
        );
    }
    if let Target::Touchstone { z0, .. } = plan.target {
        put("z0_ohm", z0.to_string());
    }
    for w in &plan.warnings {
        put("warning", w.clone());
    }
    put("caution", CAUTION.into());
    out
}

/// The block as text, one `MARK key: value` line each.
pub fn block(mark: &str, lines: &[(String, String)]) -> String {
    lines
        .iter()
        .map(|(k, v)| format!("{} {}: {}\n", mark, k, v))
        .collect()
}
