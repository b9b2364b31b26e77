//! The command line: clap definitions, one function per command, errors printed once here
//! (each begins "error:" and goes to standard error), exit codes from one table, [`Exit`].
//! Every command prints through [`output`] (a closed standard output ends printing quietly).

mod actinometer;
mod barrier;
mod bench;
mod check;
mod compare;
mod daylight;
mod diagram;
mod fit;
mod ledger;
mod levels;
mod output;
mod plan;
mod report;
mod simulate;
mod uncertainty;
mod values;

use clap::{Parser, Subcommand};
use output::noteln;
use photoledger::Error;
use std::path::{Path, PathBuf};

/// Photochemical reaction networks under light: validate, draw, and account for every photon.
#[derive(Parser, Debug)]
#[command(name = "photoledger", version, about, long_about = None)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

/// `--set`, one definition for every command that reads a network.
#[derive(clap::Args, Debug, Clone, Default)]
pub struct SetArgs {
    /// Override a value of the network file, e.g. --set conditions.temperature="310 K"
    /// (repeatable; the keys `check` lists under "settable values").
    #[arg(long = "set", value_name = "KEY=VALUE")]
    pub values: Vec<String>,
}

/// Options every command that reads one network shares.
#[derive(clap::Args, Debug)]
pub struct NetworkArgs {
    /// The network file (TOML).
    pub file: PathBuf,
    #[command(flatten)]
    pub set: SetArgs,
}

impl NetworkArgs {
    /// `file` with the overrides `set`.
    pub fn of(file: &Path, set: &SetArgs) -> Self {
        NetworkArgs {
            file: file.to_path_buf(),
            set: set.clone(),
        }
    }
}

/// `--out DIR` and `--json`: one definition for every command that writes an output folder.
#[derive(clap::Args, Debug, Clone)]
pub struct Outputs {
    /// Output folder (default: the input file's name followed by the command, e.g.
    /// photoswitch-simulate/ for `simulate networks/photoswitch.toml`).
    #[arg(long, value_name = "DIR")]
    pub out: Option<PathBuf>,
    /// Print the machine-readable summary the output folder holds (JSON; numbers in SI, each
    /// unit named) instead of the text.
    #[arg(long)]
    pub json: bool,
}

impl Outputs {
    /// The output folder: `--out`, or [`default_dir`] of `input` and `command`.
    pub fn dir(&self, input: &Path, command: &str) -> PathBuf {
        self.out.clone().unwrap_or_else(|| default_dir(input, command))
    }
}

/// The name of an input file without folder or extension ("photoswitch" for
/// networks/photoswitch.toml).
pub fn stem(input: &Path) -> String {
    input
        .file_stem()
        .map(|s| s.to_string_lossy().to_string())
        .filter(|s| !s.is_empty())
        .unwrap_or_else(|| "network".into())
}

/// The one default output folder: `<input file stem>-<command>` in the current folder.
pub fn default_dir(input: &Path, command: &str) -> PathBuf {
    PathBuf::from(format!("{}-{command}", stem(input)))
}

/// The default of a single output file (`-o`): `<input file stem>-<command>.<extension>`.
pub fn default_file(input: &Path, command: &str, extension: &str) -> PathBuf {
    PathBuf::from(format!("{}-{command}.{extension}", stem(input)))
}

/// Print `value` as pretty JSON on standard output.
pub fn print_json(value: &impl serde::Serialize) -> photoledger::Result<()> {
    let text = serde_json::to_string_pretty(value).map_err(|e| Error::Numerical(e.to_string()))?;
    output::outln!("{text}")
}

