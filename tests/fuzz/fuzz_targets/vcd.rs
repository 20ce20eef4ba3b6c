//! VCD reader.
#![no_main]
use std::path::Path;

use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    let text = boardtwin_fuzz::text(data);
    let _ = harness::capture::read_vcd(&text, Path::new("c.vcd"));
});
