//! One error type for the library, its variants grouped by who must act.

use std::path::PathBuf;

/// Library result.
pub type Result<T, E = Error> = std::result::Result<T, E>;

/// Everything that can go wrong, grouped by who has to do something about it.
#[derive(Debug, thiserror::Error)]
pub enum Error {
    /// The input file is damaged or not what it claims to be: the user must supply another.
    #[error("{}: {why}", where_(path, *page))]
    Input {
        /// The input file.
        path: PathBuf,
        /// 1-based page number, when the problem is on one page.
        page: Option<usize>,
        /// What is wrong, in words.
        why: String,
    },
    /// A valid input uses a feature mistara does not read.
    #[error("{}: not supported: {why}", where_(path, *page))]
    Unsupported {
        /// The input file.
        path: PathBuf,
        /// 1-based page number, when the problem is on one page.
        page: Option<usize>,
        /// The feature.
        why: String,
    },
    /// A size limit (pixels per page, allocation) would be exceeded.
    #[error("{}: {why} (raise the limit only if the file is trusted)", where_(path, *page))]
    Limit {
        /// The input file.
        path: PathBuf,
        /// 1-based page number, when the problem is on one page.
        page: Option<usize>,
        /// The limit and the value that exceeds it.
        why: String,
    },
    /// The recognition model is missing, corrupt or of another version.
    #[error("model: {0}")]
    Model(String),
    /// An output could not be written.
    #[error("{}: cannot write: {why}", path.display())]
    Output {
        /// The output file.
        path: PathBuf,
        /// Why.
        why: String,
    },
    /// The caller asked for something that cannot be done (bad option values and the like).
    #[error("{0}")]
    Usage(String),
    /// An I/O error with the file it happened on.
    #[error("{}: {source}", path.display())]
    Io {
        /// The file.
        path: PathBuf,
        /// The underlying error.
        source: std::io::Error,
    },
}

fn where_(path: &std::path::Path, page: Option<usize>) -> String {
    match page {
        Some(p) => format!("{}, page {p}", path.display()),
        None => path.display().to_string(),
    }
}

impl Error {
    /// An [`Error::Input`] without a page.
    pub fn input(path: impl Into<PathBuf>, why: impl Into<String>) -> Self {
        Error::Input {
            path: path.into(),
            page: None,
            why: why.into(),
        }
    }

    /// An [`Error::Input`] on one page (1-based).
    pub fn input_page(path: impl Into<PathBuf>, page: usize, why: impl Into<String>) -> Self {
        Error::Input {
            path: path.into(),
            page: Some(page),
            why: why.into(),
        }
    }

    /// An [`Error::Io`] with the path it happened on.
    pub fn io(path: impl Into<PathBuf>, source: std::io::Error) -> Self {
        Error::Io {
            path: path.into(),
            source,
        }
    }

    /// Attach a page number (1-based) to input-side errors that have none yet.
    pub fn on_page(self, n: usize) -> Self {
        match self {
            Error::Input {
                path,
                page: None,
                why,
            } => Error::Input {
                path,
                page: Some(n),
                why,
            },
            Error::Unsupported {
                path,
                page: None,
                why,
            } => Error::Unsupported {
                path,
                page: Some(n),
                why,
            },
            Error::Limit {
                path,
                page: None,
                why,
            } => Error::Limit {
                path,
                page: Some(n),
                why,
            },
            other => other,
        }
    }
}
