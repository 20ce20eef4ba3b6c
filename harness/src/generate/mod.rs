//! Test generation: interconnect codes of the published methods, the interconnect and infrastructure programs of a board, and the native YAML writer.
//!
//! # Layout
//! - `methods`: `Method` (counting, modified counting, true/complement,
//!   walking ones and zeros) and `codes`, the vectors of a method.
//! - `interconnect`: `interconnect_test`, the scan-accessible nets of a
//!   board coded by a method, with the drivers chosen so that no shared
//!   control cell makes two drivers fight (`InterconnectTest`, a
//!   `PatternSet` and its native program text).
//! - `infrastructure`: `infrastructure_program`, per TAP port the resets,
//!   IR capture check, BYPASS and IR path lengths and a blind IDCODE read.
//! - `follow_up`: `InterconnectTest::follow_up_yaml`, other vectors over a
//!   test's nets and drivers (diagnosis's follow-up test) as a native program.
//! - `native_write`: `write_native`, any `Program` as native YAML text.
//!
//! # Invariants
//! Generation reads the board as designed and never runs it; what it makes
//! is checked by running it (`harness/tests/generate.rs`).

mod follow_up;
mod infrastructure;
mod interconnect;
mod methods;
mod native_write;
mod through_clusters;

pub use self::{
    infrastructure::{infrastructure_program, infrastructure_yaml},
    interconnect::{
        interconnect_test, CodedNet, GenerateError, InterconnectTest, LeftOut, SafeDriven,
        StaticNet,
    },
    methods::{code_of, codes, Method, UnknownMethod},
    native_write::write_native,
    through_clusters::ClusterNet,
};
