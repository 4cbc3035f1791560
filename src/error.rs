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

/// Most characters of user text quoted in a message (a name, a key, a line of the model file);
/// longer text is cut with an ellipsis.
pub const MAX_QUOTED_CHARS: usize = 200;

/// User text made safe to print in a message: control characters (ESC, newline, NUL, …) are
/// written as escapes (`\u{1b}`, `\n`, `\0`), and text longer than [`MAX_QUOTED_CHARS`]
/// characters is cut with "…". No quotes are added.
pub fn printable(text: &str) -> String {
    let mut out = String::new();
    for (i, c) in text.chars().enumerate() {
        if i == MAX_QUOTED_CHARS {
            out.push('…');
            break;
        }
        if c.is_control() {
            out.extend(c.escape_debug());
        } else {
            out.push(c);
        }
    }
    out
}

/// Result of every fallible library call.
pub type Result<T> = std::result::Result<T, Error>;

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn printable_escapes_control_characters() {
        assert_eq!(printable("a\u{1b}[31mb\nc\0d"), "a\\u{1b}[31mb\\nc\\0d");
        assert_eq!(printable("plain-name_1"), "plain-name_1");
    }

    #[test]
    fn printable_cuts_long_text() {
        let long = "x".repeat(5000);
        let p = printable(&long);
        assert_eq!(p.chars().count(), MAX_QUOTED_CHARS + 1);
        assert!(p.ends_with('…'));
    }
}
