//! The right-hand side of the kinetics with its photon ledger, and the exact product of its
//! Jacobian with a vector.
//!
//! State vector: the species concentrations (mol/L), then the ledger, all cumulative and in
//! einstein per litre of irradiated solution (multiply by the volume for einstein):
//! photons absorbed by each absorber from each source, absorbed by the background from each
//! source, transmitted from each source, and the photons whose absorption ended in each
//! outcome. The ledger never feeds back into the concentrations.
//!
//! For bin b with photon flux q_b: A_b = l Σ_a ε_ab c_a + A_bg,b; absorber a takes
//! W_ab = q_b g(A_b) l ε_ab c_a einstein/s, the background q_b g(A_b) A_bg,b, and
//! q_b 10^(−A_b) passes through, so the three add up to q_b exactly. An outcome o of absorber a
//! runs at R_o = Σ_b W_ab Y_ob / V (mol L⁻¹ s⁻¹), with Y_ob its yield at that bin.
//!
//! Evaluations reuse buffers held in the struct and never allocate: the small transient
//! collapse, re-solved whenever a quencher concentration has changed, is solved in place into
//! buffers made once by [`Rhs::new`].

use super::Model;
use super::absorption::g_dg_transmitted;
use super::transients::CollapseWork;
use std::cell::{Cell, RefCell};

/// Where each ledger quantity sits in the state vector.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct LedgerLayout {
    /// Number of species (the ledger starts here).
    pub n_species: usize,
    /// Number of light sources.
    pub n_sources: usize,
    /// Number of absorber slots.
    pub n_slots: usize,
    /// Number of outcomes.
    pub n_outcomes: usize,
}

impl LedgerLayout {
    /// Photons absorbed by absorber `slot` from source `s`.
    pub fn absorbed(&self, s: usize, slot: usize) -> usize {
        self.n_species + s * self.n_slots + slot
    }
    /// Photons absorbed by the background from source `s`.
    pub fn background(&self, s: usize) -> usize {
        self.n_species + self.n_sources * self.n_slots + s
    }
    /// Photons transmitted from source `s`.
    pub fn transmitted(&self, s: usize) -> usize {
        self.n_species + self.n_sources * (self.n_slots + 1) + s
    }
    /// Photons whose absorption ended in outcome `o`.
    pub fn outcome(&self, o: usize) -> usize {
        self.n_species + self.n_sources * (self.n_slots + 2) + o
    }
    /// Length of the whole state vector.
    pub fn len(&self) -> usize {
        self.outcome(self.n_outcomes)
    }
    /// True when there is nothing at all (no species).
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }
}

pub(super) struct Work {
    a: Vec<f64>,
    pub(super) g: Vec<f64>,
    pub(super) dg: Vec<f64>,
    da: Vec<f64>,
    /// 10^(−A) per bin.
    pub(super) t: Vec<f64>,
}

/// The right-hand side of one model, with counters of its use.
pub struct Rhs<'m> {
    /// The model.
    pub model: &'m Model,
    /// The state layout.
    pub layout: LedgerLayout,
    pub(super) work: RefCell<Work>,
    /// The collapse last solved, with the quencher concentrations it was solved at.
    pub(super) cache: RefCell<CollapseWork>,
    /// Per outcome and bin, q_b l ε_ab Y_ob (einstein/s per mol/L of the absorber per unit
    /// g): the constant part of each outcome's rate, made once.
    pub(super) outcome_weights: Vec<f64>,
    /// Per absorber slot and bin, q_b l ε_ab: the constant part of each absorber's share.
    pub(super) slot_weights: Vec<f64>,
    /// Number of right-hand-side evaluations.
    pub rhs_calls: Cell<usize>,
    /// Number of Jacobian-vector products.
    pub jac_calls: Cell<usize>,
}

