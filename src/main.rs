//! The `swingfit` binary: parse the command line, run it, print any error once, map it to an exit
//! code. Everything else lives in the library (`swingfit::cli`).

use std::process::ExitCode;

fn main() -> ExitCode {
    swingfit::cli::main(std::env::args_os())
}
