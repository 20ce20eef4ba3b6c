//! Board file reader, with the demo's BSDL files beside it.
#![no_main]
use std::path::Path;

use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    let text = boardtwin_fuzz::text(data);
    let result =
        virtual_board::load_board_text(&text, Path::new("b.yaml"), &mut boardtwin_fuzz::demo_bsdl);
    if let Err(e) = result {
        if !matches!(*e.kind, virtual_board::BoardErrorKind::Bsdl { .. }) {
            boardtwin_fuzz::assert_located(&e.to_string(), "b.yaml");
        }
    }
});
