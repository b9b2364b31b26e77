//! `photoledger fit FILE --data DATA... [--free KEYS] [--out DIR] [--json] [--starts N] [--seed S] [--scale-errors]`.

use super::output::{out, outln};
use photoledger::Error;
use photoledger::file::data::{self, Experiment};
use photoledger::fit::mechanism::FitOptions;
use photoledger::fit::run;
use photoledger::report::{fit as rf, write_atomic};
use std::path::{Path, PathBuf};

/// Options of `fit`.
#[derive(clap::Args, Debug)]
pub struct FitArgs {
    /// The network file (TOML).
    pub file: PathBuf,
    /// Data: time-course CSV files, or experiments TOML files tying data to conditions (repeatable).
    #[arg(long, required = true, num_args = 1.., value_name = "FILE")]
    pub data: Vec<PathBuf>,
    /// Free parameters as --set keys, comma-separated or repeated (default: the file's [fit] free list).
    #[arg(long, value_delimiter = ',', value_name = "KEYS")]
    pub free: Vec<String>,
    /// Override a value of the file for every experiment (repeatable).
    #[arg(long = "set", value_name = "KEY=VALUE")]
    pub set: Vec<String>,
    /// Output folder (default: NETWORK-fit beside the current folder).
    #[arg(long, value_name = "DIR")]
    pub out: Option<PathBuf>,
    /// Print the JSON result to stdout instead of the table.
    #[arg(long)]
    pub json: bool,
    /// Number of starts: the file's values, then seeded random starts around them.
    #[arg(long, default_value_t = 1)]
    pub starts: usize,
    /// Seed of the random starts.
    #[arg(long, default_value_t = 1)]
    pub seed: u64,
    /// Scale the standard errors by the reduced χ² even when every observation has an sd
    /// (by default given sd are taken as known).
    #[arg(long)]
    pub scale_errors: bool,
}

/// Read every data argument.
pub fn read_data(paths: &[PathBuf]) -> photoledger::Result<Vec<Experiment>> {
    let mut all = Vec::new();
    for p in paths {
        all.extend(data::read(p)?);
    }
    Ok(all)
}

/// A progress bar on stderr when it is a terminal.
pub fn bar(n: usize, what: &str) -> indicatif::ProgressBar {
    use std::io::IsTerminal;
    if !std::io::stderr().is_terminal() {
        return indicatif::ProgressBar::hidden();
    }
    let b = indicatif::ProgressBar::new(n as u64);
    if let Ok(s) = indicatif::ProgressStyle::with_template("{msg} [{bar:30}] {pos}/{len} starts") {
        b.set_style(s);
    }
    b.set_message(what.to_string());
    b
}

/// A fitted network: the file as read, and its fit.
pub type Fitted = (photoledger::file::Loaded, run::Fitted);

/// Load `file` and fit it (a progress bar on a terminal).
pub fn fit_one(
    file: &Path,
    set: &[String],
    free: &[String],
    experiments: &[Experiment],
    opts: &FitOptions,
) -> photoledger::Result<Fitted> {
    let loaded = photoledger::file::load(file)?;
    // The network as given (before any experiment's conditions): its warnings, once, first.
    let args = super::NetworkArgs {
        file: file.to_path_buf(),
        set: set.to_vec(),
    };
    super::print_warnings(&super::build(&loaded, &args)?);
    let base = photoledger::Overrides::parse(set).map_err(Error::Usage)?.pairs();
    let pb = bar(opts.starts.max(1), &file.display().to_string());
    let fitted = run::fit_loaded(&loaded, base, free, experiments, opts, &|| pb.inc(1))?;
    pb.finish_and_clear();
    Ok((loaded, fitted))
}

pub fn run(a: &FitArgs) -> photoledger::Result<()> {
    let experiments = read_data(&a.data)?;
    let opts = FitOptions {
        starts: a.starts.max(1),
        seed: a.seed,
        scale_errors: a.scale_errors,
        ..FitOptions::default()
    };
    let (loaded, fitted) = fit_one(&a.file, &a.set, &a.free, &experiments, &opts)?;
    let run::Fitted {
        result,
        curves,
        predicted,
    } = fitted;
    let stem = a
        .file
        .file_stem()
        .map_or("network".into(), |s| s.to_string_lossy().to_string());
    let out = a.out.clone().unwrap_or_else(|| PathBuf::from(format!("{stem}-fit")));
    let name = a.file.display().to_string();
    let text = rf::fit_text(&name, &result);
    let json = rf::fit_json(&name, &result);
    let rows = rf::rows(&experiments, &predicted);
    let s = &result.solution;
    let fitted = rf::fitted_toml(&loaded.text, &result.free, &s.values, &s.standard_errors)?;
    write_atomic(&out.join("summary.txt"), text.as_bytes())?;
    write_atomic(
        &out.join("fit.json"),
        serde_json::to_string_pretty(&json).unwrap_or_default().as_bytes(),
    )?;
    write_atomic(&out.join("residuals.csv"), rf::residuals_csv(&rows).as_bytes())?;
    let title = format!("{stem}: data and fit");
    write_atomic(
        &out.join("fit.svg"),
        rf::data_svg(&title, &rows, &[(stem.clone(), curves)]).as_bytes(),
    )?;
    write_atomic(
        &out.join("residuals.svg"),
        rf::residuals_svg(&format!("{stem}: weighted residuals"), &rows).as_bytes(),
    )?;
    write_atomic(&out.join(format!("{stem}.fitted.toml")), fitted.as_bytes())?;
    if a.json {
        outln!("{}", serde_json::to_string_pretty(&json).unwrap_or_default())?;
    } else {
        out!("{text}")?;
        outln!(
            "wrote {}/ summary.txt fit.json residuals.csv fit.svg residuals.svg {stem}.fitted.toml",
            out.display()
        )?;
    }
    Ok(())
}
