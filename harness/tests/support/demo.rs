//! The bundled demo board, loaded once per test binary.

use std::path::{Path, PathBuf};
use std::sync::OnceLock;

use virtual_board::{load_board, LoadedBoard};

/// The repository root.
pub fn repo() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("..")
}

/// The demo board (`scenarios/boards/harbor_controller.yaml`).
pub fn demo() -> &'static LoadedBoard {
    static BOARD: OnceLock<LoadedBoard> = OnceLock::new();
    BOARD.get_or_init(|| {
        load_board(&repo().join("scenarios/boards/harbor_controller.yaml")).expect("demo loads")
    })
}
