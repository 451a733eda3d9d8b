//! mistara makes scanned Arabic books searchable.
//!
//! The pipeline: [`input`] reads scanned pages (image-only PDFs, TIFF, PNG, JPEG) into
//! [`page::PageImage`]s; page analysis finds lines in right-to-left reading order; a neural line
//! recognizer reads whole lines; [`text`] holds the words with their boxes and orders them with the
//! Unicode bidi algorithm; [`output`] writes a PDF that looks exactly like the scan with an
//! invisible, word-positioned text layer, and plain text.
//!
//! # Caution
//! Recognized text can be wrong. Verify it against the page image before relying on it; in legal
//! and archival work follow your local rules of evidence and practice.

#![forbid(unsafe_code)]
#![deny(missing_docs)]

pub mod batch;
pub mod cleanup;
pub mod cli;
pub mod demo;
pub mod engine;
pub mod error;
pub mod eval;
pub mod input;
pub mod layout;
pub mod limits;
pub mod ordered;
pub mod output;
pub mod page;
pub mod pipeline;
pub mod recognize;
pub mod search;
pub mod synth;
pub mod text;
pub mod train;

pub use error::{Error, Result};
