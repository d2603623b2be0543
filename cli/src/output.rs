//! Result files: written under a temporary name in the target directory and renamed into place.
//!
//! A rename within one directory is atomic on the file systems we run on, so
//! a crash or Ctrl-C leaves either the old file or the new one, never half of one.

use std::io::Write as _;
use std::path::Path;

use crate::Failure;

/// Create `dir` (and parents) if missing, before any simulation runs, so a
/// bad path fails in a second rather than after an hour.
pub fn prepare_dir(dir: &Path) -> Result<(), Failure> {
    std::fs::create_dir_all(dir)
        .map_err(|e| Failure::input(format!("--out {}: cannot create the directory: {e}", dir.display())))?;
    if !dir.is_dir() {
        return Err(Failure::input(format!("--out {}: not a directory", dir.display())));
    }
    Ok(())
}

/// Write `bytes` to `dir/name` atomically: temp file in `dir`, flush, sync, rename.
pub fn write_atomic(dir: &Path, name: &str, bytes: &[u8]) -> Result<(), Failure> {
    let target = dir.join(name);
    let fail = |e: std::io::Error| Failure::run(format!("cannot write {}: {e}", target.display()));
    let mut tmp = tempfile::Builder::new().prefix(&format!(".{name}.")).tempfile_in(dir).map_err(fail)?;
    tmp.write_all(bytes).map_err(fail)?;
    // A temporary file is private (0600); a result is for everyone who may
    // read the folder, like any file the user would have saved.
    #[cfg(unix)]
    {
        use std::os::unix::fs::PermissionsExt as _;
        tmp.as_file().set_permissions(std::fs::Permissions::from_mode(0o644)).map_err(fail)?;
    }
    tmp.as_file().sync_all().map_err(fail)?;
    tmp.persist(&target).map_err(|e| fail(e.error))?;
    Ok(())
}
