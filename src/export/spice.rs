//! A wound core as one two-pin SPICE sub-circuit `.subckt NAME A B` of ideal R, L and C
//! ([`super::synthesis`] builds the network), with `*` comments giving the provenance, the band
//! the network was built for and the accuracy reached.

use super::debye_sum::{CHECK_PER_DECADE, FIT_MARGIN, POLES_PER_DECADE, POLE_MARGIN};
use super::network::Net;
use super::provenance::block;
use super::synthesis::{Method, Synthesis};

/// The sub-circuit lines, `.subckt` to `.ends`.
pub fn subckt(name: &str, net: &Net) -> String {
    let mut w = Writer::default();
    w.emit(net, "A", "B");
    let mut out = format!(".subckt {} A B\n", name);
    for line in w.lines {
        out += &line;
        out.push('\n');
    }
    out += &format!(".ends {}\n", name);
    out
}

/// Element lines with unique names (R1, L1, C1, …) and internal nodes n1, n2, ….
#[derive(Default)]
struct Writer {
    lines: Vec<String>,
    counts: [usize; 3],
    nodes: usize,
}

impl Writer {
    fn emit(&mut self, net: &Net, a: &str, b: &str) {
        match net {
            Net::R(v) => self.element(0, 'R', a, b, *v),
            Net::L(v) => self.element(1, 'L', a, b, *v),
            Net::C(v) => self.element(2, 'C', a, b, *v),
            Net::Parallel(parts) => parts.iter().for_each(|p| self.emit(p, a, b)),
            Net::Series(parts) => {
                let mut from = a.to_string();
                for (i, p) in parts.iter().enumerate() {
                    let to = if i + 1 == parts.len() {
                        b.to_string()
                    } else {
                        self.nodes += 1;
                        format!("n{}", self.nodes)
                    };
                    self.emit(p, &from, &to);
                    from = to;
                }
            }
        }
    }

    fn element(&mut self, slot: usize, letter: char, a: &str, b: &str, value: f64) {
        self.counts[slot] += 1;
        self.lines.push(format!(
            "{}{} {} {} {:.12e}",
            letter, self.counts[slot], a, b, value
        ));
    }
}

/// How the network was built and how well it follows the model, as `key: value` lines.
pub fn synthesis_lines(s: &Synthesis) -> Vec<(String, String)> {
    let mut out = vec![
        ("network_band_hz".to_string(), format!("{} {}", s.band.0, s.band.1)),
        (
            "network_accuracy".to_string(),
            format!(
                "max |Z_net - Z_model|/|Z_model| = {:.2e} over the network band ({} points per decade)",
                s.max_rel_error, CHECK_PER_DECADE
            ),
        ),
    ];
    for t in &s.terms {
        let how = match &t.method {
            Method::Exact => "exact: one section".to_string(),
            Method::DebyeSum { fit_band } => format!(
                "sum of {} Debye R||L sections fitted by non-negative least squares over {:e} to {:e} Hz (the network band widened {}x each side; relaxation frequencies {} per decade anchored at f_r, reaching {}x beyond); max relative error of the term over the network band: {:.2e}",
                t.sections, fit_band.0, fit_band.1, FIT_MARGIN, POLES_PER_DECADE, POLE_MARGIN, t.max_rel_error
            ),
        };
        out.push((
            "term".to_string(),
            format!("{} {}: {}", t.index, t.kind.name(), how),
        ));
    }
    out.push((
        "outside_band".to_string(),
        "exact sections hold at every frequency; Debye-sum sections only over the fit band"
            .to_string(),
    ));
    out
}

/// The whole file: provenance, network notes, the sub-circuit.
pub fn render(meta: &[(String, String)], name: &str, s: &Synthesis) -> String {
    let mut out = String::from("* mucurve: wound ferrite core as a two-pin sub-circuit\n");
    out += &block("*", meta);
    out += &block("*", &synthesis_lines(s));
    out += "* quantity: impedance between A and B of the wound core, Z = jw*L0*mu(f) with its gap, winding capacitance and leads\n";
    out += "* elements: mu_inf -> series L; debye -> R||L; lorentz (damped resonance) -> R||L||C; gap -> parallel L; winding capacitance -> parallel C; lead -> series L\n";
    out += &format!("* usage: X1 node1 node2 {}; like any inductor the network is a short at DC, so a voltage source straight across it has no DC operating point: give it series resistance, or skip the operating point of a linear AC analysis (ngspice: .options noopac)\n", name);
    out += &subckt(name, &s.net);
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::export::network::{debye_section, lorentz_section};

    // The writer gives every element a unique name and walks series chains through fresh
    // nodes: a series L, R‖L and R‖L‖C chain becomes L1 A n1, R1/L2 n1 n2, L3/C1/R2 n2 B.
    #[test]
    fn series_and_parallel_become_nodes_and_branches() {
        let net = Net::Series(vec![
            Net::L(1e-7),
            debye_section(1e-7, 100.0, 1e7),
            lorentz_section(1e-7, 20.0, 1e8, 0.5),
        ]);
        let text = subckt("core_x", &net);
        let lines: Vec<&str> = text.lines().collect();
        assert_eq!(lines[0], ".subckt core_x A B");
        assert_eq!(*lines.last().unwrap(), ".ends core_x");
        let heads: Vec<String> = lines[1..lines.len() - 1]
            .iter()
            .map(|l| l.split_whitespace().take(3).collect::<Vec<_>>().join(" "))
            .collect();
        assert_eq!(
            heads,
            ["L1 A n1", "R1 n1 n2", "L2 n1 n2", "L3 n2 B", "C1 n2 B", "R2 n2 B"]
        );
        // Values are written with 13 significant digits: R1 = L·ω_r = 1e-5·2π·1e7.
        let r1: f64 = lines[2].split_whitespace().nth(3).unwrap().parse().unwrap();
        assert!((r1 - 1e-5 * std::f64::consts::TAU * 1e7).abs() < 1e-12 * r1);
    }
}
