//! The default model shipped inside the binary.
//!
//! `DEFAULT_MODEL` is `None` until a trained model file is committed here as `default.mstr`
//! (then it becomes `Some(include_bytes!("default.mstr"))`).

/// Model-file bytes of the built-in model, if this build has one.
pub const DEFAULT_MODEL: Option<&[u8]> = None;
