//! Integration tests: the built binary and its outputs, checked by outside readers.

mod bad_inputs;
mod image_input;
mod readers;
mod util;
