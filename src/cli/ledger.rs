//! `photoledger ledger FILE [--from SPECIES] [--json] [--out DIR]`: follow one molecule through
//! the network as an absorbing Markov chain.

use super::output::{noteln, out, outln};
use super::{NetworkArgs, load, print_warnings};
use photoledger::Error;
use photoledger::chain::build::{Light, Settings};
use photoledger::chain::routes::RouteOptions;
use photoledger::chain::{self, ChainOptions, ChainRun, ClosedRun, Followed, Options};
use photoledger::file::folder::Folder;
use photoledger::model::Model;
use photoledger::network::Network;
use photoledger::report::chain_paths::{self as paths, Paths};
use photoledger::report::{chain as report, write_atomic};
use std::path::PathBuf;

/// Options of `ledger`.
#[derive(clap::Args, Debug)]
pub struct LedgerArgs {
    #[command(flatten)]
    pub net: NetworkArgs,
    /// Follow one molecule of this species (default: the initial mixture).
    #[arg(long, value_name = "SPECIES")]
    pub from: Option<String>,
    #[command(flatten)]
    pub output: super::Outputs,
    /// Photon absorption per molecule: "stirred" (its share of the light in the well-stirred
    /// cell at the initial concentrations, or for a network where no molecule ends at the mixture
    /// the kinetics settle to) or "thin" (optically thin, needs irradiated_area).
    #[arg(long, default_value = "stirred")]
    pub light: String,
    /// Take the concentrations (for light sharing, linearised bimolecular steps and quenching)
    /// from a kinetics run of this length instead of the initial ones, e.g. "2 h". A network
    /// where no molecule ends (a photoswitch) takes them where the kinetics settle unless this
    /// is given; "0 s" keeps the starting mixture.
    #[arg(long, value_name = "DURATION", allow_hyphen_values = true)]
    pub at: Option<String>,
    /// Stop the photon-count distribution (and the count of switching cycles) at this many.
    #[arg(long, default_value_t = 200_000, allow_negative_numbers = true)]
    pub max_photons: usize,
    /// Judge the thermal steps of each route for a 50 % chance of crossing within this window,
    /// e.g. "1 h" (as `barrier` does).
    #[arg(long, value_name = "DURATION")]
    pub window: Option<String>,
}

/// Run `ledger`.
pub fn run(a: &LedgerArgs) -> photoledger::Result<()> {
    let net = load(&a.net)?;
    print_warnings(&net);
    let model = Model::compile(&net);
    let light = match a.light.as_str() {
        "stirred" => Light::Stirred,
        "thin" => Light::Thin,
        other => {
            return Err(Error::Usage(format!(
                "--light \"{other}\": write \"stirred\" or \"thin\""
            )));
        }
    };
    // --at "0 s" is the starting mixture (the default of a chain that ends)
    let at = match a.at.as_deref() {
        Some(t) if photoledger::units::parse(t, photoledger::units::Quantity::Time) == Ok(0.0) => Some(0.0),
        other => duration("--at", other)?,
    };
    let window = duration("--window", a.window.as_deref())?;
    let mut opts = ChainOptions {
        settings: Settings {
            light,
            concentrations: None,
        },
        at,
        from: a.from.clone(),
        analysis: Options {
            max_photons: a.max_photons,
            ..Options::default()
        },
        sensitivities: true,
    };
    let mut followed = chain::follow(&model, &net, &opts)?;
    if let (Followed::Closed(_), None, Light::Stirred) = (&followed, at, light) {
        // A molecule that never ends settles as the light lets it; the light is shared by the
        // mixture, which moves while irradiated. Share it at the mixture the kinetics settle
        // to, so the composition is this sample's photostationary state.
        let when = settled(&model)?;
        if when.is_none() {
            noteln!(
                "note: the kinetics do not settle within the automatic horizon, so the light is shared as in the \
                 starting mixture; --at DURATION shares it where the kinetics are by then"
            );
        }
        if let Some(t) = when {
            opts.at = Some(t);
            followed = chain::follow(&model, &net, &opts)?;
            if let Followed::Closed(c) = &mut followed {
                c.light = chain::settled_light_words(t);
            }
        }
    }
    if let Some(t) = at.filter(|&t| t > 0.0) {
        noteln!(
            "note: concentrations taken from the kinetics at {}",
            photoledger::units::format_time(t)
        );
    }
    let run = match followed {
        Followed::Ends(r) => *r,
        Followed::Closed(c) => return closed(a, &net, &c),
    };
    let (ch, an) = (&run.chain, &run.analysis);
    let summary = report::summary(
        &net.about.name,
        ch,
        an,
        &run.start_note,
        &run.light,
        &model.products,
        run.sensitivities.clone(),
    )
    .in_energy_unit(net.energy_unit)
    .with_check(chain::agreement::check(&model, &net, &run, a.from.as_deref())?);
    let mut summary = summary;
    summary.count_intervals = photoledger::uncertainty::counts::intervals(&net, &opts)?;
    let from = a.from.as_deref().and_then(|f| model.species_index(f));
    let (paths, cycles) = ends_paths(&net, &run, from, window, a.max_photons)?;
    summary.paths = Some(paths);
    let json = serde_json::to_string_pretty(&summary).map_err(|e| Error::Numerical(e.to_string()))?;
    let dir = out_dir(a);
    let folder = Folder::begin(&dir)?;
    write_atomic(&folder.join("summary.json"), json.as_bytes())?;
    write_atomic(
        &folder.join("photon_counts.csv"),
        report::distribution_csv(ch, an).as_bytes(),
    )?;
    write_atomic(
        &folder.join("photon_counts.svg"),
        report::histogram_svg(&format!("{}: photons per molecule", net.about.name), an).as_bytes(),
    )?;
    if let Some(c) = &cycles {
        write_atomic(&folder.join("cycle_counts.csv"), paths::cycles_csv(c).as_bytes())?;
    }
    folder.commit()?;
    if a.output.json {
        outln!("{json}")?;
    } else {
        out!("{}", report::text(&summary))?;
        if let Some(c) = &summary.count_intervals {
            out!("{}", photoledger::report::evidence::count_intervals(c))?;
        }
        if let Some(p) = &summary.paths {
            out!("{}", paths::paths_text(p))?;
        }
        outln!(
            "wrote {}/ (summary.json, photon_counts.csv, photon_counts.svg{})",
            dir.display(),
            if cycles.is_some() { ", cycle_counts.csv" } else { "" }
        )?;
    }
    Ok(())
}

