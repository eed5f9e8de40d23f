//! Start values by a separable grid search: μ is linear in μ∞ and every Δμ once the frequencies
//! and shapes are fixed (the idea behind variable projection; Golub & Pereyra, SIAM J. Numer.
//! Anal. 10, 413 (1973)). Each term's f_r runs over a log grid around the band and its shape over
//! a few values; for every combination the Δμ follow from a tiny linear least-squares problem
//! whose Gram matrix was computed once, and the few lowest-cost combinations with all Δμ > 0
//! become starts. This finds the basins the feature-based starts can miss (a small resonance in
//! the tail of a large relaxation, overlapping peaks).

use super::dot::dot;
use super::engine::thinned;
use crate::model::{Model, Term, TermKind};
use crate::C64;

/// Grid density of f_r, per decade, and how far beyond the band the grid reaches (decades).
const PER_DECADE: f64 = 8.0;
/// The same for the relaxation kinds, whose loss peaks are a decade or more wide (Debye: 1.14
/// decades at half height, PHYSICS.md §4): half the resonance grid's density places them as
/// well, at a quarter of the pairs to screen.
const RELAXATION_PER_DECADE: f64 = 4.0;
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

fn per_decade(kind: TermKind) -> f64 {
    match kind {
        TermKind::Lorentz => PER_DECADE,
        _ => RELAXATION_PER_DECADE,
    }
}

/// Unit-amplitude candidate terms of one kind: every shape at every grid frequency.
fn candidates(kind: TermKind, f_lo: f64, f_hi: f64) -> Vec<Term> {
    let (a, b) = (
        f_lo.log10() - BEYOND_BAND_DEC,
        f_hi.log10() + BEYOND_BAND_DEC,
    );
    let n = ((b - a) * per_decade(kind)).ceil() as usize + 1;
    let freqs: Vec<f64> = (0..n)
        .map(|i| 10f64.powf(a + (b - a) * i as f64 / (n - 1) as f64))
        .collect();
    shapes(kind)
        .into_iter()
        .flat_map(|s| freqs.iter().map(move |&f| Term { f_hz: f, ..s }))
        .collect()
}

/// Inner products of the weighted basis columns with each other and with the data. The columns
/// come in groups (one per candidate list, and μ∞'s constant); products between two groups
/// are kept as one block, and only for groups that can meet in one model.
struct Gram {
    /// Group and position within it of each column.
    group: Vec<usize>,
    offset: Vec<usize>,
    /// Columns per group.
    len: Vec<usize>,
    /// Block (a, b), a > b or a = b, row-major len[a]×len[b], at a·groups + b; empty if the
    /// groups never meet.
    blocks: Vec<Vec<f64>>,
    diag: Vec<f64>,
    h: Vec<f64>,
    bb: f64,
}

impl Gram {
    fn at(&self, i: usize, j: usize) -> f64 {
        if i == j {
            return self.diag[i];
        }
        let (i, j) = if self.group[i] >= self.group[j] {
            (i, j)
        } else {
            (j, i)
        };
        let (a, b) = (self.group[i], self.group[j]);
        self.blocks[a * self.len.len() + b][self.offset[i] * self.len[b] + self.offset[j]]
    }
}

/// The Gram matrix of the unit terms `units`, grouped by `groups` (ranges of `units`), and,
/// with `constant`, of the column 1 as one more group, under the weights 1/|μ|, against the
/// data less `data_offset`. Products between groups a and b are formed only if `meet(a, b)`
/// (a ≥ b). Columns are real (real parts of all points, then imaginary parts), built by the
/// terms' vectorised loops.
fn gram(
    freq_hz: &[f64],
    mu: &[C64],
    units: &[Term],
    groups: &[(usize, usize)],
    constant: bool,
    data_offset: f64,
    meet: &dyn Fn(usize, usize) -> bool,
) -> Gram {
    let m = freq_hz.len();
    let w: Vec<f64> = mu.iter().map(|v| 1.0 / v.norm()).collect();
    let weighted = |mut col: Vec<f64>| {
        let (re, im) = col.split_at_mut(m);
        for ((r, i), wi) in re.iter_mut().zip(im.iter_mut()).zip(&w) {
            *r *= wi;
            *i *= wi;
        }
        col
    };
    let mut cols: Vec<Vec<f64>> = units
        .iter()
        .map(|t| {
            let mut col = vec![0.0; 2 * m];
            let (re, im) = col.split_at_mut(m);
            t.accumulate_columns(freq_hz, re, im, None);
            weighted(col)
        })
        .collect();
    let mut groups = groups.to_vec();
    if constant {
        groups.push((cols.len(), cols.len() + 1));
        cols.push(weighted([vec![1.0; m], vec![0.0; m]].concat()));
    }
    let b = weighted(
        mu.iter()
            .map(|v| v.re - data_offset)
            .chain(mu.iter().map(|v| v.im))
            .collect(),
    );
    let ng = groups.len();
    let mut group = vec![0; cols.len()];
    let mut offset = vec![0; cols.len()];
    for (g, &(lo, hi)) in groups.iter().enumerate() {
        for c in lo..hi {
            group[c] = g;
            offset[c] = c - lo;
        }
    }
    let mut blocks = vec![Vec::new(); ng * ng];
    for (a, &(alo, ahi)) in groups.iter().enumerate() {
        for (bg, &(blo, bhi)) in groups.iter().enumerate().take(a + 1) {
            if !meet(a, bg) {
                continue;
            }
            let mut block = Vec::with_capacity((ahi - alo) * (bhi - blo));
            for i in alo..ahi {
                block.extend((blo..bhi).map(|j| dot(&cols[i], &cols[j])));
            }
            blocks[a * ng + bg] = block;
        }
    }
    Gram {
        len: groups.iter().map(|(lo, hi)| hi - lo).collect(),
        diag: cols.iter().map(|c| dot(c, c)).collect(),
        h: cols.iter().map(|c| dot(c, &b)).collect(),
        bb: dot(&b, &b),
        group,
        offset,
        blocks,
    }
}

