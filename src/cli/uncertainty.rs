//! `photoledger uncertainty FILE --samples N [--seed S] [--until DURATION] [--target CONDITION]
//! [--from-fit FIT.json] [--shard K/N] [--json] [--out DIR]`, and
//! `photoledger uncertainty merge SHARD.json... [--json] [--out DIR]`.

use super::Exit;
use super::output::{out, outln};
use photoledger::Error;
use photoledger::file::folder::{self, Folder};
use photoledger::report::{uncertainty as report, write_atomic};
use photoledger::uncertainty::{self, Problem, Record, Settings, Space, fitcov::FitBlock};
use std::io::IsTerminal;
use std::path::{Path, PathBuf};

/// Options of `uncertainty`.
#[derive(clap::Args, Debug)]
#[command(args_conflicts_with_subcommands = true, subcommand_negates_reqs = true)]
pub struct UncertaintyArgs {
    /// Join shard files instead of running.
    #[command(subcommand)]
    pub merge: Option<MergeCommand>,
    /// The network file (TOML) with [[uncertain]] entries, stated origins or trajectory counts.
    #[arg(required = true)]
    pub file: Option<PathBuf>,
    #[command(flatten)]
    pub set: super::SetArgs,
    /// Number of samples in the whole run (1 to 1,000,000).
    #[arg(long, required = true, value_parser = super::values::samples, allow_negative_numbers = true)]
    pub samples: Option<usize>,
    /// Seed of the random streams (sample i uses stream i of this seed).
    #[arg(long, default_value_t = 1, allow_negative_numbers = true)]
    pub seed: u64,
    /// Run the kinetics of each sample for this long, e.g. "2 h" (final concentrations).
    #[arg(long, allow_hyphen_values = true, value_name = "DURATION")]
    pub until: Option<String>,
    /// Time until a species crosses a level, e.g. "product > 5 mM" or "Z-azo > 90 % of E-azo"
    /// (needs --until, the longest time waited).
    #[arg(long, value_name = "CONDITION")]
    pub target: Option<String>,
    /// Skip the chain analysis (yields, quantum yields, photons per product).
    #[arg(long)]
    pub no_chain: bool,
    /// Draw these parameters jointly from a fit's covariance (JSON; README, Uncertainty).
    #[arg(long, value_name = "FIT.json")]
    pub from_fit: Option<PathBuf>,
    /// Run only slice K of N of the samples and write it for `uncertainty merge`.
    #[arg(long, value_name = "K/N")]
    pub shard: Option<String>,
    #[command(flatten)]
    pub output: super::Outputs,
}

/// `uncertainty merge`.
#[derive(clap::Subcommand, Debug)]
pub enum MergeCommand {
    /// Join the shard files of one run (written by --shard K/N) into the report of the whole run.
    Merge {
        /// Shard files (shard-K-of-N.json).
        #[arg(required = true)]
        shards: Vec<PathBuf>,
        // --out (default: the shards' folder followed by "-merged", e.g.
        // photoswitch-uncertainty-merged/ for shards in photoswitch-uncertainty/;
        // merged-uncertainty/ for shards in the current folder) and --json.
        #[command(flatten)]
        output: super::Outputs,
    },
}

fn read(path: &Path) -> photoledger::Result<String> {
    photoledger::file::read_text(path)
}

/// Run `uncertainty`; [`Exit::Unreachable`] when a `--target` is reached by no sample (the
/// outputs are written all the same, every sample counted as censored).
pub fn run(a: &UncertaintyArgs) -> photoledger::Result<Exit> {
    if let Some(MergeCommand::Merge { shards, output }) = &a.merge {
        let dir = output.out.clone().unwrap_or_else(|| merged_dir(&shards[0]));
        return merge(shards, output.json, &dir);
    }
    let (Some(file), Some(total)) = (&a.file, a.samples) else {
        return Err(Error::Usage("give the network file and --samples N".into()));
    };
    if total == 0 {
        return Err(Error::Usage("--samples must be at least 1".into()));
    }
    // The network as given (before any sample's values): its warnings, once, first.
    let args = super::NetworkArgs::of(file, &a.set);
    let (loaded, net) = super::load_both(&args)?;
    super::print_warnings(&net);
    let mut space = Space {
        independent: photoledger::network::uncertain::read(&loaded)?,
        fit: None,
    };
    if let Some(f) = &a.from_fit {
        space = space.with_fit(FitBlock::from_json(&f.display().to_string(), &read(f)?)?)?;
    }
    // Values with a stated origin and branchings from trajectory counts, where no entry above
    // gives a distribution for the same value.
    let (from_evidence, evidence_notes) = uncertainty::evidence::parameters(&net, &space.parameters());
    space.independent.extend(from_evidence);
    let until = match &a.until {
        Some(u) => Some(super::values::duration("until", u)?),
        None => None,
    };
    let target = a.target.clone();
    let settings = Settings {
        chain: !a.no_chain,
        until,
        target,
    };
    let problem = Problem::new(&net, space, settings)?.with_notes(evidence_notes);
    let (range, shard) = match &a.shard {
        Some(s) => {
            let (k, n) = s
                .split_once('/')
                .and_then(|(k, n)| Some((k.trim().parse::<usize>().ok()?, n.trim().parse::<usize>().ok()?)))
                .ok_or_else(|| Error::Usage(format!("--shard \"{s}\": write K/N, e.g. 3/10")))?;
            (uncertainty::shard_range(total, k, n)?, Some((k, n)))
        }
        None => (0..total, None),
    };
    let bar = if std::io::stderr().is_terminal() {
        let b = indicatif::ProgressBar::new(range.len() as u64);
        b.set_style(
            indicatif::ProgressStyle::with_template("{bar:40} {pos}/{len} samples  {elapsed} (about {eta} left)")
                .unwrap_or_else(|_| indicatif::ProgressStyle::default_bar()),
        );
        b
    } else {
        indicatif::ProgressBar::hidden()
    };
    let record = problem.record(a.seed, total, range, &|| bar.inc(1));
    bar.finish_and_clear();
    let dir = a.output.dir(file, "uncertainty");
    if let Some((k, n)) = shard {
        let name = format!("shard-{k}-of-{n}.json");
        let json = serde_json::to_string(&record).map_err(|e| Error::Numerical(e.to_string()))?;
        // The shards of one run share a folder (each job adds its own file): added, not
        // replaced whole.
        folder::not_a_file(&dir)?;
        write_atomic(&dir.join(&name), json.as_bytes())?;
        outln!(
            "wrote {}/{name}: samples {}..{} of {}; join all N with `photoledger uncertainty merge`",
            dir.display(),
            record.header.first,
            record.header.end,
            total
        )?;
        return Ok(Exit::Success);
    }
    write_all(&record, &dir, a.output.json)
}

