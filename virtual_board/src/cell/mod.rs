//! Boundary cells: what each cell type captures, as data, and where that
//! value physically comes from.
//!
//! The table itself is `capture_table.txt` beside this file (one row per cell
//! type and function, one column per instruction class). This module only
//! reads it and maps the standard's abstract sources (PI, PO, UPD …) onto the
//! model's physical capture points.

mod capture;

pub use capture::{
    capture_source, CaptureFunction, CaptureSource, InstructionClass, CAPTURE_TABLE,
};
