//! Integration tests: the built binary and its outputs, checked by outside readers.

mod alto;
mod archival;
mod bad_inputs;
mod batch;
mod cli;
mod debug_view;
mod demo;
mod end_to_end;
mod faults;
mod find;
mod image_input;
mod old_layer;
mod pdf_input;
mod pdf_overlay;
mod readers;
mod review;
mod synth_cli;
mod util;
