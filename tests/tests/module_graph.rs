//! No import loops between files: in each crate, `crate::`/`super::`/`self::` references must point one way.
//!
//! A loop between files means neither can be read, tested or moved without
//! the other; a shared helper belongs in a leaf module both can use. The
//! check reads the source text (no compiler help, no dependencies), so it
//! understands just enough Rust for this code base:
//!
//! - every `use crate::…`, `use super::…`, `use self::…` (and `use child::…`
//!   for a child module) and every inline path `crate::a::b::Item` or
//!   `super::Item` in code is a reference; comments, string literals and
//!   `#[cfg(test)]` items are skipped, and so are files only declared under
//!   `#[cfg(test)]`;
//! - a reference goes to the file that *defines* the item: a module path maps
//!   to `a/b.rs` or `a/b/mod.rs` (an inline `mod x { }` belongs to its
//!   file), and where the module only brings the name in with a `use`, that
//!   `use` is followed to the defining file;
//! - a `pub use` (re-export) is not itself a reference, so a module file that
//!   declares and re-exports its children does not tie them back to it;
//! - `mod x;` declarations are not references, and neither are paths a
//!   parent writes through its own child's name (`run::run(…)` in `main.rs`):
//!   a parent driving its children is how the module tree is built; the loops
//!   that hurt are files reaching sideways and back.
//!
//! Each strongly connected component with more than one file is a loop; the
//! test lists every one as a walk through its files.

use std::collections::{BTreeMap, BTreeSet, VecDeque};
use std::path::{Path, PathBuf};

/// Loops tolerated. None: every crate's files import one way. Do not add
/// to it: move what two files share into a leaf module instead. (The test
/// fails on a stale entry, so the list can only shrink.)
const ALLOWED_LOOPS: &[&[&str]] = &[];

/// The crates checked, as source folders relative to the repository root.
const CRATES: &[&str] = &["engine/src", "models/src", "cli/src"];

#[test]
fn no_file_imports_itself_through_others() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join("..");
    let mut found: Vec<Vec<String>> = Vec::new();
    let mut walks: Vec<String> = Vec::new();
    for krate in CRATES {
        let (graph, reasons) = file_graph(&root, krate);
        for scc in loops(&graph) {
            walks.push(explained(&walk(&graph, &scc), &reasons));
            found.push(scc);
        }
    }
    let allowed: Vec<Vec<String>> = ALLOWED_LOOPS
        .iter()
        .map(|l| {
            let mut v: Vec<String> = l.iter().map(|s| (*s).to_string()).collect();
            v.sort();
            v
        })
        .collect();
    let mut problems = Vec::new();
    for (scc, w) in found.iter().zip(&walks) {
        if !allowed.contains(scc) {
            problems.push(format!("import loop: {w}"));
        }
    }
    for a in &allowed {
        if !found.contains(a) {
            problems.push(format!(
                "ALLOWED_LOOPS lists {} but that loop is gone: remove the entry",
                a.join(", ")
            ));
        }
    }
    assert!(
        problems.is_empty(),
        "{}\nmove what the files share into a leaf module that both can use, so references point one way",
        problems.join("\n")
    );
}

