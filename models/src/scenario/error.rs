//! The error a scenario file can produce: where it is (file, field path, line) and how to fix it.

use std::fmt;

/// Longest message shown, so that an error always fits on one screen.
const MAX_MESSAGE_CHARS: usize = 1200;

/// What kind of rule the scenario broke.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ErrorKind {
    /// The file could not be read.
    Read,
    /// The text is not valid YAML.
    Syntax,
    /// The YAML does not have the shape of a scenario (unknown field, wrong type, bad unit).
    Schema,
    /// The scenario has the right shape but says something impossible (unknown name, bad value).
    Invalid,
}

/// An error in a scenario file.
///
/// Displays as `error in FILE, line N: FIELD.PATH: what is wrong`, followed
/// where useful by a `hint:` line saying what to do.
#[derive(Debug, Clone)]
pub struct ScenarioError(Box<Details>);

/// Boxed so that `Result<_, ScenarioError>` stays one pointer wide on the happy path.
#[derive(Debug, Clone)]
struct Details {
    kind: ErrorKind,
    file: String,
    path: Option<String>,
    line: Option<usize>,
    column: Option<usize>,
    message: String,
    hint: Option<String>,
    /// In a table file: the row (1-based, as the file or sheet numbers it) and the column's header.
    cell: Option<(usize, Option<String>)>,
}

impl ScenarioError {
    /// A new error in `file` with no location yet.
    pub(crate) fn new(kind: ErrorKind, file: &str, message: impl Into<String>) -> Self {
        let mut message: String = message.into();
        if message.chars().count() > MAX_MESSAGE_CHARS {
            message = message.chars().take(MAX_MESSAGE_CHARS).collect::<String>() + " …";
        }
        ScenarioError(Box::new(Details {
            kind,
            file: file.to_string(),
            path: None,
            line: None,
            column: None,
            message,
            hint: None,
            cell: None,
        }))
    }

    /// Sets the field path (`.` or empty means the whole file, and is dropped).
    pub(crate) fn at_path(mut self, path: impl Into<String>) -> Self {
        let p: String = path.into();
        self.0.path = if p.is_empty() || p == "." { None } else { Some(p) };
        self
    }

    /// Sets the line and column (1-based).
    pub(crate) fn at_line(mut self, line: Option<usize>, column: Option<usize>) -> Self {
        self.0.line = line;
        self.0.column = column;
        self
    }

    /// Places the error in a table file: its row and, where known, its column's header.
    pub(crate) fn at_cell(mut self, row: usize, column: Option<&str>) -> Self {
        self.0.cell = Some((row, column.map(str::to_string)));
        self
    }

    /// Adds a hint saying what to do.
    pub(crate) fn with_hint(mut self, hint: impl Into<String>) -> Self {
        self.0.hint = Some(hint.into());
        self
    }

    /// What kind of rule was broken.
    pub fn kind(&self) -> ErrorKind {
        self.0.kind
    }

    /// The scenario file, as given.
    pub fn file(&self) -> &str {
        &self.0.file
    }

    /// The field path, e.g. `products[2].routing[0].at`, where known.
    pub fn path(&self) -> Option<&str> {
        self.0.path.as_deref()
    }

    /// The 1-based line in the scenario file, where known.
    pub fn line(&self) -> Option<usize> {
        self.0.line
    }

    /// The 1-based column in the scenario file, where known.
    pub fn column(&self) -> Option<usize> {
        self.0.column
    }

    /// In a table file, the 1-based row (as the file or the sheet numbers it).
    pub fn row(&self) -> Option<usize> {
        self.0.cell.as_ref().map(|c| c.0)
    }

    /// In a table file, the header of the column at fault, where known.
    pub fn column_name(&self) -> Option<&str> {
        self.0.cell.as_ref().and_then(|c| c.1.as_deref())
    }

    /// What is wrong, without the location.
    pub fn message(&self) -> &str {
        &self.0.message
    }

    /// What to do about it, where the loader can say.
    pub fn hint(&self) -> Option<&str> {
        self.0.hint.as_deref()
    }
}

impl fmt::Display for ScenarioError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "error in {}", self.0.file)?;
        match (self.0.line, self.0.column, self.0.kind) {
            (Some(l), Some(c), ErrorKind::Syntax) => write!(f, ", line {l}, column {c}")?,
            (Some(l), _, _) => write!(f, ", line {l}")?,
            _ => {}
        }
        if let Some((row, column)) = &self.0.cell {
            write!(f, ", row {row}")?;
            if let Some(c) = column {
                write!(f, ", column \"{c}\"")?;
            }
        }
        f.write_str(": ")?;
        if let Some(p) = &self.0.path {
            write!(f, "{p}: ")?;
        }
        f.write_str(&self.0.message)?;
        if let Some(h) = &self.0.hint {
            write!(f, "\nhint: {h}")?;
        }
        Ok(())
    }
}

impl std::error::Error for ScenarioError {}
