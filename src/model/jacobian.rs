//! The analytic Jacobian ∂f/∂y of the right-hand side ([`super::rhs`]), assembled from the
//! compiled model.
//!
//! The sparsity pattern comes from the model's index arrays when [`Jacobian::new`] is called:
//! a thermal reaction couples its reactants to the species it changes; a light-dependent
//! quantity (an outcome's rate, photons absorbed by an absorber, by the background, or
//! transmitted) depends on every absorber whose ε overlaps its bins (through the shared inner
//! filter), on its own absorber, and on the quenchers of its transients. No Jacobian-vector
//! probing. The diagonal is always in the pattern (the iteration matrix needs it).
//!
//! Values are written directly: thermal entries from the rate laws; the absorber block of every
//! light-dependent row from one product U·E over the photon bins, where U holds each row's
//! weight times dg/dA (or d10^(−A)/dA) per bin and E the absorbance per unit concentration
//! l ε per (bin, absorber); then each row is scattered to the species and ledger rows it feeds.
//! The entries equal what [`Rhs::jac_vec`] gives column by column (checked by
//! `tests/jacobian.rs` on every bundled network and on random networks, and against finite
//! differences).

use super::Model;
use super::rhs::Rhs;
use nalgebra::DMatrix;
use std::cell::{Cell, RefCell};
use std::f64::consts::LN_10;

/// One derivative row (over `cols`) added, times a coefficient, to several state rows.
#[derive(Debug, Clone)]
struct Block {
    /// (state row, coefficient).
    rows: Vec<(usize, f64)>,
    /// State columns, sorted.
    cols: Vec<usize>,
    /// Position in the value array of (rows[r], cols[j]) at `r * cols.len() + j`.
    pos: Vec<usize>,
}

/// What a light-dependent row computes.
#[derive(Debug, Clone, Copy)]
enum Light {
    /// An outcome's rate.
    Outcome(usize),
    /// Photons absorbed by absorber `slot` from source `s`.
    Absorbed { s: usize, slot: usize },
    /// Photons absorbed by the background from source `s`.
    Background(usize),
    /// Photons transmitted from source `s`.
    Transmitted(usize),
}

#[derive(Debug, Clone)]
struct LightRow {
    what: Light,
    block: Block,
    /// (absorber slot, index in `block.cols`) for the absorbers this row depends on.
    slots: Vec<(usize, usize)>,
    /// Index in `block.cols` of the row's own absorber (outcomes and absorbed photons).
    own: Option<usize>,
    /// (quencher index into the collapse, index in `block.cols`) (outcomes via transients).
    quenchers: Vec<(usize, usize)>,
}

struct Work {
    /// Per light row and bin: the row's weight × dg/dA (or d10^(−A)/dA), scaled.
    u: DMatrix<f64>,
    /// U · E: per light row and absorber slot.
    d: DMatrix<f64>,
    /// One derivative row.
    row: Vec<f64>,
}

/// The analytic Jacobian of one model's right-hand side: its pattern (compressed sparse
/// columns over the whole state: concentrations, then the ledger) and how to fill it.
pub struct Jacobian {
    n: usize,
    col_ptr: Vec<usize>,
    row_idx: Vec<usize>,
    thermal: Vec<Block>,
    light: Vec<LightRow>,
    /// l ε per (bin, absorber slot), L/mol.
    e: DMatrix<f64>,
    work: RefCell<Work>,
    /// Number of evaluations.
    pub evaluations: Cell<usize>,
}