/// The check itself must be able to fail: a made-up crate with one loop, one
/// re-exporting parent and one test-only reference.
#[test]
fn the_check_finds_a_loop_and_ignores_reexports() {
    let dir = tempfile::tempdir().expect("temporary folder");
    let src = dir.path().join("src");
    std::fs::create_dir_all(src.join("shop")).unwrap();
    let files = [
        ("src/lib.rs", "mod a;\nmod b;\nmod shop;\npub use shop::Bench;\n"),
        // a → b through a braced use; the comment and the string must not count.
        ("src/a.rs", "use crate::{b::Beam, shop};\n// crate::c::Nothing\nconst S: &str = \"crate::b::X\";\n"),
        // b → a through an inline path in code.
        ("src/b.rs", "pub struct Beam;\nfn f() { let _ = crate::a::helper(); }\n"),
        // The parent only declares and re-exports: its child's use of the
        // re-exported name goes to the defining file, not back to the parent.
        ("src/shop/mod.rs", "mod bench;\nmod tools;\npub use bench::Bench;\npub(crate) use tools::Saw;\n"),
        ("src/shop/bench.rs", "use super::Saw;\npub struct Bench;\n"),
        (
            "src/shop/tools.rs",
            "pub struct Saw;\n#[cfg(test)]\nmod tests {\n    use super::super::Bench;\n}\n",
        ),
    ];
    for (path, text) in files {
        std::fs::write(dir.path().join(path), text).unwrap();
    }
    let (graph, reasons) = file_graph(dir.path(), "src");
    let edges = |from: &str| graph.get(from).cloned().unwrap_or_default();
    assert_eq!(edges("src/a.rs"), BTreeSet::from(["src/b.rs".to_string(), "src/shop/mod.rs".to_string()]));
    assert_eq!(edges("src/b.rs"), BTreeSet::from(["src/a.rs".to_string()]));
    assert_eq!(edges("src/shop/bench.rs"), BTreeSet::from(["src/shop/tools.rs".to_string()]));
    assert!(edges("src/shop/tools.rs").is_empty(), "test modules are skipped");
    assert!(
        edges("src/shop/mod.rs").is_empty() && edges("src/lib.rs").is_empty(),
        "re-exports are not references"
    );
    let found = loops(&graph);
    assert_eq!(found, vec![vec!["src/a.rs".to_string(), "src/b.rs".to_string()]]);
    assert_eq!(walk(&graph, &found[0]), "src/a.rs → src/b.rs → src/a.rs");
    assert_eq!(
        explained(&walk(&graph, &found[0]), &reasons),
        "src/a.rs → src/b.rs → src/a.rs\n    src/a.rs → src/b.rs: crate::b::Beam\n    src/b.rs → src/a.rs: crate::a::helper"
    );
}

/// File → files it references, for one crate; every file of the crate is a key.
type Graph = BTreeMap<String, BTreeSet<String>>;

/// For each reference between two files, the paths that make it (`crate::a::Item`).
type Reasons = BTreeMap<(String, String), BTreeSet<String>>;

/// One parsed source file.
struct Source {
    /// Path relative to the repository root, with `/`.
    name: String,
    /// Every `use` leaf, with the module (file module plus inline ones) it sits in.
    uses: Vec<Use>,
    /// Inline `crate::`/`super::`/`self::` paths in code, made absolute.
    paths: Vec<Vec<String>>,
}

/// One leaf of a `use` tree.
struct Use {
    /// The module the `use` sits in.
    scope: Vec<String>,
    /// The name it brings into scope (`None` for a glob).
    name: Option<String>,
    /// The path it names, absolute within the crate; `None` if outside it.
    target: Option<Vec<String>>,
    /// `pub`, `pub(crate)` and the like: a re-export, not a reference.
    public: bool,
}

