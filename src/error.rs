//! Error type shared by the library and the command line, with the exit code each kind maps to.
//!
//! Exit codes: 0 success, 1 internal error, 2 bad input (config, data, arguments),
//! 3 convergence gate failed, 130 interrupted by the user.

use std::fmt;
use std::path::{Path, PathBuf};

/// What went wrong, classified by who can fix it.
#[derive(Debug)]
pub enum Error {
    /// The user's config, data or arguments are wrong; the message names the culprit.
    Input(String),
    /// Reading or writing a file failed.
    Io {
        path: PathBuf,
        source: std::io::Error,
    },
    /// The run was interrupted (SIGINT); partial results are on disk.
    Interrupted(String),
    /// A bug or an impossible state inside mixband.
    Internal(String),
}

pub type Result<T> = std::result::Result<T, Error>;

impl Error {
    /// Bad-input error with a message.
    pub fn input(msg: impl Into<String>) -> Self {
        Error::Input(msg.into())
    }

    /// I/O error bound to the path it concerns.
    pub fn io(path: impl AsRef<Path>, source: std::io::Error) -> Self {
        Error::Io {
            path: path.as_ref().to_path_buf(),
            source,
        }
    }

    /// Internal error with a message.
    pub fn internal(msg: impl Into<String>) -> Self {
        Error::Internal(msg.into())
    }

    /// Process exit code for this error.
    pub fn exit_code(&self) -> i32 {
        match self {
            Error::Input(_) => 2,
            Error::Io { source, .. } => match source.kind() {
                std::io::ErrorKind::NotFound | std::io::ErrorKind::PermissionDenied => 2,
                _ => 1,
            },
            Error::Interrupted(_) => 130,
            Error::Internal(_) => 1,
        }
    }
}

impl fmt::Display for Error {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Error::Input(m) => write!(f, "{m}"),
            Error::Io { path, source } => write!(f, "{}: {source}", path.display()),
            Error::Interrupted(m) => write!(f, "interrupted: {m}"),
            Error::Internal(m) => write!(f, "internal error: {m}"),
        }
    }
}

impl std::error::Error for Error {}
