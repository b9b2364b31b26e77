//! `photoledger fit FILE --data DATA... [--free KEYS] [--set KEY=VALUE] [--out DIR] [--json] [--starts N] [--seed S] [--scale-errors]
//! [--max-evaluations N] [--time-limit TIME]`.

use super::Exit;
use super::output::{noteln, out, outln};
use photoledger::Error;
use photoledger::file::data::{self, Experiment};
use photoledger::file::folder::Folder;
use photoledger::fit::mechanism::{DEFAULT_MAX_EVALUATIONS, FitOptions, Progress};
use photoledger::fit::run;
use photoledger::report::{fit as rf, write_atomic};
use photoledger::units::{self, Quantity};
use std::path::{Path, PathBuf};

/// Options of `fit`.
#[derive(clap::Args, Debug)]
pub struct FitArgs {
    #[command(flatten)]
    pub net: super::NetworkArgs,
    /// Data: time-course CSV files, or experiments TOML files tying data to conditions (repeatable).
    #[arg(long, required = true, num_args = 1.., value_name = "FILE")]
    pub data: Vec<PathBuf>,
    /// Free parameters as --set keys, comma-separated or repeated (default: the file's [fit] free list).
    #[arg(long, value_delimiter = ',', value_name = "KEYS")]
    pub free: Vec<String>,
    #[command(flatten)]
    pub output: super::Outputs,
    /// Number of starts: the file's values, then seeded random starts around them.
    #[arg(long, default_value_t = 1, allow_negative_numbers = true)]
    pub starts: usize,
    /// Seed of the random starts.
    #[arg(long, default_value_t = 1, allow_negative_numbers = true)]
    pub seed: u64,
    #[command(flatten)]
    pub limits: Limits,
}

/// When a search gives up, how it finds its slopes and how it scales its standard errors:
/// shared by `fit`, `compare` and `levels`.
#[derive(clap::Args, Debug, Clone)]
pub struct Limits {
    /// Scale the standard errors by the reduced χ² even when every observation has an sd
    /// (by default given sd are taken as known).
    #[arg(long)]
    pub scale_errors: bool,
    /// Stop after this many model evaluations over all starts (each integrates every experiment
    /// once); the best point so far is reported as not converged.
    #[arg(long, default_value_t = DEFAULT_MAX_EVALUATIONS, value_name = "N")]
    pub max_evaluations: usize,
    /// Stop after this much wall-clock time, e.g. "10 min" (default: no limit); the best point
    /// so far is reported as not converged.
    #[arg(long, value_name = "TIME")]
    pub time_limit: Option<String>,
    /// How the search finds its Jacobian: "sensitivities" (default: forward sensitivities of
    /// the kinetics, one integration per experiment and evaluation) or "differences" (central
    /// differences, two integrations per experiment and free parameter).
    #[arg(long, default_value = "sensitivities", value_name = "HOW")]
    pub derivatives: String,
}

impl Limits {
    /// `opts` with these limits.
    pub fn apply(&self, opts: FitOptions) -> photoledger::Result<FitOptions> {
        if self.max_evaluations == 0 {
            return Err(Error::Usage("--max-evaluations must be at least 1".into()));
        }
        let time_limit = match &self.time_limit {
            None => None,
            Some(text) => {
                let t = units::parse(text, Quantity::Time)
                    .map_err(|e| Error::Usage(format!("--time-limit: {e}; expected {}", Quantity::Time.accepted())))?;
                if !(t > 0.0 && t.is_finite()) {
                    return Err(Error::Usage(format!(
                        "--time-limit \"{text}\": the time must be positive"
                    )));
                }
                Some(std::time::Duration::from_secs_f64(t))
            }
        };
        let derivatives = photoledger::fit::mechanism::Derivatives::parse(&self.derivatives).map_err(Error::Usage)?;
        Ok(FitOptions {
            max_evaluations: self.max_evaluations,
            scale_errors: self.scale_errors,
            time_limit,
            derivatives,
            ..opts
        })
    }
}

/// Read every data argument.
pub fn read_data(paths: &[PathBuf]) -> photoledger::Result<Vec<Experiment>> {
    let mut all = Vec::new();
    for p in paths {
        all.extend(data::read(p)?);
    }
    Ok(all)
}

