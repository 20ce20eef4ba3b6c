//! `boardtwin adapters`: the USB JTAG adapters connected (feature `usb`).

use std::io::Write;

use super::Outcome;

/// Lists the adapters, one line each with its usb:// address.
#[cfg(feature = "usb")]
pub fn run(out: &mut dyn Write) -> anyhow::Result<Outcome> {
    let adapters = harness::mpsse::usb::list_adapters().map_err(anyhow::Error::msg)?;
    if adapters.is_empty() {
        writeln!(
            out,
            "no USB JTAG adapter found (looked for VID:PID {})",
            harness::mpsse::usb::KNOWN
                .iter()
                .map(|(v, p, _)| format!("{v:04x}:{p:04x}"))
                .collect::<Vec<_>>()
                .join(", ")
        )?;
        return Ok(Outcome::Failed);
    }
    for a in &adapters {
        writeln!(
            out,
            "usb://{:04x}:{:04x}/{}  {} ({}, {})",
            a.vid, a.pid, a.serial, a.description, a.family, a.manufacturer
        )?;
    }
    Ok(Outcome::Passed)
}

/// Without the `usb` feature: says so and fails.
#[cfg(not(feature = "usb"))]
pub fn run(_out: &mut dyn Write) -> anyhow::Result<Outcome> {
    anyhow::bail!("{}", super::target::NO_USB)
}
