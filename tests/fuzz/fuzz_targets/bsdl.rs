//! BSDL reader: any bytes give a model or a located error.
#![no_main]
use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    let text = boardtwin_fuzz::text(data);
    let _ = virtual_board::parse_bsdl(&text);
});
