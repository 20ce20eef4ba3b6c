//! The check every reader's error must pass, whatever the input (issue 19):
//! placed `file:line:col:`, and short (no unbounded quoting). Shared by the
//! mutation sweep (`reader_sweep.rs`) and the fuzz targets (`tests/fuzz`).

/// Panics unless `message` starts with `file:LINE:COL:` and is under 2,000 bytes.
pub fn assert_located(message: &str, file: &str) {
    assert!(message.len() < 2_000, "unbounded message: {message:.300}");
    let rest = message
        .strip_prefix(file)
        .unwrap_or_else(|| panic!("`{message:.300}` does not start with {file}"));
    let place: Vec<&str> = rest.splitn(4, ':').collect();
    assert!(
        place.len() == 4 && place[1].parse::<u32>().is_ok() && place[2].parse::<u32>().is_ok(),
        "no line:col in `{message:.300}`"
    );
}
