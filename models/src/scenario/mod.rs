//! Scenario files: YAML text in, a validated [`Plant`] out, or an error that says where and how to fix it.
//!
//! Three passes, as the style guide asks: parse the YAML (syntax errors with
//! line and column), deserialize into structs mirroring the file (unknown
//! fields, wrong types, missing units, with the field path from
//! `serde_path_to_error`), then compile names into indices and check every
//! rule (with a path built by hand and its line found in the text).

mod alternatives;
mod area;
mod assembly;
mod batches;
mod compile;
mod context;
mod crews;
mod demand;
mod distance;
mod error;
mod fleet;
mod locate;
mod operators;
mod queueing;
mod routing;
mod schema;
mod search;
mod staging;
mod table_read;
mod tables;
mod times;
mod words;
mod work;

use std::path::Path;

pub use error::{ErrorKind, ScenarioError};
pub use schema::parse_factor;
pub(crate) use words::type_error;
pub use words::RUST_WORDS;

use crate::plant::Plant;
use crate::suggest::{did_you_mean, name_list};

/// Reads, checks and compiles the scenario file at `path`.
pub fn load_scenario(path: &Path) -> Result<Plant, ScenarioError> {
    let file = path.display().to_string();
    let text = crate::textfile::read_text(path).map_err(|e| match e {
        crate::textfile::TextError::Io(e) => {
            ScenarioError::new(ErrorKind::Read, &file, format!("cannot read the scenario file: {e}"))
        }
        crate::textfile::TextError::Encoding { line, column, message, hint } => {
            ScenarioError::new(ErrorKind::Read, &file, message).at_line(line, column).with_hint(hint)
        }
    })?;
    parse_scenario(&text, path)
}

/// Checks and compiles scenario `text`; `origin` is the file it came from,
/// named in messages and used to resolve relative paths (a distance matrix,
/// an order trace).
pub fn parse_scenario(text: &str, origin: &Path) -> Result<Plant, ScenarioError> {
    let file = origin.display().to_string();
    // Parsing to a generic value first separates syntax errors from schema errors.
    match serde_norway::from_str::<serde_norway::Value>(text) {
        Err(e) => return Err(syntax_error(&e, &file, text)),
        Ok(serde_norway::Value::Null) => {
            return Err(ScenarioError::new(ErrorKind::Schema, &file, "the scenario file is empty")
                .with_hint("start with `plant: <name>`; see the example scenarios"))
        }
        Ok(_) => {}
    }
    let de = serde_norway::Deserializer::from_str(text);
    let scenario: schema::Scenario =
        serde_path_to_error::deserialize(de).map_err(|e| schema_error(&e, &file))?;
    let ctx = context::Ctx { text, origin, file, tables: Vec::new(), moved: Vec::new() };
    compile::compile(scenario, &ctx)
}

/// Where a scenario's `measured_from_to` points: the chart's file (relative
/// to the scenario), the period its cells count loads over, and the line of
/// the field, for messages. Read apart from the plant (which the simulation
/// and experiments' content hashes see), because only `check` and `search` use it.
#[derive(Debug, Clone, PartialEq)]
pub struct MeasuredSource {
    /// The chart's file, joined to the scenario's folder.
    pub path: std::path::PathBuf,
    /// The period each cell counts loads over, seconds.
    pub per_s: f64,
    /// The line of `measured_from_to` in the scenario.
    pub line: Option<usize>,
}

/// The `measured_from_to` of the scenario at `path` (already loaded, so
/// checked), or `None` without one.
pub fn measured_source(path: &Path) -> Option<MeasuredSource> {
    let text = crate::textfile::read_text(path).ok()?;
    let v: serde_norway::Value = serde_norway::from_str(&text).ok()?;
    let m = v.get("measured_from_to")?;
    let file = m.get("file")?.as_str()?;
    let per = <crate::units::Seconds as serde::Deserialize>::deserialize(m.get("per")?.clone()).ok()?.0;
    Some(MeasuredSource {
        path: path.parent().unwrap_or_else(|| Path::new("")).join(file),
        per_s: per,
        line: locate::line_of(&text, &locate::FieldPath::root().key("measured_from_to")),
    })
}

/// The 1-based line of the field at `path` (`departments[2].machines`) in
/// scenario `text`, or of its nearest enclosing field: for messages about a
/// scenario compiled from a changed copy (an experiment's design point).
pub(crate) fn line_of_path(text: &str, path: &str) -> Option<usize> {
    let mut at = locate::FieldPath::root();
    for part in path.split('.') {
        let (key, indices) = part.split_once('[').map_or((part, ""), |(k, rest)| (k, rest));
        if !key.is_empty() {
            at = at.key(key);
        }
        for i in indices.split('[').filter(|s| !s.is_empty()) {
            match i.trim_end_matches(']').parse::<usize>() {
                Ok(i) => at = at.index(i),
                Err(_) => return locate::line_of(text, &at),
            }
        }
    }
    locate::line_of(text, &at)
}

/// The line (1-based) of a `---` that starts a second document: one after content.
fn second_document(text: &str) -> Option<usize> {
    let mut content = false;
    for (i, l) in text.lines().enumerate() {
        let t = l.trim_end();
        if t == "---" || t.starts_with("--- ") {
            if content {
                return Some(i + 1);
            }
        } else if !t.trim_start().is_empty() && !t.trim_start().starts_with('#') {
            content = true;
        }
    }
    None
}