/// Reads every module file reachable from the crate root and links each
/// file to the files defining what it references.
fn file_graph(root: &Path, krate: &str) -> (Graph, Reasons) {
    let dir = root.join(krate);
    let crate_root = ["lib.rs", "main.rs"]
        .iter()
        .map(|f| dir.join(f))
        .find(|p| p.exists())
        .unwrap_or_else(|| panic!("{krate} has neither lib.rs nor main.rs"));
    // Module path → file, and the parsed files, found by following `mod x;`.
    let mut modules: BTreeMap<Vec<String>, usize> = BTreeMap::new();
    let mut sources: Vec<Source> = Vec::new();
    let mut queue: VecDeque<(PathBuf, Vec<String>)> = VecDeque::from([(crate_root, Vec::new())]);
    while let Some((path, module)) = queue.pop_front() {
        let text = std::fs::read_to_string(&path).unwrap_or_else(|e| panic!("{}: {e}", path.display()));
        let name = path.strip_prefix(root).unwrap_or(&path).to_string_lossy().replace('\\', "/");
        let parsed = parse(&text, &module);
        let index = sources.len();
        for inline in &parsed.inline_modules {
            modules.insert(inline.clone(), index);
        }
        modules.insert(module.clone(), index);
        // Children of `a.rs` live in `a/`, children of `mod.rs`/`lib.rs`/`main.rs` beside it.
        let stem = path.file_stem().and_then(|s| s.to_str()).unwrap_or_default();
        let child_dir = if ["mod", "lib", "main"].contains(&stem) {
            path.parent().unwrap().to_path_buf()
        } else {
            path.with_extension("")
        };
        for (scope, child) in &parsed.declared {
            // An out-of-line module inside an inline one lives in a sub-folder.
            let mut base = child_dir.clone();
            for m in &scope[module.len()..] {
                base.push(m);
            }
            let flat = base.join(format!("{child}.rs"));
            let nested = base.join(child).join("mod.rs");
            let file = if flat.exists() { flat } else { nested };
            let mut m = scope.clone();
            m.push(child.clone());
            queue.push_back((file, m));
        }
        sources.push(Source { name, uses: parsed.uses, paths: parsed.paths });
    }
    let mut graph: Graph = sources.iter().map(|s| (s.name.clone(), BTreeSet::new())).collect();
    let mut reasons = Reasons::new();
    for s in &sources {
        let referenced =
            s.uses.iter().filter(|u| !u.public).filter_map(|u| u.target.as_ref()).chain(&s.paths);
        for path in referenced {
            let Some(f) = defining_file(path, &modules, &sources, 0) else { continue };
            let target = &sources[f].name;
            if *target != s.name {
                graph.get_mut(&s.name).unwrap().insert(target.clone());
                let why = reasons.entry((s.name.clone(), target.clone())).or_default();
                why.insert(format!("crate::{}", path.join("::")));
            }
        }
    }
    (graph, reasons)
}

/// The file that defines the item (or module) at absolute `path`, following
/// `use` declarations in the module that names it; `None` if it lies outside
/// the crate.
fn defining_file(
    path: &[String],
    modules: &BTreeMap<Vec<String>, usize>,
    sources: &[Source],
    depth: usize,
) -> Option<usize> {
    assert!(depth < 32, "`use` declarations refer to each other in a circle at {}", path.join("::"));
    // The longest prefix that is a module; the rest names an item in it
    // (and then perhaps a variant or an associated item, which stay there).
    let k = (0..=path.len()).rev().find(|&k| modules.contains_key(&path[..k]))?;
    let (module, rest) = path.split_at(k);
    let file = modules[module];
    let Some(item) = rest.first() else { return Some(file) };
    let brought_in = sources[file].uses.iter().find(|u| u.scope == module && u.name.as_ref() == Some(item));
    match brought_in {
        Some(u) => {
            let mut through = u.target.clone()?;
            through.extend_from_slice(&rest[1..]);
            defining_file(&through, modules, sources, depth + 1)
        }
        None => Some(file),
    }
}

/// What one file says about modules and references.
struct Parsed {
    /// `mod x;` declarations: (the module they sit in, the child's name).
    declared: Vec<(Vec<String>, String)>,
    /// Module paths of inline `mod x { }` blocks.
    inline_modules: Vec<Vec<String>>,
    uses: Vec<Use>,
    paths: Vec<Vec<String>>,
}

