//! The material's μ′/μ″ on the export grid, in the extract stage's table form
//! (`freq_hz,mu_prime,mu_double_prime`, μ = μ′ − jμ″) after the `#` provenance block, so
//! [`crate::extract::read_mu_table`] and the fit stage read it back.

use super::provenance::block;
use crate::extract::table::HEADER;
use crate::model::Model;

/// The whole file.
pub fn render(meta: &[(String, String)], model: &Model, freq_hz: &[f64]) -> String {
    let mut out = block("#", meta);
    out += "# quantity: relative permeability mu = mu_prime - j*mu_double_prime of the material (no core, no winding); mu_double_prime >= 0 for a lossy core\n";
    out += HEADER;
    out.push('\n');
    for &f in freq_hz {
        let mu = model.mu(f);
        out += &format!("{},{:e},{:e}\n", f, mu.re, -mu.im);
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::extract::read_mu_table;
    use crate::model::Term;

    // Read back by the extract stage's own table reader: the same grid and μ to the last bit
    // (shortest round-trip decimal), and a Debye loss peak of Δμ/2 at f_r (PHYSICS.md §4 [D]).
    #[test]
    fn table_reads_back_through_the_mu_table_reader() {
        let model = Model {
            mu_inf: 2.0,
            terms: vec![Term::debye(300.0, 1e7)],
        };
        let freqs = vec![1e6, 1e7, 1e8];
        let meta = vec![("material".to_string(), "x@1".to_string())];
        let t = read_mu_table(&render(&meta, &model, &freqs)).unwrap();
        assert_eq!(t.freq_hz, freqs);
        for (f, mu) in t.freq_hz.iter().zip(&t.mu) {
            assert_eq!(*mu, model.mu(*f));
        }
        assert!((-t.mu[1].im - 150.0).abs() < 1e-9);
        assert_eq!(t.meta_values("material"), vec!["x@1"]);
    }
}
