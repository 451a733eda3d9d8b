//! The default model shipped inside the binary: `default.mstr`, a model file (see
//! [`super::model_file`]) copied from the best checkpoint of the training run described in
//! `MODEL.md` beside it.

/// Model-file bytes of the built-in model, if this build has one.
pub const DEFAULT_MODEL: Option<&[u8]> = Some(include_bytes!("default.mstr"));
