//! `photoledger simulate FILE --until DURATION [--out DIR] [--json]`.

use super::daylight::DaylightArgs;
use super::output::{noteln, out, outln};
use super::{Exit, NetworkArgs, load, print_warnings};
use photoledger::Error;
use photoledger::file::folder::Folder;
use photoledger::kinetics::{self, Method, Options, Stop};
use photoledger::model::Model;
use photoledger::report::timeplot::TimeAxis;
use photoledger::report::{simulation, write_atomic, write_atomic_with};
use photoledger::units::{self, Quantity};
use std::io::IsTerminal;

/// Options of `simulate`.
#[derive(clap::Args, Debug)]
pub struct SimulateArgs {
    #[command(flatten)]
    pub net: NetworkArgs,
    /// How long to irradiate, e.g. "2 h", "30 min", "5 d".
    #[arg(long, allow_hyphen_values = true, value_name = "DURATION")]
    pub until: String,
    #[command(flatten)]
    pub output: super::Outputs,
    /// Integrator: auto, bdf or dop853.
    #[arg(long, default_value = "auto")]
    pub method: String,
    /// Relative tolerance of the integrator (1e-14 to 0.1).
    #[arg(long, default_value_t = 1e-6, value_parser = super::values::rtol, allow_negative_numbers = true)]
    pub rtol: f64,
    /// Absolute tolerance on concentrations, e.g. "1e-12 M".
    #[arg(long, allow_hyphen_values = true, default_value = "1e-12 M")]
    pub atol: String,
    /// Number of output times after the start (2 to 1,000,000); the files hold these and the
    /// start, equally spaced (log-spaced with --log-time): --points 3600 over 1 h gives a row
    /// every second.
    #[arg(long, default_value_t = 200, value_parser = super::values::points, allow_negative_numbers = true)]
    pub points: usize,
    /// Space output times logarithmically (and plot a log time axis).
    #[arg(long)]
    pub log_time: bool,
    /// Stop early when a species crosses a level, e.g. "E-azo < 10 µM" or "product > 5 mM"
    /// (--until is then the longest time to wait).
    #[arg(long, value_name = "CONDITION")]
    pub stop_when: Option<String>,
    /// The daily light schedule (--sun-hours) and --sun-scale, as for `plan`.
    #[command(flatten)]
    pub daylight: DaylightArgs,
}

/// Log-spaced output times drawn when a run is a step at its start.
const PLOT_POINTS: usize = 400;

/// Read "NAME < LEVEL" or "NAME > LEVEL" (the planning target syntax) into an event.
fn parse_stop(text: &str, model: &Model) -> photoledger::Result<kinetics::Event> {
    photoledger::plan::target::parse(text, model)
        .map(|t| t.event())
        .map_err(|e| Error::Usage(format!("--stop-when: {e}")))
}

