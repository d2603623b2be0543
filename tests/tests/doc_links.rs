//! The user guide holds together: every relative link in `README.md` and `docs/*.md` reaches a file and a heading that exist; every `docs/formulas.md` section cited anywhere in the repository exists; every hint in the sources that sends a user to the README or to a page under `docs/` reaches one; and every test that `docs/validation.md` names exists.
//!
//! Headings are matched by GitHub's anchor rule: the heading's text in
//! lower case, punctuation dropped except `-` and `_`, each space turned
//! into `-`, and `-1`, `-2`, … added to repeats. Failures are collected and
//! reported together, each with its file, line and link.

use std::collections::HashMap;
use std::fs;
use std::path::{Path, PathBuf};

/// The repository root (the `tests/` crate sits one level below it).
fn root() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).parent().expect("tests/ has a parent").to_path_buf()
}

/// A path relative to the root, for messages.
fn shown(p: &Path) -> String {
    let r = root();
    p.strip_prefix(&r).unwrap_or(p).display().to_string()
}

fn read(p: &Path) -> String {
    fs::read_to_string(p).unwrap_or_else(|e| panic!("cannot read {}: {e}", p.display()))
}

/// GitHub's anchor for a heading's rendered text.
fn slug(text: &str) -> String {
    text.chars()
        .flat_map(char::to_lowercase)
        .filter(|c| c.is_alphanumeric() || matches!(c, '-' | '_' | ' '))
        .map(|c| if c == ' ' { '-' } else { c })
        .collect()
}

/// A heading's text as GitHub renders it: links become their text, code
/// and emphasis marks go.
fn rendered(heading: &str) -> String {
    let mut out = String::new();
    let mut rest = heading;
    while let Some(open) = rest.find('[') {
        out.push_str(&rest[..open]);
        let after = &rest[open + 1..];
        match after.find("](").and_then(|m| after[m..].find(')').map(|c| (m, m + c))) {
            Some((m, close)) => {
                out.push_str(&after[..m]);
                rest = &after[close + 1..];
            }
            None => {
                out.push('[');
                rest = after;
            }
        }
    }
    out.push_str(rest);
    out.replace(['`', '*'], "")
}

/// Whether a line opens or closes a fenced code block.
fn is_fence(line: &str) -> bool {
    let t = line.trim_start();
    t.starts_with("```") || t.starts_with("~~~")
}

/// The ATX heading text of a line, if it is one.
fn heading(line: &str) -> Option<&str> {
    let t = line.trim_start();
    if line.len() - t.len() > 3 {
        return None;
    }
    let hashes = t.chars().take_while(|&c| c == '#').count();
    if !(1..=6).contains(&hashes) {
        return None;
    }
    let rest = &t[hashes..];
    if !rest.is_empty() && !rest.starts_with(' ') {
        return None;
    }
    Some(rest.trim().trim_end_matches('#').trim_end())
}

/// The anchors of a Markdown file's headings, repeats numbered as GitHub does.
fn anchors(text: &str) -> Vec<String> {
    let mut seen: HashMap<String, usize> = HashMap::new();
    let mut out = Vec::new();
    let mut fenced = false;
    for line in text.lines() {
        if is_fence(line) {
            fenced = !fenced;
            continue;
        }
        if fenced {
            continue;
        }
        if let Some(h) = heading(line) {
            let base = slug(&rendered(h));
            let n = seen.entry(base.clone()).or_insert(0);
            out.push(if *n == 0 { base.clone() } else { format!("{base}-{n}") });
            *n += 1;
        }
    }
    out
}

/// A line with its inline code spans removed (links inside code are examples, not links).
fn without_code(line: &str) -> String {
    line.split('`').step_by(2).collect::<Vec<_>>().join(" ")
}

/// Link targets on one line of prose: inline `[text](target)` and reference
/// definitions `[label]: target`.
fn link_targets(line: &str) -> Vec<String> {
    let mut out = Vec::new();
    let t = line.trim_start();
    if t.starts_with('[') {
        if let Some(end) = t.find("]:") {
            if let Some(target) = t[end + 2..].split_whitespace().next() {
                out.push(target.trim_matches(|c| c == '<' || c == '>').to_string());
            }
            return out;
        }
    }
    let bytes = line.as_bytes();
    let mut i = 0;
    while let Some(k) = line[i..].find("](") {
        let start = i + k + 2;
        let mut depth = 1;
        let mut j = start;
        while j < bytes.len() {
            match bytes[j] {
                b'(' => depth += 1,
                b')' => {
                    depth -= 1;
                    if depth == 0 {
                        break;
                    }
                }
                _ => {}
            }
            j += 1;
        }
        let inner = line[start..j.min(bytes.len())].trim();
        let target = match inner.strip_prefix('<') {
            Some(angled) => angled.split('>').next(),
            None => inner.split_whitespace().next(),
        };
        if let Some(target) = target {
            out.push(target.to_string());
        }
        i = j.min(bytes.len());
    }
    out
}

