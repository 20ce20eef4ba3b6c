//! The generated 5,000-net board and its counting-sequence interconnect
//! test, shared by the benches that need a board written to a folder (so
//! defects can re-read the BSDL file). The bench declares `generated_board`.

use std::path::PathBuf;

use harness::program::Program;
use virtual_board::{load_board, LoadedBoard};

use super::generated_board;

#[path = "counting.rs"]
mod counting;

/// 26 generated devices of 500 cells on one TAP port: each device's 200
/// outputs drive the next device's inputs, 25 × 200 = 5,000 nets. Written
/// to a temporary folder named after `bench`, returned with the board.
pub fn board(bench: &str) -> (LoadedBoard, PathBuf) {
    let devices = 26;
    let cells = 500;
    let dir = std::env::temp_dir().join(format!("boardtwin-bench-{bench}-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap_or_else(|e| panic!("{e}"));
    std::fs::write(dir.join("gen.bsd"), generated_board::bsdl(cells))
        .unwrap_or_else(|e| panic!("{e}"));
    let yaml = generated_board::chain_board_yaml("generated 5000 nets", devices, cells);
    let path = dir.join("generated.yaml");
    std::fs::write(&path, yaml).unwrap_or_else(|e| panic!("{e}"));
    (load_board(&path).unwrap_or_else(|e| panic!("{e}")), dir)
}

/// The counting sequence (W. H. Kautz, 1974): net i gets code i + 1 (no
/// all-0 code), over ceil(log2(N + 1)) vectors, an apply and a capture scan
/// per vector.
pub fn counting(loaded: &LoadedBoard) -> Program {
    let nets: Vec<String> = loaded.file.nets.keys().cloned().collect();
    counting::counting_program(loaded, &nets, 1, "counting sequence").0
}
