//! Waveforms of TAP traffic as IEEE 1364 VCD files: record the TCK periods a program drives, then write them out.
//!
//! - `record`: [`Recorder`], a [`TapTarget`](virtual_board::TapTarget) wrapper
//!   that keeps every TCK period as a [`Cycle`].
//! - `write`: [`write_vcd`] and [`write_vcd_file`], the VCD text of recorded
//!   cycles (IEEE 1364 clause 18).

mod record;
mod write;

pub use self::{
    record::{Cycle, Recorder},
    write::{write_vcd, write_vcd_file, write_vcd_ports, write_vcd_ports_file, VcdPort},
};