/// Every file under the root with one of `exts`, skipping build output and git.
fn files_with(exts: &[&str]) -> Vec<PathBuf> {
    fn walk(dir: &Path, exts: &[&str], out: &mut Vec<PathBuf>) {
        let mut entries: Vec<_> = fs::read_dir(dir)
            .unwrap_or_else(|e| panic!("cannot list {}: {e}", dir.display()))
            .map(|e| e.expect("readable entry"))
            .collect();
        entries.sort_by_key(|e| e.file_name());
        for e in entries {
            let p = e.path();
            let kind = e.file_type().expect("file type");
            let name = e.file_name();
            if kind.is_dir() {
                if name != "target" && name != ".git" {
                    walk(&p, exts, out);
                }
            } else if kind.is_file() && p.extension().is_some_and(|x| exts.iter().any(|w| x == *w)) {
                out.push(p);
            }
        }
    }
    let mut out = Vec::new();
    walk(&root(), exts, &mut out);
    out
}

/// The Markdown files whose links are checked: the README and the guide.
fn guide_files() -> Vec<PathBuf> {
    let mut out = vec![root().join("README.md")];
    let mut docs: Vec<PathBuf> = fs::read_dir(root().join("docs"))
        .expect("docs/ exists")
        .map(|e| e.expect("readable entry").path())
        .filter(|p| p.extension().is_some_and(|x| x == "md"))
        .collect();
    docs.sort();
    out.extend(docs);
    out
}

/// Checks that `target` (as written in `from`) names an existing file and,
/// for a Markdown file, an existing heading. `None` when it does.
fn broken(from: &Path, target: &str) -> Option<String> {
    let (path, anchor) = match target.split_once('#') {
        Some((p, a)) => (p, Some(a)),
        None => (target, None),
    };
    let file = if path.is_empty() {
        from.to_path_buf()
    } else {
        from.parent().expect("a file has a folder").join(path)
    };
    if !file.exists() {
        return Some(format!("no such file {}", shown(&file)));
    }
    let anchor = anchor.filter(|a| !a.is_empty())?;
    if file.extension().is_some_and(|x| x == "md") && !anchors(&read(&file)).iter().any(|h| h == anchor) {
        return Some(format!("no heading #{anchor} in {}", shown(&file)));
    }
    None
}

#[test]
fn the_slug_rule_is_githubs() {
    assert_eq!(slug("Install and the two commands"), "install-and-the-two-commands");
    assert_eq!(slug(&rendered("§1. M/M/1 and M/M/c (Erlang C)")), "1-mm1-and-mmc-erlang-c");
    assert_eq!(
        slug(&rendered("Staging space, blocking and breakdowns")),
        "staging-space-blocking-and-breakdowns"
    );
    assert_eq!(slug(&rendered("The `move_wait_s` metric")), "the-move_wait_s-metric");
    assert_eq!(slug(&rendered("A [linked](x.md) heading")), "a-linked-heading");
    assert_eq!(anchors("# A\n## A\n```\n# not a heading\n```\n## A\n"), ["a", "a-1", "a-2"]);
    assert_eq!(
        link_targets("see [a](b.md#c) and [d](<e f.md>) and [g](h(1).md)"),
        ["b.md#c", "e f.md", "h(1).md"]
    );
}

#[test]
fn every_relative_link_in_the_guide_reaches_a_file_and_heading() {
    let mut failures = Vec::new();
    let mut links = 0;
    for file in guide_files() {
        let text = read(&file);
        let mut fenced = false;
        for (n, line) in text.lines().enumerate() {
            if is_fence(line) {
                fenced = !fenced;
                continue;
            }
            if fenced {
                continue;
            }
            for target in link_targets(&without_code(line)) {
                if target.contains("://") || target.starts_with("mailto:") {
                    continue;
                }
                links += 1;
                if let Some(why) = broken(&file, &target) {
                    failures.push(format!("{}:{}: link ({target}): {why}", shown(&file), n + 1));
                }
            }
        }
    }
    assert!(links > 20, "only {links} relative links found: is the scan broken?");
    assert!(failures.is_empty(), "{} broken links:\n{}", failures.len(), failures.join("\n"));
}

/// The section numbers of docs/formulas.md: headings whose text starts with `§N`.
fn formula_sections() -> Vec<u32> {
    let text = read(&root().join("docs/formulas.md"));
    let mut out = Vec::new();
    let mut fenced = false;
    for line in text.lines() {
        if is_fence(line) {
            fenced = !fenced;
            continue;
        }
        if let Some(h) = heading(line).filter(|_| !fenced) {
            if let Some(rest) = h.strip_prefix('§') {
                let digits: String = rest.chars().take_while(char::is_ascii_digit).collect();
                if let Ok(n) = digits.parse() {
                    out.push(n);
                }
            }
        }
    }
    out
}

