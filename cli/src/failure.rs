//! A failed command with its exit code: 2 for bad input, 1 for a failed run (a write error too), 130 for Ctrl-C or SIGTERM.

use layflow_models::results::ResultsError;
use layflow_models::study::StudyError;

/// A failure with its exit code.
pub struct Failure {
    /// The process exit code.
    pub code: u8,
    message: String,
    /// Say nothing: a reader closed the pipe (`layflow ... | head`), which is no error to report.
    pub quiet: bool,
}

impl Failure {
    /// Bad input: the scenario or an argument.
    pub fn input(message: impl Into<String>) -> Failure {
        Failure { code: 2, message: message.into(), quiet: false }
    }
    /// The run itself failed.
    pub fn run(message: impl Into<String>) -> Failure {
        Failure { code: 1, message: message.into(), quiet: false }
    }
    /// Stopped by Ctrl-C or SIGTERM: 130, the shell's code for an interrupt.
    pub fn interrupted(message: impl Into<String>) -> Failure {
        Failure { code: crate::signals::STOPPED, message: message.into(), quiet: false }
    }
    /// Stdout could not be written: exit 1 with the reason, except for a
    /// closed pipe, which leaves quietly with 141 (128 + SIGPIPE, what a shell
    /// reports for a process the pipe closed, and what layflow always gave).
    pub fn output(e: std::io::Error) -> Failure {
        if e.kind() == std::io::ErrorKind::BrokenPipe {
            return Failure { code: 141, message: String::new(), quiet: true };
        }
        Failure::run(format!("could not write the output (stdout): {e}"))
    }
    /// The same failure with `more` added to its message (e.g. where the results are safe).
    pub fn and(mut self, more: &str) -> Failure {
        if !self.quiet {
            self.message.push_str(more);
        }
        self
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
