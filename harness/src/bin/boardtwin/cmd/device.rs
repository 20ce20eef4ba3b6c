//! `boardtwin device FILE.bsd [--json]`: read one BSDL file and show what it says about the device.

use std::io::Write;

use harness::DeviceSummary;

use super::Outcome;
use crate::args::DeviceArgs;

/// Loads the file, builds the summary and prints it as text or JSON.
pub fn run(args: &DeviceArgs, out: &mut dyn Write) -> anyhow::Result<Outcome> {
    // The reader's warnings name a line; the span adds the file.
    let model = tracing::warn_span!("read", file = %args.file.display())
        .in_scope(|| virtual_board::read_bsdl(&args.file))?;
    tracing::info!(
        entity = %model.entity,
        cells = model.cells.len(),
        "read {}",
        args.file.display()
    );
    let summary = DeviceSummary::from_model(&model);
    if args.json {
        let mut text = serde_json::to_string_pretty(&summary)?;
        text.push('\n');
        out.write_all(text.as_bytes())?;
    } else if args.cells {
        write!(out, "{}", harness::CellsText(&summary))?;
    } else {
        write!(out, "{summary}")?;
    }
    Ok(Outcome::Passed)
}
