//! `hazebook` binary: parse arguments, run, turn the outcome into an exit code.

use std::process::ExitCode;

use clap::Parser;

fn main() -> ExitCode {
    let cli = hazebook::cli::Cli::parse();
    match hazebook::cli::run(cli) {
        Ok(status) => ExitCode::from(status.code()),
        Err(err) => {
            let msg = format!("{err:#}");
            eprintln!("error: {}", hazebook::job::log::escape_controls(&msg));
            ExitCode::from(hazebook::cli::Status::Failed.code())
        }
    }
}
