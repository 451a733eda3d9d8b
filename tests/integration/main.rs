//! Integration tests: the built binary and its outputs, checked by outside readers.

mod pdf_input;
mod readers;
mod util;