/// Parses a file whose own module path is `module`.
fn parse(text: &str, module: &[String]) -> Parsed {
    let tokens = tokens(&without_tests(&blank_comments_and_strings(text)));
    let mut out =
        Parsed { declared: Vec::new(), inline_modules: Vec::new(), uses: Vec::new(), paths: Vec::new() };
    // Inline modules open at a brace depth and close when it drops back.
    let mut scope: Vec<String> = module.to_vec();
    let mut open_at: Vec<usize> = Vec::new();
    let mut depth = 0usize;
    // Child module names declared with `mod x;` anywhere in the file, so a
    // `use x::…` that starts with one resolves relative to this module.
    let children: BTreeSet<(Vec<String>, String)> = declared_children(&tokens, module);
    let mut i = 0;
    while i < tokens.len() {
        let t = tokens[i].as_str();
        match t {
            "{" => depth += 1,
            "}" => {
                depth = depth.saturating_sub(1);
                if open_at.last() == Some(&depth) {
                    open_at.pop();
                    scope.pop();
                }
            }
            "mod" if i + 2 < tokens.len() && is_ident(&tokens[i + 1]) => {
                if tokens[i + 2] == ";" {
                    out.declared.push((scope.clone(), tokens[i + 1].clone()));
                } else if tokens[i + 2] == "{" {
                    scope.push(tokens[i + 1].clone());
                    out.inline_modules.push(scope.clone());
                    open_at.push(depth);
                    depth += 1;
                    i += 3;
                    continue;
                }
            }
            "use" => {
                let public = i > 0
                    && (tokens[i - 1] == "pub" || (tokens[i - 1] == ")" && preceded_by_pub(&tokens, i - 1)));
                let end = tokens[i..].iter().position(|t| t == ";").map_or(tokens.len(), |e| i + e);
                let mut leaves = Vec::new();
                use_tree(&tokens[i + 1..end], &mut Vec::new(), &mut leaves);
                for (path, name) in leaves {
                    let target = absolute(&path, &scope, Some(&children));
                    out.uses.push(Use { scope: scope.clone(), name, target, public });
                }
                i = end + 1;
                continue;
            }
            "crate" | "super" | "self" if tokens.get(i + 1).is_some_and(|n| n == "::") => {
                let mut path = vec![t.to_string()];
                let mut j = i + 1;
                while j + 1 < tokens.len() && tokens[j] == "::" && is_ident(&tokens[j + 1]) {
                    path.push(tokens[j + 1].clone());
                    j += 2;
                }
                if let Some(p) = absolute(&path, &scope, None) {
                    out.paths.push(p);
                }
                i = j;
                continue;
            }
            _ => {}
        }
        i += 1;
    }
    out
}

/// The `mod x;` children of each module in the file, for resolving `use x::…`.
fn declared_children(tokens: &[String], module: &[String]) -> BTreeSet<(Vec<String>, String)> {
    // Inline modules are rare; a flat pass attributing every `mod x;` to the
    // file's own module is enough for `use child::…` in the file's top level.
    tokens
        .windows(3)
        .filter(|w| w[0] == "mod" && is_ident(&w[1]) && w[2] == ";")
        .map(|w| (module.to_vec(), w[1].clone()))
        .collect()
}

/// Whether the `)` at `close` ends a `pub(…)` visibility.
fn preceded_by_pub(tokens: &[String], close: usize) -> bool {
    let open = (0..close).rev().find(|&k| tokens[k] == "(");
    open.is_some_and(|o| o > 0 && tokens[o - 1] == "pub")
}

/// Makes `path` absolute from module `scope`: `crate`, `super` and `self`
/// lead, or (with `children`) a declared child module; `None` otherwise
/// (another crate, the standard library).
fn absolute(
    path: &[String],
    scope: &[String],
    children: Option<&BTreeSet<(Vec<String>, String)>>,
) -> Option<Vec<String>> {
    let first = path.first()?;
    let (mut base, rest) = match first.as_str() {
        "crate" => (Vec::new(), &path[1..]),
        "self" => (scope.to_vec(), &path[1..]),
        "super" => {
            let mut base = scope.to_vec();
            let mut k = 0;
            while path.get(k).is_some_and(|s| s == "super") {
                base.pop()?;
                k += 1;
            }
            (base, &path[k..])
        }
        _ if children.is_some_and(|c| c.contains(&(scope.to_vec(), first.clone()))) => (scope.to_vec(), path),
        _ => return None,
    };
    base.extend_from_slice(rest);
    Some(base)
}

