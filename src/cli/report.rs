//! `photoledger report FILE [--until DURATION] [--target EXPR] [--barrier-window DURATION]
//! [--data DATA... [--free KEYS] [--rival OTHER.toml ...]] -o report.html`:
//! run what applies to the network and write one self-contained HTML page.

use super::output::{noteln, outln};
use super::{Exit, NetworkArgs, load, print_warnings};
use photoledger::fit::mechanism::FitOptions;
use photoledger::model::Model;
use photoledger::report::html::{self, Meta, date};
use photoledger::report::write_atomic;
use photoledger::study::{self, StudyOptions};
use std::path::PathBuf;

/// Options of `report`.
#[derive(clap::Args, Debug)]
pub struct ReportArgs {
    #[command(flatten)]
    pub net: NetworkArgs,
    /// How long to irradiate, e.g. "2 h" (default: from the kinetics, until the --target or 99 %
    /// conversion of the limiting reagent, or until nothing changes, capped at a year, rounded up).
    #[arg(long, allow_hyphen_values = true, value_name = "DURATION")]
    pub until: Option<String>,
    /// Add a plan for this target (as for `plan --target`), e.g. "product > 80 %": time to it,
    /// photon dose and energy, products, and the time at other lamp powers.
    #[arg(long, value_name = "EXPR")]
    pub target: Option<String>,
    /// Add barrier verdicts on every step with a rate against this window, e.g. "10 min".
    #[arg(long, allow_hyphen_values = true, value_name = "DURATION")]
    pub barrier_window: Option<String>,
    /// Fit the network to these data (time-course CSV or experiments TOML files, repeatable) and
    /// add a fit section, as `fit` does.
    #[arg(long, num_args = 1.., value_name = "FILE")]
    pub data: Vec<PathBuf>,
    /// Free parameters as --set keys, comma-separated or repeated (default: the file's [fit] free list).
    #[arg(long, value_delimiter = ',', value_name = "KEYS", requires = "data")]
    pub free: Vec<String>,
    /// A rival network to fit to the same data and rank against this one, as `compare` does (repeatable).
    #[arg(long, value_name = "OTHER.toml", requires = "data")]
    pub rival: Vec<PathBuf>,
    /// Where to write the page (default: the network file's name followed by "-report.html").
    // `--out` is still read as this file (a hidden alias) for scripts written before the
    // convention; help shows -o/--output only.
    #[arg(short = 'o', long = "output", alias = "out", value_name = "HTML")]
    pub output: Option<PathBuf>,
    /// Print what was written as JSON (the page, its sections, the horizon in seconds, the
    /// target reached or not) instead of the text.
    #[arg(long)]
    pub json: bool,
}

/// The command line as typed, each argument quoted for a POSIX shell when it needs it.
fn command_line() -> String {
    let safe = |c: char| c.is_ascii_alphanumeric() || "-_./=:,+@%".contains(c);
    let mut args = std::env::args();
    let mut parts = vec!["photoledger".to_string()];
    args.next();
    for a in args {
        if !a.is_empty() && a.chars().all(safe) {
            parts.push(a);
        } else {
            parts.push(format!("'{}'", a.replace('\'', "'\\''")));
        }
    }
    parts.join(" ")
}

/// Run `report`; [`Exit::Unreachable`] when a `--target` is not reachable (the page is
/// written all the same, its plan section saying why).
pub fn run(a: &ReportArgs) -> photoledger::Result<Exit> {
    let net = load(&a.net)?;
    print_warnings(&net);
    let opts = StudyOptions {
        until: a
            .until
            .as_deref()
            .map(|t| super::values::duration("until", t))
            .transpose()?,
        barrier_window: a
            .barrier_window
            .as_deref()
            .map(|t| super::values::duration("barrier-window", t))
            .transpose()?,
        target: a.target.clone(),
    };
    let mut model = Model::compile(&net);
    if let Some(t) = &opts.target {
        // The photon ledger follows the target's species (its inner filter and photoreactants).
        model.follow(vec![photoledger::plan::target::parse(t, &model)?.species]);
    }
    let mut found = study::run(&net, &model, &opts)?;
    if !a.data.is_empty() {
        let experiments = super::fit::read_data(&a.data)?;
        let loaded = photoledger::file::load(&a.net.file)?;
        let candidate = (a.net.file.display().to_string(), net.clone(), loaded.free_keys(&a.free));
        let rivals = a
            .rival
            .iter()
            .map(|p| {
                let l = photoledger::file::load(p)?;
                let n = photoledger::network::build(&l, &photoledger::Overrides::none())?;
                Ok((p.display().to_string(), n, l.free_keys(&[])))
            })
            .collect::<photoledger::Result<Vec<_>>>()?;
        found.fit = Some(study::fit_study(
            &candidate,
            experiments,
            &rivals,
            &FitOptions::default(),
        )?);
    }
    let meta = Meta {
        command_line: command_line(),
        date: date::now_utc(),
    };
    let page = html::render(&net, &model, &found, &meta);
    let out = a
        .output
        .clone()
        .unwrap_or_else(|| super::default_file(&a.net.file, "report", "html"));
    write_atomic(&out, page.as_bytes())?;
    match (&found.chain, &found.closed) {
        (Err(_), Some(_)) => noteln!(
            "note: no molecule ends in this network; the single-molecule section gives its photostationary state"
        ),
        (Err(why), None) => noteln!("note: no single-molecule section: {why}"),
        _ => {}
    }
    // A target given and not reachable is the answer "not reachable" (exit 5), as for `plan`.
    let missed = found.plan.as_ref().filter(|p| p.plan.time.is_none());
    if a.json {
        let sections: Vec<&str> = html::SECTIONS
            .iter()
            .map(|(id, _)| *id)
            .filter(|id| page.contains(&format!("id=\"{id}\"")))
            .collect();
        super::print_json(&serde_json::json!({
            "network": net.about.name,
            "file": out.display().to_string(),
            "size_bytes": page.len(),
            "sections": sections,
            "until_s": found.until,
            "target": found.plan.as_ref().map(|p| p.plan.target.text.clone()),
            "time_to_target_s": found.plan.as_ref().and_then(|p| p.plan.time),
        }))?;
    } else {
        outln!("wrote {} ({} kB)", out.display(), page.len().div_ceil(1024))?;
    }
    if let Some(p) = missed.filter(|_| !a.json) {
        let plan = &p.plan;
        outln!(
            "NOT REACHABLE: \"{}\": {} (see the plan section; exit 5)",
            plan.target.text,
            plan.unreachable.as_ref().map_or("not reached", |u| u.why.words())
        )?;
    }
    Ok(if missed.is_some() {
        Exit::Unreachable
    } else {
        Exit::Success
    })
}
