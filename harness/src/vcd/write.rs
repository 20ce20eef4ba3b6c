//! `write_vcd`: recorded TCK periods as IEEE 1364 VCD text (clause 18), one scope per TAP port.
//!
//! # Layout of the file
//! - Header: `$date` (fixed text, so the same recording always gives the same
//!   bytes), `$version`, a `$comment` with the TCK frequency, `$timescale`,
//!   then one `$scope module <port>` per named port holding the wires TCK,
//!   TMS, TDI, TDO and TRST_N (TRST_N only where the port has a TRST* line:
//!   [`write_vcd_ports`]). References carry the port name
//!   (`J1_MAIN_TCK`) so they stay unique in tools that flatten scopes.
//!   Identifier codes count in base 94 from `!`.
//! - `#0 $dumpvars`: TCK 0, TMS 1, TDI 1, TDO z, TRST_N 1 on every port (the
//!   levels of undriven TAP inputs, IEEE 1149.1 clause 6, from memory).
//! - Then, with `H` half a TCK period: recorded period `i` starts at
//!   `H + 2iH`. At its start the TCK that is high falls, and the port's TMS,
//!   TDI, TRST_N and TDO take the period's values (TDO is what the tester
//!   samples on this period's rising edge; it changes on the falling edge
//!   before it, IEEE 1149.1 clause 6, from memory). At `2(i+1)H` the port's
//!   TCK rises, except in a period that only moves TRST* (`Cycle::tck`
//!   false), where TCK stays low. One last falling edge ends the file. The other ports' TCK
//!   stay low. Only changes are written.
//!
//! The half-period lead-in after `#0` keeps the initial values visible and
//! keeps the first period's changes apart from `$dumpvars`.

use std::{
    fs,
    io::{self, BufWriter, Write},
    path::{Path, PathBuf},
    sync::atomic::{AtomicU64, Ordering},
};

use super::Cycle;

/// The five wires of a TAP port, in the order they are declared.
const WIRES: [&str; 5] = ["TCK", "TMS", "TDI", "TDO", "TRST_N"];
const TCK: usize = 0;
const TMS: usize = 1;
const TDI: usize = 2;
const TDO: usize = 3;
const TRST_N: usize = 4;

/// Initial level of each wire in [`WIRES`] order.
const INITIAL: [u8; 5] = [b'0', b'1', b'1', b'z', b'1'];

/// Writes `cycles` as VCD text to `out`.
///
/// `ports[p]` names TAP port `p` (its scope and the prefix of its wire
/// references). A port whose name is empty is left out of the file, and so
/// are its cycles (they take no time). `tck_hz` is the TCK frequency: each
/// recorded period takes one TCK period of simulated time.
///
/// # Errors
/// `InvalidInput` when `tck_hz` is not a positive finite number, when a
/// cycle's port has no entry in `ports`, when a port name holds
/// whitespace or non-printable characters or is used twice, or when the
/// recording is too long for a 64-bit time counter; otherwise the errors of
/// `out`.
pub fn write_vcd(
    cycles: &[Cycle],
    ports: &[String],
    tck_hz: f64,
    out: &mut impl Write,
) -> io::Result<()> {
    let ports: Vec<VcdPort> = ports.iter().map(|n| VcdPort::with_trst(n)).collect();
    write_vcd_ports(cycles, &ports, tck_hz, out)
}

/// A TAP port as the VCD shows it: its name, and whether it has a TRST*
/// line (a port without one gets no TRST_N wire).
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct VcdPort {
    /// Scope name and prefix of the wire references; empty leaves the port out.
    pub name: String,
    /// True when the port has a TRST* line.
    pub trst: bool,
}

impl VcdPort {
    /// A port with all five wires.
    pub fn with_trst(name: &str) -> VcdPort {
        VcdPort {
            name: name.to_string(),
            trst: true,
        }
    }