/// Flattens a `use` tree (the tokens between `use` and `;`) into leaves:
/// the full path and the name brought into scope (`None` for a glob).
fn use_tree(tokens: &[String], prefix: &mut Vec<String>, out: &mut Vec<(Vec<String>, Option<String>)>) {
    let depth_before = prefix.len();
    let mut i = 0;
    while i < tokens.len() {
        match tokens[i].as_str() {
            "::" => {}
            "*" => out.push((prefix.clone(), None)),
            "{" => {
                // Split the braced list at top-level commas.
                let close = matching(tokens, i);
                let mut start = i + 1;
                let mut level = 0;
                for k in i + 1..close {
                    match tokens[k].as_str() {
                        "{" => level += 1,
                        "}" => level -= 1,
                        "," if level == 0 => {
                            use_tree(&tokens[start..k], prefix, out);
                            start = k + 1;
                        }
                        _ => {}
                    }
                }
                use_tree(&tokens[start..close], prefix, out);
                i = close;
            }
            "as" => {
                // `x as y`: the leaf pushed last is renamed.
                if let (Some(last), Some(alias)) = (out.last_mut(), tokens.get(i + 1)) {
                    last.1 = Some(alias.clone());
                }
                i += 1;
            }
            name if is_ident(name) => {
                let is_leaf = tokens.get(i + 1).is_none_or(|n| n != "::");
                if name == "self" && is_leaf && !prefix.is_empty() {
                    // `a::{self, …}` names the module `a` itself.
                    out.push((prefix.clone(), prefix.last().cloned()));
                } else {
                    prefix.push(name.to_string());
                    if is_leaf {
                        out.push((prefix.clone(), Some(name.to_string())));
                    }
                }
            }
            _ => {}
        }
        i += 1;
    }
    prefix.truncate(depth_before);
}

/// The index of the `}` closing the `{` at `open`.
fn matching(tokens: &[String], open: usize) -> usize {
    let mut level = 0;
    for (k, t) in tokens.iter().enumerate().skip(open) {
        match t.as_str() {
            "{" => level += 1,
            "}" => {
                level -= 1;
                if level == 0 {
                    return k;
                }
            }
            _ => {}
        }
    }
    tokens.len()
}

fn is_ident(t: &str) -> bool {
    t.chars().next().is_some_and(|c| c.is_alphabetic() || c == '_')
}

/// Identifiers, `::`, and single punctuation characters.
fn tokens(text: &str) -> Vec<String> {
    let chars: Vec<char> = text.chars().collect();
    let mut out = Vec::new();
    let mut i = 0;
    while i < chars.len() {
        let c = chars[i];
        if c.is_alphanumeric() || c == '_' {
            let start = i;
            while i < chars.len() && (chars[i].is_alphanumeric() || chars[i] == '_') {
                i += 1;
            }
            out.push(chars[start..i].iter().collect());
            continue;
        }
        if c == ':' && chars.get(i + 1) == Some(&':') {
            out.push("::".to_string());
            i += 2;
            continue;
        }
        if !c.is_whitespace() {
            out.push(c.to_string());
        }
        i += 1;
    }
    out
}

