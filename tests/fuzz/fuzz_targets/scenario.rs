//! Scenario file reader.
#![no_main]
use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    let text = boardtwin_fuzz::text(data);
    let _ = virtual_board::read_yaml::<harness::scenario::ScenarioFile>(&text);
});
