//! `photoledger check FILE`: validate and summarise.

use super::output::{out, outln};
use super::{NetworkArgs, build, print_warnings};
use photoledger::uncertainty::{evidence, spec};

pub fn run(args: &NetworkArgs, quiet: bool) -> photoledger::Result<()> {
    let loaded = photoledger::file::load(&args.file)?;
    let net = build(&loaded, args)?;
    // The [[uncertain]] entries are checked here too, as `uncertainty` reads them.
    let explicit = spec::read(&loaded)?;
    if !quiet {
        out!("{}", photoledger::report::summary::network_summary(&net))?;
        let entries = evidence::entries(&net, &explicit.iter().collect::<Vec<_>>());
        out!(
            "{}",
            photoledger::report::evidence::uncertain_values(&entries, net.energy_unit)
        )?;
        out!("{}", photoledger::report::levels::check_text(&net))?;
        outln!()?;
    }
    print_warnings(&net);
    let w = net.warnings.len();
    outln!(
        "valid: {}{}",
        args.file.display(),
        if w > 0 {
            format!(" ({w} warning{})", if w == 1 { "" } else { "s" })
        } else {
            String::new()
        }
    )?;
    Ok(())
}
