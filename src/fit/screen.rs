//! Start values by a separable grid search: μ is linear in μ∞ and every Δμ once the frequencies
//! and shapes are fixed (the idea behind variable projection; Golub & Pereyra, SIAM J. Numer.
//! Anal. 10, 413 (1973)). Each term's f_r runs over a log grid around the band and its shape over
//! a few values; for every combination the Δμ follow from a tiny linear least-squares problem
//! whose Gram matrix was computed once, and the few lowest-cost combinations with all Δμ > 0
//! become starts. This finds the basins the feature-based starts can miss (a small resonance in
//! the tail of a large relaxation, overlapping peaks).

use super::engine::thinned;
use crate::model::{Model, Term, TermKind};
use crate::C64;

/// Grid density of f_r, per decade, and how far beyond the band the grid reaches (decades).
const PER_DECADE: f64 = 8.0;
const BEYOND_BAND_DEC: f64 = 0.5;
/// Two screened starts are distinct if some term's f_r differs by more than this (decades).
const DISTINCT_DEC: f64 = 0.3;

fn shapes(kind: TermKind) -> Vec<Term> {
    match kind {
        TermKind::Debye => vec![Term::debye(1.0, 1.0)],
        TermKind::ColeCole => [0.5, 0.7, 0.9]
            .iter()
            .map(|&a| Term::cole_cole(1.0, 1.0, a))
            .collect(),
        TermKind::ColeDavidson => [0.4, 0.65, 0.9]
            .iter()
            .map(|&b| Term::cole_davidson(1.0, 1.0, b))
            .collect(),
        TermKind::HavriliakNegami => [(0.6, 0.6), (0.85, 0.5), (0.6, 0.9)]
            .iter()
            .map(|&(a, b)| Term::havriliak_negami(1.0, 1.0, a, b))
            .collect(),
        TermKind::Lorentz => [0.25, 0.6, 1.5]
            .iter()
            .map(|&d| Term::lorentz(1.0, 1.0, d))
            .collect(),
    }
}

/// Unit-amplitude candidate terms of one kind: every shape at every grid frequency.
fn candidates(kind: TermKind, f_lo: f64, f_hi: f64) -> Vec<Term> {
    let (a, b) = (
        f_lo.log10() - BEYOND_BAND_DEC,
        f_hi.log10() + BEYOND_BAND_DEC,
    );
    let n = ((b - a) * PER_DECADE).ceil() as usize + 1;
    let freqs: Vec<f64> = (0..n)
        .map(|i| 10f64.powf(a + (b - a) * i as f64 / (n - 1) as f64))
        .collect();
    shapes(kind)
        .into_iter()
        .flat_map(|s| freqs.iter().map(move |&f| Term { f_hz: f, ..s }))
        .collect()
}

/// Inner products of the weighted basis columns with each other and with the data.
struct Gram {
    g: Vec<Vec<f64>>,
    h: Vec<f64>,
    bb: f64,
}

/// Only the entries `pair(i, j)` says can occur together in one model are computed (the
/// others stay 0 and are never read).
fn gram(
    mu: &[C64],
    cols: &[Vec<C64>],
    data_offset: f64,
    pair: &dyn Fn(usize, usize) -> bool,
) -> Gram {
    let w: Vec<f64> = mu.iter().map(|m| 1.0 / m.norm()).collect();
    let b: Vec<C64> = mu
        .iter()
        .zip(&w)
        .map(|(m, w)| (m - data_offset) * w)
        .collect();
    let wc: Vec<Vec<C64>> = cols
        .iter()
        .map(|c| c.iter().zip(&w).map(|(v, w)| v * w).collect())
        .collect();
    // Re⟨a,b⟩ over complex columns = the real inner product of [Re; Im] columns.
    let dot = |a: &[C64], b: &[C64]| {
        a.iter()
            .zip(b)
            .map(|(x, y)| x.re * y.re + x.im * y.im)
            .sum::<f64>()
    };
    let n = wc.len();
    let mut g = vec![vec![0.0; n]; n];
    for i in 0..n {
        for j in 0..=i {
            if i == j || pair(i, j) {
                let v = dot(&wc[i], &wc[j]);
                g[i][j] = v;
                g[j][i] = v;
            }
        }
    }
    let h = wc.iter().map(|c| dot(c, &b)).collect();
    Gram {
        g,
        h,
        bb: dot(&b, &b),
    }
}

