//! `boardtwin board FILE.yaml [--json] [--export-netlist FORMAT [-o FILE]]`: read a board file and show its TAP ports, devices and nets, or write its netlist.

use std::io::Write;

use harness::model_notes::unmodelled_attributes;
use harness::BoardSummary;

use super::Outcome;
use crate::args::BoardArgs;

/// Loads the board (and its BSDL files), builds the summary and prints it.
pub fn run(args: &BoardArgs, out: &mut dyn Write) -> anyhow::Result<Outcome> {
    let loaded = tracing::warn_span!("board", file = %args.file.display())
        .in_scope(|| virtual_board::load_board(&args.file))?;
    if let Some(format) = &args.export_netlist {
        return super::import::export(&loaded, format, args.output.as_deref(), out);
    }
    // The design warnings are part of the summary (stdout).
    super::show_model_notes(&[], &unmodelled_attributes(&loaded.board), None);
    let summary = BoardSummary::from_board(&loaded.board);
    if args.json {
        let mut text = serde_json::to_string_pretty(&summary)?;
        text.push('\n');
        out.write_all(text.as_bytes())?;
    } else if args.nets {
        write!(out, "{}", harness::NetsText(&loaded.board))?;
    } else {
        write!(out, "{summary}")?;
    }
    Ok(Outcome::Passed)
}