impl Jacobian {
    /// The pattern of `model`'s Jacobian and the maps that fill it.
    pub fn new(model: &Model) -> Self {
        let rhs = Rhs::new(model);
        let lay = rhs.layout;
        let n = lay.len();
        let nb = model.bins.len();
        let nslots = model.absorbers.len();
        let eps = |slot: usize, b: usize| model.eps[slot * nb + b];
        // Thermal blocks: unique reactants (a species listed twice counts once, with its
        // coefficients added).
        let mut thermal = Vec::with_capacity(model.reactions.len());
        for r in &model.reactions {
            let mut cols: Vec<usize> = r.reactants.iter().map(|&(s, _)| s).collect();
            cols.sort_unstable();
            cols.dedup();
            thermal.push(Block {
                rows: r.net.clone(),
                cols,
                pos: Vec::new(),
            });
        }
        // Light rows.
        let mut light = Vec::new();
        let source_bins = |s: usize| (0..nb).filter(move |&b| model.bins[b].source == s);
        let overlapping = |bins: &mut dyn Iterator<Item = usize>| -> Vec<bool> {
            let mut hit = vec![false; nslots];
            for b in bins {
                for (a, h) in hit.iter_mut().enumerate() {
                    *h |= eps(a, b) != 0.0;
                }
            }
            hit
        };
        let quencher_cols = &model.collapse.quenchers;
        if nb > 0 {
            for (o, out) in model.outcomes.iter().enumerate() {
                let mut bins = (0..nb).filter(|&b| out.base[b] != 0.0 && eps(out.slot, b) != 0.0);
                let hit = overlapping(&mut bins);
                let mut rows = vec![(lay.outcome(o), 1.0)];
                rows.extend(out.net.iter().copied());
                let q = if out.via.is_some() {
                    quencher_cols.as_slice()
                } else {
                    &[]
                };
                light.push(light_row(Light::Outcome(o), rows, &hit, Some(out.slot), q, model));
            }
            for s in 0..model.sources.len() {
                for slot in 0..nslots {
                    let mut bins = source_bins(s).filter(|&b| eps(slot, b) != 0.0);
                    let hit = overlapping(&mut bins);
                    let rows = vec![(lay.absorbed(s, slot), 1.0)];
                    light.push(light_row(
                        Light::Absorbed { s, slot },
                        rows,
                        &hit,
                        Some(slot),
                        &[],
                        model,
                    ));
                }
                let mut bins = source_bins(s).filter(|&b| model.background[b] != 0.0);
                let hit = overlapping(&mut bins);
                let rows = vec![(lay.background(s), 1.0)];
                light.push(light_row(Light::Background(s), rows, &hit, None, &[], model));
                let hit = overlapping(&mut source_bins(s));
                let rows = vec![(lay.transmitted(s), 1.0)];
                light.push(light_row(Light::Transmitted(s), rows, &hit, None, &[], model));
            }
        }
        // The pattern: every (row, column) of every block, and the diagonal.
        let mut entries: Vec<(usize, usize)> = (0..n).map(|i| (i, i)).collect();
        for b in thermal.iter().chain(light.iter().map(|l| &l.block)) {
            for &(r, _) in &b.rows {
                entries.extend(b.cols.iter().map(|&c| (c, r)));
            }
        }
        entries.sort_unstable();
        entries.dedup();
        let mut col_ptr = vec![0; n + 1];
        for &(c, _) in &entries {
            col_ptr[c + 1] += 1;
        }
        for c in 0..n {
            col_ptr[c + 1] += col_ptr[c];
        }
        let row_idx: Vec<usize> = entries.iter().map(|&(_, r)| r).collect();
        let find = |r: usize, c: usize| {
            let col = &row_idx[col_ptr[c]..col_ptr[c + 1]];
            col_ptr[c] + col.binary_search(&r).expect("every block entry is in the pattern")
        };
        for b in thermal.iter_mut().chain(light.iter_mut().map(|l| &mut l.block)) {
            b.pos = b
                .rows
                .iter()
                .flat_map(|&(r, _)| b.cols.iter().map(move |&c| (r, c)))
                .map(|(r, c)| find(r, c))
                .collect();
        }
        let e = DMatrix::from_fn(nb, nslots, |b, a| model.path * eps(a, b));
        let nl = light.len();
        Jacobian {
            n,
            col_ptr,
            row_idx,
            thermal,
            light,
            e,
            work: RefCell::new(Work {
                u: DMatrix::zeros(nl, nb),
                d: DMatrix::zeros(nl, nslots),
                row: Vec::new(),
            }),
            evaluations: Cell::new(0),
        }
    }

