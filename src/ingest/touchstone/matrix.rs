//! One record's numbers → the full S matrix (row-major) at the port references.
//! Pairs are read per the format (RI, MA, DB with angles in degrees); the listed entries are
//! placed per `[Matrix Format]` and the two-port order; Z and Y are converted with
//! [`crate::ingest::convert`]. Version 1 Z/Y are normalised to R (Z = z·R, Y = y/R); version 2
//! Z/Y are in ohms and siemens (Touchstone 2.0 specification; PHYSICS.md §3).

use super::keywords::{MatrixFormat, TwoPortOrder};
use super::options::{Format, Param};
use super::records::Record;
use super::scan::Header;
use crate::error::Diagnostic;
use crate::ingest::convert::{y_matrix_to_s, z_matrix_to_s};
use crate::C64;

/// Everything needed to turn each record into S, checked once for the whole file.
pub(super) struct Converter<'a> {
    header: &'a Header,
    ports: usize,
    refs: &'a [f64],
    /// Un-normalising factor for version 1 Z (×R) and Y (÷R) data.
    scale: f64,
    /// File lists a full 2-port as S11 S21 S12 S22.
    order_21_12: bool,
}

impl<'a> Converter<'a> {
    pub(super) fn new(header: &'a Header, ports: usize, refs: &'a [f64]) -> Result<Self, Diagnostic> {
        let v1 = header.version.is_none();
        let scale = match (v1, header.option.param) {
            (true, Param::Z | Param::Y) => {
                let r = refs[0];
                if refs.iter().any(|&x| x != r) {
                    return Err(Diagnostic::new(
                        "version 1 Z/Y data with different references per port: the standard does not say how they are normalised",
                    )
                    .line(header.option_no)
                    .expected("one reference after R for normalised Z or Y data")
                    .hint("export S-parameters, or a version 2 file with [Reference] and unnormalised Z/Y"));
                }
                if header.option.param == Param::Z {
                    r
                } else {
                    1.0 / r
                }
            }
            _ => 1.0,
        };
        let order_21_12 = ports == 2
            && header.matrix_format == MatrixFormat::Full
            && (v1 || header.two_port_order == Some(TwoPortOrder::Order21_12));
        Ok(Converter {
            header,
            ports,
            refs,
            scale,
            order_21_12,
        })
    }

    /// The row-major S matrix of one record.
    pub(super) fn s_matrix(&self, record: &Record) -> Result<Vec<C64>, Diagnostic> {
        let listed: Vec<C64> = record
            .values
            .chunks_exact(2)
            .map(|p| pair(p[0], p[1], self.header.option.format) * self.scale)
            .collect();
        let m = self.place(&listed);
        let s = match self.header.option.param {
            Param::S => Some(m),
            Param::Z => z_matrix_to_s(&m, self.refs),
            Param::Y => y_matrix_to_s(&m, self.refs),
        };
        s.ok_or_else(|| {
            Diagnostic::new(format!(
                "the {} matrix at frequency {} has no S-parameter equivalent at the references",
                self.header.option.param_name(),
                record.freq
            ))
            .line(record.no)
            .expected("a matrix for which (Z + R) or (1 + R·Y) is invertible")
            .hint("check the values and the reference impedances of this line")
        })
    }

    /// Place the listed entries into a full row-major matrix.
    fn place(&self, listed: &[C64]) -> Vec<C64> {
        let n = self.ports;
        let mut m = vec![C64::new(0.0, 0.0); n * n];
        match self.header.matrix_format {
            MatrixFormat::Full => {
                m.copy_from_slice(listed);
                if self.order_21_12 {
                    m.swap(1, 2);
                }
            }
            MatrixFormat::Lower | MatrixFormat::Upper => {
                let lower = self.header.matrix_format == MatrixFormat::Lower;
                let cells = (0..n).flat_map(|i| {
                    let cols = if lower { 0..i + 1 } else { i..n };
                    cols.map(move |j| (i, j))
                });
                for ((i, j), &v) in cells.zip(listed) {
                    m[i * n + j] = v;
                    m[j * n + i] = v;
                }
            }
        }
        m
    }
}

/// One number pair as written: RI, MA, or DB (20·log10 of the magnitude); angles in degrees.
fn pair(a: f64, b: f64, format: Format) -> C64 {
    match format {
        Format::Ri => C64::new(a, b),
        Format::Ma => C64::from_polar(a, b.to_radians()),
        Format::Db => C64::from_polar(10f64.powf(a / 20.0), b.to_radians()),
    }
}
