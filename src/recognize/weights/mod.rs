//! The models shipped inside the binary: `default.mstr`, the model read with unless another is
//! asked for, and `careful.mstr`, a larger one that makes about a fifth fewer errors on lines and
//! reads half as many a second. Both are model files (see [`super::model_file`]) copied from the
//! best checkpoints of the training runs described in `MODEL.md` beside them.

/// Model-file bytes of the built-in model, if this build has one.
pub const DEFAULT_MODEL: Option<&[u8]> = Some(include_bytes!("default.mstr"));

/// Model-file bytes of the larger, slower built-in model, if this build has one.
pub const CAREFUL_MODEL: Option<&[u8]> = Some(include_bytes!("careful.mstr"));
