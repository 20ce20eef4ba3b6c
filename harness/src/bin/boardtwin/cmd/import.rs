//! `boardtwin import NETLIST --assembly FILE -o BOARD.yaml [--json]`: make a
//! board file from a CAD netlist; and `board --export-netlist`'s writer.

use std::io::Write;
use std::path::Path;

use anyhow::{bail, Context};
use harness::import::{self, NetlistFormat};
use harness::write_atomic;
use virtual_board::LoadedBoard;

use super::Outcome;
use crate::args::ImportArgs;

/// Reads the netlist and assembly file, writes the board file (whole or
/// not at all) and prints the report.
pub fn run(args: &ImportArgs, out: &mut dyn Write) -> anyhow::Result<Outcome> {
    let format = match &args.format {
        Some(w) => NetlistFormat::from_word(w)
            .with_context(|| {
                format!("`{w}` is not a netlist format ({})", NetlistFormat::WORDS)
            })?,
        None => match NetlistFormat::from_path(&args.netlist) {
            Some(f) => f,
            None => bail!(
                "{}: the file name does not say the netlist format; give --format csv, ipc-d-356a or edif",
                args.netlist.display()
            ),
        },
    };
    let imported = import::import(&args.netlist, format, &args.assembly, &args.output)?;
    write_atomic(&args.output, imported.text.as_bytes())
        .with_context(|| format!("cannot write {}", args.output.display()))?;
    if args.json {
        let mut text = serde_json::to_string_pretty(&imported.report)?;
        text.push('\n');
        out.write_all(text.as_bytes())?;
    } else {
        write!(out, "{}", imported.report)?;
        writeln!(out, "\nwrote {}", args.output.display())?;
    }
    Ok(Outcome::Passed)
}

/// Writes a loaded board's netlist in `format` to `output` (atomically) or `out`.
pub fn export(
    loaded: &LoadedBoard,
    format: &str,
    output: Option<&Path>,
    out: &mut dyn Write,
) -> anyhow::Result<Outcome> {
    let format = NetlistFormat::from_word(format).with_context(|| {
        format!(
            "`{format}` is not a netlist format ({})",
            NetlistFormat::WORDS
        )
    })?;
    let (pins, notes) = import::board_netlist(loaded);
    for n in &notes {
        tracing::info!("{n}");
    }
    let text = match format {
        NetlistFormat::Csv => import::write_csv(&pins),
        NetlistFormat::Ipc356 => import::write_ipc356(&pins, &notes),
        NetlistFormat::Edif => import::write_edif(&pins, &notes),
    };
    match output {
        Some(p) => write_atomic(p, text.as_bytes())
            .with_context(|| format!("cannot write {}", p.display()))?,
        None => out.write_all(text.as_bytes())?,
    }
    Ok(Outcome::Passed)
}