impl<'m> Rhs<'m> {
    /// Prepare the right-hand side of `model`.
    pub fn new(model: &'m Model) -> Self {
        let nb = model.bins.len();
        let layout = LedgerLayout {
            n_species: model.n_species(),
            n_sources: model.sources.len(),
            n_slots: model.absorbers.len(),
            n_outcomes: model.outcomes.len(),
        };
        let mut slot_weights = vec![0.0; model.absorbers.len() * nb];
        for slot in 0..model.absorbers.len() {
            for b in 0..nb {
                slot_weights[slot * nb + b] = model.bins[b].flux * model.path * model.eps[slot * nb + b];
            }
        }
        let mut outcome_weights = vec![0.0; model.outcomes.len() * nb];
        for (o, out) in model.outcomes.iter().enumerate() {
            for b in 0..nb {
                outcome_weights[o * nb + b] = slot_weights[out.slot * nb + b] * out.base[b];
            }
        }
        Rhs {
            model,
            layout,
            work: RefCell::new(Work {
                a: vec![0.0; nb],
                g: vec![0.0; nb],
                dg: vec![0.0; nb],
                da: vec![0.0; nb],
                t: vec![0.0; nb],
            }),
            outcome_weights,
            slot_weights,
            cache: RefCell::new(model.collapse.work()),
            rhs_calls: Cell::new(0),
            jac_calls: Cell::new(0),
        }
    }

    /// The initial state: initial concentrations and an empty ledger.
    pub fn initial_state(&self) -> Vec<f64> {
        let mut y = vec![0.0; self.layout.len()];
        y[..self.model.n_species()].copy_from_slice(&self.model.initial);
        y
    }

    /// Absorbance, g, 10^(−A) and (when `slope`) dg/dA of every bin at concentrations `c`.
    pub(super) fn absorbance(&self, c: &[f64], w: &mut Work, slope: bool) {
        let m = self.model;
        let nb = m.bins.len();
        for b in 0..nb {
            let mut a = m.background[b];
            for (slot, &s) in m.absorbers.iter().enumerate() {
                a += m.path * m.eps[slot * nb + b] * c[s];
            }
            let (g, dg, t) = g_dg_transmitted(a, slope);
            w.a[b] = a;
            w.g[b] = g;
            w.dg[b] = dg;
            w.t[b] = t;
        }
    }