/// Most linear unknowns of one screened model (terms and μ∞); larger models are not screened.
const MAX_UNKNOWNS: usize = 5;
/// Points the full grid screen compares on: the candidate columns are smooth in log f, and
/// 100 points over a few decades resolve them.
const GRID_POINTS: usize = 100;
/// Most combinations the full grid screen visits (two terms of any kinds fit well within it).
const MAX_COMBINATIONS: f64 = 50_000.0;
/// A column whose part outside the span of the columns chosen before it has less than this
/// fraction of its squared norm is treated as dependent on them (Cholesky pivot test, Golub &
/// Van Loan §4.2).
const DEPENDENT: f64 = 1e-12;

/// The Cholesky factorisation of the chosen columns' Gram matrix, grown one column per level of
/// the enumeration: a model that shares its first columns with the previous one reuses their
/// rows, so each visited model costs one new row and a back-substitution.
struct Partial {
    /// Column index of each level.
    idx: [usize; MAX_UNKNOWNS],
    /// Lower factor L, row by row.
    l: [[f64; MAX_UNKNOWNS]; MAX_UNKNOWNS],
    /// L⁻¹·(Aᵀb) of the chosen columns.
    y: [f64; MAX_UNKNOWNS],
}

impl Partial {
    /// Put column `c` at level `t` (levels below t chosen); false if it depends on them.
    fn push(&mut self, gm: &Gram, t: usize, c: usize) -> bool {
        let mut d = gm.at(c, c);
        let mut yt = gm.h[c];
        for k in 0..t {
            let mut v = gm.at(c, self.idx[k]);
            for j in 0..k {
                v -= self.l[t][j] * self.l[k][j];
            }
            let lk = v / self.l[k][k];
            self.l[t][k] = lk;
            d -= lk * lk;
            yt -= lk * self.y[k];
        }
        if !(d > DEPENDENT * gm.at(c, c)) {
            return false;
        }
        let ltt = d.sqrt();
        self.l[t][t] = ltt;
        self.y[t] = yt / ltt;
        self.idx[t] = c;
        true
    }

    /// The cost ½(bᵀb − yᵀy) of the least-squares fit by the first `m` levels.
    fn cost(&self, gm: &Gram, m: usize) -> f64 {
        0.5 * (gm.bb - self.y[..m].iter().map(|v| v * v).sum::<f64>())
    }

    /// The amplitudes of the first `m` levels: Lᵀx = y.
    fn amplitudes(&self, m: usize) -> [f64; MAX_UNKNOWNS] {
        let mut x = [0.0; MAX_UNKNOWNS];
        for i in (0..m).rev() {
            let mut v = self.y[i];
            for k in i + 1..m {
                v -= self.l[k][i] * x[k];
            }
            x[i] = v / self.l[i][i];
        }
        x
    }
}

/// The screen's walk over the combinations: the growing factor and the best models so far
/// (column per level, amplitudes, cost), lowest cost first.
struct Search<'a> {
    gm: &'a Gram,
    partial: Partial,
    /// Level of the first term (1 when μ∞'s column is level 0), and levels in all.
    first: usize,
    m: usize,
    keep: usize,
    best: Vec<([usize; MAX_UNKNOWNS], [f64; MAX_UNKNOWNS], f64)>,
}