    /// Number of state variables (rows and columns).
    pub fn dim(&self) -> usize {
        self.n
    }

    /// Number of stored entries.
    pub fn nnz(&self) -> usize {
        self.row_idx.len()
    }

    /// Column pointers of the compressed sparse columns (length `dim() + 1`).
    pub fn col_ptr(&self) -> &[usize] {
        &self.col_ptr
    }

    /// Row index of each stored entry, sorted within each column.
    pub fn row_idx(&self) -> &[usize] {
        &self.row_idx
    }

    /// (row, column) of every stored entry, in storage order.
    pub fn entries(&self) -> Vec<(usize, usize)> {
        (0..self.n)
            .flat_map(|c| (self.col_ptr[c]..self.col_ptr[c + 1]).map(move |k| (k, c)))
            .map(|(k, c)| (self.row_idx[k], c))
            .collect()
    }

    /// The Jacobian of `rhs` (the right-hand side of the model this pattern was made for) at
    /// state `y`, written into `values` in storage order (length [`Jacobian::nnz`]).
    pub fn eval(&self, rhs: &Rhs, y: &[f64], values: &mut [f64]) {
        self.evaluations.set(self.evaluations.get() + 1);
        let m = rhs.model;
        let c = &y[..m.n_species()];
        values.iter_mut().for_each(|v| *v = 0.0);
        let mut wk = self.work.borrow_mut();
        let Work { u, d, row } = &mut *wk;
        for (r, blk) in m.reactions.iter().zip(&self.thermal) {
            // d(k Π c^ν)/dc_j for each distinct reactant j.
            row.clear();
            for &sj in &blk.cols {
                let mut term = r.k;
                let mut floored = false;
                for (p, &(si, nu)) in r.reactants.iter().enumerate() {
                    if si != sj {
                        term *= r.seen(p, c[si]).powi(nu as i32);
                    } else if r.autocatalytic[p] && c[si] < 0.0 {
                        floored = true; // an autocatalyst below zero counts as zero: no slope
                    }
                }
                let nuj: u32 = r.reactants.iter().filter(|x| x.0 == sj).map(|x| x.1).sum();
                term *= nuj as f64 * c[sj].powi(nuj as i32 - 1);
                row.push(if floored { 0.0 } else { term });
            }
            scatter(blk, row, values);
        }
        if self.light.is_empty() {
            return;
        }
        let nb = m.bins.len();
        let v = m.volume;
        let mut bw = rhs.work.borrow_mut();
        rhs.absorbance(c, &mut bw, true);
        let (g, dg, t) = (&bw.g, &bw.dg, &bw.t);
        let mut cache = rhs.cache.borrow_mut();
        let collapsed = rhs.collapse(c, &mut cache);
        // Per row: the weights of U (with the row's scale) and the parts outside the absorber
        // block, the latter kept in `extra` as (own, quencher factor).
        let mut extra = Vec::with_capacity(self.light.len());
        for (k, lr) in self.light.iter().enumerate() {
            let mut own = 0.0;
            let mut qf = 0.0;
            match lr.what {
                Light::Outcome(o) => {
                    let out = &m.outcomes[o];
                    let sp = m.absorbers[out.slot];
                    let (mult, via) = match (out.via, collapsed) {
                        (Some((tr, e)), Some(col)) => (col.x(tr, e), Some((tr, e))),
                        (Some(_), None) => (0.0, None),
                        (None, _) => (1.0, None),
                    };
                    // a photo-autocatalyst below zero has no rate (`Rhs::eval`): a zero row
                    let floored = rhs.outcome_forms_absorber[o] && c[sp] < 0.0;
                    let mult = if floored { 0.0 } else { mult };
                    let w = &rhs.outcome_weights[o * nb..(o + 1) * nb];
                    let taken = super::rhs::dot(w, g);
                    let scale = c[sp] * mult / v;
                    for b in 0..nb {
                        u[(k, b)] = w[b] * dg[b] * scale;
                    }
                    own = taken * mult / v;
                    if via.is_some() && !floored {
                        qf = taken * c[sp] / v;
                    }
                }
                Light::Absorbed { s, slot } => {
                    let sp = m.absorbers[slot];
                    let w = &rhs.slot_weights[slot * nb..(slot + 1) * nb];
                    let scale = c[sp] / v;
                    for b in 0..nb {
                        let here = m.bins[b].source == s;
                        u[(k, b)] = if here { w[b] * dg[b] * scale } else { 0.0 };
                        if here {
                            own += w[b] * g[b] / v;
                        }
                    }
                }
                Light::Background(s) => {
                    for b in 0..nb {
                        let bin = m.bins[b];
                        u[(k, b)] = if bin.source == s {
                            bin.flux * dg[b] * m.background[b] / v
                        } else {
                            0.0
                        };
                    }
                }
                Light::Transmitted(s) => {
                    for b in 0..nb {
                        let bin = m.bins[b];
                        u[(k, b)] = if bin.source == s {
                            -LN_10 * bin.flux * t[b] / v
                        } else {
                            0.0
                        };
                    }
                }
            }
            extra.push((own, qf));
        }
        d.gemm(1.0, u, &self.e, 0.0);
        for (k, (lr, &(own, qf))) in self.light.iter().zip(&extra).enumerate() {
            row.clear();
            row.resize(lr.block.cols.len(), 0.0);
            for &(slot, j) in &lr.slots {
                row[j] += d[(k, slot)];
            }
            if let Some(j) = lr.own {
                row[j] += own;
            }
            if let (Light::Outcome(o), Some(col)) = (lr.what, collapsed)
                && let Some((tr, e)) = m.outcomes[o].via
            {
                for &(qi, j) in &lr.quenchers {
                    row[j] += qf * col.dx(qi, tr, e);
                }
            }
            scatter(&lr.block, row, values);
        }
    }