    /// Refresh the transient collapse if the quencher concentrations changed; None when the
    /// network has no transients.
    pub(super) fn collapse<'w>(&self, c: &[f64], cache: &'w mut CollapseWork) -> Option<&'w CollapseWork> {
        let col = &self.model.collapse;
        if col.n == 0 {
            return None;
        }
        col.update(c, cache);
        Some(cache)
    }

    /// dy/dt at state `y` (concentrations then ledger).
    pub fn eval(&self, y: &[f64], dy: &mut [f64]) {
        self.rhs_calls.set(self.rhs_calls.get() + 1);
        let m = self.model;
        let lay = self.layout;
        let ns = m.n_species();
        let nb = m.bins.len();
        let c = &y[..ns];
        dy.iter_mut().for_each(|x| *x = 0.0);
        for r in &m.reactions {
            let mut rate = r.k;
            for &(i, nu) in &r.reactants {
                rate *= c[i].powi(nu as i32);
            }
            for &(i, v) in &r.net {
                dy[i] += v * rate;
            }
        }
        if nb == 0 {
            return;
        }
        let mut wk = self.work.borrow_mut();
        self.absorbance(c, &mut wk, false);
        let v = m.volume;
        let sw = &self.slot_weights;
        for b in 0..nb {
            let bin = m.bins[b];
            let s = bin.source;
            let gb = wk.g[b];
            for (slot, &sp) in m.absorbers.iter().enumerate() {
                dy[lay.absorbed(s, slot)] += sw[slot * nb + b] * gb * c[sp] / v;
            }
            dy[lay.background(s)] += bin.flux * gb * m.background[b] / v;
            dy[lay.transmitted(s)] += bin.flux * wk.t[b] / v;
        }
        let gs = &wk.g;
        let mut cache = self.cache.borrow_mut();
        let collapsed = self.collapse(c, &mut cache);
        for (o, out) in m.outcomes.iter().enumerate() {
            let sp = m.absorbers[out.slot];
            let mult = match (out.via, collapsed) {
                (Some((t, e)), Some(col)) => col.x(t, e),
                (Some(_), None) => 0.0,
                (None, _) => 1.0,
            };
            if mult == 0.0 {
                continue;
            }
            let weights = &self.outcome_weights[o * nb..(o + 1) * nb];
            let taken: f64 = weights.iter().zip(gs).map(|(w, g)| w * g).sum();
            let rate = taken * c[sp] * mult / v; // mol L⁻¹ s⁻¹
            dy[lay.outcome(o)] += rate;
            for &(i, k) in &out.net {
                dy[i] += k * rate;
            }
        }
    }

    /// (∂f/∂y) · `vv` at state `y`, exactly.
    pub fn jac_vec(&self, y: &[f64], vv: &[f64], out: &mut [f64]) {
        self.jac_calls.set(self.jac_calls.get() + 1);
        let m = self.model;
        let lay = self.layout;
        let ns = m.n_species();
        let nb = m.bins.len();
        let c = &y[..ns];
        let dc = &vv[..ns];
        out.iter_mut().for_each(|x| *x = 0.0);
        for r in &m.reactions {
            // d(k Π c^ν) = Σ_j k ν_j c_j^(ν_j−1) Π_{i≠j} c_i^ν_i dc_j
            let mut drate = 0.0;
            for (j, &(sj, nuj)) in r.reactants.iter().enumerate() {
                let mut term = r.k * nuj as f64 * c[sj].powi(nuj as i32 - 1);
                for (i, &(si, nui)) in r.reactants.iter().enumerate() {
                    if i != j {
                        term *= c[si].powi(nui as i32);
                    }
                }
                drate += term * dc[sj];
            }
            for &(i, v) in &r.net {
                out[i] += v * drate;
            }
        }
        if nb == 0 {
            return;
        }
        let mut wk = self.work.borrow_mut();
        self.absorbance(c, &mut wk, true);
        let v = m.volume;
        for b in 0..nb {
            let mut da = 0.0;
            for (slot, &s) in m.absorbers.iter().enumerate() {
                da += m.path * m.eps[slot * nb + b] * dc[s];
            }
            wk.da[b] = da;
        }
        for b in 0..nb {
            let bin = m.bins[b];
            let s = bin.source;
            let (gb, dgb, da) = (wk.g[b], wk.dg[b], wk.da[b]);
            for (slot, &sp) in m.absorbers.iter().enumerate() {
                let w = self.slot_weights[slot * nb + b];
                out[lay.absorbed(s, slot)] += w * (dgb * da * c[sp] + gb * dc[sp]) / v;
            }
            out[lay.background(s)] += bin.flux * dgb * da * m.background[b] / v;
            out[lay.transmitted(s)] += -std::f64::consts::LN_10 * bin.flux * wk.t[b] * da / v;
        }
        let (gs, dgs, das) = (&wk.g, &wk.dg, &wk.da);
        let quenchers = &m.collapse.quenchers;
        let mut cache = self.cache.borrow_mut();
        let collapsed = self.collapse(c, &mut cache);
        for (o, outc) in m.outcomes.iter().enumerate() {
            let sp = m.absorbers[outc.slot];
            let (mult, dmult) = match (outc.via, collapsed) {
                (Some((t, e)), Some(col)) => {
                    let dm: f64 = quenchers
                        .iter()
                        .enumerate()
                        .map(|(qi, &q)| col.dx(qi, t, e) * dc[q])
                        .sum();
                    (col.x(t, e), dm)
                }
                (Some(_), None) => (0.0, 0.0),
                (None, _) => (1.0, 0.0),
            };
            let mut w = 0.0;
            let mut dw = 0.0;
            let weights = &self.outcome_weights[o * nb..(o + 1) * nb];
            for (b, &le) in weights.iter().enumerate() {
                if le == 0.0 {
                    continue;
                }
                w += le * gs[b] * c[sp];
                dw += le * (dgs[b] * das[b] * c[sp] + gs[b] * dc[sp]);
            }
            let drate = (dw * mult + w * dmult) / v;
            out[lay.outcome(o)] += drate;
            for &(i, k) in &outc.net {
                out[i] += k * drate;
            }
        }
    }
}