/// Replaces comments and the insides of string and character literals with
/// spaces (keeping line breaks), so that paths in them are not read as code.
fn blank_comments_and_strings(text: &str) -> String {
    let c: Vec<char> = text.chars().collect();
    let mut out = String::with_capacity(text.len());
    let blank = |out: &mut String, ch: char| out.push(if ch == '\n' { '\n' } else { ' ' });
    let mut i = 0;
    while i < c.len() {
        let next = c.get(i + 1).copied();
        if c[i] == '/' && next == Some('/') {
            while i < c.len() && c[i] != '\n' {
                i += 1;
            }
        } else if c[i] == '/' && next == Some('*') {
            let mut level = 0;
            while i < c.len() {
                if c[i] == '/' && c.get(i + 1) == Some(&'*') {
                    level += 1;
                    i += 2;
                } else if c[i] == '*' && c.get(i + 1) == Some(&'/') {
                    level -= 1;
                    i += 2;
                    if level == 0 {
                        break;
                    }
                } else {
                    blank(&mut out, c[i]);
                    i += 1;
                }
            }
        } else if (c[i] == 'r' || (c[i] == 'b' && next == Some('r')))
            && !c.get(i.wrapping_sub(1)).is_some_and(|p| p.is_alphanumeric() || *p == '_')
            && {
                let k = if c[i] == 'b' { i + 2 } else { i + 1 };
                let hashes = c[k..].iter().take_while(|&&h| h == '#').count();
                c.get(k + hashes) == Some(&'"')
            }
        {
            // Raw string: r"…", r#"…"#, br"…".
            let k = if c[i] == 'b' { i + 2 } else { i + 1 };
            let hashes = c[k..].iter().take_while(|&&h| h == '#').count();
            out.push('"');
            i = k + hashes + 1;
            while i < c.len() {
                if c[i] == '"' && c[i + 1..].iter().take(hashes).filter(|&&h| h == '#').count() == hashes {
                    i += 1 + hashes;
                    break;
                }
                blank(&mut out, c[i]);
                i += 1;
            }
            out.push('"');
        } else if c[i] == '"' {
            out.push('"');
            i += 1;
            while i < c.len() && c[i] != '"' {
                if c[i] == '\\' {
                    blank(&mut out, c[i]);
                    i += 1;
                }
                if i < c.len() {
                    blank(&mut out, c[i]);
                    i += 1;
                }
            }
            out.push('"');
            i += 1;
        } else if c[i] == '\'' && (next == Some('\\') || c.get(i + 2) == Some(&'\'')) {
            // A character literal ('a', '\n', '\u{…}'); a lifetime has no closing quote.
            i += 1;
            while i < c.len() && c[i] != '\'' {
                if c[i] == '\\' {
                    i += 1;
                }
                i += 1;
            }
            out.push_str("' '");
            i += 1;
        } else {
            out.push(c[i]);
            i += 1;
        }
    }
    out
}

/// Removes every item marked `#[cfg(test)]` (test modules inline or in
/// their own file, test-only helpers): test code may reach anywhere.
fn without_tests(text: &str) -> String {
    const MARK: &str = "#[cfg(test)]";
    let mut out = String::with_capacity(text.len());
    let mut rest = text;
    while let Some(at) = rest.find(MARK) {
        out.push_str(&rest[..at]);
        let item = &rest[at + MARK.len()..];
        // The item ends at its first top-level `;` or at the brace closing its body.
        let mut level = 0;
        let mut end = item.len();
        for (k, ch) in item.char_indices() {
            match ch {
                '{' => level += 1,
                '}' => {
                    level -= 1;
                    if level == 0 {
                        end = k + 1;
                        break;
                    }
                }
                ';' if level == 0 => {
                    end = k + 1;
                    break;
                }
                _ => {}
            }
        }
        out.extend(item[..end].chars().filter(|&ch| ch == '\n'));
        rest = &item[end..];
    }
    out.push_str(rest);
    out
}