/// Most linear unknowns of one screened model (terms and μ∞); larger models are not screened.
const MAX_UNKNOWNS: usize = 5;
/// Points the full grid screen compares on: the candidate columns are smooth in log f, and
/// 100 points over a few decades resolve them.
const GRID_POINTS: usize = 100;
/// Most combinations the full grid screen visits (two terms of any kinds fit well within it).
const MAX_COMBINATIONS: f64 = 50_000.0;

/// Solve the first `n` rows of the small symmetric positive-definite system A·x = b by Cholesky
/// (Golub & Van Loan §4.2); `None` when a pivot falls below 1e-12 of its diagonal entry, i.e.
/// the chosen columns are numerically dependent.
fn solve_small(
    n: usize,
    a: &[[f64; MAX_UNKNOWNS]; MAX_UNKNOWNS],
    b: &[f64; MAX_UNKNOWNS],
) -> Option<[f64; MAX_UNKNOWNS]> {
    let mut l = [[0.0; MAX_UNKNOWNS]; MAX_UNKNOWNS];
    for j in 0..n {
        let d = a[j][j] - (0..j).map(|k| l[j][k] * l[j][k]).sum::<f64>();
        if !(d > 1e-12 * a[j][j]) {
            return None;
        }
        l[j][j] = d.sqrt();
        for i in j + 1..n {
            l[i][j] = (a[i][j] - (0..j).map(|k| l[i][k] * l[j][k]).sum::<f64>()) / l[j][j];
        }
    }
    let mut x = [0.0; MAX_UNKNOWNS];
    for i in 0..n {
        x[i] = (b[i] - (0..i).map(|k| l[i][k] * x[k]).sum::<f64>()) / l[i][i];
    }
    for i in (0..n).rev() {
        x[i] = (x[i] - (i + 1..n).map(|k| l[k][i] * x[k]).sum::<f64>()) / l[i][i];
    }
    x[..n].iter().all(|v| v.is_finite()).then_some(x)
}

/// A screened model and its cost ½Σr² at the linear optimum of its amplitudes.
#[derive(Debug, Clone)]
pub struct Screened {
    pub model: Model,
    pub cost: f64,
}