/// Simulate; [`Exit::Unreachable`] when a `--stop-when` condition is not met within `--until`
/// (the run to `--until` is printed and written all the same).
pub fn run(a: &SimulateArgs) -> photoledger::Result<Exit> {
    let net = load(&a.net)?;
    print_warnings(&net);
    let until = super::values::duration("until", &a.until)?;
    let atol = units::parse(&a.atol, Quantity::Concentration)
        .map_err(|e| Error::Usage(format!("--atol: {e}; expected {}", Quantity::Concentration.accepted())))?;
    let method = match a.method.as_str() {
        "auto" => Method::Auto,
        "bdf" => Method::Bdf,
        "dop853" => Method::Dop853,
        m => return Err(Error::Usage(format!("--method {m}: expected auto, bdf or dop853"))),
    };
    let sun = a.daylight.sun_sources(&net)?;
    let model = a.daylight.scale_sun(Model::compile(&net), &sun);
    let mut opts = Options::until(until);
    opts.schedule = a.daylight.schedule()?;
    opts.method = method;
    opts.rtol = a.rtol;
    opts.atol = atol;
    opts.outputs = a.points.max(2);
    opts.log_time = a.log_time;
    if let Some(c) = &a.stop_when {
        opts.event = Some(parse_stop(c, &model)?);
    }
    let bar = if std::io::stderr().is_terminal() {
        let b = indicatif::ProgressBar::new(1000);
        b.set_style(
            indicatif::ProgressStyle::with_template("{bar:40} {percent:>3}% of the time span  {elapsed}")
                .unwrap_or_else(|_| indicatif::ProgressStyle::default_bar()),
        );
        b
    } else {
        indicatif::ProgressBar::hidden()
    };
    // One integration gives the times asked for and, should the run be a step at its start,
    // the log-spaced times its plot is drawn from (BDF steps on its own and interpolates at
    // every output, so each grid's states are those of a run asking for that grid alone).
    let asked = kinetics::output_times(&opts, 0.0);
    let log_grid = kinetics::output_times(
        &Options {
            log_time: true,
            outputs: PLOT_POINTS,
            times: Vec::new(),
            ..opts.clone()
        },
        0.0,
    );
    let both = Options {
        times: asked.iter().chain(&log_grid).copied().collect(),
        ..opts.clone()
    };
    let all = kinetics::simulate(&model, &both, &mut |f| bar.set_position((f * 1000.0) as u64))?;
    bar.finish_and_clear();
    let tr = all.on_grid(&asked);
    let summary = simulation::summary(&net, &model, &tr, opts.rtol, opts.atol);
    let json = serde_json::to_string_pretty(&summary).map_err(|e| Error::Numerical(e.to_string()))?;
    let dir = a.output.dir(&a.net.file, "simulate");
    let folder = Folder::begin(&dir)?;
    // The time series stream into their files: a million points are never held as text.
    write_atomic_with(&folder.join("concentrations.csv"), |w| {
        simulation::write_concentrations_csv(&model, &tr, w)
    })?;
    write_atomic_with(&folder.join("photons.csv"), |w| {
        simulation::write_photons_csv(&model, &tr, w)
    })?;
    write_atomic(&folder.join("summary.json"), json.as_bytes())?;
    // A run that is a step at its start is plotted on a log time axis, from the log-spaced
    // output times of the same run (the files keep the times asked for; `timeplot`).
    let axis = TimeAxis::choose(a.log_time, &tr.times, &tr.states, model.n_species());
    let stepped = (axis == TimeAxis::Automatic).then(|| all.on_grid(&log_grid));
    let shown = stepped.as_ref().unwrap_or(&tr);
    write_atomic(
        &folder.join("concentrations.svg"),
        simulation::concentrations_svg(&net, &model, shown, axis).as_bytes(),
    )?;
    // Photons add up steadily under a steady lamp: a concentration step at the start says
    // nothing about them, so their plot keeps a linear time axis unless a log one was asked for.
    let (photon_run, photon_axis) = match axis {
        TimeAxis::Automatic => (&tr, TimeAxis::Linear),
        _ => (shown, axis),
    };
    write_atomic(
        &folder.join("photons.svg"),
        simulation::photons_svg(&net, &model, photon_run, photon_axis).as_bytes(),
    )?;
    folder.commit()?;
    // Warnings about the run come before its results, like the network's.
    for r in &tr.retries {
        noteln!("note: the kinetics were {r}");
    }
    for r in &tr.regrowth {
        noteln!("note: {r}");
    }
    // A stop condition is a target: not met by --until is the answer "not reached" (exit 5).
    let missed = a.stop_when.as_deref().filter(|_| matches!(tr.stop, Stop::EndTime));
    if a.output.json {
        outln!("{json}")?;
    } else {
        out!("{}", photoledger::report::summary::run_summary(&summary))?;
        if let Some(c) = missed {
            outln!(
                "NOT REACHED: the stop condition \"{c}\" was not met within --until {} (exit 5)",
                units::format_time(until)
            )?;
        }
        outln!(
            "wrote {}/ (concentrations.csv, photons.csv, summary.json, concentrations.svg, photons.svg)",
            dir.display()
        )?;
    }
    Ok(if missed.is_some() {
        Exit::Unreachable
    } else {
        Exit::Success
    })
}
