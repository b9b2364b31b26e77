//! `photoledger check FILE [--quiet] [--json]`: validate and summarise.

use super::output::{out, outln};
use super::{NetworkArgs, print_json, print_warnings};
use photoledger::uncertainty::evidence;

/// Options of `check`.
#[derive(clap::Args, Debug)]
pub struct CheckArgs {
    #[command(flatten)]
    pub net: NetworkArgs,
    /// Print only the verdict and the problems.
    #[arg(long, short)]
    pub quiet: bool,
    /// Print the validated network as JSON (species, steps, transients, lights, every settable
    /// key with its value and unit, warnings; numbers in SI, each unit named) instead of the text.
    #[arg(long)]
    pub json: bool,
}

pub fn run(args: &CheckArgs) -> photoledger::Result<()> {
    let (loaded, net) = super::load_both(&args.net)?;
    // The [[uncertain]] entries are checked here too, as `uncertainty` reads them.
    let explicit = photoledger::network::uncertain::read(&loaded)?;
    print_warnings(&net);
    if args.json {
        let file = args.net.file.display().to_string();
        return print_json(&photoledger::report::check::network_json(&net, &file));
    }
    if !args.quiet {
        out!("{}", photoledger::report::summary::network_summary(&net))?;
        out!("{}", photoledger::report::check::settable_text(&net))?;
        let entries = evidence::entries(&net, &explicit.iter().collect::<Vec<_>>());
        out!(
            "{}",
            photoledger::report::evidence::uncertain_values(&entries, net.energy_unit)
        )?;
        out!("{}", photoledger::report::levels::check_text(&net))?;
        outln!()?;
    }
    let w = net.warnings.len();
    outln!(
        "valid: {}{}",
        args.net.file.display(),
        if w > 0 {
            format!(" ({w} warning{})", if w == 1 { "" } else { "s" })
        } else {
            String::new()
        }
    )?;
    Ok(())
}
