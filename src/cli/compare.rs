//! `photoledger compare A.toml B.toml ... --data DATA... [--free A.toml:KEY,KEY ...] [--set KEY=VALUE]
//! [--scale-errors] [--out DIR] [--json]`.

use super::Exit;
use super::fit::{Limits, fit_one, not_converged, read_data};
use super::output::{out, outln};
use photoledger::Error;
use photoledger::file::folder::Folder;
use photoledger::fit::mechanism::FitOptions;
use photoledger::fit::run;
use photoledger::report::fit::{self as rf, Ranked};
use photoledger::report::write_atomic;
use std::path::PathBuf;

/// Options of `compare`.
#[derive(clap::Args, Debug)]
pub struct CompareArgs {
    /// The rival network files (two or more).
    #[arg(required = true, num_args = 2..)]
    pub files: Vec<PathBuf>,
    /// Data: time-course CSV files or experiments TOML files (repeatable).
    #[arg(long, required = true, num_args = 1.., value_name = "FILE")]
    pub data: Vec<PathBuf>,
    /// Free parameters of one network, FILE:KEY,KEY (repeatable; default: each file's [fit] free list).
    #[arg(long, value_name = "FILE:KEYS")]
    pub free: Vec<String>,
    /// Overrides applied to every network compared (each must have the key), e.g. the
    /// conditions of the experiments (repeatable).
    #[command(flatten)]
    pub set: super::SetArgs,
    #[command(flatten)]
    pub output: super::Outputs,
    /// Number of starts per network.
    #[arg(long, default_value_t = 1, allow_negative_numbers = true)]
    pub starts: usize,
    /// Seed of the random starts.
    #[arg(long, default_value_t = 1, allow_negative_numbers = true)]
    pub seed: u64,
    #[command(flatten)]
    pub limits: Limits,
}

pub fn run(a: &CompareArgs) -> photoledger::Result<Exit> {
    let experiments = read_data(&a.data)?;
    let opts = a.limits.apply(FitOptions {
        starts: a.starts.max(1),
        seed: a.seed,
        ..FitOptions::default()
    })?;
    for f in &a.free {
        let Some((file, _)) = f.rsplit_once(".toml:") else {
            return Err(Error::Usage(format!("--free {f}: expected FILE.toml:KEY,KEY")));
        };
        if !a
            .files
            .iter()
            .any(|p| p.display().to_string() == format!("{file}.toml"))
        {
            return Err(Error::Usage(format!(
                "--free {f}: {file}.toml is not one of the networks compared"
            )));
        }
    }
    let mut fits = Vec::new();
    let mut species: Vec<String> = Vec::new();
    for file in &a.files {
        let name = file.display().to_string();
        let free: Vec<String> = a
            .free
            .iter()
            .filter_map(|f| f.strip_prefix(&format!("{name}:")))
            .flat_map(|k| k.split(',').map(|s| s.trim().to_string()))
            .collect();
        let (loaded, fitted) =
            fit_one(file, &a.set, &free, &experiments, &opts).map_err(|e| run::named_error(&name, e))?;
        // Species keep the colours of the first network's order in the plot.
        if species.is_empty() {
            species = loaded.species_names();
        }
        fits.push((name, fitted));
    }
    let cmp = run::Comparison::new(fits, &experiments);
    let ranked: Vec<Ranked> = cmp
        .ranked()
        .into_iter()
        .map(|(network, f, weight)| Ranked {
            network: network.to_string(),
            fit: f.result.clone(),
            weight,
        })
        .collect();
    let disagreement = cmp.ranking.disagreement.as_deref();
    let text = rf::compare_text(&ranked, disagreement);
    let json = rf::compare_json(&ranked, disagreement);
    let models: Vec<(String, Vec<_>)> = cmp
        .ranked()
        .into_iter()
        .map(|(n, f, _)| (n.to_string(), f.curves.clone()))
        .collect();
    let dir = a.output.dir(&a.files[0], "compare");
    let folder = Folder::begin(&dir)?;
    write_atomic(&folder.join("ranking.txt"), text.as_bytes())?;
    write_atomic(
        &folder.join("ranking.json"),
        serde_json::to_string_pretty(&json).unwrap_or_default().as_bytes(),
    )?;
    write_atomic(
        &folder.join("fits.svg"),
        rf::data_svg("data and each network's fit", &experiments, &species, &models).as_bytes(),
    )?;
    folder.commit()?;
    if a.output.json {
        outln!("{}", serde_json::to_string_pretty(&json).unwrap_or_default())?;
    } else {
        out!("{text}")?;
        outln!("wrote {}/ (ranking.txt, ranking.json, fits.svg)", dir.display())?;
    }
    let mut code = Exit::Success;
    for r in &ranked {
        if not_converged(&r.network, &r.fit) != Exit::Success {
            code = Exit::StoppedAtLimit;
        }
    }
    Ok(code)
}
