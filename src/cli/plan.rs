//! `photoledger plan FILE --target EXPR [--in DURATION] [--flow-tube SPEC] [--sun-hours H]
//! [--sweep KEY=LO..HI:N] [--wall-plug EFF] [--json] [--out DIR]`.

use super::daylight::DaylightArgs;
use super::output::{out, outln};
use super::{Exit, NetworkArgs, print_warnings};
use photoledger::Error;
use photoledger::file::folder::Folder;
use photoledger::model::Model;
use photoledger::plan::{self, PlanOptions, Tube};
use photoledger::report::plan as rp;
use photoledger::report::{simulation, write_atomic};
use photoledger::units::{self, Quantity};

/// Options of `plan`.
#[derive(clap::Args, Debug)]
pub struct PlanArgs {
    #[command(flatten)]
    pub net: NetworkArgs,
    /// What to reach: a species, < or >, and a level with % or a concentration unit, e.g.
    /// "product > 90 %" (yield on the limiting reagent), "product > 90 % of substrate",
    /// "substrate < 10 %" (of its start), "substrate < 10 µM".
    #[arg(long, value_name = "EXPR")]
    pub target: String,
    /// Find the light (a factor on every source of the file) that reaches the target in this time.
    #[arg(long = "in", value_name = "DURATION", allow_hyphen_values = true)]
    pub within: Option<String>,
    /// A tubular flow reactor, e.g. "ID=1 mm, length=2 m": path = inner diameter, volume = the
    /// tube's; gives the flow rate and throughput.
    #[arg(long, value_name = "SPEC")]
    pub flow_tube: Option<String>,
    /// The daily light schedule (--sun-hours; the answer is then given in days) and --sun-scale.
    #[command(flatten)]
    pub daylight: DaylightArgs,
    /// Sweep one value: power=10mW..1W:20, photon_flux=..., wavelength=340nm..420nm:9,
    /// temperature=10°C..60°C:6, concentration.NAME=1mM..100mM:5 (power, photon flux and
    /// concentration log-spaced; wavelength and temperature evenly spaced).
    #[arg(long, value_name = "KEY=LO..HI:N")]
    pub sweep: Option<String>,
    /// Wall-plug efficiency of the lamp (optical out / electrical in), e.g. "30 %" or 0.3:
    /// adds the electrical energy per mole.
    #[arg(long, value_name = "EFFICIENCY", allow_hyphen_values = true)]
    pub wall_plug: Option<String>,
    /// Longest time to integrate before the target is called unreachable.
    #[arg(long, value_name = "DURATION", default_value = "36525 d", allow_hyphen_values = true)]
    pub horizon: String,
    /// Products to compare for selectivity, e.g. "product,degradate" (default: every product
    /// of the network: species named as products, or formed and never consumed).
    #[arg(long, value_name = "NAMES")]
    pub products: Option<String>,
    /// Relative tolerance of the integrator (1e-14 to 0.1).
    #[arg(long, default_value_t = 1e-8, value_parser = super::values::rtol, allow_negative_numbers = true)]
    pub rtol: f64,
    #[command(flatten)]
    pub output: super::Outputs,
}

/// "ID=1 mm, length=2 m" (also "id", "diameter", "inner diameter"; separated by , or ;).
fn parse_tube(spec: &str) -> photoledger::Result<Tube> {
    let usage = |m: String| {
        Error::Usage(format!(
            "--flow-tube \"{spec}\": {m}; write e.g. \"ID=1 mm, length=2 m\""
        ))
    };
    let (mut id, mut len) = (None, None);
    for part in spec.split([',', ';']).map(str::trim).filter(|p| !p.is_empty()) {
        let (k, v) = part
            .split_once('=')
            .ok_or_else(|| usage(format!("\"{part}\" is not KEY=VALUE")))?;
        let v = units::parse(v.trim(), Quantity::Length)
            .map_err(|e| usage(format!("{}: {e}; expected {}", k.trim(), Quantity::Length.accepted())))?;
        if v.is_nan() || v <= 0.0 {
            return Err(usage(format!("{} must be positive", k.trim())));
        }
        match k.trim().to_lowercase().as_str() {
            "id" | "diameter" | "inner diameter" | "inner_diameter" => id = Some(v),
            "length" | "l" => len = Some(v),
            other => return Err(usage(format!("unknown key \"{other}\" (ID, length)"))),
        }
    }
    Ok(Tube {
        inner_diameter: id.ok_or_else(|| usage("no ID".into()))?,
        length: len.ok_or_else(|| usage("no length".into()))?,
    })
}

