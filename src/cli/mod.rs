//! The command line: clap definitions, one function per command, errors printed once here.
//!
//! Exit codes: 0 success, 1 invalid input (a network or data file that fails its checks),
//! 2 usage error (bad arguments, unknown --set key), 3 a file could not be read or written,
//! 4 a numerical engine could not finish.

mod actinometer;
mod barrier;
mod bench;
mod check;
mod compare;
mod daylight;
mod diagram;
mod fit;
mod ledger;
mod plan;
mod report;
mod simulate;
mod uncertainty;

use clap::{Parser, Subcommand};
use photoledger::Error;
use std::path::PathBuf;

/// Photochemical reaction networks under light: validate, draw, and account for every photon.
#[derive(Parser, Debug)]
#[command(name = "photoledger", version, about, long_about = None)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

/// Options every command that reads a network shares.
#[derive(clap::Args, Debug)]
struct NetworkArgs {
    /// The network file (TOML).
    file: PathBuf,
    /// Override a value of the file, e.g. --set conditions.temperature="310 K" (repeatable).
    #[arg(long = "set", value_name = "KEY=VALUE")]
    set: Vec<String>,
}

#[derive(Subcommand, Debug)]
enum Command {
    /// Load and validate a network file; print a short summary and any warnings.
    Check {
        #[command(flatten)]
        net: NetworkArgs,
        /// Print only the verdict and the problems.
        #[arg(long, short)]
        quiet: bool,
    },
    /// Time the kinetics on network files and on a generated large network.
    Bench(bench::BenchArgs),
    /// The largest barrier crossed in a time window (thermal or hot molecule), a verdict on every
    /// step of a network, or RRKM k(E) tables.
    Barrier(Box<barrier::BarrierArgs>),
    /// Integrate the kinetics under the network's light and keep the photon ledger.
    Simulate(simulate::SimulateArgs),
    /// Follow one molecule as an absorbing Markov chain: yields, cycles, photons per product.
    Ledger(ledger::LedgerArgs),
    /// Propagate uncertain values ([[uncertain]] entries or a fit's covariance) through the chain
    /// analysis and the kinetics: quantiles, what drives each output, histograms.
    Uncertainty(Box<uncertainty::UncertaintyArgs>),
    /// How long to irradiate to reach a target, with the photons and energy it takes; the light
    /// or flow rate for a given time; days of sunlight; sweeps.
    Plan(Box<plan::PlanArgs>),
    /// Photon flux from actinometry (ferrioxalate, or any photoreaction of a network), as a
    /// [[light]] block for a network file.
    Actinometer(actinometer::ActinometerArgs),
    /// Write one self-contained HTML study report: diagram, kinetics, photon ledger, chain, barriers.
    Report(report::ReportArgs),
    /// Fit free parameters of a network to measured time courses and end points.
    Fit(fit::FitArgs),
    /// Fit rival networks to the same data and rank them by AICc and BIC.
    Compare(compare::CompareArgs),
    /// Draw the network as SVG (species, transients, thermal and photochemical steps).
    Diagram {
        #[command(flatten)]
        net: NetworkArgs,
        /// Where to write the SVG.
        #[arg(short = 'o', long = "out", value_name = "SVG", default_value = "network.svg")]
        out: PathBuf,
        /// Print Graphviz DOT to stdout instead of writing SVG.
        #[arg(long)]
        dot: bool,
    },
}

/// Run the command line; returns the process exit code.
pub fn run() -> i32 {
    let cli = match Cli::try_parse() {
        Ok(c) => c,
        Err(e) => {
            let _ = e.print();
            return if e.use_stderr() { 2 } else { 0 };
        }
    };
    let result = match cli.command {
        Command::Check { net, quiet } => check::run(&net, quiet),
        Command::Diagram { net, out, dot } => diagram::run(&net, &out, dot),
        Command::Simulate(a) => simulate::run(&a),
        Command::Bench(a) => bench::run(&a),
        Command::Barrier(a) => barrier::run(&a),
        Command::Ledger(a) => ledger::run(&a),
        Command::Uncertainty(a) => uncertainty::run(&a),
        Command::Plan(a) => plan::run(&a),
        Command::Actinometer(a) => actinometer::run(&a),
        Command::Report(a) => report::run(&a),
        Command::Fit(a) => fit::run(&a),
        Command::Compare(a) => compare::run(&a),
    };
    match result {
        Ok(()) => 0,
        Err(e) => report_error(&e),
    }
}

/// Print an error once and map it to the exit code.
fn report_error(e: &Error) -> i32 {
    eprintln!("{e}");
    match e {
        Error::Invalid(_) => {
            eprintln!("invalid: see the problems above");
            1
        }
        Error::Usage(_) => 2,
        Error::Io { .. } => 3,
        Error::Numerical(_) => 4,
    }
}

/// Load and validate the network named by `args`.
fn load(args: &NetworkArgs) -> photoledger::Result<photoledger::Network> {
    build(&photoledger::file::load(&args.file)?, args)
}

/// Validate a network file already read, with the `--set` overrides of `args`.
fn build(loaded: &photoledger::file::Loaded, args: &NetworkArgs) -> photoledger::Result<photoledger::Network> {
    let overrides = photoledger::Overrides::parse(&args.set).map_err(Error::Usage)?;
    photoledger::network::build(loaded, &overrides).map_err(|e| match e {
        // An unknown --set key is a usage error, not a broken file.
        Error::Invalid(ds)
            if !ds.is_empty()
                && ds
                    .iter()
                    .all(|d| d.field.starts_with("--set ") || d.severity == photoledger::error::Severity::Warning) =>
        {
            Error::Usage(
                ds.iter()
                    .filter(|d| d.severity == photoledger::error::Severity::Error)
                    .map(|d| d.to_string())
                    .collect::<Vec<_>>()
                    .join("\n"),
            )
        }
        other => other,
    })
}

/// Print warnings to stderr.
fn print_warnings(net: &photoledger::Network) {
    for w in &net.warnings {
        eprintln!("{w}");
    }
}
