//! Exit codes: 0 done, 1 failed (nothing written), 2 usage (clap's own), 130 interrupted.

use std::process::ExitCode;

/// How a run ended.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Exit {
    /// Everything asked for was written.
    Done = 0,
    /// Something failed; no partial output was left behind.
    Failed = 1,
    /// Bad command line (clap exits with this itself).
    Usage = 2,
    /// Stopped by Ctrl-C.
    Interrupted = 130,
}

impl From<Exit> for ExitCode {
    fn from(e: Exit) -> ExitCode {
        ExitCode::from(e as u8)
    }
}
