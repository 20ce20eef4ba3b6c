//! The counting sequence (W. H. Kautz, 1974) as a net-level program, shared
//! by benches and tests: net `i` of `nets` gets code `first + i`, over as
//! many vectors as the largest code needs, an apply and a capture scan per
//! vector.

use harness::program::net_level::{compile_patterns, PatternSet, Schedule, Vector};
use harness::program::Program;
use virtual_board::LoadedBoard;

/// The program, named `name`, and its vector count.
pub fn counting_program(
    loaded: &LoadedBoard,
    nets: &[String],
    first: usize,
    name: &str,
) -> (Program, usize) {
    let last = first + nets.len().saturating_sub(1);
    let width = (usize::BITS - last.leading_zeros()) as usize;
    let vectors = (0..width)
        .map(|k| {
            let mut v = Vector::default();
            for (i, n) in nets.iter().enumerate() {
                let bit = (((first + i) >> k) & 1) as u8;
                v.drive.insert(n.clone(), bit);
                v.expect.insert(n.clone(), bit);
            }
            v
        })
        .collect();
    let set = PatternSet {
        name: "counting".into(),
        from: Default::default(),
        vectors,
        schedule: Schedule::ApplyThenCapture,
    };
    let program = Program {
        name: name.into(),
        steps: compile_patterns(&set, loaded).unwrap_or_else(|e| panic!("{e}")),
        ..Program::default()
    };
    (program, width)
}
