//! What every compile step shares: the scenario text and file for error locations, and the name checks (resolve, unique ids).
//!
//! A leaf: the per-section files and `compile.rs` all use it, and it uses
//! none of them, so references between scenario files point one way.

use std::path::Path;

use super::error::{ErrorKind, ScenarioError};
use super::locate::{line_of, FieldPath};
use crate::suggest::{did_you_mean, name_list};

/// What every check needs to report an error: the text (for line numbers) and the file.
pub(crate) struct Ctx<'a> {
    pub text: &'a str,
    pub origin: &'a Path,
    pub file: String,
}

impl Ctx<'_> {
    /// An error at `path`, with its line looked up in the text.
    pub(crate) fn err(&self, path: &FieldPath, message: impl Into<String>) -> ScenarioError {
        ScenarioError::new(ErrorKind::Invalid, &self.file, message)
            .at_path(path.to_string())
            .at_line(line_of(self.text, path), None)
    }
}

/// Finds `name` among `ids`, or reports it as an unknown `what` with a suggestion.
pub(crate) fn resolve(
    ctx: &Ctx,
    path: &FieldPath,
    what: &str,
    name: &str,
    ids: &[&str],
) -> Result<usize, ScenarioError> {
    ids.iter().position(|i| *i == name).ok_or_else(|| {
        ctx.err(path, format!("unknown {what} \"{name}\"{}", did_you_mean(name, ids.iter().copied())))
            .with_hint(format!("the {what}s are: {}", name_list(ids.iter().copied())))
    })
}

/// Reports the first id that appears twice.
pub(crate) fn check_unique<'a>(
    ctx: &Ctx,
    what: &str,
    ids: impl IntoIterator<Item = (&'a str, FieldPath)>,
) -> Result<(), ScenarioError> {
    let mut seen: Vec<&str> = Vec::new();
    for (id, path) in ids {
        if id.trim().is_empty() {
            return Err(ctx.err(&path, format!("{what} id is empty")));
        }
        if seen.contains(&id) {
            return Err(ctx.err(&path, format!("{what} \"{id}\" is defined twice")));
        }
        seen.push(id);
    }
    Ok(())
}
