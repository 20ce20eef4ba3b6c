//! `write_atomic`: write a whole file or nothing (temporary file, then rename).

use std::io::Write;
use std::path::Path;

/// Writes `bytes` to `path` through a temporary file beside it, renamed into
/// place when complete, so a failure never leaves a half-written file.
///
/// # Errors
/// Any I/O error; the temporary file is removed.
pub fn write_atomic(path: &Path, bytes: &[u8]) -> std::io::Result<()> {
    let dir = path
        .parent()
        .filter(|p| !p.as_os_str().is_empty())
        .unwrap_or(Path::new("."));
    let name = path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default();
    let tmp = dir.join(format!(".{name}.{}.tmp", std::process::id()));
    let result = (|| {
        let mut f = std::fs::File::create(&tmp)?;
        f.write_all(bytes)?;
        f.sync_all()?;
        std::fs::rename(&tmp, path)
    })();
    if result.is_err() {
        let _ = std::fs::remove_file(&tmp);
    }
    result
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn writes_whole_file_and_leaves_no_temporary() {
        let folder = tempfile::tempdir().unwrap();
        let dir = folder.path();
        let path = dir.join("out.txt");
        write_atomic(&path, b"hello").unwrap();
        assert_eq!(std::fs::read_to_string(&path).unwrap(), "hello");
        let left: Vec<_> = std::fs::read_dir(dir)
            .unwrap()
            .filter_map(Result::ok)
            .collect();
        assert_eq!(left.len(), 1);
        // A path in a missing folder fails and writes nothing.
        assert!(write_atomic(&dir.join("no/such/dir/x"), b"x").is_err());
        std::fs::remove_dir_all(dir).unwrap();
    }
}
