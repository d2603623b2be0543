//! Helpers shared by the end-to-end tests: run the binary from the workspace root.

#![allow(dead_code)] // each test file uses its own subset

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

/// The workspace root, where `scenarios/` lives.
pub fn root() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).parent().expect("workspace root").to_path_buf()
}

/// Run `layflow` with `args` from the workspace root.
pub fn layflow(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_layflow"))
        .args(args)
        .current_dir(root())
        .output()
        .expect("the layflow binary runs")
}

/// Bytes as text, for messages.
pub fn text(b: &[u8]) -> String {
    String::from_utf8_lossy(b).into_owned()
}

/// The `<text>` elements of an SVG: (font-family, content).
pub fn svg_texts(svg: &str) -> Vec<(String, String)> {
    svg.split("<text")
        .skip(1)
        .map(|t| {
            let family = t.split("font-family=\"").nth(1).and_then(|f| f.split('"').next()).unwrap_or("");
            let content = t.split_once('>').map_or("", |x| x.1).split("</text>").next().unwrap_or("");
            (family.to_string(), content.trim().to_string())
        })
        .collect()
}

/// resvg on PATH or in ~/.cargo/bin, or `None` with a notice naming `what`
/// would have been rendered. CI installs resvg and sets
/// LAYFLOW_REQUIRE_RESVG, so there the render always runs.
#[allow(clippy::disallowed_macros)] // a test's notice (cli/clippy.toml keeps print! out of the program)
pub fn resvg(what: &str) -> Option<PathBuf> {
    let on_path = std::env::var_os("PATH")
        .and_then(|paths| std::env::split_paths(&paths).map(|d| d.join("resvg")).find(|p| p.is_file()));
    let found = on_path.or_else(|| {
        std::env::var_os("HOME").map(|h| PathBuf::from(h).join(".cargo/bin/resvg")).filter(|p| p.exists())
    });
    if found.is_none() {
        assert!(std::env::var_os("LAYFLOW_REQUIRE_RESVG").is_none(), "resvg is required but not found");
        eprintln!("notice: resvg not found; skipping the PNG render of {what}");
    }
    found
}

/// `resvg svg png` with no font options, as a user would run it; the PNG's bytes.
pub fn render_png(resvg: &Path, svg: &Path) -> Vec<u8> {
    let png = svg.with_extension("png");
    let o = Command::new(resvg).arg(svg).arg(&png).output().expect("resvg runs");
    assert!(o.status.success(), "resvg failed: {}", text(&o.stderr));
    std::fs::read(&png).expect("the PNG was written")
}

/// The SVG with every `<text>…</text>` element removed: rendered beside the
/// original, the two PNGs differ only if resvg found a font to draw the text.
pub fn without_text(svg: &str) -> String {
    let mut bare = String::new();
    let mut rest = svg;
    while let Some(i) = rest.find("<text") {
        bare.push_str(&rest[..i]);
        let end = rest[i..].find("</text>").expect("closed text") + i + "</text>".len();
        rest = &rest[end..];
    }
    bare.push_str(rest);
    bare
}
