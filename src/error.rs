//! Error type shared by every stage. Each error knows its exit code: invalid input (2) or a run
//! that failed for another reason (1). Messages name the offending item.

use std::fmt;

/// What went wrong, sorted by who must act: the model author (`Input`) or the operator (`Run`).
#[derive(Debug, Clone, PartialEq)]
pub enum Error {
    /// The model or a command-line value is invalid. Exit code 2.
    Input(String),
    /// The run failed for another reason: I/O, incomplete refinement, failed self-check. Exit 1.
    Run(String),
}

impl Error {
    /// An [`Error::Input`] with this message.
    pub fn input(msg: impl Into<String>) -> Self {
        Error::Input(msg.into())
    }
    /// An [`Error::Run`] with this message.
    pub fn run(msg: impl Into<String>) -> Self {
        Error::Run(msg.into())
    }
    /// Process exit code for this error.
    pub fn exit_code(&self) -> i32 {
        match self {
            Error::Input(_) => 2,
            Error::Run(_) => 1,
        }
    }
    /// The message, naming the offending item.
    pub fn message(&self) -> &str {
        match self {
            Error::Input(m) | Error::Run(m) => m,
        }
    }
}

impl fmt::Display for Error {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.message())
    }
}

impl std::error::Error for Error {}

/// Result of every fallible library call.
pub type Result<T> = std::result::Result<T, Error>;