    /// The matrix as dense columns (column-major, `dim()²` values) from `values`.
    pub fn dense(&self, values: &[f64]) -> Vec<f64> {
        let mut out = vec![0.0; self.n * self.n];
        for c in 0..self.n {
            for k in self.col_ptr[c]..self.col_ptr[c + 1] {
                out[c * self.n + self.row_idx[k]] = values[k];
            }
        }
        out
    }
}

/// Add `coef × row` to each of the block's rows.
fn scatter(blk: &Block, row: &[f64], values: &mut [f64]) {
    let nc = blk.cols.len();
    for (ri, &(_, coef)) in blk.rows.iter().enumerate() {
        for (j, &x) in row.iter().enumerate() {
            values[blk.pos[ri * nc + j]] += coef * x;
        }
    }
}

/// A light-dependent row: depends on the absorbers marked in `hit`, on its own absorber
/// `own` and on the `quenchers` (species indices).
fn light_row(
    what: Light,
    rows: Vec<(usize, f64)>,
    hit: &[bool],
    own: Option<usize>,
    quenchers: &[usize],
    model: &Model,
) -> LightRow {
    let mut cols: Vec<usize> = hit
        .iter()
        .enumerate()
        .filter(|x| *x.1)
        .map(|(a, _)| model.absorbers[a])
        .collect();
    cols.extend(own.map(|slot| model.absorbers[slot]));
    cols.extend(quenchers.iter().copied());
    cols.sort_unstable();
    cols.dedup();
    let at = |s: usize| cols.binary_search(&s).expect("column listed");
    let slots = (0..hit.len())
        .filter(|&a| hit[a])
        .map(|a| (a, at(model.absorbers[a])))
        .collect();
    let own_col = own.map(|slot| at(model.absorbers[slot]));
    let q = quenchers.iter().enumerate().map(|(qi, &s)| (qi, at(s))).collect();
    LightRow {
        what,
        block: Block {
            rows,
            cols,
            pos: Vec::new(),
        },
        slots,
        own: own_col,
        quenchers: q,
    }
}