    /// The ports of a board, each with TRST_N only where the board wires TRST*.
    pub fn of_board(board: &virtual_board::Board) -> Vec<VcdPort> {
        board
            .ports()
            .iter()
            .map(|p| VcdPort {
                name: p.name.clone(),
                trst: p.trst_wired,
            })
            .collect()
    }
}

/// [`write_vcd`] with each port's wires given by a [`VcdPort`]: a port
/// without TRST* has four wires, and its TRST_N identifier code is unused.
///
/// # Errors
/// As [`write_vcd`].
pub fn write_vcd_ports(
    cycles: &[Cycle],
    ports: &[VcdPort],
    tck_hz: f64,
    out: &mut impl Write,
) -> io::Result<()> {
    let has_trst: Vec<bool> = ports.iter().map(|p| p.trst).collect();
    let ports: Vec<String> = ports.iter().map(|p| p.name.clone()).collect();
    let timescale = Timescale::for_tck(tck_hz)?;
    check_ports(cycles, &ports)?;
    let written: Vec<usize> = (0..ports.len()).filter(|&p| !ports[p].is_empty()).collect();
    // slot[p] = position of port p among the written ports.
    let mut slot = vec![None; ports.len()];
    for (k, &p) in written.iter().enumerate() {
        slot[p] = Some(k);
    }
    let code = |k: usize, wire: usize| identifier(k * WIRES.len() + wire);

    writeln!(out, "$date")?;
    writeln!(
        out,
        "\tnot recorded (fixed text, so that output is reproducible)"
    )?;
    writeln!(out, "$end")?;
    writeln!(out, "$version")?;
    writeln!(out, "\tboardtwin")?;
    writeln!(out, "$end")?;
    writeln!(out, "$comment")?;
    writeln!(
        out,
        "\tTCK {tck_hz} Hz, half period {} {}",
        timescale.half, timescale.unit
    )?;
    writeln!(out, "$end")?;
    writeln!(out, "$timescale 1 {} $end", timescale.unit)?;
    for (k, &p) in written.iter().enumerate() {
        writeln!(out, "$scope module {} $end", ports[p])?;
        for (w, wire) in WIRES.iter().enumerate() {
            if w == TRST_N && !has_trst[p] {
                continue;
            }
            writeln!(out, "$var wire 1 {} {}_{wire} $end", code(k, w), ports[p])?;
        }
        writeln!(out, "$upscope $end")?;
    }
    writeln!(out, "$enddefinitions $end")?;

    writeln!(out, "#0")?;
    writeln!(out, "$dumpvars")?;
    for (k, &p) in written.iter().enumerate() {
        for (w, level) in INITIAL.iter().enumerate() {
            if w == TRST_N && !has_trst[p] {
                continue;
            }
            writeln!(out, "{}{}", *level as char, code(k, w))?;
        }
    }
    writeln!(out, "$end")?;

    let mut now: Vec<[u8; 5]> = vec![INITIAL; written.len()];
    let mut changes = Changes::default();
    let half = timescale.half;
    let mut t = half;
    for cycle in cycles {
        let Some(k) = slot[cycle.port] else { continue };
        // Period start: the high TCK (if any) falls, the port's inputs and
        // TDO take this period's values.
        for (j, levels) in now.iter_mut().enumerate() {
            changes.set(levels, j, TCK, b'0');
        }
        let levels = &mut now[k];
        changes.set(levels, k, TMS, bit(cycle.tms));
        changes.set(levels, k, TDI, bit(cycle.tdi));
        changes.set(levels, k, TDO, cycle.tdo.map_or(b'z', bit));
        if has_trst[cycle.port] {
            changes.set(levels, k, TRST_N, bit(cycle.trst_n));
        }
        changes.flush(out, t, &code)?;
        // Half period: the rising edge, unless only the lines changed.
        if cycle.tck {
            changes.set(levels, k, TCK, b'1');
            changes.flush(out, t + half, &code)?;
        }
        t = t.checked_add(2 * half).ok_or_else(|| {
            io::Error::new(
                io::ErrorKind::InvalidInput,
                format!(
                    "{} TCK periods do not fit the VCD time counter",
                    cycles.len()
                ),
            )
        })?;
    }
    for (j, levels) in now.iter_mut().enumerate() {
        changes.set(levels, j, TCK, b'0');
    }
    changes.flush(out, t, &code)?;
    Ok(())
}

