//! The `photoledger` command: parse the arguments, hand them to one function per command.

mod cli;

fn main() {
    std::process::exit(cli::run());
}
