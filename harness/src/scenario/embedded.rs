//! The bundled demo scenarios, compiled into the binary.

use std::path::{Path, PathBuf};

include!(concat!(env!("OUT_DIR"), "/embedded.rs"));

/// Writes the bundled demo into `dir` (boards, devices, programs,
/// scenarios, as in the source tree) and returns its scenarios folder.
///
/// # Errors
/// Any I/O error.
pub fn unpack(dir: &Path) -> std::io::Result<PathBuf> {
    for (rel, bytes) in FILES {
        let path = dir.join("scenarios").join(rel);
        if let Some(parent) = path.parent() {
            std::fs::create_dir_all(parent)?;
        }
        std::fs::write(&path, bytes)?;
    }
    Ok(dir.join("scenarios"))
}
