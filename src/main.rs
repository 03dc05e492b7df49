//! `hazebook` binary: parse arguments, run, turn the outcome into an exit code.

use std::process::ExitCode;

use clap::Parser;

fn main() -> ExitCode {
    let cli = hazebook::cli::Cli::parse();
    match hazebook::cli::run(cli) {
        Ok(status) => ExitCode::from(status.code()),
        Err(err) => {
            eprintln!("error: {err:#}");
            ExitCode::from(hazebook::cli::Status::Failed.code())
        }
    }
}
