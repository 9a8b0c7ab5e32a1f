//! `swingfit simulate`: integrate the model and write a log the loader reads.

use clap::Args;

use super::CmdResult;

/// Arguments of `simulate`.
#[derive(Args, Debug)]
pub struct SimulateArgs {
    /// Parameters (JSON, per unit inertia), or the JSON written by `fit --json`.
    #[arg(long, value_name = "FILE")]
    pub params: std::path::PathBuf,
    /// Output file (default: standard output).
    #[arg(long, short, value_name = "FILE")]
    pub out: Option<std::path::PathBuf>,
}

pub fn run(args: &SimulateArgs) -> CmdResult {
    let _ = args;
    todo!("issue 3")
}
