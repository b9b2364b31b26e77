//! Concentrations over time (the kinetics run), and how the run was computed.

use super::escape::{esc, inline_svg};
use super::page::{self, figure, num_cell, text_cell};
use super::{CONCENTRATION, Meta, pick_unit};
use crate::kinetics::{Method, Stop};
use crate::model::Model;
use crate::network::Network;
use crate::report::simulation;
use crate::report::timeplot::TimeAxis;
use crate::study::Study;
use crate::units::{format_time, sig};

/// The concentration plot and a table of start and end values.
pub fn section(net: &Network, model: &Model, study: &Study) -> String {
    let tr = &study.kinetics;
    let end = *tr.times.last().unwrap_or(&0.0);
    let mut s = format!(
        "<p>Under the light of the file for {} ({}).</p>\n",
        esc(&format_time(end)),
        esc(&study.until_reason)
    );
    // Sunlight in the file shines at its stated intensity around the clock in this run: say so,
    // so "8.4 d" is not read as eight days with nights.
    if net
        .lights
        .iter()
        .any(|l| matches!(l.kind, crate::light::LightKind::Sun { .. }))
    {
        s.push_str(
            "<p class=\"note\">The sunlight shines at the file's intensity without pause here: no nights and no \
             change over the day. Times are of continuous light; <code>simulate --sun-hours</code> and \
             <code>plan --sun-hours</code> light the sample for part of every 24 h.</p>\n",
        );
    }
    let svg = inline_svg(
        &simulation::concentrations_svg(
            net,
            model,
            tr,
            if study.log_time {
                TimeAxis::Log
            } else {
                TimeAxis::Linear
            },
        ),
        "conc",
    );
    let mut caption = String::from(
        "Concentration of every species against time, each in the colour it has in every plot of this network; \
         a species that dwarfs the rest (a solvent) is drawn in a panel of its own above them.",
    );
    if study.log_time {
        caption.push_str(" Time on a log scale: most of the change happens in the first tenth of the run.");
    }
    s.push_str(&figure(&svg, &caption));
    let last = tr.last();
    // The unit suits the solutes: solvent-like species (1 M or more) would push it to M.
    let max = (0..model.n_species())
        .map(|i| model.initial[i].abs().max(last[i].abs()))
        .filter(|c| *c < 1.0)
        .fold(0.0, f64::max);
    let (f, u) = pick_unit(max, &CONCENTRATION);
    let rows: Vec<String> = (0..model.n_species())
        .map(|i| {
            // round-off within the run's absolute tolerance of zero reads 0
            let (c0, c1) = (model.initial[i], tr.zero_within().shown(last[i]));
            format!(
                "{}{}{}{}",
                text_cell(&model.species[i]),
                num_cell(&sig(c0 / f, 4)),
                num_cell(&sig(c1 / f, 4)),
                num_cell(&sig((c1 - c0) / f, 4))
            )
        })
        .collect();
    let h0 = format!("at the start ({u})");
    let h1 = format!("after {} ({u})", format_time(end));
    let h2 = format!("change ({u})");
    s.push_str(&page::table(
        "Concentrations at the start and at the end of the run",
        &[("species", false), (&h0, true), (&h1, true), (&h2, true)],
        &rows,
    ));
    s.push_str(&page::assumption(
        "mass-action thermal kinetics (IUPAC rate convention) at the file's temperature; transients collapsed \
         exactly into effective quantum yields, re-collapsed as quenchers change; the photon ledger never feeds \
         back into the concentrations.",
    ));
    s
}

/// Integrator, tolerances and work, and where the numbers of each section come from.
pub fn run_section(study: &Study, meta: &Meta) -> String {
    let tr = &study.kinetics;
    let name = |m: Method| match m {
        Method::Dop853 => "Dop853 (explicit Runge–Kutta of order 8)",
        _ if tr.sparse => "BDF with sparse LU",
        _ => "BDF (variable order, exact Jacobian)",
    };
    // One integrator, or each stretch with the one that took it.
    let method = match tr.segments.as_slice() {
        [_, _, ..] => tr
            .segments
            .iter()
            .map(|g| {
                format!(
                    "{} from {} to {}",
                    name(g.method),
                    format_time(g.from),
                    format_time(g.to)
                )
            })
            .collect::<Vec<_>>()
            .join(", then "),
        _ => name(tr.method).to_string(),
    };
    let stop = match tr.stop {
        Stop::EndTime => "the end time".to_string(),
        Stop::Enough(t) => format!("a stop at {}", format_time(t)),
        Stop::Event(t) => format!("a stop condition at {}", format_time(t)),
    };
    let mut s = String::from("<ul>\n");
    s.push_str(&format!(
        "<li>Kinetics: {} — {}; stopped at {}; {} steps ({} rejected), {} right-hand-side evaluations; \
         relative tolerance 1e-6, absolute 1e-12 mol/L.</li>\n",
        esc(&method),
        esc(&tr.method_reason),
        esc(&stop),
        tr.counts.steps,
        tr.counts.rejected,
        tr.counts.rhs
    ));
    s.push_str(
        "<li>Markov chain: the same compiled model, one molecule followed from the initial mixture, light shared as \
         in the well-stirred cell at the initial concentrations (as <code>photoledger ledger</code> does by \
         default)",
    );
    if study.closed.is_some() {
        s.push_str(&format!(
            "; for the closed switch also at the concentrations at the end of the run (as <code>photoledger ledger \
             --at {}</code>)",
            esc(&format_time(study.until))
        ));
    }
    s.push_str(".</li>\n");
    if study.plan.is_some() {
        s.push_str(
            "<li>Plan: time to the target by root finding on the target species in the integrator (relative \
             tolerance 1e-8), light on throughout, as <code>photoledger plan FILE --target</code> does.</li>\n",
        );
    }
    if study.barrier.is_some() {
        s.push_str(
            "<li>Barrier verdicts: Eyring at the network temperature from each step's rate law (as \
             <code>photoledger barrier FILE --window</code>).</li>\n",
        );
    }
    for r in &tr.retries {
        s.push_str(&format!(
            "<li class=\"caution\">The kinetics were {}.</li>\n",
            esc(&r.to_string())
        ));
    }
    for r in &tr.regrowth {
        s.push_str(&format!("<li class=\"caution\">{}.</li>\n", esc(&r.to_string())));
    }
    s.push_str(&format!(
        "<li>Reproduce this page with: <code>{}</code></li>\n</ul>\n",
        esc(&meta.command_line)
    ));
    s
}
