//! Reading a real capture from a file, whichever kind it is, as scan records.

use std::path::Path;

use virtual_board::TapState;

use super::{decode_jtag, read_capture_log_file, read_vcd_file, CaptureError, JtagSignals};
use crate::run::ScanRecord;

/// Wire names of a recording: all `None` means the names `play --vcd` writes
/// for every TAP port of the program.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct WireNames {
    /// TCK.
    pub tck: Option<String>,
    /// TMS.
    pub tms: Option<String>,
    /// TDI.
    pub tdi: Option<String>,
    /// TDO.
    pub tdo: Option<String>,
    /// TRST*.
    pub trst: Option<String>,
}

impl WireNames {
    /// True when some wire is named.
    pub fn any(&self) -> bool {
        self.tck.is_some() || self.tms.is_some() || self.tdi.is_some() || self.tdo.is_some()
    }
}

/// The scans of a real capture: a capture log (`.jsonl`), or a VCD decoded
/// for `ports` (named wires belong to the first port). Returns the records
/// and the number of partial scans.
///
/// # Errors
/// The file cannot be read or decoded (a located error).
pub fn read_real_capture(
    path: &Path,
    ports: &[String],
    names: &WireNames,
    start: Option<TapState>,
) -> Result<(Vec<ScanRecord>, usize), CaptureError> {
    let is_vcd = path
        .extension()
        .is_some_and(|e| e.eq_ignore_ascii_case("vcd"));
    if !is_vcd {
        return Ok((read_capture_log_file(path)?, 0));
    }
    let vcd = read_vcd_file(path)?;
    let ports: Vec<&String> = if names.any() {
        ports.iter().take(1).collect()
    } else {
        ports.iter().collect()
    };
    let mut records = Vec::new();
    let mut partial = 0;
    for port in ports {
        let mut wires = JtagSignals::for_port(port);
        if names.any() {
            wires.tck = names.tck.clone().unwrap_or(wires.tck);
            wires.tms = names.tms.clone().unwrap_or(wires.tms);
            wires.tdi = names.tdi.clone().unwrap_or(wires.tdi);
            wires.tdo = names.tdo.clone().unwrap_or(wires.tdo);
            wires.trst = names.trst.clone();
        } else if wires.trst.as_deref().is_some_and(|t| vcd.find(t).is_err()) {
            // `play --vcd` writes no TRST_N wire for a port without TRST*.
            wires.trst = None;
        }
        let decoded = decode_jtag(&vcd, &wires, start)?;
        partial += decoded.scans.iter().filter(|s| s.partial).count();
        records.extend(decoded.records());
    }
    Ok((records, partial))
}