/// "30 %" or "0.3".
fn parse_fraction(text: &str, what: &str) -> photoledger::Result<f64> {
    let v = photoledger::units::fraction(text).map_err(|e| Error::Usage(format!("{what}: {e}")))?;
    if !(v > 0.0 && v <= 1.0) {
        return Err(Error::Usage(format!(
            "{what} \"{text}\": must be above 0 and at most 100 %"
        )));
    }
    Ok(v)
}

/// The sun sources scaled by `--sun-scale`, and the model put in the flow tube if there is one.
fn adjust_model(m: Model, day: &DaylightArgs, sun_sources: &[usize], tube: Option<&Tube>) -> Model {
    let m = day.scale_sun(m, sun_sources);
    match tube {
        Some(t) => t.apply(&m),
        None => m,
    }
}

/// The code of a sweep: success when some point reaches the target; [`Exit::Unreachable`]
/// when none does (each point that does not is marked in the table and the CSV), unless every
/// point failed to compute, which is [`Exit::Numerical`].
fn sweep_exit(points: &[plan::SweepPoint]) -> Exit {
    if points.iter().any(|p| p.plan.as_ref().is_ok_and(|pl| pl.time.is_some())) {
        Exit::Success
    } else if points.iter().all(|p| p.plan.is_err()) {
        Exit::Numerical
    } else {
        Exit::Unreachable
    }
}

