//! Outside tools for cross-check tests: find one on PATH, or skip with a notice (fail when BOARDTWIN_REQUIRE_TOOLS=1).

use std::path::{Path, PathBuf};

/// Set to `1` to make a missing tool a test failure instead of a skip (CI does).
pub const REQUIRE_TOOLS: &str = "BOARDTWIN_REQUIRE_TOOLS";

/// The path of `name` on PATH. When it is missing: panics if
/// `BOARDTWIN_REQUIRE_TOOLS=1`, otherwise prints
/// `skipped: <name> not found; install <install>` to stderr and returns
/// `None`, so the test can return early. The notice is written to stderr
/// directly, not through `eprintln!`, so the test harness does not capture
/// it: a skipped check shows in the output of `cargo test` even though the
/// test itself is reported as passing.
pub fn require_tool(name: &str, install: &str) -> Option<PathBuf> {
    if let Some(path) = on_path(name) {
        return Some(path);
    }
    if std::env::var(REQUIRE_TOOLS).is_ok_and(|v| v == "1") {
        panic!("{name} not found on PATH and {REQUIRE_TOOLS}=1; install {install}");
    }
    use std::io::Write;
    let _ = writeln!(
        std::io::stderr().lock(),
        "skipped: {name} not found; install {install} (the outside check did not run)"
    );
    None
}

fn on_path(name: &str) -> Option<PathBuf> {
    let path = std::env::var_os("PATH")?;
    std::env::split_paths(&path)
        .map(|dir| dir.join(name))
        .find(|p| is_executable(p))
}

#[cfg(unix)]
fn is_executable(p: &Path) -> bool {
    use std::os::unix::fs::PermissionsExt;
    p.metadata()
        .is_ok_and(|m| m.is_file() && m.permissions().mode() & 0o111 != 0)
}

#[cfg(not(unix))]
fn is_executable(p: &Path) -> bool {
    p.is_file()
}
