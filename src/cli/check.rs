//! `swingfit check LOG`: load, validate and summarise one log.

use clap::Args;

use super::{CmdResult, LoaderArgs};

/// Arguments of `check`.
#[derive(Args, Debug)]
pub struct CheckArgs {
    /// The log to check (CSV).
    pub log: std::path::PathBuf,
    #[command(flatten)]
    pub loader: LoaderArgs,
    /// Print the summary as JSON.
    #[arg(long)]
    pub json: bool,
}

pub fn run(args: &CheckArgs) -> CmdResult {
    let _ = args;
    todo!("issue 2")
}
