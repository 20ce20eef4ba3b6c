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

/// An error message must name `file:line:col:` and stay short, whatever
/// the input (issue 19: no unbounded quoting, no made-up place).
pub fn assert_located(message: &str, file: &str) {
    assert!(message.len() < 2_000, "unbounded message: {message:.300}");
    let rest = message
        .strip_prefix(file)
        .unwrap_or_else(|| panic!("`{message:.300}` does not start with {file}"));
    let place: Vec<&str> = rest.splitn(4, ':').collect();
    assert!(
        place.len() == 4 && place[1].parse::<u32>().is_ok() && place[2].parse::<u32>().is_ok(),
        "no line:col in `{message:.300}`"
    );
}
