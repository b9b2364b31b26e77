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
use super::flat_thermal::FlatThermal;
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
    /// The thermal reactions in flat arrays (what `eval` walks).
    pub(super) thermal: FlatThermal,
    /// Runs of consecutive bins from one source: (source, bin range).
    pub(super) source_runs: Vec<(usize, std::ops::Range<usize>)>,
    /// For each photochemical outcome: true when it forms more of its own absorber than it
    /// uses (a photo-autocatalyst), whose value below zero then counts as zero in its rate,
    /// as [`super::Reaction::seen`] does for a thermal step.
    pub(super) outcome_forms_absorber: Vec<bool>,
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
        let mut source_runs: Vec<(usize, std::ops::Range<usize>)> = Vec::new();
        for (b, bin) in model.bins.iter().enumerate() {
            match source_runs.last_mut() {
                Some((s, r)) if *s == bin.source => r.end = b + 1,
                _ => source_runs.push((bin.source, b..b + 1)),
            }
        }
        let outcome_forms_absorber = model
            .outcomes
            .iter()
            .map(|o| o.net.iter().any(|&(i, v)| i == model.absorbers[o.slot] && v > 0.0))
            .collect();
        Rhs {
            model,
            layout,
            source_runs,
            outcome_forms_absorber,
            thermal: FlatThermal::new(&model.reactions, model.n_species()),
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
        // Absorber by absorber over contiguous bins; each bin's sum is taken in the same
        // order (background, then the absorbers in slot order) as a bin-by-bin loop would.
        w.a.copy_from_slice(&m.background);
        for (slot, &s) in m.absorbers.iter().enumerate() {
            let cs = c[s];
            let eps = &m.eps[slot * nb..(slot + 1) * nb];
            for (a, &e) in w.a.iter_mut().zip(eps) {
                *a += m.path * e * cs;
            }
        }
        for b in 0..nb {
            let (g, dg, t) = g_dg_transmitted(w.a[b], slope);
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
        self.thermal.add_rates(c, dy);
        if nb == 0 {
            return;
        }
        let mut wk = self.work.borrow_mut();
        self.absorbance(c, &mut wk, false);
        let v = m.volume;
        let sw = &self.slot_weights;
        for (slot, &sp) in m.absorbers.iter().enumerate() {
            let cs = c[sp];
            for &(s, ref bins) in &self.source_runs {
                let taken = dot(&sw[slot * nb + bins.start..slot * nb + bins.end], &wk.g[bins.clone()]);
                dy[lay.absorbed(s, slot)] += taken * cs / v;
            }
        }
        for b in 0..nb {
            let bin = m.bins[b];
            let s = bin.source;
            dy[lay.background(s)] += bin.flux * wk.g[b] * m.background[b] / v;
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
            if self.outcome_forms_absorber[o] && c[sp] < 0.0 {
                continue; // a photo-autocatalyst below zero: no rate (the absorbed count stays)
            }
            let taken = dot(&self.outcome_weights[o * nb..(o + 1) * nb], gs);
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
                if r.autocatalytic[j] && c[sj] < 0.0 {
                    continue; // an autocatalyst below zero: counted as zero, no slope
                }
                let mut term = r.k * nuj as f64 * c[sj].powi(nuj as i32 - 1);
                for (i, &(si, nui)) in r.reactants.iter().enumerate() {
                    if i != j {
                        term *= r.seen(i, c[si]).powi(nui as i32);
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
            if self.outcome_forms_absorber[o] && c[sp] < 0.0 {
                continue; // floored at zero: no rate, no slope
            }
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

/// Σ aᵢ bᵢ over the shorter of the two, in four interleaved partial sums (so the compiler
/// can keep several additions in flight; the order is fixed, so results are reproducible).
pub(super) fn dot(a: &[f64], b: &[f64]) -> f64 {
    let n = a.len().min(b.len());
    let (a, b) = (&a[..n], &b[..n]);
    let mut acc = [0.0f64; 4];
    let (ca, cb) = (a.chunks_exact(4), b.chunks_exact(4));
    let (ra, rb) = (ca.remainder(), cb.remainder());
    for (x, y) in ca.zip(cb) {
        for k in 0..4 {
            acc[k] += x[k] * y[k];
        }
    }
    let mut tail = 0.0;
    for (x, y) in ra.iter().zip(rb) {
        tail += x * y;
    }
    (acc[0] + acc[1]) + (acc[2] + acc[3]) + tail
}

#[cfg(test)]
mod tests {
    use super::dot;

    #[test]
    fn dot_equals_the_plain_sum_for_every_length_and_tail() {
        for n in 0..11 {
            let a: Vec<f64> = (0..n).map(|i| 1.0 + i as f64 * 0.5).collect();
            let b: Vec<f64> = (0..n + 2).map(|i| 2.0 - i as f64 * 0.25).collect();
            let plain: f64 = a.iter().zip(&b).map(|(x, y)| x * y).sum();
            assert!((dot(&a, &b) - plain).abs() <= 1e-14 * plain.abs().max(1.0), "n = {n}");
        }
    }
}
