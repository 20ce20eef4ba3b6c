//! The instruction each device holds after a run, as the target tells it.

use virtual_board::{HeldInstruction, TapTarget};

/// The instruction each device of every TAP port of `target` holds (ports in order, each
/// TDI end first); empty when the target cannot say.
pub fn held_instructions(target: &dyn TapTarget) -> Vec<HeldInstruction> {
    (0..target.port_count())
        .filter_map(|p| target.instructions(p))
        .flatten()
        .collect()
}
