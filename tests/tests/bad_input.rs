//! Malformed scenarios: every file in `scenarios/bad/` must fail to load with a message that names the file, says what is wrong and, where stated, the line.
//!
//! Each corpus file starts with `# expect: <fragment of the message>` and
//! may have `# line: N` on its second line. Failures are collected and shown
//! together, expected beside actual, so one run lists every regression.

use std::path::{Path, PathBuf};

use layflow_models::{load_scenario, parse_scenario};

fn scenarios_dir() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("../scenarios")
}

struct Expectation {
    fragment: String,
    line: Option<usize>,
}

fn expectation(text: &str) -> Option<Expectation> {
    let mut fragment = None;
    let mut line = None;
    for l in text.lines().take_while(|l| l.starts_with('#')) {
        if let Some(f) = l.strip_prefix("# expect:") {
            fragment = Some(f.trim().to_string());
        } else if let Some(n) = l.strip_prefix("# line:") {
            line = n.trim().parse().ok();
        }
    }
    fragment.map(|fragment| Expectation { fragment, line })
}

/// The first word in `shown` that belongs to Rust rather than to the scenario
/// file: a serde type word (`f64`, `struct `, `Option<`) or the name of one of
/// the schema's types (`SpeedSpec`), read from the schema's source.
fn rust_word(shown: &str) -> Option<String> {
    let schema = std::fs::read_to_string(
        Path::new(env!("CARGO_MANIFEST_DIR")).join("../models/src/scenario/schema.rs"),
    )
    .expect("the schema source");
    let ours: Vec<String> = schema
        .split(|c: char| !c.is_alphanumeric() && c != '_')
        .zip(schema.split(|c: char| !c.is_alphanumeric() && c != '_').skip(1))
        .filter(|(kw, _)| *kw == "struct" || *kw == "enum")
        .map(|(_, name)| name.to_string())
        .filter(|n| n.len() > 2 && n.chars().next().is_some_and(char::is_uppercase))
        .collect();
    assert!(ours.iter().any(|n| n == "SpeedSpec"), "the schema's type names were not found");
    let words: Vec<&str> = shown.split(|c: char| !c.is_alphanumeric()).collect();
    layflow_models::scenario::RUST_WORDS
        .iter()
        .find(|w| shown.contains(*w))
        .map(|w| w.to_string())
        .or_else(|| ours.into_iter().find(|n| words.contains(&n.as_str())))
}

#[test]
fn every_bad_scenario_fails_with_its_message() {
    let dir = scenarios_dir().join("bad");
    let mut files: Vec<PathBuf> = std::fs::read_dir(&dir)
        .expect("scenarios/bad exists")
        .map(|e| e.expect("readable entry").path())
        .filter(|p| p.extension().is_some_and(|e| e == "yaml"))
        .collect();
    files.sort();
    assert!(files.len() >= 25, "the corpus shrank to {} files", files.len());
    let mut problems = Vec::new();
    for path in &files {
        let name = path.file_name().unwrap().to_string_lossy().to_string();
        let text = std::fs::read_to_string(path).unwrap();
        let Some(want) = expectation(&text) else {
            problems.push(format!("{name}: no `# expect:` line"));
            continue;
        };
        let err = match load_scenario(path) {
            Ok(_) => {
                problems.push(format!("{name}: loaded, expected an error containing {:?}", want.fragment));
                continue;
            }
            Err(e) => e,
        };
        let shown = err.to_string();
        if !shown.contains(&want.fragment) {
            problems.push(format!("{name}:\n  expected: {}\n  actual:   {shown}", want.fragment));
        }
        if let Some(word) = rust_word(&shown) {
            problems.push(format!("{name}: message names a Rust type ({word:?}): {shown}"));
        }
        if !shown.contains(&name) {
            problems.push(format!("{name}: message does not name the file: {shown}"));
        }
        if shown.lines().count() > 6 {
            problems.push(format!("{name}: message longer than a few lines: {shown}"));
        }
        if let Some(line) = want.line {
            if err.line() != Some(line) {
                problems.push(format!("{name}: expected line {line}, got {:?}: {shown}", err.line()));
            }
        }
    }
    assert!(problems.is_empty(), "{}", problems.join("\n"));
}

#[test]
fn errors_expose_path_and_line() {
    let path = scenarios_dir().join("bad/routing-unknown-department.yaml");
    let err = load_scenario(&path).unwrap_err();
    assert_eq!(err.path(), Some("products[0].routing[1].at"));
    assert!(err.line().is_some());
    assert!(err.hint().is_some_and(|h| h.contains("painting")));
}

