//! Integration tests: the built binary and its outputs, checked by outside readers.

mod bad_inputs;
mod cli;
mod debug_view;
mod demo;
mod find;
mod image_input;
mod pdf_input;
mod pdf_overlay;
mod readers;
mod synth_cli;
mod util;
