//! The counting sequence (W. H. Kautz, 1974) as a net-level program, shared
//! by benches and tests: net `i` of `nets` gets code `first + i`, over as
//! many vectors as the largest code needs, an apply and a capture scan per
//! vector; and the one-vector builder random programs share.

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
        .map(|k| vector(nets, |i| (((first + i) >> k) & 1) as u8))
        .collect();
    let program = compile(
        loaded,
        "counting",
        name,
        vectors,
        Schedule::ApplyThenCapture,
    )
    .unwrap_or_else(|e| panic!("{e}"));
    (program, width)
}

/// `vectors` as a pattern set named `set`, compiled with `schedule` into a
/// program named `name`.
pub fn compile(
    loaded: &LoadedBoard,
    set: &str,
    name: &str,
    vectors: Vec<Vector>,
    schedule: Schedule,
) -> Result<Program, String> {
    let set = PatternSet {
        name: set.into(),
        from: Default::default(),
        vectors,
        schedule,
    };
    Ok(Program {
        name: name.into(),
        steps: compile_patterns(&set, loaded).map_err(|e| e.to_string())?,
        ..Program::default()
    })
}

/// One vector driving net `i` of `nets` to `bit(i)` and expecting it back.
pub fn vector(nets: &[String], mut bit: impl FnMut(usize) -> u8) -> Vector {
    let mut v = Vector::default();
    for (i, n) in nets.iter().enumerate() {
        let b = bit(i);
        v.drive.insert(n.clone(), b);
        v.expect.insert(n.clone(), b);
    }
    v
}
