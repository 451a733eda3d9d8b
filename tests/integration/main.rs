//! Integration tests: the built binary and its outputs, checked by outside readers.

mod cli;
mod find;
mod pdf_input;
mod readers;
mod util;
