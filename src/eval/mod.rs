//! Recognition accuracy: CER and WER over transcribed lines, with and without harakat and with
//! search folding; per-font figures and the worst lines.

pub mod align;
