//! The flat parameter vector of a model: `[mu_inf, term 1 params..., term 2 params...]`, each
//! term's parameters in [`TermKind::param_names`] order. Solvers and covariance matrices use this
//! order; [`Model::param_names`] labels it.

use super::{Model, Term, TermKind};

impl Model {
    /// The kinds of this model's terms, in order.
    pub fn kinds(&self) -> Vec<TermKind> {
        self.terms.iter().map(|t| t.kind).collect()
    }

    /// Length of the flat parameter vector for `kinds` (1 for `mu_inf` plus each term's).
    pub fn param_count(kinds: &[TermKind]) -> usize {
        1 + kinds.iter().map(|k| k.param_names().len()).sum::<usize>()
    }

    /// The name of each entry of the flat parameter vector (`mu_inf` first).
    pub fn param_names(kinds: &[TermKind]) -> Vec<&'static str> {
        std::iter::once("mu_inf")
            .chain(kinds.iter().flat_map(|k| k.param_names().iter().copied()))
            .collect()
    }

    /// `[mu_inf, term 1 params..., term 2 params...]`.
    pub fn to_params(&self) -> Vec<f64> {
        std::iter::once(self.mu_inf)
            .chain(self.terms.iter().flat_map(|t| t.params()))
            .collect()
    }

    /// The model with `kinds` and the flat parameter vector `p` of [`Model::to_params`].
    /// `p.len()` must be [`Model::param_count`]`(kinds)`; the layout is the caller's, not user data.
    pub fn from_params(kinds: &[TermKind], p: &[f64]) -> Model {
        assert_eq!(
            p.len(),
            Model::param_count(kinds),
            "flat parameter vector does not fit the model's kinds"
        );
        let mut at = 1;
        let terms = kinds
            .iter()
            .map(|&k| {
                let n = k.param_names().len();
                let t = Term::from_params(k, &p[at..at + n]);
                at += n;
                t
            })
            .collect();
        Model {
            mu_inf: p[0],
            terms,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn flat_vector_round_trips_and_is_labelled_in_order() {
        let m = Model {
            mu_inf: 1.2,
            terms: vec![
                Term::cole_cole(500.0, 2e6, 0.8),
                Term::lorentz(300.0, 5e7, 0.4),
            ],
        };
        let kinds = m.kinds();
        let p = m.to_params();
        assert_eq!(p, vec![1.2, 500.0, 2e6, 0.8, 300.0, 5e7, 0.4]);
        assert_eq!(Model::param_count(&kinds), p.len());
        assert_eq!(
            Model::param_names(&kinds),
            vec!["mu_inf", "delta_mu", "f_hz", "alpha", "delta_mu", "f_hz", "damping"]
        );
        assert_eq!(Model::from_params(&kinds, &p), m);
    }
}