/// The `keep` lowest-cost models that take term t from `lists[term_list[t]]` (amplitudes of
/// the listed unit terms, and μ∞ when free, solved linearly; all Δμ must come out positive).
/// Terms drawing from the same list take entries in increasing order, so a permutation of
/// identical terms is visited once.
fn screen(
    freq_hz: &[f64],
    mu: &[C64],
    lists: &[Vec<Term>],
    term_list: &[usize],
    mu_inf: f64,
    free_mu_inf: bool,
    keep: usize,
) -> Vec<Screened> {
    if term_list.len() + usize::from(free_mu_inf) > MAX_UNKNOWNS {
        return Vec::new();
    }
    let mut ranges = Vec::new();
    let mut units: Vec<Term> = Vec::new();
    for l in lists {
        ranges.push((units.len(), units.len() + l.len()));
        units.extend_from_slice(l);
    }
    let mut cols: Vec<Vec<C64>> = units
        .iter()
        .map(|t| freq_hz.iter().map(|&f| t.value(f)).collect())
        .collect();
    let constant = cols.len();
    if free_mu_inf {
        cols.push(vec![C64::new(1.0, 0.0); freq_hz.len()]);
    }
    // Which list each column belongs to (the constant: its own), and how many terms use a list:
    // two columns meet in a model only if their lists differ or two terms share the list.
    let mut list_of: Vec<usize> = ranges
        .iter()
        .enumerate()
        .flat_map(|(l, &(a, b))| std::iter::repeat(l).take(b - a))
        .collect();
    list_of.push(usize::MAX);
    let users = |l: usize| term_list.iter().filter(|&&t| t == l).count();
    let pair = |i: usize, j: usize| list_of[i] != list_of[j] || users(list_of[i]) > 1;
    let gm = gram(mu, &cols, if free_mu_inf { 0.0 } else { mu_inf }, &pair);
    let n = term_list.len();
    let term_ranges: Vec<(usize, usize)> = term_list.iter().map(|&l| ranges[l]).collect();
    let mut best: Vec<(Vec<usize>, Vec<f64>, f64)> = Vec::new();
    enumerate(
        &term_ranges,
        term_list,
        0,
        &mut vec![0; n],
        &mut |sel: &[usize]| {
            let mut idx = [constant; MAX_UNKNOWNS];
            idx[..n].copy_from_slice(sel);
            let m = n + usize::from(free_mu_inf);
            let mut a = [[0.0; MAX_UNKNOWNS]; MAX_UNKNOWNS];
            let mut b = [0.0; MAX_UNKNOWNS];
            for i in 0..m {
                b[i] = gm.h[idx[i]];
                for j in 0..m {
                    a[i][j] = gm.g[idx[i]][idx[j]];
                }
            }
            let Some(x) = solve_small(m, &a, &b) else {
                return;
            };
            if x[..n].iter().any(|&v| !(v > 0.0)) {
                return;
            }
            let cost = 0.5 * (gm.bb - (0..m).map(|i| x[i] * b[i]).sum::<f64>());
            if best.len() < keep || cost < best[best.len() - 1].2 {
                let at = best.partition_point(|s| s.2 <= cost);
                best.insert(at, (idx[..m].to_vec(), x[..m].to_vec(), cost));
                best.truncate(keep);
            }
        },
    );
    best.into_iter()
        .map(|(idx, x, cost)| Screened {
            model: Model {
                mu_inf: if free_mu_inf { x[n] } else { mu_inf },
                terms: idx[..n]
                    .iter()
                    .zip(&x)
                    .map(|(&c, &a)| Term {
                        delta_mu: a,
                        ..units[c]
                    })
                    .collect(),
            },
            cost,
        })
        .collect()
}

/// Up to `count` distinct starts for `kinds` on the data, lowest screened cost first. With
/// `free_mu_inf`, μ∞ is one more linear unknown (its column is the constant 1).
pub fn grid_starts(
    freq_hz: &[f64],
    mu: &[C64],
    kinds: &[TermKind],
    mu_inf: f64,
    free_mu_inf: bool,
    count: usize,
) -> Vec<Model> {
    if freq_hz.len() < 2 || kinds.is_empty() || count == 0 {
        return Vec::new();
    }
    let (f_lo, f_hi) = (freq_hz[0], freq_hz[freq_hz.len() - 1]);
    // One candidate list per distinct kind; each term draws from its kind's list.
    let mut distinct: Vec<TermKind> = Vec::new();
    let term_list: Vec<usize> = kinds
        .iter()
        .map(|&k| {
            distinct.iter().position(|&d| d == k).unwrap_or_else(|| {
                distinct.push(k);
                distinct.len() - 1
            })
        })
        .collect();
    let lists: Vec<Vec<Term>> = distinct
        .iter()
        .map(|&k| candidates(k, f_lo, f_hi))
        .collect();
    // The full grid grows as the product of the lists; past a budget the greedy build-up
    // (engine) and the feature starts take over.
    let combos: f64 = term_list.iter().map(|&l| lists[l].len() as f64).product();
    if combos > MAX_COMBINATIONS {
        return Vec::new();
    }
    let (freq_hz, mu) = &thinned(freq_hz, mu, GRID_POINTS);
    let mut out: Vec<Model> = Vec::new();
    for s in screen(
        freq_hz,
        mu,
        &lists,
        &term_list,
        mu_inf,
        free_mu_inf,
        count * 8,
    ) {
        let distinct = |m: &Model| {
            m.terms
                .iter()
                .zip(&s.model.terms)
                .any(|(x, y)| (x.f_hz / y.f_hz).log10().abs() > DISTINCT_DEC)
        };
        if out.iter().all(distinct) {
            out.push(s.model);
        }
        if out.len() == count {
            break;
        }
    }
    out
}

