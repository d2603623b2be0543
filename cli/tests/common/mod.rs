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
