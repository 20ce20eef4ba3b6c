//! Registers: packed bits and the shift/hold stages built on them.

mod bits;

pub use bits::Bits;