/// When the kinetics of `model` settle (every concentration within 1 % of where it ends:
/// `plan::horizon`), None when nothing is consumed or they are still changing at the cap.
fn settled(model: &Model) -> photoledger::Result<Option<f64>> {
    use photoledger::plan::horizon::{Ended, automatic};
    let h = automatic(model, None)?;
    Ok(match h.ended {
        Ended::Steady(_, t) if t > 0.0 => Some(t),
        // The default target (99 % of the limiting reagent) was met before the mixture settled
        // (a switch whose photostationary state lies above 99 %): run on and date the settling.
        Ended::Reached(t) if t > 0.0 => {
            let mut o = photoledger::kinetics::Options::until(20.0 * t);
            o.log_time = true;
            o.outputs = 400;
            let tr = photoledger::kinetics::simulate(model, &o, &mut |_| {})?;
            let s = photoledger::plan::horizon::settled_time(&tr, model.n_species());
            (s > 0.0 && s < 10.0 * t).then_some(s)
        }
        _ => None,
    })
}

/// A duration option, parsed.
fn duration(flag: &str, text: Option<&str>) -> photoledger::Result<Option<f64>> {
    text.map(|d| super::values::duration(flag.trim_start_matches('-'), d))
        .transpose()
}

/// The output folder: `--out`, or the network file's name followed by "-ledger".
fn out_dir(a: &LedgerArgs) -> PathBuf {
    a.output.dir(&a.net.file, "ledger")
}

/// Cycles before the molecule ends, lifetimes and routes of a chain that ends (routes judged
/// against `window` when given); the cycles themselves for their CSV.
fn ends_paths(
    net: &Network,
    run: &ChainRun,
    from: Option<usize>,
    window: Option<f64>,
    max_count: usize,
) -> photoledger::Result<(Paths, Option<chain::cycles::Cycles>)> {
    let (ch, an) = (&run.chain, &run.analysis);
    let lifetimes = chain::lifetimes::lifetimes(ch, net, &an.visits);
    let cycles = match chain::cycles::form(ch, &an.visits, from) {
        Some((f, partners)) => Some(chain::cycles::cycles(
            ch,
            f,
            partners,
            &Options {
                max_photons: max_count,
                ..Options::default()
            },
        )?),
        None => None,
    };
    let ends = chain::routes::routes(ch, &run.start, &an.absorbing, &an.yields, &RouteOptions::default())?;
    let verdicts = match window {
        Some(w) => Some(photoledger::barrier::network_verdicts(
            net,
            w,
            photoledger::study::BARRIER_PROBABILITY,
            None,
        )?),
        None => None,
    };
    let paths = Paths {
        lifetimes: paths::LifetimeView::of(&lifetimes),
        cycles: cycles.as_ref().map(|c| paths::CycleView::of(ch, c)),
        routes: paths::route_views(ch, net, &ends, verdicts.as_deref()),
        window_s: window,
    };
    Ok((paths, cycles))
}

/// `ledger` on a network where no molecule ends: the photostationary state.
fn closed(a: &LedgerArgs, net: &Network, c: &ClosedRun) -> photoledger::Result<()> {
    let summary = paths::closed_run_summary(net, c);
    let json = serde_json::to_string_pretty(&summary).map_err(|e| Error::Numerical(e.to_string()))?;
    let dir = out_dir(a);
    let folder = Folder::begin(&dir)?;
    write_atomic(&folder.join("summary.json"), json.as_bytes())?;
    folder.commit()?;
    if a.output.json {
        outln!("{json}")?;
    } else {
        out!("{}", paths::closed_text(&summary))?;
        outln!("wrote {}/ (summary.json)", dir.display())?;
    }
    Ok(())
}
