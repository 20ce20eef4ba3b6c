//! Native (YAML) program reader against the demo board; what reads also runs.
#![no_main]
use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    let text = boardtwin_fuzz::text(data);
    let path = boardtwin_fuzz::repo().join("scenarios/programs/p.yaml");
    match harness::program::native::parse_native(&text, &path, boardtwin_fuzz::demo()) {
        Ok(program) => boardtwin_fuzz::run_on_demo(&program),
        Err(e) => boardtwin_fuzz::assert_located(&e.to_string(), &path.display().to_string()),
    }
});