#[test]
fn every_cited_formula_section_exists() {
    let sections = formula_sections();
    for n in 1..=20 {
        assert!(sections.contains(&n), "docs/formulas.md has no heading starting with §{n}");
    }
    let needle = "formulas.md §";
    let mut failures = Vec::new();
    let mut citations = 0;
    for file in files_with(&["rs", "yaml", "md"]) {
        for (n, line) in read(&file).lines().enumerate() {
            for (at, _) in line.match_indices(needle) {
                let digits: String =
                    line[at + needle.len()..].chars().take_while(char::is_ascii_digit).collect();
                let Ok(section) = digits.parse::<u32>() else { continue };
                citations += 1;
                if !sections.contains(&section) {
                    failures.push(format!(
                        "{}:{}: cites docs/formulas.md §{section}, which has no such section",
                        shown(&file),
                        n + 1
                    ));
                }
            }
        }
    }
    assert!(citations > 20, "only {citations} citations found: is the scan broken?");
    assert!(failures.is_empty(), "{} missing sections:\n{}", failures.len(), failures.join("\n"));
}

/// Mentions of a page under `docs/` on a line, with its `#anchor` if any,
/// each with the byte offset just after it.
fn docs_mentions(line: &str) -> Vec<(usize, String)> {
    let mut out = Vec::new();
    for (at, _) in line.match_indices("docs/") {
        if at > 0 && line[..at].ends_with(|c: char| c.is_alphanumeric() || c == '_' || c == '.') {
            continue; // part of a longer path or word
        }
        let rest = &line[at..];
        let end = rest
            .find(|c: char| !(c.is_ascii_alphanumeric() || matches!(c, '/' | '-' | '_' | '.' | '#')))
            .unwrap_or(rest.len());
        let mention = rest[..end].trim_end_matches('.');
        let page = mention.split('#').next().unwrap_or_default();
        if page.ends_with(".md") {
            out.push((at + mention.len(), mention.to_string()));
        }
    }
    out
}

#[test]
fn every_hint_in_the_sources_reaches_a_page_and_heading() {
    let readme = read(&root().join("README.md"));
    let mut headings = Vec::new();
    let mut fenced = false;
    for line in readme.lines() {
        if is_fence(line) {
            fenced = !fenced;
        } else if let Some(h) = heading(line).filter(|_| !fenced) {
            headings.push(rendered(h).to_lowercase());
        }
    }
    let section_hint = concat!("README's section", " on ");
    let mut failures = Vec::new();
    for file in files_with(&["rs"]) {
        for (n, line) in read(&file).lines().enumerate() {
            let at = format!("{}:{}", shown(&file), n + 1);
            for (i, _) in line.match_indices(section_hint) {
                let rest = &line[i + section_hint.len()..];
                let topic = rest.split(['"', ')', ';', '.', ',', '`']).next().unwrap_or_default().trim();
                if !headings.iter().any(|h| h.contains(&topic.to_lowercase())) {
                    failures.push(format!(
                        "{at}: hint \"{section_hint}{topic}\": the README has no such section"
                    ));
                }
            }
            for (end, mention) in docs_mentions(line) {
                if let Some(why) = broken(&root().join("README.md"), &mention) {
                    failures.push(format!("{at}: hint ({mention}): {why}"));
                    continue;
                }
                // `see docs/aisles.md, section \"The aisle network\"` names a heading too.
                let after = line[end..].trim_start_matches(", section ").trim_start_matches('\\');
                if line[end..].starts_with(", section ") {
                    let title = after.trim_start_matches('"').split(['"', '\\']).next().unwrap_or_default();
                    let page = mention.split('#').next().unwrap_or_default();
                    if !anchors(&read(&root().join(page))).contains(&slug(title)) {
                        failures.push(format!(
                            "{at}: hint ({mention}, section \"{title}\"): no such heading in {page}"
                        ));
                    }
                }
            }
        }
    }
    assert!(failures.is_empty(), "{} broken hints:\n{}", failures.len(), failures.join("\n"));
}

#[test]
fn every_test_named_in_the_validation_table_exists() {
    let page = root().join("docs/validation.md");
    let mut failures = Vec::new();
    let mut named = 0;
    for (n, line) in read(&page).lines().enumerate() {
        for (k, span) in line.split('`').enumerate() {
            let Some((file, test)) = span.split_once("::") else { continue };
            if k % 2 == 0 || !file.ends_with(".rs") || !test.chars().all(|c| c.is_alphanumeric() || c == '_')
            {
                continue;
            }
            named += 1;
            let at = format!("{}:{}", shown(&page), n + 1);
            let path = root().join(file);
            if !path.exists() {
                failures.push(format!("{at}: {span}: no such file"));
                continue;
            }
            let src = read(&path);
            let lines: Vec<&str> = src.lines().collect();
            let Some(i) = lines.iter().position(|l| l.trim_start().starts_with(&format!("fn {test}(")))
            else {
                failures.push(format!("{at}: {span}: no function {test} in {file}"));
                continue;
            };
            let is_test = lines[..i]
                .iter()
                .rev()
                .take_while(|l| {
                    let t = l.trim_start();
                    t.starts_with("#[") || t.starts_with("//")
                })
                .any(|l| l.trim_start().starts_with("#[test]"));
            if !is_test {
                failures.push(format!("{at}: {span}: {test} is not marked #[test]"));
            }
        }
    }
    assert!(named > 40, "only {named} tests named: is the scan broken?");
    assert!(failures.is_empty(), "{} missing tests:\n{}", failures.len(), failures.join("\n"));
}
