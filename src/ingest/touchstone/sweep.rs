//! A parsed network → the [`Sweep`] the rest of the tool measures with.

use super::Network;
use crate::error::Diagnostic;
use crate::ingest::{IngestError, ReadOptions, SourceInfo, Sweep, SweepData};

pub(super) fn to_sweep(
    net: Network,
    description: String,
    ports_line: usize,
    source: SourceInfo,
    opts: &ReadOptions,
) -> Result<Sweep, IngestError> {
    let mut detected = vec![description];
    let mut warnings = net.notes.clone();
    let n = net.ports;
    let data = match (n, opts.ports) {
        (1, None) => SweepData::Reflection {
            s11: net.s.iter().map(|m| m[0]).collect(),
            z0: net.z0[0],
        },
        (1, Some(_)) => {
            return Err(Diagnostic::new("a port pair was chosen for a 1-port file")
                .line(ports_line)
                .expected("--ports only with files of 2 or more ports")
                .hint("leave out --ports for a 1-port reflection measurement")
                .into())
        }
        (_, None) if n == 2 => two_port(&net, 1, 2),
        (_, None) => {
            return Err(
                Diagnostic::new(format!("the file has {} ports; the tool measures with 1 or 2", n))
                    .line(ports_line)
                    .expected("a 1-port (reflection) or 2-port (series/shunt-through) measurement")
                    .hint(format!(
                        "choose the two ports the part sits between with --ports i,j (1..{}), e.g. --ports 1,2",
                        n
                    ))
                    .into(),
            )
        }
        (_, Some((i, j))) => {
            if i == j || !(1..=n).contains(&i) || !(1..=n).contains(&j) {
                return Err(
                    Diagnostic::new(format!("--ports {},{} is not a pair of this {}-port file", i, j, n))
                        .line(ports_line)
                        .expected(format!("two different ports between 1 and {}", n))
                        .hint("e.g. --ports 1,2")
                        .into(),
                );
            }
            if n > 2 || (i, j) != (1, 2) {
                detected.push(format!(
                    "kept ports {},{} of {} (exact when the other ports are terminated in their references)",
                    i, j, n
                ));
            }
            two_port(&net, i, j)
        }
    };
    let (freq_hz, data) = drop_dc(net.freq_hz, data, &mut warnings);
    Ok(Sweep {
        source,
        freq_hz,
        data,
        detected,
        warnings,
    })
}

/// The 2×2 sub-matrix of ports i, j (1-based), row-major [Sii, Sij, Sji, Sjj].
fn two_port(net: &Network, i: usize, j: usize) -> SweepData {
    let n = net.ports;
    let (a, b) = (i - 1, j - 1);
    let s = net
        .s
        .iter()
        .map(|m| [m[a * n + a], m[a * n + b], m[b * n + a], m[b * n + b]])
        .collect();
    SweepData::TwoPort {
        s,
        z0: [net.z0[a], net.z0[b]],
    }
}

/// DC cannot be normalised (μ from Z/(jωL0) divides by zero), so a 0 Hz point is dropped.
fn drop_dc(freq_hz: Vec<f64>, data: SweepData, warnings: &mut Vec<String>) -> (Vec<f64>, SweepData) {
    let keep: Vec<bool> = freq_hz.iter().map(|&f| f != 0.0).collect();
    let dropped = keep.iter().filter(|k| !**k).count();
    if dropped == 0 {
        return (freq_hz, data);
    }
    warnings.push(format!(
        "dropped the 0 Hz point{} (DC cannot be normalised)",
        if dropped > 1 { "s" } else { "" }
    ));
    let freq = filter(&freq_hz, &keep);
    let data = match data {
        SweepData::Reflection { s11, z0 } => SweepData::Reflection {
            s11: filter(&s11, &keep),
            z0,
        },
        SweepData::TwoPort { s, z0 } => SweepData::TwoPort {
            s: filter(&s, &keep),
            z0,
        },
        other => other,
    };
    (freq, data)
}

fn filter<T: Copy>(v: &[T], keep: &[bool]) -> Vec<T> {
    v.iter().zip(keep).filter(|(_, k)| **k).map(|(x, _)| *x).collect()
}
