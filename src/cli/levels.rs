//! `photoledger levels FILE [--target EXPR] [--until DURATION] [--data DATA... [--free KEYS]]`:
//! the network under each of its labelled sets of values (`[[level]]`), side by side.

use super::fit::{Limits, bar, not_converged, read_data};
use super::output::{out, outln};
use super::{Exit, NetworkArgs, load, print_warnings};
use photoledger::Error;
use photoledger::fit::mechanism::FitOptions;
use photoledger::levels::{self, LevelOptions};
use photoledger::report::{levels as report, write_atomic};
use std::path::PathBuf;

/// Options of `levels`.
#[derive(clap::Args, Debug)]
pub struct LevelsArgs {
    #[command(flatten)]
    pub net: NetworkArgs,
    /// A target to reach under each set, as for `plan`, e.g. "ring > 50 %".
    #[arg(long, value_name = "EXPR")]
    pub target: Option<String>,
    /// The time at which the products are compared, e.g. "2 h" (default: the longest automatic
    /// horizon of the sets, rounded up).
    #[arg(long, value_name = "DURATION", allow_hyphen_values = true)]
    pub until: Option<String>,
    /// Data to score each set against: time-course CSV files or experiments TOML files.
    #[arg(long, num_args = 1.., value_name = "FILE")]
    pub data: Vec<PathBuf>,
    /// Keys refitted under every set (comma-separated or repeated); needs --data.
    #[arg(long, value_name = "KEYS", value_delimiter = ',')]
    pub free: Vec<String>,
    /// Number of starts of each refit.
    #[arg(long, default_value_t = 1, allow_negative_numbers = true)]
    pub starts: usize,
    /// Seed of the random starts.
    #[arg(long, default_value_t = 1, allow_negative_numbers = true)]
    pub seed: u64,
    #[command(flatten)]
    pub limits: Limits,
    #[command(flatten)]
    pub output: super::Outputs,
}

/// Run `levels`.
pub fn run(a: &LevelsArgs) -> photoledger::Result<Exit> {
    let free: Vec<String> = a
        .free
        .iter()
        .map(|k| k.trim().to_string())
        .filter(|k| !k.is_empty())
        .collect();
    if !free.is_empty() && a.data.is_empty() {
        return Err(Error::Usage("--free refits against data: give --data too".into()));
    }
    let opts = a.limits.apply(FitOptions {
        starts: a.starts.max(1),
        seed: a.seed,
        ..FitOptions::default()
    })?;
    let net = load(&a.net)?;
    print_warnings(&net);
    let q = photoledger::units::Quantity::Time;
    let until = a
        .until
        .as_deref()
        .map(|d| {
            photoledger::units::parse(d, q)
                .map_err(|e| Error::Usage(format!("--until: {e}; expected {}", q.accepted())))
        })
        .transpose()?;
    if until.is_some_and(|t| !(t > 0.0 && t.is_finite())) {
        return Err(Error::Usage("--until: the time must be positive".into()));
    }
    let c = levels::compare(
        &net,
        &LevelOptions {
            target: a.target.clone(),
            until,
        },
    )?;
    let scores = if a.data.is_empty() {
        None
    } else {
        let experiments = read_data(&a.data)?;
        let pb = bar(opts.max_evaluations, "levels");
        let s = levels::score::score(&net, &experiments, &free, &opts, &|p| {
            pb.set_position(p.evaluations as u64);
        });
        pb.finish_and_clear();
        Some(s?)
    };
    let dir = a.output.dir(&a.net.file, "levels");
    let json = serde_json::to_string_pretty(&report::json(&c, scores.as_ref()))
        .map_err(|e| Error::Numerical(e.to_string()))?;
    let folder = photoledger::file::folder::Folder::begin(&dir)?;
    write_atomic(&folder.join("summary.json"), json.as_bytes())?;
    write_atomic(&folder.join("observables.csv"), report::observables_csv(&c).as_bytes())?;
    if let Some(s) = &scores {
        write_atomic(&folder.join("scores.csv"), report::scores_csv(s).as_bytes())?;
    }
    folder.commit()?;
    if a.output.json {
        outln!("{json}")?;
    } else {
        out!("{}", report::text(&net.about.name, &c))?;
        if let Some(s) = &scores {
            out!("{}", report::scores_text(s))?;
        }
        outln!(
            "wrote {}/ (summary.json, observables.csv{})",
            dir.display(),
            if scores.is_some() { ", scores.csv" } else { "" }
        )?;
    }
    let mut code = Exit::Success;
    if let Some(cmp) = scores.as_ref().and_then(|s| s.refit.as_ref()) {
        for (label, f) in &cmp.fits {
            if not_converged(label, &f.result) != Exit::Success {
                code = Exit::StoppedAtLimit;
            }
        }
    }
    Ok(code)
}