#[test]
fn a_missing_file_is_named() {
    let err = load_scenario(Path::new("no/such/scenario.yaml")).unwrap_err();
    let shown = err.to_string();
    assert!(shown.contains("no/such/scenario.yaml"), "{shown}");
}

/// A scenario saved as Latin-1 or UTF-16 (bytes the corpus, read as text,
/// cannot hold): the message gives the first bad byte's line and column, or
/// names UTF-16 by its byte-order mark, and says to save the file as UTF-8.
#[test]
fn files_not_in_utf8_are_named_with_position_and_encoding() {
    let dir = tempfile::tempdir().unwrap();
    let text = std::fs::read_to_string(scenarios_dir().join("validation/tiny-hand-checked.yaml")).unwrap();
    // Line 8 is `plant: Tiny hand-checked shop (invented)`; "hand" becomes "händ" in Latin-1.
    assert!(text.lines().nth(7).unwrap().starts_with("plant: Tiny hand"));
    let latin1: Vec<u8> =
        text.replacen("Tiny hand", "Tiny h\u{e4}nd", 1).chars().map(|c| c as u32 as u8).collect();
    let utf16: Vec<u8> =
        [0xFF, 0xFE].into_iter().chain(text.encode_utf16().flat_map(u16::to_le_bytes)).collect();
    for (name, bytes, want, line) in [
        ("latin1.yaml", latin1, "byte 0xE4 in column 14 is not UTF-8 (it looks like Latin-1", Some(8)),
        ("utf16.yaml", utf16, "the file is UTF-16 text (it starts with a UTF-16 byte-order mark)", None),
    ] {
        let path = dir.path().join(name);
        std::fs::write(&path, bytes).unwrap();
        let err = load_scenario(&path).unwrap_err();
        let shown = err.to_string();
        assert!(shown.contains(want) && shown.contains(name), "{shown}");
        assert!(shown.contains("save the file as UTF-8"), "{shown}");
        assert!(!shown.contains("stream did not contain"), "{shown}");
        assert_eq!(err.line(), line, "{shown}");
    }
}

/// Valid scenarios cut short or damaged must give errors, never panics.
#[test]
fn mutated_scenarios_never_panic() {
    let mut seen_errors = 0usize;
    for name in ["tiny-hand-checked.yaml", "tiny-forklift.yaml"] {
        let path = scenarios_dir().join("validation").join(name);
        let text = std::fs::read_to_string(&path).unwrap();
        let mut variants: Vec<String> = Vec::new();
        // Truncations at every 7th byte (on character boundaries).
        variants.extend(
            (0..text.len()).step_by(7).filter(|&i| text.is_char_boundary(i)).map(|i| text[..i].to_string()),
        );
        // Each line deleted in turn, and each line doubled.
        let lines: Vec<&str> = text.lines().collect();
        for i in 0..lines.len() {
            let mut del = lines.clone();
            del.remove(i);
            variants.push(del.join("\n"));
            let mut dup = lines.clone();
            dup.insert(i, lines[i]);
            variants.push(dup.join("\n"));
        }
        // Single characters replaced by ones that YAML and the checks care about.
        for (i, _) in text.char_indices().step_by(11) {
            for c in ["-", ":", "0", "{", "]", "\t", "é"] {
                let mut v = text.clone();
                let end = i + text[i..].chars().next().map_or(0, char::len_utf8);
                v.replace_range(i..end, c);
                variants.push(v);
            }
        }
        for v in &variants {
            if parse_scenario(v, &path).is_err() {
                seen_errors += 1;
            }
        }
    }
    // Most mutations must be caught; the count guards against a loader that accepts anything.
    assert!(seen_errors > 500, "only {seen_errors} mutations were rejected");
}

/// Prints every corpus error, for reviewing messages by eye:
/// `cargo test -p layflow-tests --test bad_input -- --ignored --nocapture`.
#[test]
#[ignore]
fn show_corpus_messages() {
    let dir = scenarios_dir().join("bad");
    let mut files: Vec<PathBuf> = std::fs::read_dir(&dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|e| e == "yaml"))
        .collect();
    files.sort();
    for path in files {
        if let Err(e) = load_scenario(&path) {
            println!("[{:?}] {e}\n", e.line());
        }
    }
}