/// The default folder of `merge`: the folder holding the first shard followed by "-merged"
/// (the shards' own folder keeps the shards), or `merged-uncertainty` in the current folder.
fn merged_dir(first: &Path) -> PathBuf {
    match first.parent().and_then(Path::file_name) {
        Some(name) => {
            let mut d = first.parent().unwrap_or(Path::new(".")).to_path_buf();
            d.set_file_name(format!("{}-merged", name.to_string_lossy()));
            d
        }
        None => PathBuf::from("merged-uncertainty"),
    }
}

fn merge(shards: &[PathBuf], json: bool, out: &Path) -> photoledger::Result<Exit> {
    let mut parts = Vec::new();
    for p in shards {
        let r: Record = serde_json::from_str(&read(p)?).map_err(|e| {
            Error::Usage(format!(
                "{}: not a shard file of `uncertainty --shard`: {e}",
                p.display()
            ))
        })?;
        parts.push(r);
    }
    let record = uncertainty::merge(parts)?;
    // The output folder is replaced whole: not the folder the shards are read from.
    if let Ok(target) = out.canonicalize()
        && let Some(p) = shards
            .iter()
            .find(|p| p.canonicalize().is_ok_and(|p| p.parent() == Some(target.as_path())))
    {
        return Err(Error::Usage(format!(
            "--out {}: holds the shard {} being merged, and an output folder is replaced whole; \
             write the merged report to another folder",
            out.display(),
            p.display()
        )));
    }
    write_all(&record, out, json)
}

fn to_json<T: serde::Serialize>(v: &T) -> photoledger::Result<String> {
    serde_json::to_string_pretty(v).map_err(|e| Error::Numerical(e.to_string()))
}

/// Write every output of a whole run (single or merged); [`Exit::Unreachable`] when an output
/// with a horizon (the time to a target) was reached by no sample that ran.
fn write_all(record: &Record, dir: &Path, json: bool) -> photoledger::Result<Exit> {
    let summary = uncertainty::summarise(record);
    let summary_json = to_json(&summary)?;
    let folder = Folder::begin(dir)?;
    write_atomic(&folder.join("summary.json"), summary_json.as_bytes())?;
    write_atomic(&folder.join("summary.txt"), report::text(&summary).as_bytes())?;
    write_atomic(&folder.join("samples.csv"), report::samples_csv(record).as_bytes())?;
    write_atomic(&folder.join("samples.json"), to_json(record)?.as_bytes())?;
    let ok: Vec<_> = record.samples.iter().filter(|s| s.error.is_none()).collect();
    for (j, x) in summary.outputs.iter().enumerate() {
        let values: Vec<f64> = ok.iter().filter_map(|s| s.outputs[j]).collect();
        let svg = report::histogram_svg(&format!("{}: {}", summary.network, x.column.name), x, &values);
        if !svg.is_empty() {
            write_atomic(
                &folder
                    .join("histograms")
                    .join(format!("{}.svg", report::file_stem(&x.column.name))),
                svg.as_bytes(),
            )?;
        }
    }
    let tornado = report::tornado_svg(&format!("{}: what drives each output", summary.network), &summary);
    if !tornado.is_empty() {
        write_atomic(&folder.join("tornado.svg"), tornado.as_bytes())?;
    }
    folder.commit()?;
    if json {
        outln!("{summary_json}")?;
    } else {
        out!("{}", report::text(&summary))?;
        outln!(
            "wrote {}/ (summary.txt, summary.json, samples.csv, samples.json, histograms/, tornado.svg)",
            dir.display()
        )?;
    }
    let never = summary
        .outputs
        .iter()
        .find(|x| x.column.censored_above.is_some() && x.n == 0 && x.censored > 0);
    if let Some(x) = never {
        if !json {
            outln!(
                "NOT REACHED: none of the {} samples that ran reached the target within --until ({}; exit 5)",
                x.censored,
                x.column.name
            )?;
        }
        return Ok(Exit::Unreachable);
    }
    Ok(Exit::Success)
}