/// Every strongly connected component with more than one file, each sorted,
/// in a stable order (Tarjan's algorithm).
fn loops(graph: &Graph) -> Vec<Vec<String>> {
    struct Tarjan<'a> {
        graph: &'a Graph,
        index: BTreeMap<&'a str, usize>,
        low: BTreeMap<&'a str, usize>,
        stack: Vec<&'a str>,
        on_stack: BTreeSet<&'a str>,
        found: Vec<Vec<String>>,
    }
    impl<'a> Tarjan<'a> {
        fn visit(&mut self, v: &'a str) {
            let n = self.index.len();
            self.index.insert(v, n);
            self.low.insert(v, n);
            self.stack.push(v);
            self.on_stack.insert(v);
            for w in &self.graph[v] {
                let w = w.as_str();
                if !self.index.contains_key(w) {
                    self.visit(w);
                    let lw = self.low[w];
                    let lv = self.low.get_mut(v).unwrap();
                    *lv = (*lv).min(lw);
                } else if self.on_stack.contains(w) {
                    let iw = self.index[w];
                    let lv = self.low.get_mut(v).unwrap();
                    *lv = (*lv).min(iw);
                }
            }
            if self.low[v] == self.index[v] {
                let mut scc = Vec::new();
                while let Some(w) = self.stack.pop() {
                    self.on_stack.remove(w);
                    scc.push(w.to_string());
                    if w == v {
                        break;
                    }
                }
                if scc.len() > 1 {
                    scc.sort();
                    self.found.push(scc);
                }
            }
        }
    }
    let mut t = Tarjan {
        graph,
        index: BTreeMap::new(),
        low: BTreeMap::new(),
        stack: Vec::new(),
        on_stack: BTreeSet::new(),
        found: Vec::new(),
    };
    for v in graph.keys() {
        if !t.index.contains_key(v.as_str()) {
            t.visit(v);
        }
    }
    t.found.sort();
    t.found
}

/// A closed walk along real references through every file of a loop,
/// starting and ending at its first file: `a.rs → b.rs → a.rs`.
fn walk(graph: &Graph, scc: &[String]) -> String {
    let members: BTreeSet<&str> = scc.iter().map(String::as_str).collect();
    // Shortest path inside the loop, by breadth-first search.
    let path = |from: &str, to: &str| -> Vec<String> {
        let mut prev: BTreeMap<&str, &str> = BTreeMap::new();
        let mut queue = VecDeque::from([from]);
        while let Some(v) = queue.pop_front() {
            for w in graph[v].iter().map(String::as_str).filter(|w| members.contains(w)) {
                if w != from && !prev.contains_key(w) {
                    prev.insert(w, v);
                    queue.push_back(w);
                }
            }
        }
        let mut out = vec![to.to_string()];
        let mut at = to;
        while let Some(&p) = prev.get(at) {
            if p == from {
                break;
            }
            out.push(p.to_string());
            at = p;
        }
        out.reverse();
        out
    };
    let mut seen: BTreeSet<&str> = BTreeSet::new();
    let mut steps = vec![scc[0].clone()];
    let mut at = scc[0].as_str();
    seen.insert(at);
    for target in scc.iter().map(String::as_str) {
        if seen.contains(target) {
            continue;
        }
        for step in path(at, target) {
            seen.insert(members.get(step.as_str()).copied().unwrap());
            steps.push(step);
        }
        at = target;
    }
    steps.extend(path(at, &scc[0]));
    steps.join(" → ")
}

/// A walk followed by one line per step naming the paths that make it, so
/// whoever breaks the loop sees what to move.
fn explained(walk: &str, reasons: &Reasons) -> String {
    let files: Vec<&str> = walk.split(" → ").collect();
    let mut out = walk.to_string();
    let mut shown = BTreeSet::new();
    for pair in files.windows(2) {
        let key = (pair[0].to_string(), pair[1].to_string());
        if shown.insert(key.clone()) {
            let why: Vec<&str> = reasons.get(&key).into_iter().flatten().map(String::as_str).collect();
            out.push_str(&format!("\n    {} → {}: {}", pair[0], pair[1], why.join(", ")));
        }
    }
    out
}
