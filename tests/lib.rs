//! The root package exists to own the integration tests in `tests/`; this library holds what its test binaries share: where the repository is and the `boardtwin` binary they run.

use std::path::{Path, PathBuf};
use std::process::Command;
use std::sync::OnceLock;

/// The repository's root folder.
pub fn repo() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

/// The `boardtwin` binary, built once per test binary.
///
/// It belongs to the `harness` package, so cargo does not build it for this
/// package's tests (`CARGO_BIN_EXE_boardtwin` is unset). Build it here with
/// the cargo that runs the tests, into the same target directory and
/// profile, so a test never runs a stale binary.
///
/// # Panics
/// When the build fails: the tests cannot run without the binary.
pub fn boardtwin_path() -> &'static Path {
    static PATH: OnceLock<PathBuf> = OnceLock::new();
    PATH.get_or_init(|| {
        let exe = std::env::current_exe().expect("test binary path");
        // target/<profile>/deps/<test>-<hash> → target/<profile>
        let profile_dir = exe
            .parent()
            .and_then(Path::parent)
            .expect("test binary sits in target/<profile>/deps");
        let cargo = std::env::var_os("CARGO").unwrap_or_else(|| "cargo".into());
        let mut build = Command::new(cargo);
        build.args(["build", "--quiet", "-p", "harness", "--bin", "boardtwin"]);
        build.arg("--manifest-path").arg(repo().join("Cargo.toml"));
        if profile_dir.ends_with("release") {
            build.arg("--release");
        }
        let output = build.output().expect("run cargo build");
        assert!(
            output.status.success(),
            "cargo build of boardtwin failed:\n{}",
            String::from_utf8_lossy(&output.stderr)
        );
        let path = profile_dir.join(format!("boardtwin{}", std::env::consts::EXE_SUFFIX));
        assert!(path.exists(), "no binary at {}", path.display());
        path
    })
}
