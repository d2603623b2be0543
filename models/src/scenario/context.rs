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
    /// Where the items read from table files came from (`tables.rs`).
    pub tables: Vec<TableOrigin>,
}

/// The row of a table file that an item of the scenario (a location, a
/// product, one routing step) was read from, so that a later check on the
/// item names the file, row and column rather than a YAML path that is not
/// in the scenario text.
#[derive(Debug)]
pub(crate) struct TableOrigin {
    /// The item's field path, e.g. `products[2].routing[4]`.
    pub prefix: FieldPath,
    /// The file as shown in messages (with `, sheet NAME` for a spreadsheet).
    pub file: String,
    /// The row, 1-based as the file or sheet numbers it.
    pub row: usize,
    /// Field paths below the item (`at`, `time.mean`, `then.step`) and the
    /// header of the column each came from.
    pub columns: Vec<(String, String)>,
}

impl TableOrigin {
    /// The header of the column a field path below the item came from: the
    /// longest matching field path, trying each with its second key left out
    /// (`time.gamma.mean` matches `time.mean`: the family is in its own column).
    pub(crate) fn column(&self, keys: &[&str]) -> Option<&str> {
        for n in (0..=keys.len()).rev() {
            let full = keys[..n].join(".");
            let mut short = keys[..n].to_vec();
            if short.len() > 2 {
                short.remove(1);
            }
            let short = short.join(".");
            if let Some((_, h)) = self.columns.iter().find(|(k, _)| *k == full || *k == short) {
                return Some(h);
            }
        }
        None
    }
}

impl Ctx<'_> {
    /// An error at `path`, with its line looked up in the text, or with its
    /// table file, row and column when the item came from a table.
    pub(crate) fn err(&self, path: &FieldPath, message: impl Into<String>) -> ScenarioError {
        self.err_with(&self.tables, path, message)
    }

    /// As [`Ctx::err`], with the table origins given (while they are being read).
    pub(crate) fn err_with(
        &self,
        tables: &[TableOrigin],
        path: &FieldPath,
        message: impl Into<String>,
    ) -> ScenarioError {
        let found = tables
            .iter()
            .filter_map(|o| path.keys_below(&o.prefix).map(|keys| (o, keys)))
            .max_by_key(|(o, _)| o.prefix.len());
        if let Some((o, keys)) = found {
            return ScenarioError::new(ErrorKind::Invalid, &o.file, message).at_cell(o.row, o.column(&keys));
        }
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
