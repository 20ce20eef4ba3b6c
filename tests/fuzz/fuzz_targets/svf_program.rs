//! SVF reader for one TAP port of the demo board; what reads also runs.
#![no_main]
use std::path::Path;

use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    let text = boardtwin_fuzz::text(data);
    if let Ok(svf) = harness::program::svf::read_svf(&text, Some(Path::new("p.svf")), "J2_AUX") {
        boardtwin_fuzz::run_on_demo(&svf.program);
    }
});