/// Plan; [`Exit::Unreachable`] when the answer is that the target is not reachable (the
/// closest approach and why are printed), with or without `--in`.
pub fn run(a: &PlanArgs) -> photoledger::Result<Exit> {
    let net = super::load(&a.net)?;
    print_warnings(&net);
    let mut model = Model::compile(&net);
    let horizon = super::values::duration("horizon", &a.horizon)?;
    let efficiency = a
        .wall_plug
        .as_deref()
        .map(|w| parse_fraction(w, "--wall-plug"))
        .transpose()?;
    let tube = a.flow_tube.as_deref().map(parse_tube).transpose()?;
    if a.within.is_some() && a.sweep.is_some() {
        return Err(Error::Usage(
            "--in and --sweep answer different questions; give one".into(),
        ));
    }
    let schedule = a.daylight.schedule()?;
    let sun_sources = a.daylight.sun_sources(&net)?;
    let adjust = |m: Model| adjust_model(m, &a.daylight, &sun_sources, tube.as_ref());
    model = adjust_model(model, &a.daylight, &sun_sources, tube.as_ref());
    let target = plan::target::parse(&a.target, &model)?;
    let products = match &a.products {
        None => None,
        Some(list) => Some(
            list.split(',')
                .map(|n| {
                    model.species_index(n.trim()).ok_or_else(|| {
                        Error::Usage(format!(
                            "--products: unknown species \"{}\"; the network has {}",
                            n.trim(),
                            model.species.join(", ")
                        ))
                    })
                })
                .collect::<photoledger::Result<Vec<usize>>>()?,
        ),
    };
    let opts = PlanOptions {
        rtol: a.rtol,
        atol: 1e-15,
        horizon,
        schedule,
        products,
    };
    let dir = a.output.dir(&a.net.file, "plan");
    let name = net.about.name.clone();
    if let Some(sw) = &a.sweep {
        let sw = plan::sweep::parse(sw, &net)?;
        let base = plan::sweep::Base {
            network: &net,
            model: &model,
        };
        let points = plan::sweep::run(&base, &sw, &a.target, &adjust, &opts)?.points;
        let folder = Folder::begin(&dir)?;
        write_atomic(&folder.join("sweep.csv"), rp::sweep_csv(&sw.axis, &points).as_bytes())?;
        write_atomic(
            &folder.join("sweep.svg"),
            rp::sweep_svg(&name, &a.target, &sw.axis, &points).as_bytes(),
        )?;
        let sel = rp::selectivity_svg(&name, &sw.axis, &points);
        if let Some(s) = &sel {
            write_atomic(&folder.join("selectivity.svg"), s.as_bytes())?;
        }
        folder.commit()?;
        if a.output.json {
            let rows: Vec<serde_json::Value> = points
                .iter()
                .map(|p| match &p.plan {
                    Ok(pl) => serde_json::json!({
                        "value": p.value * sw.axis.unit_factor,
                        "time_s": pl.time,
                        "unreachable": pl.unreachable,
                        "products": pl.products,
                    }),
                    Err(e) => serde_json::json!({"value": p.value * sw.axis.unit_factor, "error": e}),
                })
                .collect();
            let units = serde_json::json!({
                "points[].value": sw.axis.unit,
                "points[].time_s": "s",
                "points[].unreachable.final_level": "mol/L",
                "points[].unreachable.best_level": "mol/L",
                "points[].unreachable.best_time": "s",
                "points[].unreachable.horizon": "s",
                "points[].unreachable.consumers[].rate": "mol/(L s)",
                "points[].products[].formed": "mol/L",
                "points[].products[].selectivity": "1",
                "points[].products[].stoichiometric_max": "1",
            });
            let j = serde_json::json!({"network": name, "target": a.target, "swept": sw.axis.label, "points": rows,
                "units": units, "cautions": rp::CAUTIONS});
            outln!(
                "{}",
                serde_json::to_string_pretty(&j).map_err(|e| Error::Numerical(e.to_string()))?
            )?;
        } else {
            outln!("sweep of {} for \"{}\" on {name}", sw.axis.name, a.target)?;
            if let plan::target::Basis::YieldOf {
                reference,
                chosen: true,
                ..
            } = &target.basis
            {
                outln!("(a yield on {reference}, the limiting reagent of the file's mixture, at every point)")?;
            }
            out!("{}", rp::sweep_text(&sw.axis, &points))?;
            outln!(
                "wrote {}/ (sweep.csv, sweep.svg{})",
                dir.display(),
                if sel.is_some() { ", selectivity.svg" } else { "" }
            )?;
            outln!("{}", photoledger::report::caution_line())?;
        }
        return Ok(sweep_exit(&points));
    }
    let (result, power) = match &a.within {
        Some(d) => {
            let d = super::values::duration("in", d)?;
            let ps = match plan::power_for_time(&model, &target, d, &opts)? {
                Ok(ps) => ps,
                Err(no) => {
                    if a.output.json {
                        let j = serde_json::json!({"network": name, "target": a.target, "in_s": d,
                            "reachable": false, "why": no.why, "evaluations": no.evaluations});
                        outln!(
                            "{}",
                            serde_json::to_string_pretty(&j).map_err(|e| Error::Numerical(e.to_string()))?
                        )?;
                    } else {
                        outln!("\"{}\" in {} on {name}: not reachable", a.target, units::format_time(d))?;
                        outln!("  {}", no.why)?;
                        outln!("  (run without --in for the closest approach at the file's light, and why)")?;
                    }
                    return Ok(Exit::Unreachable);
                }
            };
            let sources = (0..model.sources.len())
                .map(|s| {
                    (
                        model.sources[s].clone(),
                        model.source_power(s) * ps.scale,
                        model.source_flux(s) * ps.scale,
                    )
                })
                .collect();
            let ans = rp::PowerAnswer {
                duration: d,
                scale: ps.scale,
                sources,
                evaluations: ps.evaluations,
                tolerance: ps.tolerance,
            };
            (ps.plan, Some(ans))
        }
        None => (plan::time_to_target(&model, &target, &opts)?, None),
    };
    let flow = tube.as_ref().and_then(|t| {
        let f = plan::flow(t, &result, &model)?;
        Some(rp::FlowAnswer {
            tube: *t,
            volume: t.volume_litres(),
            flow_ml_per_min: f.flow_rate * 1000.0 * 60.0,
            throughput_mol_per_h: f.throughput * 3600.0,
            flow: f,
            approximation: rp::FLOW_APPROXIMATION.into(),
        })
    });
    let sun = schedule.map(|s| rp::SunAnswer {
        sun_hours: s.lit / 3600.0,
        scale: a.daylight.sun_scale,
        days: result.time.map(|t| plan::days(&s, t)),
    });
    let summary = rp::summary(&name, &result, a.rtol, efficiency, power, flow, sun);
    let json = serde_json::to_string_pretty(&summary).map_err(|e| Error::Numerical(e.to_string()))?;
    let run_model = match &summary.power {
        Some(p) => model.with_light_scale(p.scale),
        None => model.clone(),
    };
    let folder = Folder::begin(&dir)?;
    write_atomic(&folder.join("summary.json"), json.as_bytes())?;
    write_atomic(
        &folder.join("concentrations.csv"),
        simulation::concentrations_csv(&run_model, &result.trajectory).as_bytes(),
    )?;
    write_atomic(
        &folder.join("concentrations.svg"),
        simulation::plan_svg(&net, &run_model, &result.trajectory, &result.target, result.time).as_bytes(),
    )?;
    folder.commit()?;
    if a.output.json {
        outln!("{json}")?;
    } else {
        out!("{}", rp::text(&summary))?;
        outln!(
            "wrote {}/ (summary.json, concentrations.csv, concentrations.svg)",
            dir.display()
        )?;
    }
    Ok(if result.time.is_some() {
        Exit::Success
    } else {
        Exit::Unreachable
    })
}
