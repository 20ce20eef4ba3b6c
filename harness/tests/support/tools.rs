//! Outside tools for cross-check tests: find one on PATH, or skip with a notice (fail under CI=true or BOARDTWIN_REQUIRE_TOOLS=1).
//!
//! A test that needs a tool also carries
//! `#[cfg_attr(not(has_TOOL), ignore = "...")]`: harness/build.rs sets
//! `has_TOOL` when the tool is on PATH (or always, under CI=true or
//! BOARDTWIN_REQUIRE_TOOLS=1), so `cargo test` lists a missing tool's test
//! as ignored, with the reason, instead of as passed.

use std::path::{Path, PathBuf};

/// Set to `1` to make a missing tool a test failure instead of a skip (ci/check does).
pub const REQUIRE_TOOLS: &str = "BOARDTWIN_REQUIRE_TOOLS";

/// True when a missing tool must fail its test: `BOARDTWIN_REQUIRE_TOOLS=1`,
/// or `CI=true` as CI services set it.
pub fn tools_required() -> bool {
    std::env::var(REQUIRE_TOOLS).is_ok_and(|v| v == "1")
        || std::env::var("CI").is_ok_and(|v| v == "true" || v == "1")
}

/// The path of `name` on PATH. When it is missing: panics if
/// [`tools_required`], otherwise (the tool went away since the build
/// probed for it) prints
/// `skipped: <name> not found; install <install>` to stderr and returns
/// `None`, so the test can return early. The notice is written to stderr
/// directly, not through `eprintln!`, so the test harness does not capture
/// it.
pub fn require_tool(name: &str, install: &str) -> Option<PathBuf> {
    if let Some(path) = on_path(name) {
        return Some(path);
    }
    if tools_required() {
        panic!("{name} not found on PATH, and CI=true or {REQUIRE_TOOLS}=1 requires it; install {install}");
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