#[derive(Subcommand, Debug)]
enum Command {
    /// Load and validate a network file; print a short summary and any warnings.
    Check(check::CheckArgs),
    /// Time the kinetics on network files and on a generated large network.
    Bench(bench::BenchArgs),
    /// The largest barrier crossed in a time window (thermal or hot molecule), a verdict on every
    /// step of a network, or RRKM k(E) tables.
    Barrier(Box<barrier::BarrierArgs>),
    /// Integrate the kinetics under the network's light and keep the photon ledger.
    Simulate(simulate::SimulateArgs),
    /// Follow one molecule as an absorbing Markov chain: yields, cycles, photons per product.
    Ledger(ledger::LedgerArgs),
    /// Run the network under each of its labelled sets of values ([[level]]: methods or levels
    /// of theory) and put yields, photons per product, lifetimes and times side by side; score
    /// each set against data.
    Levels(Box<levels::LevelsArgs>),
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
    Diagram(diagram::DiagramArgs),
}

/// The exit code of every command: the one table. README's "Exit codes" table mirrors
/// [`Exit::TABLE`] word for word (a test in this module checks it).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Exit {
    /// The command did what was asked.
    Success = 0,
    /// Invalid input: a network or data file fails its checks, or the network cannot answer
    /// the question asked (`ledger` on a network with no end).
    Invalid = 1,
    /// Usage error: bad arguments or options, an unknown `--set` key.
    Usage = 2,
    /// A file could not be read or written (standard output included, except a closed pipe).
    File = 3,
    /// A numerical engine could not finish.
    Numerical = 4,
    /// Answered: the target is not reached: `plan` (with or without `--in`), `report --target`,
    /// `simulate --stop-when` (not met by `--until`), `plan --sweep` (no point reaches it),
    /// `uncertainty --target` (no sample reaches it).
    Unreachable = 5,
    /// Stopped at a limit (evaluations or time) before converging; the best point is reported.
    /// `fit`, `compare` and `levels --free` at `--max-evaluations` or `--time-limit`.
    StoppedAtLimit = 6,
}