impl Visitor for Search<'_> {
    fn push(&mut self, t: usize, c: usize) -> bool {
        self.partial.push(self.gm, self.first + t, c)
    }

    fn leaf(&mut self) {
        let cost = self.partial.cost(self.gm, self.m);
        let best = &mut self.best;
        // Most models lose on cost alone; only those that would be kept are solved.
        if best.len() >= self.keep && best.last().map_or(true, |w| !(cost < w.2)) {
            return;
        }
        let x = self.partial.amplitudes(self.m);
        if x[self.first..self.m].iter().any(|&v| !(v > 0.0)) {
            return;
        }
        let at = best.partition_point(|s| s.2 <= cost);
        best.insert(at, (self.partial.idx, x, cost));
        best.truncate(self.keep);
    }
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
    let n = term_list.len();
    if n + usize::from(free_mu_inf) > MAX_UNKNOWNS {
        return Vec::new();
    }
    let mut ranges = Vec::new();
    let mut units: Vec<Term> = Vec::new();
    for l in lists {
        ranges.push((units.len(), units.len() + l.len()));
        units.extend_from_slice(l);
    }
    let constant = units.len();
    // Two lists meet in a model if they differ or two terms draw from the same list; μ∞'s
    // constant (the group after the lists) meets every list.
    let users = |l: usize| term_list.iter().filter(|&&t| t == l).count();
    let meet = |a: usize, b: usize| a != b || (a < lists.len() && users(a) > 1);
    let offset = if free_mu_inf { 0.0 } else { mu_inf };
    let gm = gram(freq_hz, mu, &units, &ranges, free_mu_inf, offset, &meet);
    // μ∞'s constant column, when free, is level 0 of every model; the terms follow.
    let first = usize::from(free_mu_inf);
    let m = n + first;
    let mut partial = Partial {
        idx: [0; MAX_UNKNOWNS],
        l: [[0.0; MAX_UNKNOWNS]; MAX_UNKNOWNS],
        y: [0.0; MAX_UNKNOWNS],
    };
    if free_mu_inf && !partial.push(&gm, 0, constant) {
        return Vec::new();
    }
    let term_ranges: Vec<(usize, usize)> = term_list.iter().map(|&l| ranges[l]).collect();
    let mut search = Search {
        gm: &gm,
        partial,
        first,
        m,
        keep,
        best: Vec::new(),
    };
    enumerate(&term_ranges, term_list, 0, &mut vec![0; n], &mut search);
    let best = search.best;
    best.into_iter()
        .map(|(idx, x, cost)| Screened {
            model: Model {
                mu_inf: if free_mu_inf { x[0] } else { mu_inf },
                terms: (first..m)
                    .map(|k| Term {
                        delta_mu: x[k],
                        ..units[idx[k]]
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

/// What [`enumerate`] reports to: `push(t, c)` places column c for term t (false: skip it, it
/// cannot be used with the columns before it), `leaf()` sees each complete choice.
trait Visitor {
    fn push(&mut self, t: usize, c: usize) -> bool;
    fn leaf(&mut self);
}

/// Visit every choice of one column per term; terms drawing from the same list take columns in
/// increasing order.
fn enumerate(
    ranges: &[(usize, usize)],
    term_list: &[usize],
    t: usize,
    pick: &mut Vec<usize>,
    visitor: &mut dyn Visitor,
) {
    if t == term_list.len() {
        visitor.leaf();
        return;
    }
    let (lo, hi) = ranges[t];
    let from = (0..t)
        .rev()
        .find(|&s| term_list[s] == term_list[t])
        .map_or(lo, |s| pick[s] + 1);
    for c in from..hi {
        pick[t] = c;
        if visitor.push(t, c) {
            enumerate(ranges, term_list, t + 1, pick, visitor);
        }
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
                (got.f_hz / want.f_hz).log10().abs() <= 0.5 / per_decade(got.kind) + 1e-9,
                "{got:?} vs {want:?}"
            );
        }
    }

    /// Two identical kinds are visited once per unordered pair.
    #[test]
    fn identical_kinds_are_not_permuted() {
        struct Record(Vec<Vec<usize>>, [usize; 2]);
        impl Visitor for Record {
            fn push(&mut self, t: usize, c: usize) -> bool {
                self.1[t] = c;
                true
            }
            fn leaf(&mut self) {
                self.0.push(self.1.to_vec());
            }
        }
        let mut rec = Record(Vec::new(), [0; 2]);
        enumerate(&[(0, 4), (0, 4)], &[0, 0], 0, &mut vec![0; 2], &mut rec);
        let seen = rec.0;
        assert_eq!(seen.len(), 6);
        assert!(seen.iter().all(|s| s[0] < s[1]));
    }
}
