//! Description types: plain data read from files, no behaviour.
//!
//! The engine (`tap`, `cell`, `device`, `board`) is built from these; readers
//! (`bsdl`, `board_file`) produce them.

pub mod device;
