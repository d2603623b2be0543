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
    /// YAML items a table before them in a mixed list moved: (the item's
    /// path after expansion, its path in the text), so messages find its line.
    pub moved: Vec<(FieldPath, FieldPath)>,
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
        let path = self.in_text(path);
        ScenarioError::new(ErrorKind::Invalid, &self.file, message)
            .at_path(path.to_string())
            .at_line(line_of(self.text, &path), None)
    }

    /// `path` as the scenario text has it (a YAML item after a table in a mixed list moved).
    pub(crate) fn in_text(&self, path: &FieldPath) -> FieldPath {
        self.moved.iter().find_map(|(from, to)| path.moved(from, to)).unwrap_or_else(|| path.clone())
    }

    /// Where the item at `path` is written, in words: `row 4 of products.csv`
    /// or `line 12 of plant.yaml`, for a message that names two places.
    pub(crate) fn place(&self, path: &FieldPath) -> String {
        let found = self
            .tables
            .iter()
            .filter(|o| path.keys_below(&o.prefix).is_some())
            .max_by_key(|o| o.prefix.len());
        if let Some(o) = found {
            return format!("row {} of {}", o.row, o.file);
        }
        let path = self.in_text(path);
        match line_of(self.text, &path) {
            Some(l) => format!("line {l} of {}", self.file),
            None => format!("{path} of {}", self.file),
        }
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
    let mut seen: Vec<(&str, FieldPath)> = Vec::new();
    for (id, path) in ids {
        if id.trim().is_empty() {
            return Err(ctx.err(&path, format!("{what} id is empty")));
        }
        if let Some((_, first)) = seen.iter().find(|(s, _)| *s == id) {
            // Both places: with tables and YAML mixed, the first may be in another file.
            return Err(
                ctx.err(&path, format!("{what} \"{id}\" is defined twice (first at {})", ctx.place(first)))
            );
        }
        seen.push((id, path));
    }
    Ok(())
}