/// The best model made of `fixed`'s terms (shapes and f_r kept, amplitudes re-solved) plus one
/// term of `kind` from the grid: one step of a greedy build-up, in which a small term is looked
/// for only after the large ones are placed exactly.
pub fn best_extension(
    freq_hz: &[f64],
    mu: &[C64],
    fixed: &Model,
    kind: TermKind,
    free_mu_inf: bool,
) -> Option<Screened> {
    if freq_hz.len() < 2 {
        return None;
    }
    let (f_lo, f_hi) = (freq_hz[0], freq_hz[freq_hz.len() - 1]);
    let mut lists: Vec<Vec<Term>> = fixed
        .terms
        .iter()
        .map(|t| {
            vec![Term {
                delta_mu: 1.0,
                ..*t
            }]
        })
        .collect();
    lists.push(candidates(kind, f_lo, f_hi));
    let term_list: Vec<usize> = (0..lists.len()).collect();
    screen(
        freq_hz,
        mu,
        &lists,
        &term_list,
        fixed.mu_inf,
        free_mu_inf,
        1,
    )
    .into_iter()
    .next()
}

/// Call `visit` with every choice of one column per term; terms drawing from the same list
/// take columns in increasing order.
fn enumerate(
    ranges: &[(usize, usize)],
    term_list: &[usize],
    t: usize,
    pick: &mut Vec<usize>,
    visit: &mut dyn FnMut(&[usize]),
) {
    if t == term_list.len() {
        visit(pick);
        return;
    }
    let (lo, hi) = ranges[t];
    let from = (0..t)
        .rev()
        .find(|&s| term_list[s] == term_list[t])
        .map_or(lo, |s| pick[s] + 1);
    for c in from..hi {
        pick[t] = c;
        enumerate(ranges, term_list, t + 1, pick, visit);
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::fit::synthetic::{log_freqs, spectrum};

    /// A small resonance in the tail of a large relaxation (the case that defeats peak
    /// reading): the best screened start lies within one grid step of the truth.
    #[test]
    fn screen_finds_a_small_resonance_beside_a_large_relaxation() {
        let f = log_freqs(161, 1e5, 1e9);
        let truth = Model {
            mu_inf: 1.0,
            terms: vec![Term::debye(970.0, 6.0e6), Term::lorentz(32.0, 1.14e8, 1.26)],
        };
        let s = grid_starts(
            &f,
            &spectrum(&truth, &f),
            &[TermKind::Debye, TermKind::Lorentz],
            1.0,
            false,
            3,
        );
        assert!(!s.is_empty());
        for (got, want) in s[0].terms.iter().zip(&truth.terms) {
            assert!(
                (got.f_hz / want.f_hz).log10().abs() <= 0.5 / PER_DECADE + 1e-9,
                "{got:?} vs {want:?}"
            );
        }
    }

    /// Two identical kinds are visited once per unordered pair.
    #[test]
    fn identical_kinds_are_not_permuted() {
        let mut seen = Vec::new();
        enumerate(
            &[(0, 4), (0, 4)],
            &[0, 0],
            0,
            &mut vec![0; 2],
            &mut |s: &[usize]| seen.push(s.to_vec()),
        );
        assert_eq!(seen.len(), 6);
        assert!(seen.iter().all(|s| s[0] < s[1]));
    }
}