/// A progress bar of model evaluations against the cap on stderr, hidden when stderr is not a
/// terminal.
pub fn bar(cap: usize, what: &str) -> indicatif::ProgressBar {
    use std::io::IsTerminal;
    if !std::io::stderr().is_terminal() {
        return indicatif::ProgressBar::hidden();
    }
    let b = indicatif::ProgressBar::new(cap as u64);
    if let Ok(s) =
        indicatif::ProgressStyle::with_template("{prefix} [{bar:30}] {pos}/{len} evaluations, {elapsed} {msg}")
    {
        b.set_style(s);
    }
    b.set_prefix(what.to_string());
    b
}

/// Show `p` on the bar: evaluations used, starts finished and the best χ² so far.
fn show(b: &indicatif::ProgressBar, p: &Progress) {
    b.set_position(p.evaluations as u64);
    let chi2 = if p.best_chi2.is_finite() {
        photoledger::units::sig(p.best_chi2, 5)
    } else {
        "–".into()
    };
    b.set_message(format!("(start {}/{} done; best χ² {chi2})", p.starts_done, p.starts));
}

/// A fitted network: the file as read, and its fit.
pub type Fitted = (photoledger::file::Loaded, run::Fitted);

/// Load `file` and fit it (a progress bar on a terminal).
pub fn fit_one(
    file: &Path,
    set: &super::SetArgs,
    free: &[String],
    experiments: &[Experiment],
    opts: &FitOptions,
) -> photoledger::Result<Fitted> {
    // The network as given (before any experiment's conditions): its warnings, once, first.
    let args = super::NetworkArgs::of(file, set);
    let (loaded, net) = super::load_both(&args)?;
    super::print_warnings(&net);
    let pb = bar(opts.max_evaluations, &file.display().to_string());
    let free = loaded.free_keys(free);
    let fitted = run::fit_network(&net, &free, experiments, opts, &|p| show(&pb, p));
    pb.finish_and_clear();
    let fitted = fitted?;
    Ok((loaded, fitted))
}

pub fn run(a: &FitArgs) -> photoledger::Result<Exit> {
    let experiments = read_data(&a.data)?;
    let opts = a.limits.apply(FitOptions {
        starts: a.starts.max(1),
        seed: a.seed,
        ..FitOptions::default()
    })?;
    let (loaded, fitted) = fit_one(&a.net.file, &a.net.set, &a.free, &experiments, &opts)?;
    let run::Fitted {
        result,
        curves,
        predicted,
        energy_unit,
    } = fitted;
    let stem = super::stem(&a.net.file);
    let out = a.output.dir(&a.net.file, "fit");
    let name = a.net.file.display().to_string();
    let text = rf::fit_text(&name, &result);
    let json = rf::fit_json(&name, &result);
    let rows = rf::rows(&experiments, &predicted);
    let s = &result.solution;
    let fitted = rf::fitted_toml(&loaded.text, &result.free, &s.values, &s.standard_errors, energy_unit)?;
    let folder = Folder::begin(&out)?;
    write_atomic(&folder.join("summary.txt"), text.as_bytes())?;
    write_atomic(
        &folder.join("fit.json"),
        serde_json::to_string_pretty(&json).unwrap_or_default().as_bytes(),
    )?;
    write_atomic(&folder.join("residuals.csv"), rf::residuals_csv(&rows).as_bytes())?;
    let title = format!("{stem}: data and fit");
    write_atomic(
        &folder.join("fit.svg"),
        rf::data_svg(&title, &experiments, &loaded.species_names(), &[(stem.clone(), curves)]).as_bytes(),
    )?;
    write_atomic(
        &folder.join("residuals.svg"),
        rf::residuals_svg(&format!("{stem}: weighted residuals"), &rows, &loaded.species_names()).as_bytes(),
    )?;
    write_atomic(&folder.join(format!("{stem}.fitted.toml")), fitted.as_bytes())?;
    folder.commit()?;
    if a.output.json {
        outln!("{}", serde_json::to_string_pretty(&json).unwrap_or_default())?;
    } else {
        out!("{text}")?;
        outln!(
            "wrote {}/ (summary.txt, fit.json, residuals.csv, fit.svg, residuals.svg, {stem}.fitted.toml)",
            out.display()
        )?;
    }
    Ok(not_converged(&name, &result))
}

/// A fit stopped before converging is a numerical failure for the exit code (4), after its best
/// point has been printed and written.
pub fn not_converged(name: &str, r: &photoledger::fit::FitResult) -> Exit {
    match r.stopped {
        None => Exit::Success,
        Some(s) => {
            noteln!(
                "{name}: the fit did not converge ({}); the best point so far was reported and written, marked not converged",
                s.describe()
            );
            Exit::StoppedAtLimit
        }
    }
}
