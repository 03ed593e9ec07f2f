//! The command line's error type and its mapping to exit codes.

use std::fmt;

/// Why a command did not succeed; decides the exit code.
#[derive(Debug)]
pub enum CliError {
    /// Bad input or usage (exit 2). The message names the file, line and
    /// field (or the option) that is wrong.
    Input(String),
    /// The command ran but a check it performs failed, e.g. verification over
    /// budget (exit 1). The report was already printed.
    CheckFailed(String),
    /// The target or its debug server could not be reached, or the
    /// connection broke (exit 3). The message names the step.
    Target(String),
    /// Standard output was closed by its reader (`semidrift model | head`):
    /// a normal end, exit 0 and no message.
    OutputClosed,
}

impl CliError {
    /// Bad input located in a file: `FILE:LINE: field 'FIELD': MESSAGE`.
    pub fn at(file: &str, line: usize, field: &str, message: impl fmt::Display) -> CliError {
        CliError::Input(format!("{file}:{line}: field '{field}': {message}"))
    }

    /// Bad value of a command-line option: `--OPTION 'VALUE': MESSAGE`.
    pub fn option(option: &str, value: &str, message: impl fmt::Display) -> CliError {
        CliError::Input(format!("{option} '{value}': {message}"))
    }

    /// The process exit code for this error.
    pub fn exit_code(&self) -> i32 {
        match self {
            CliError::Input(_) => 2,
            CliError::CheckFailed(_) => 1,
            CliError::OutputClosed => 0,
            CliError::Target(_) => 3,
        }
    }
}

impl fmt::Display for CliError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            CliError::Input(m) | CliError::CheckFailed(m) | CliError::Target(m) => f.write_str(m),
            CliError::OutputClosed => f.write_str("standard output closed"),
        }
    }
}

impl std::error::Error for CliError {}

impl From<crate::station::output::OutputError> for CliError {
    fn from(e: crate::station::output::OutputError) -> Self {
        CliError::Input(e.to_string())
    }
}

impl From<std::io::Error> for CliError {
    fn from(e: std::io::Error) -> Self {
        if e.kind() == std::io::ErrorKind::BrokenPipe {
            return CliError::OutputClosed;
        }
        CliError::Input(format!("I/O error: {e}"))
    }
}
