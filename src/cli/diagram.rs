//! `photoledger diagram FILE -o network.svg [--dot]`.

use super::output::{out, outln};
use super::{NetworkArgs, load, print_warnings};
use std::path::Path;

pub fn run(args: &NetworkArgs, out: &Path, dot: bool) -> photoledger::Result<()> {
    let net = load(args)?;
    print_warnings(&net);
    if dot {
        out!("{}", photoledger::report::diagram::dot(&net))?;
        return Ok(());
    }
    photoledger::report::write_atomic(out, photoledger::report::diagram::svg(&net).as_bytes())?;
    outln!("wrote {}", out.display())?;
    Ok(())
}
