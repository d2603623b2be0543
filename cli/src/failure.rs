//! A failed command with its exit code: 2 for bad input, 1 for a failed run, 130 for Ctrl-C or SIGTERM.

use layflow_models::results::ResultsError;
use layflow_models::study::StudyError;

/// A failure with its exit code.
pub struct Failure {
    /// The process exit code.
    pub code: u8,
    message: String,
}

impl Failure {
    /// Bad input: the scenario or an argument.
    pub fn input(message: impl Into<String>) -> Failure {
        Failure { code: 2, message: message.into() }
    }
    /// The run itself failed.
    pub fn run(message: impl Into<String>) -> Failure {
        Failure { code: 1, message: message.into() }
    }
    /// Stopped by Ctrl-C or SIGTERM: 130, the shell's code for an interrupt.
    pub fn interrupted(message: impl Into<String>) -> Failure {
        Failure { code: crate::signals::STOPPED, message: message.into() }
    }
    /// The message shown to the user.
    pub fn message(&self) -> &str {
        &self.message
    }
}

impl From<StudyError> for Failure {
    fn from(e: StudyError) -> Failure {
        match e {
            StudyError::Input(m) => Failure::input(m),
            StudyError::Run(m) => Failure::run(m),
        }
    }
}

impl From<ResultsError> for Failure {
    fn from(e: ResultsError) -> Failure {
        match e {
            ResultsError::Input(m) => Failure::input(m),
            ResultsError::Write(m) => Failure::run(m),
        }
    }
}
