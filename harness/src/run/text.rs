//! The readable form of a run: scans, failing bits on the board, hazards,
//! and the statistics line.

use std::fmt;

use virtual_board::BoardEvent;

use super::failures::failures_of;
use super::runner::RunReport;
use crate::report::table::TextTable;

/// Human units for a duration in seconds.
pub fn seconds(s: f64) -> String {
    if s >= 1.0 {
        format!("{s:.2} s")
    } else if s >= 1e-3 {
        format!("{:.2} ms", s * 1e3)
    } else {
        format!("{:.1} µs", s * 1e6)
    }
}

/// Human units for a rate.
pub fn rate(per_second: f64) -> String {
    if per_second >= 1e9 {
        format!("{:.2} G", per_second / 1e9)
    } else if per_second >= 1e6 {
        format!("{:.1} M", per_second / 1e6)
    } else if per_second >= 1e3 {
        format!("{:.1} k", per_second / 1e3)
    } else {
        format!("{per_second:.0} ")
    }
}

/// The statistics line that ends `boardtwin play`.
pub fn statistics(r: &RunReport) -> String {
    let per_second = if r.wall_seconds > 0.0 {
        r.tck_cycles as f64 / r.wall_seconds
    } else {
        0.0
    };
    format!(
        "{}, {} ({} failed), {} at {}Hz TCK, {} wall, {}cycles/s",
        crate::count(
            usize::try_from(r.tck_cycles).unwrap_or(usize::MAX),
            "TCK cycle"
        ),
        crate::count(r.scans.len(), "scan"),
        r.failed_scans(),
        seconds(r.program_seconds()),
        rate(r.tck_hz),
        seconds(r.wall_seconds),
        rate(per_second)
    )
}

/// The verdict line of a run: `PASSED` or `FAILED`, and under `--strict`
/// (`strict` true) why a passing run with hazards still fails:
/// `PASSED, 1 hazard: exit 1 under --strict`.
pub fn verdict(r: &RunReport, strict: bool) -> String {
    let n = r.hazards.len();
    match (r.passed(), strict && n > 0) {
        (true, false) => "PASSED".to_string(),
        (true, true) => format!(
            "PASSED, {n} hazard{}: exit 1 under --strict",
            if n == 1 { "" } else { "s" }
        ),
        (false, _) => "FAILED".to_string(),
    }
}

/// A run report, as text.
pub struct RunText<'a>(pub &'a RunReport);

/// A run report as text, with the verdict of a `--strict` run.
pub struct StrictRunText<'a>(pub &'a RunReport);

impl fmt::Display for StrictRunText<'_> {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write_report(f, self.0, true)
    }
}

impl fmt::Display for RunText<'_> {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write_report(f, self.0, false)
    }
}

