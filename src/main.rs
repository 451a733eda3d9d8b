//! The `mistara` binary: parse arguments, run, turn the outcome into an exit code.

use std::process::ExitCode;

fn main() -> ExitCode {
    mistara::cli::main()
}