fn syntax_error(e: &serde_norway::Error, file: &str, text: &str) -> ScenarioError {
    let loc = e.location();
    let at =
        |err: ScenarioError| err.at_line(loc.as_ref().map(|l| l.line()), loc.as_ref().map(|l| l.column()));
    let full = e.to_string();
    // serde's words for an alias bomb and a second document point nowhere; say what the file does.
    if full.contains("repetition limit exceeded") || full.contains("recursion limit exceeded") {
        return at(ScenarioError::new(
            ErrorKind::Syntax,
            file,
            "the file uses YAML aliases (`*name`) that expand to too much data (an alias bomb?)",
        ))
        .with_hint("write the values out, or use fewer aliases that repeat other aliases");
    }
    // A number past 64 bits fails in the generic pass: it is a value out of range, not a syntax error.
    if full.contains("` as u128") || full.contains("` as i128") {
        let raw = bare_message(e);
        let path = full.split_once(": ").map(|(p, _)| p).filter(|p| !p.contains(' ')).unwrap_or("");
        if let Some((message, hint)) = type_error(&raw, path) {
            let err = at(ScenarioError::new(ErrorKind::Invalid, file, message).at_path(path));
            return match hint {
                Some(h) => err.with_hint(h),
                None => err,
            };
        }
    }
    if full.contains("more than one document") {
        return ScenarioError::new(
            ErrorKind::Syntax,
            file,
            "the file holds more than one YAML document (a `---` line after the first content); a scenario is \
             one document",
        )
        .at_line(second_document(text), None)
        .with_hint("remove that `---` line and whatever above it does not belong to the scenario");
    }
    // A repeated key parses as YAML but would silently drop a value, so the
    // generic pass refuses it; it is a scenario mistake, not a syntax one.
    if let Some(i) = full.find("duplicate entry") {
        let path = full[..i].trim_end_matches(": ").to_string();
        return at(ScenarioError::new(ErrorKind::Invalid, file, bare_message(e)).at_path(path))
            .with_hint("each key may appear only once in a mapping");
    }
    at(ScenarioError::new(ErrorKind::Syntax, file, format!("YAML syntax: {full}")))
        .with_hint("check the indentation and that every `{`, `[` and quote is closed")
}

fn schema_error(e: &serde_path_to_error::Error<serde_norway::Error>, file: &str) -> ScenarioError {
    let inner = e.inner();
    let loc = inner.location();
    let raw = bare_message(inner);
    let mut path = e.path().to_string();
    if raw.starts_with("unknown variant") {
        // The path ends in the unknown name itself; the message already says it.
        if let Some(given) = quoted(&raw).first() {
            if let Some(p) = path.strip_suffix(&format!(".{given}")) {
                path = p.to_string();
            }
        }
    }
    // serde calls every enum alternative a "variant"; under `time` they are
    // distribution families, elsewhere plain accepted values.
    let what = if path.ends_with("time") { "distribution" } else { "value" };
    let (message, hint) = type_error(&raw, &path).unwrap_or_else(|| rephrase(&raw, what));
    let err = ScenarioError::new(ErrorKind::Schema, file, message)
        .at_path(path)
        .at_line(loc.as_ref().map(|l| l.line()), loc.as_ref().map(|l| l.column()));
    match hint {
        Some(h) => err.with_hint(h),
        None => err,
    }
}

/// The parser's message without its own path prefix and position suffix,
/// which the error carries separately.
pub(crate) fn bare_message(e: &serde_norway::Error) -> String {
    let mut s = e.to_string();
    if let Some(i) = s.rfind(" at line ") {
        if s[i + 9..].split(" column ").all(|n| n.trim().parse::<usize>().is_ok()) {
            s.truncate(i);
        }
    }
    if let Some((prefix, rest)) = s.split_once(": ") {
        let looks_like_path =
            !prefix.is_empty() && prefix.chars().all(|c| c.is_alphanumeric() || "_-.[]".contains(c));
        if looks_like_path && !rest.is_empty() {
            return rest.to_string();
        }
    }
    s
}

/// The names between backticks in a serde message, in order.
fn quoted(msg: &str) -> Vec<&str> {
    msg.split('`').skip(1).step_by(2).collect()
}

/// Turns serde's "unknown field/variant" and "missing field" messages into
/// ours, with a suggestion and the list of what is allowed.
fn rephrase(msg: &str, variant_word: &str) -> (String, Option<String>) {
    for (prefix, what, allowed) in [
        ("unknown field", "field", "allowed fields here"),
        ("unknown variant", variant_word, "accepted here"),
    ] {
        if msg.starts_with(prefix) {
            let q = quoted(msg);
            if let Some((given, options)) = q.split_first() {
                let m = format!("unknown {what} \"{given}\"{}", did_you_mean(given, options.iter().copied()));
                let hint = if options.is_empty() {
                    None
                } else {
                    Some(format!("{allowed}: {}", name_list(options.iter().copied())))
                };
                return (m, hint);
            }
        }
    }
    if msg.starts_with("missing field") {
        if let Some(f) = quoted(msg).first() {
            return (format!("missing field \"{f}\""), Some(format!("add `{f}:` here")));
        }
    }
    (msg.to_string(), None)
}

#[cfg(test)]
mod tests;

#[cfg(test)]
mod message_tests {
    use super::*;

    #[test]
    fn unknown_field_gets_a_suggestion() {
        let (m, h) = rephrase("unknown field `machnes`, expected one of `id`, `machines`, `dock`", "value");
        assert_eq!(m, "unknown field \"machnes\" (did you mean \"machines\"?)");
        assert_eq!(h.as_deref(), Some("allowed fields here: id, machines, dock"));
    }

    #[test]
    fn messages_lose_their_position_suffix() {
        let e = serde_norway::from_str::<u32>("x").unwrap_err();
        assert!(!bare_message(&e).contains(" at line "), "{}", bare_message(&e));
    }
}