/// [`write_vcd`] into the file at `path`, through a temporary file in the
/// same directory that is renamed over `path` only when it is complete: a
/// failed write leaves `path` as it was and removes the temporary file.
///
/// # Errors
/// As [`write_vcd`], and the errors of creating, writing, syncing and
/// renaming the file; file errors name `path`.
pub fn write_vcd_file(
    path: &Path,
    cycles: &[Cycle],
    ports: &[String],
    tck_hz: f64,
) -> io::Result<()> {
    let ports: Vec<VcdPort> = ports.iter().map(|n| VcdPort::with_trst(n)).collect();
    write_vcd_ports_file(path, cycles, &ports, tck_hz)
}

/// [`write_vcd_ports`] into the file at `path`, whole or not at all, as
/// [`write_vcd_file`].
///
/// # Errors
/// As [`write_vcd_file`].
pub fn write_vcd_ports_file(
    path: &Path,
    cycles: &[Cycle],
    ports: &[VcdPort],
    tck_hz: f64,
) -> io::Result<()> {
    let temp = temp_path(path)?;
    let on_file = |e: io::Error| io::Error::new(e.kind(), format!("{}: {e}", path.display()));
    let result = (|| {
        let file = fs::File::create(&temp).map_err(on_file)?;
        let mut out = BufWriter::new(file);
        write_vcd_ports(cycles, ports, tck_hz, &mut out)?;
        let file = out.into_inner().map_err(|e| on_file(e.into_error()))?;
        file.sync_all().map_err(on_file)?;
        fs::rename(&temp, path).map_err(on_file)
    })();
    if result.is_err() {
        let _ = fs::remove_file(&temp);
    }
    result
}

/// `dir/.name.<pid>-<n>.tmp` beside `path`, unique within this process.
fn temp_path(path: &Path) -> io::Result<PathBuf> {
    static NEXT: AtomicU64 = AtomicU64::new(0);
    let Some(name) = path.file_name() else {
        return Err(io::Error::new(
            io::ErrorKind::InvalidInput,
            format!("{}: not a file path", path.display()),
        ));
    };
    let mut temp = std::ffi::OsString::from(".");
    temp.push(name);
    temp.push(format!(
        ".{}-{}.tmp",
        std::process::id(),
        NEXT.fetch_add(1, Ordering::Relaxed)
    ));
    Ok(path.with_file_name(temp))
}

fn check_ports(cycles: &[Cycle], ports: &[String]) -> io::Result<()> {
    let invalid = |msg: String| Err(io::Error::new(io::ErrorKind::InvalidInput, msg));
    for (p, name) in ports.iter().enumerate() {
        if !name.chars().all(|c| c.is_ascii_graphic()) {
            return invalid(format!(
                "port name `{name}` cannot be a VCD scope: use printable ASCII without spaces"
            ));
        }
        if !name.is_empty() && ports[..p].contains(name) {
            return invalid(format!("port name `{name}` is given twice"));
        }
    }
    if let Some((i, c)) = cycles
        .iter()
        .enumerate()
        .find(|(_, c)| c.port >= ports.len())
    {
        return invalid(format!(
            "cycle {i} is on TAP port {} but only {} port names were given",
            c.port,
            ports.len()
        ));
    }
    Ok(())
}

fn bit(b: bool) -> u8 {
    if b {
        b'1'
    } else {
        b'0'
    }
}

/// Identifier code number `n`: base 94 over `!`..=`~`, least significant
/// digit first (`!`, `"`, … `~`, `!"`, `""`, …); every `n` gets its own code.
fn identifier(mut n: usize) -> String {
    let mut code = String::new();
    loop {
        code.push(char::from(b'!' + (n % 94) as u8));
        n /= 94;
        if n == 0 {
            return code;
        }
    }
}