fn write_report(f: &mut fmt::Formatter<'_>, r: &RunReport, strict: bool) -> fmt::Result {
    writeln!(f, "program {}", r.program)?;
    let mut t = TextTable::new(2);
    t.row(["scan", "port", "reg", "bits", "result", "from"]);
    for s in &r.scans {
        let result = match (&s.record.expected, s.record.passed) {
            (None, _) => "-".to_string(),
            (Some(_), true) => "pass".to_string(),
            (Some(_), false) => {
                let n = s.record.failing_bits.len();
                format!("FAIL ({n} bit{})", if n == 1 { "" } else { "s" })
            }
        };
        t.row([
            s.record.index.to_string(),
            s.record.port.clone(),
            s.record.register.clone(),
            s.record.length.to_string(),
            result,
            s.origin.trim().to_string(),
        ]);
    }
    write!(f, "{t}")?;
    let failures: Vec<_> = r.scans.iter().flat_map(failures_of).collect();
    if !failures.is_empty() {
        writeln!(f, "\nfailing bits")?;
        let mut t = TextTable::new(2);
        t.row([
            "scan", "bit", "expected", "captured", "device", "register", "cell", "function",
            "port", "pin", "net",
        ]);
        let dash = |s: &Option<String>| s.clone().unwrap_or_else(|| "-".into());
        for b in &failures {
            t.row([
                b.scan.to_string(),
                b.bit.to_string(),
                (b.expected as u8).to_string(),
                (b.captured as u8).to_string(),
                dash(&b.device),
                dash(&b.register),
                b.register_bit
                    .map(|k| k.to_string())
                    .unwrap_or_else(|| "-".into()),
                dash(&b.function),
                dash(&b.port),
                dash(&b.pin),
                dash(&b.net),
            ]);
        }
        write!(f, "{t}")?;
    }
    if !r.hazards.is_empty() {
        writeln!(f, "\nhazards")?;
        let mut t = TextTable::new(2);
        t.row(["scan", "port", "cycle", "hazard", "net", "drivers"]);
        for h in &r.hazards {
            let (port, cycle, net, drivers) = hazard_columns(&h.event);
            t.row([
                h.scan.map(|s| s.to_string()).unwrap_or_else(|| "-".into()),
                port,
                cycle.to_string(),
                match h.repeats {
                    1 => h.event.kind().to_string(),
                    _ => format!("{} {}", h.event.kind(), h.times()),
                },
                net,
                drivers,
            ]);
        }
        write!(f, "{t}")?;
    }
    let wrong_length = r
        .hazards
        .iter()
        .filter(|h| matches!(h.event, BoardEvent::ScanLength { .. }))
        .count();
    if wrong_length > 0 {
        writeln!(
            f,
            "\nWARNING: {wrong_length} scan{} shift{} a length that is not the chain's: \
             the program does not do on the board what it says (see hazards)",
            if wrong_length == 1 { "" } else { "s" },
            if wrong_length == 1 { "s" } else { "" },
        )?;
    }
    if let Some(e) = &r.error {
        writeln!(f, "\nstopped: {e}")?;
    }
    writeln!(f, "\n{}", verdict(r, strict))?;
    writeln!(f, "{}", statistics(r))
}

/// Port, cycle, net and drivers of a hazard, as table cells.
pub fn hazard_columns(e: &BoardEvent) -> (String, u64, String, String) {
    let dash = |p: &Option<String>| p.clone().unwrap_or_else(|| "-".into());
    match e {
        BoardEvent::Contention {
            port,
            cycle,
            net,
            drivers,
        } => {
            let d: Vec<String> = drivers
                .iter()
                .map(|d| format!("{}={}", d.driver, d.level as u8))
                .collect();
            (dash(port), *cycle, net.clone(), d.join(", "))
        }
        BoardEvent::FloatingCapture {
            port,
            cycle,
            pin,
            net,
            ..
        } => (
            port.clone(),
            *cycle,
            net.clone().unwrap_or_else(|| "(no net)".into()),
            format!("read by {pin}"),
        ),
        BoardEvent::ScanDrivesRail {
            port,
            cycle,
            net,
            driver,
        } => (dash(port), *cycle, net.clone(), driver.clone()),
        BoardEvent::ScanMeetsCluster {
            port,
            cycle,
            net,
            driver,
            cluster,
        } => (
            dash(port),
            *cycle,
            net.clone(),
            format!("{driver}, {cluster}"),
        ),
        BoardEvent::ExtestWithoutPreload {
            port,
            cycle,
            device,
        } => (
            port.clone(),
            *cycle,
            "-".into(),
            format!("{device}: latches never loaded"),
        ),
        BoardEvent::TckTooFast {
            port,
            cycle,
            hz,
            max_hz,
            device,
            part,
        } => (
            port.clone(),
            *cycle,
            "-".into(),
            format!(
                "TCK {}Hz, {device} ({part}) allows {}Hz",
                rate(*hz as f64),
                rate(*max_hz as f64)
            ),
        ),
        BoardEvent::TckStopNotAllowed {
            port,
            cycle,
            device,
            part,
        } => (
            port.clone(),
            *cycle,
            "-".into(),
            format!("{device} ({part}) allows TCK to stop only low"),
        ),
        BoardEvent::ScanLength {
            port,
            cycle,
            register,
            origin,
            given,
            path_length,
            path,
        } => (
            port.clone(),
            *cycle,
            "-".into(),
            format!("{origin}: {register} scan of {given} bits, path is {path_length}: {path}"),
        ),
    }
}
