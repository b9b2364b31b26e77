//! `photoledger check FILE`: validate and summarise.

use super::{NetworkArgs, load, print_warnings};

pub fn run(args: &NetworkArgs, quiet: bool) -> photoledger::Result<()> {
    let net = load(args)?;
    if !quiet {
        print!("{}", photoledger::report::summary::network_summary(&net));
        println!();
    }
    print_warnings(&net);
    let w = net.warnings.len();
    println!(
        "valid: {}{}",
        args.file.display(),
        if w > 0 {
            format!(" ({w} warning{})", if w == 1 { "" } else { "s" })
        } else {
            String::new()
        }
    );
    Ok(())
}
