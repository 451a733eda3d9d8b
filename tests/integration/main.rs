//! Integration tests: the built binary and its outputs, checked by outside readers.

mod readers;
mod synth_cli;
mod util;
