//! The command line: arguments, one function per verb, exit codes. Nothing else imports this.

pub mod args;
pub mod batch;
pub mod commands;
pub mod exit;
pub mod progress;

use std::process::ExitCode;

use clap::Parser;

/// Parse arguments, run the verb, print any error once, and return the exit code.
pub fn main() -> ExitCode {
    let cli = args::Cli::parse();
    match commands::run(cli) {
        Ok(()) => exit::Exit::Done.into(),
        Err(err) => {
            if is_broken_pipe(&err) {
                return exit::Exit::Done.into();
            }
            eprintln!("mistara: error: {err:#}");
            exit::Exit::Failed.into()
        }
    }
}

fn is_broken_pipe(err: &anyhow::Error) -> bool {
    err.chain()
        .filter_map(|e| e.downcast_ref::<std::io::Error>())
        .any(|e| e.kind() == std::io::ErrorKind::BrokenPipe)
}
