//! Integration tests: the built binary and its outputs, checked by outside readers.

mod readers;
mod util;
mod bad_inputs;
mod image_input;
