//! `photoledger ledger FILE [--from SPECIES] [--json] [--out DIR]`: follow one molecule through
//! the network as an absorbing Markov chain.

use super::output::{noteln, out, outln};
use super::{NetworkArgs, load, print_warnings};
use photoledger::Error;
use photoledger::chain::build::{Light, Settings};
use photoledger::chain::{self, ChainOptions, Options};
use photoledger::model::Model;
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
    /// Print the summary JSON to stdout.
    #[arg(long)]
    pub json: bool,
    /// Output folder (default: the network file's name followed by "-ledger").
    #[arg(long, value_name = "DIR")]
    pub out: Option<PathBuf>,
    /// Photon absorption per molecule: "stirred" (its share of the light in the well-stirred
    /// cell at the initial concentrations) or "thin" (optically thin, needs irradiated_area).
    #[arg(long, default_value = "stirred")]
    pub light: String,
    /// Take the concentrations (for light sharing, linearised bimolecular steps and quenching)
    /// from a kinetics run of this length instead of the initial ones, e.g. "2 h".
    #[arg(long, value_name = "DURATION")]
    pub at: Option<String>,
    /// Stop the photon-count distribution at this many photons.
    #[arg(long, default_value_t = 200_000)]
    pub max_photons: usize,
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
    let at = match &a.at {
        None => None,
        Some(d) => Some(
            photoledger::units::parse(d, photoledger::units::Quantity::Time).map_err(|e| {
                Error::Usage(format!(
                    "--at: {e}; expected {}",
                    photoledger::units::Quantity::Time.accepted()
                ))
            })?,
        ),
    };
    let opts = ChainOptions {
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
    let run = chain::run(&model, &net, &opts)?;
    if let Some(t) = at {
        noteln!(
            "note: concentrations taken from the kinetics at {}",
            photoledger::units::format_time(t)
        );
    }
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
    .with_check(chain::agreement::check(&model, &net, &run, a.from.as_deref())?);
    let mut summary = summary;
    summary.count_intervals = photoledger::uncertainty::counts::intervals(&net, &opts)?;
    let json = serde_json::to_string_pretty(&summary).map_err(|e| Error::Numerical(e.to_string()))?;
    let dir = a.out.clone().unwrap_or_else(|| {
        let stem = a
            .net
            .file
            .file_stem()
            .map(|s| s.to_string_lossy().to_string())
            .unwrap_or_else(|| "network".into());
        PathBuf::from(format!("{stem}-ledger"))
    });
    write_atomic(&dir.join("summary.json"), json.as_bytes())?;
    write_atomic(
        &dir.join("photon_counts.csv"),
        report::distribution_csv(ch, an).as_bytes(),
    )?;
    write_atomic(
        &dir.join("photon_counts.svg"),
        report::histogram_svg(&format!("{}: photons per molecule", net.about.name), an).as_bytes(),
    )?;
    if a.json {
        outln!("{json}")?;
    } else {
        out!("{}", report::text(&summary))?;
        if let Some(c) = &summary.count_intervals {
            out!("{}", photoledger::report::evidence::count_intervals(c))?;
        }
        outln!(
            "wrote {}/ (summary.json, photon_counts.csv, photon_counts.svg)",
            dir.display()
        )?;
    }
    Ok(())
}