impl Exit {
    /// Every code with its meaning, as README's table lists them.
    #[cfg_attr(not(test), allow(dead_code))]
    pub const TABLE: [(Exit, &'static str); 7] = [
        (
            Exit::Success,
            "success (also when standard output is closed early, as by `| head`)",
        ),
        (
            Exit::Invalid,
            "invalid input: a network or data file fails its checks (every problem listed with file, line, column, field, what was found and what is accepted), or the network cannot answer the question (`ledger` on a network where some molecules of the start can end and others can never)",
        ),
        (
            Exit::Usage,
            "usage error: bad arguments or options, an unknown `--set` key",
        ),
        (Exit::File, "a file could not be read or written"),
        (Exit::Numerical, "a numerical engine could not finish"),
        (
            Exit::Unreachable,
            "answered: the target is not reachable, with the closest approach printed and the files written: `plan` (with or without `--in`), `report --target`, `simulate --stop-when` (not met within `--until`), `plan --sweep` (no point of the sweep reaches it; each point that does not is marked), `uncertainty --target` (no sample reaches it)",
        ),
        (
            Exit::StoppedAtLimit,
            "stopped at a limit (`fit`, `compare`, `levels --free`: `--max-evaluations` or `--time-limit`) before converging; the best point found is reported and written, marked not converged",
        ),
    ];

    /// The process exit code.
    pub fn code(self) -> i32 {
        self as i32
    }
}

/// Run the command line; returns the process exit code.
pub fn run() -> i32 {
    let cli = match Cli::try_parse() {
        Ok(c) => c,
        Err(e) => {
            // clap's own messages begin "error:"; --help and --version print to stdout.
            let _ = e.print();
            return if e.use_stderr() { Exit::Usage } else { Exit::Success }.code();
        }
    };
    // SIGINT or SIGTERM: remove the temporary folder of an output not yet moved into place (the
    // old folder stays as it was), then end as a shell reports an interrupt (128 + SIGINT).
    let _ = ctrlc::set_handler(|| {
        photoledger::file::folder::remove_unfinished_then(|| std::process::exit(130));
    });
    let result = match cli.command {
        Command::Check(a) => check::run(&a),
        Command::Diagram(a) => diagram::run(&a),
        Command::Simulate(a) => return exit_of(simulate::run(&a)),
        Command::Bench(a) => bench::run(&a),
        Command::Barrier(a) => barrier::run(&a),
        Command::Ledger(a) => ledger::run(&a),
        Command::Levels(a) => return exit_of(levels::run(&a)),
        Command::Uncertainty(a) => return exit_of(uncertainty::run(&a)),
        Command::Plan(a) => return exit_of(plan::run(&a)),
        Command::Actinometer(a) => actinometer::run(&a),
        Command::Report(a) => return exit_of(report::run(&a)),
        Command::Fit(a) => return exit_of(fit::run(&a)),
        Command::Compare(a) => return exit_of(compare::run(&a)),
    };
    exit_of(result.map(|()| Exit::Success))
}

/// The exit code of a command's result, printing its error once.
fn exit_of(result: photoledger::Result<Exit>) -> i32 {
    match result {
        Ok(code) => code.code(),
        Err(e) => report_error(&e).code(),
    }
}

/// Print an error once, beginning "error:", and map it to the exit code.
fn report_error(e: &Error) -> Exit {
    let text = e.to_string();
    // Diagnostics begin "error:" themselves; the other errors carry only their message.
    if text.starts_with("error:") {
        noteln!("{text}");
    } else {
        noteln!("error: {text}");
    }
    match e {
        Error::Invalid(_) => {
            noteln!("invalid: see the problems above");
            Exit::Invalid
        }
        Error::Usage(_) => Exit::Usage,
        Error::Io { .. } => Exit::File,
        Error::Numerical(_) | Error::Unphysical(_) => Exit::Numerical,
    }
}

/// Load and validate the network named by `args`.
fn load(args: &NetworkArgs) -> photoledger::Result<photoledger::Network> {
    Ok(load_both(args)?.1)
}

/// The file as read and the network built from it; a file with structural problems (a
/// misspelt key, a number without its unit) reports them all together with what validation
/// finds in the rest of the file.
fn load_both(args: &NetworkArgs) -> photoledger::Result<(photoledger::file::Loaded, photoledger::Network)> {
    let text = photoledger::file::read_text(&args.file)?;
    let (loaded, problems) = photoledger::file::parse_all(&args.file, text);
    photoledger::network::build_reporting_all(loaded, problems, &|l| build(l, args))
}

/// Validate a network file already read, with the `--set` overrides of `args`.
fn build(loaded: &photoledger::file::Loaded, args: &NetworkArgs) -> photoledger::Result<photoledger::Network> {
    let overrides = photoledger::Overrides::parse(&args.set.values).map_err(Error::Usage)?;
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
        noteln!("{w}");
    }
}

#[cfg(test)]
mod tests {
    use super::Exit;

    /// README's exit-code table is [`Exit::TABLE`], row for row (a `|` in a cell written `\|`).
    #[test]
    fn readme_exit_code_table_mirrors_the_enum() {
        let readme = std::fs::read_to_string(concat!(env!("CARGO_MANIFEST_DIR"), "/README.md")).unwrap();
        let lines: Vec<&str> = readme.lines().collect();
        let head = lines
            .iter()
            .position(|l| *l == "| code | meaning |")
            .expect("README has the exit-code table");
        let rows: Vec<&str> = lines[head + 2..]
            .iter()
            .take_while(|l| l.starts_with('|'))
            .copied()
            .collect();
        let want: Vec<String> = Exit::TABLE
            .iter()
            .map(|(c, m)| format!("| {} | {} |", c.code(), m.replace('|', "\\|")))
            .collect();
        assert_eq!(rows, want);
        // Codes are distinct and in order.
        for (i, (c, _)) in Exit::TABLE.iter().enumerate() {
            assert_eq!(c.code(), i as i32);
        }
    }
}
