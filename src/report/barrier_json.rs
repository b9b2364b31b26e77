//! `barrier --json`: the machine-readable form of each question `barrier` answers, numbers in
//! SI with each unit in the field's name (`_s`, `_k`, `_j_per_mol`, `_per_s`). An infinite
//! time (a rate of zero) is written `null`.

use crate::barrier::{HotVerdict, KRow, Outcome, StepKind, Verdict};
use crate::report::barrier::HotRow;
use serde_json::{Value, json};

/// A finite number, or `null`.
fn finite(v: f64) -> Value {
    if v.is_finite() { json!(v) } else { Value::Null }
}

/// The thermal window: the largest Eyring barrier crossed with `probability` within `window_s`
/// at `temperature_k`.
pub fn thermal(window_s: f64, temperature_k: f64, probability: f64, kappa: f64, barrier: f64, rate: f64) -> Value {
    json!({
        "question": "thermal window",
        "window_s": window_s,
        "temperature_k": temperature_k,
        "probability": probability,
        "transmission": kappa,
        "barrier_j_per_mol": barrier,
        "rate_constant_per_s": rate,
        "half_life_s": finite(std::f64::consts::LN_2 / rate),
    })
}

/// The hot-molecule window: the largest zero-point-corrected barrier crossed from `energy`.
pub fn hot(
    energy_j_per_mol: f64,
    limit: (&str, f64),
    probability: f64,
    w: &crate::barrier::HotWindow,
    degeneracy: f64,
) -> Value {
    json!({
        "question": "hot molecule window",
        "energy_j_per_mol": energy_j_per_mol,
        "limit": limit.0,
        "limit_time_s": limit.1,
        "probability": probability,
        "barrier_j_per_mol": w.barrier,
        "probability_at_zero_barrier": w.probability_at_zero,
        "rate_at_barrier_per_s": w.rate_at_barrier,
        "degeneracy": degeneracy,
    })
}

/// Yields of competing hot-molecule reactions before cooling.
pub fn hot_channels(rows: &[HotRow], cooled: f64, energy_j_per_mol: f64, cooling_s: f64) -> Value {
    let channels: Vec<Value> = rows
        .iter()
        .map(|r| {
            json!({
                "name": r.name,
                "barrier_j_per_mol": r.barrier,
                "degeneracy": r.degeneracy,
                "rate_at_start_per_s": r.rate_at_start,
                "yield": r.probability,
            })
        })
        .collect();
    json!({
        "question": "hot molecule channels",
        "energy_j_per_mol": energy_j_per_mol,
        "cooling_s": cooling_s,
        "channels": channels,
        "cooled": cooled,
    })
}

/// A k(E) table's summary: where its rows were written.
pub fn k_of_e(barrier_j_per_mol: f64, rows: &[KRow], files: &[String]) -> Value {
    let table: Vec<Value> = rows
        .iter()
        .map(|r| {
            json!({
                "energy_j_per_mol": r.energy,
                "rate_per_s": r.rate,
                "density_per_j_per_mol": r.density,
                "sum_of_states": r.sum,
                "ts_sum_of_states": r.ts_sum,
            })
        })
        .collect();
    json!({
        "question": "k(E) table",
        "barrier_j_per_mol": barrier_j_per_mol,
        "rows": table,
        "files": files,
    })
}

/// The verdict on every step of a network against `window_s`, and its hot channels.
pub fn verdicts(rows: &[Verdict], hot: &[HotVerdict], window_s: f64, probability: f64, temperature_k: f64) -> Value {
    let steps: Vec<Value> = rows
        .iter()
        .map(|v| {
            let kind = match v.kind {
                StepKind::Thermal(n) => format!("thermal, order {n}"),
                StepKind::Channel => "rate channel".into(),
                StepKind::Quenching => "quenching channel".into(),
            };
            let outcome = match v.outcome() {
                Outcome::Crosses => "crosses",
                Outcome::TooSlow => "too slow",
                Outcome::Undetermined => "undetermined",
            };
            json!({
                "name": v.name,
                "kind": kind,
                "barrier_j_per_mol": v.barrier,
                "barrier_given": v.barrier_given,
                "rate_per_s": v.rate,
                "half_life_s": finite(v.half_life),
                "time_needed_s": finite(v.time_needed),
                "factor_of_window": finite(v.factor),
                "outcome": outcome,
                "judged_at_s": v.judged_at.as_ref().map(|j| j.time),
            })
        })
        .collect();
    let hot: Vec<Value> = hot
        .iter()
        .map(|h| {
            json!({
                "name": h.name,
                "barrier_j_per_mol": h.barrier,
                "energy_j_per_mol": h.energy,
                "cooling_s": h.cooling,
                "rate_at_start_per_s": h.rate_at_start,
                "yield": h.fraction,
            })
        })
        .collect();
    json!({
        "question": "network verdicts",
        "window_s": window_s,
        "probability": probability,
        "temperature_k": temperature_k,
        "steps": steps,
        "hot_channels": hot,
    })
}