/// Value changes waiting to be written at one time.
#[derive(Default)]
struct Changes {
    pending: Vec<(usize, usize, u8)>,
}

impl Changes {
    /// Sets wire `w` of written port `k` to `level`, noting it if it changed.
    fn set(&mut self, levels: &mut [u8; 5], k: usize, w: usize, level: u8) {
        if levels[w] != level {
            levels[w] = level;
            self.pending.push((k, w, level));
        }
    }

    /// Writes `#t` and the pending changes, if there are any.
    fn flush(
        &mut self,
        out: &mut impl Write,
        t: u64,
        code: &impl Fn(usize, usize) -> String,
    ) -> io::Result<()> {
        if self.pending.is_empty() {
            return Ok(());
        }
        writeln!(out, "#{t}")?;
        for (k, w, level) in self.pending.drain(..) {
            writeln!(out, "{}{}", level as char, code(k, w))?;
        }
        Ok(())
    }
}

/// The `$timescale` unit and half a TCK period in it.
#[derive(Debug, PartialEq)]
struct Timescale {
    unit: &'static str,
    half: u64,
}

impl Timescale {
    /// The coarsest of 1 ns, 1 ps and 1 fs in which half a TCK period is a
    /// whole number; 1 fs with the half period rounded when none is.
    fn for_tck(tck_hz: f64) -> io::Result<Timescale> {
        if !(tck_hz.is_finite() && tck_hz > 0.0) {
            return Err(io::Error::new(
                io::ErrorKind::InvalidInput,
                format!("TCK frequency {tck_hz} Hz: it must be a positive number"),
            ));
        }
        for (unit, per_second) in [("ns", 1e9), ("ps", 1e12), ("fs", 1e15)] {
            let half = per_second / (2.0 * tck_hz);
            let whole = half.round();
            if whole >= 1.0 && (half - whole).abs() <= half * 1e-12 {
                return Ok(Timescale {
                    unit,
                    half: whole as u64,
                });
            }
        }
        let half = (1e15 / (2.0 * tck_hz)).round();
        if half < 1.0 || half >= u64::MAX as f64 / 4.0 {
            return Err(io::Error::new(
                io::ErrorKind::InvalidInput,
                format!("TCK frequency {tck_hz} Hz: out of range for a VCD timescale"),
            ));
        }
        Ok(Timescale {
            unit: "fs",
            half: half as u64,
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn identifiers_count_in_base_94_from_bang() {
        assert_eq!(identifier(0), "!");
        assert_eq!(identifier(1), "\"");
        assert_eq!(identifier(93), "~");
        assert_eq!(identifier(94), "!\"");
        assert_eq!(identifier(95), "\"\"");
        let codes: std::collections::HashSet<String> = (0..20_000).map(identifier).collect();
        assert_eq!(codes.len(), 20_000);
    }

    #[test]
    fn timescale_keeps_half_a_period_whole() {
        let ts = |hz| Timescale::for_tck(hz).unwrap();
        assert_eq!(
            ts(10e6),
            Timescale {
                unit: "ns",
                half: 50
            }
        );
        assert_eq!(
            ts(1e6),
            Timescale {
                unit: "ns",
                half: 500
            }
        );
        // 400 MHz: 1.25 ns, whole in ps.
        assert_eq!(
            ts(400e6),
            Timescale {
                unit: "ps",
                half: 1250
            }
        );
        // 3 MHz: 166.67 ns, whole in no unit; rounded in fs.
        assert_eq!(
            ts(3e6),
            Timescale {
                unit: "fs",
                half: 166_666_667
            }
        );
        for bad in [0.0, -1.0, f64::NAN, f64::INFINITY, 1e300] {
            assert!(Timescale::for_tck(bad).is_err(), "{bad}");
        }
    }
}
