//! What the fuzz targets share: the demo board, its BSDL files, and the
//! check every reader's error must pass (located, and short).
//!
//! A target feeds arbitrary bytes to one reader. The reader must answer
//! `Ok` or a typed error; a panic, an abort (allocation failure) or a
//! libFuzzer timeout is a finding.

use std::path::{Path, PathBuf};
use std::sync::OnceLock;

use harness::program::Program;
use harness::run::{RunOptions, Runner};
use virtual_board::{load_board, BsdlError, BsdlErrorKind, LoadedBoard};

/// The repository root.
pub fn repo() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("../..")
}

/// The bundled demo board, loaded once.
pub fn demo() -> &'static LoadedBoard {
    static BOARD: OnceLock<LoadedBoard> = OnceLock::new();
    BOARD.get_or_init(|| {
        load_board(&repo().join("scenarios/boards/harbor_controller.yaml")).expect("demo loads")
    })
}

/// BSDL files for a board read from text: the demo's folder, read once each.
pub fn demo_bsdl(p: &Path) -> Result<(String, PathBuf), BsdlError> {
    let full = repo().join("scenarios/boards").join(p);
    std::fs::read_to_string(&full)
        .map(|t| (t, full.clone()))
        .map_err(|e| BsdlError {
            path: Some(full),
            span: Default::default(),
            kind: BsdlErrorKind::Io(e.to_string()),
        })
}

/// Bytes as a reader takes them: text, made valid where it is not.
pub fn text(data: &[u8]) -> std::borrow::Cow<'_, str> {
    String::from_utf8_lossy(data)
}

/// Runs a program that read without error on a copy of the demo board, to
/// its end: what reads also runs.
pub fn run_on_demo(program: &Program) {
    let mut board = demo().board.clone();
    let _ = Runner::new(&mut board, RunOptions::default()).run(program);
}

#[path = "../../../harness/tests/support/located.rs"]
mod located;
pub use located::assert_located;
