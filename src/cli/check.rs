//! `photoledger check FILE`: validate and summarise.

use super::output::{out, outln};
use super::{NetworkArgs, load, print_warnings};

pub fn run(args: &NetworkArgs, quiet: bool) -> photoledger::Result<()> {
    let net = load(args)?;
    if !quiet {
        out!("{}", photoledger::report::summary::network_summary(&net))?;
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
