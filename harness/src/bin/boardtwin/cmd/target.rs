//! `--target`: the board a command runs on instead of the in-process one.
//! `tcp://HOST:PORT` is a remote board, checked against the board file;
//! `usb://VID:PID[/SERIAL][/INTERFACE]` a real board through a USB JTAG
//! adapter (feature `usb`), behind the safety checks of
//! [`harness::mpsse::safety`].

use std::sync::atomic::{AtomicBool, Ordering};

use harness::mpsse::address::is_usb;
use harness::mpsse::safety::{chain_test_hz, HardwareGate, CAUTIONS};
use harness::mpsse::{
    program_frequencies, GpioPin, HardwareSession, MpsseTarget, PinMap, TckSetting, UsbAddress,
};
use harness::program::Program;
use harness::remote::{admin_token, open_target, RemoteBoard};
use harness::run::{RunOptions, RunReport, Runner, ScanRecord};
use harness::scenario::{TargetError, TargetSource};
use virtual_board::{DefectSpec, LoadedBoard, TapTarget};

use crate::args::TargetArgs;

/// What a build without the `usb` feature says for a usb:// target.
#[cfg(not(feature = "usb"))]
pub const NO_USB: &str = "this build of boardtwin has no USB support: build it with the \
     `usb` cargo feature (`cargo build --release -p harness --features usb`, needs libftdi1 \
     and pkg-config) for usb:// targets and `boardtwin adapters`";

/// The board of `--target`.
pub enum Opened {
    /// A board served by `boardtwin serve`.
    Remote(RemoteBoard),
    /// A real board through an adapter.
    Usb(Box<HardwareSession>),
}

/// The board of `--target`, if given: a remote board's hello must match
/// `design`, and with `defects` `Some` its connection's board gets exactly
/// those (which needs the admin token); a real board has its own defects.
pub fn open(
    args: &TargetArgs,
    design: &LoadedBoard,
    defects: Option<&[DefectSpec]>,
) -> anyhow::Result<Option<Opened>> {
    let Some(target) = &args.target else {
        return Ok(None);
    };
    if is_usb(target) {
        if defects.is_some_and(|d| !d.is_empty()) {
            anyhow::bail!(
                "{target} is a real board, with only the defects it has: leave out --defects"
            );
        }
        let target = open_usb(target, pins(args)?, design)?;
        return Ok(Some(Opened::Usb(Box::new(HardwareSession::new(
            target,
            design.clone(),
            args.i_have_checked,
        )))));
    }
    let token = token(args)?;
    let board = open_target(target, design, defects, token.as_deref())?;
    Ok(Some(Opened::Remote(board)))
}

/// The GPIO map of `--trst-pin` and `--power-pin`.
pub fn pins(args: &TargetArgs) -> anyhow::Result<PinMap> {
    let pin = |p: &Option<String>| {
        p.as_deref()
            .map(GpioPin::parse)
            .transpose()
            .map_err(anyhow::Error::msg)
    };
    PinMap::new(pin(&args.trst_pin)?, pin(&args.power_pin)?).map_err(anyhow::Error::msg)
}

/// The adapter at `target` for `design`, clocked at the run's default
/// until a program sets its own.
#[cfg(feature = "usb")]
fn open_usb(target: &str, pins: PinMap, design: &LoadedBoard) -> anyhow::Result<MpsseTarget> {
    let address = UsbAddress::parse(target).map_err(anyhow::Error::msg)?;
    let clock = harness::mpsse::TckSetting::for_hz(RunOptions::default().default_hz)?;
    harness::mpsse::usb::open_target(&address, &design.board, pins, clock)
        .map_err(anyhow::Error::msg)
}

/// Without the `usb` feature: the address is still checked, then refused.
#[cfg(not(feature = "usb"))]
fn open_usb(target: &str, _pins: PinMap, _design: &LoadedBoard) -> anyhow::Result<MpsseTarget> {
    UsbAddress::parse(target).map_err(anyhow::Error::msg)?;
    anyhow::bail!("{NO_USB}")
}

/// Checks and sets up the adapter for `program` ([`HardwareSession::prepare`],
/// the cautions on stderr); says so for each FREQUENCY the adapter can
/// only approach from below. Returns the program's run on the virtual board.
pub fn prepare(hw: &mut HardwareSession, program: &Program) -> anyhow::Result<RunReport> {
    let (run, _) = hw.prepare(program, &mut std::io::stderr())?;
    warn_slower(program);
    Ok(run)
}

/// A warning for each frequency of `program` the adapter clocks below.
fn warn_slower(program: &Program) {
    let mut said = Vec::new();
    for hz in program_frequencies(program) {
        let Ok(setting) = TckSetting::for_hz(hz) else {
            continue;
        };
        if (setting.hz - hz).abs() > 1e-9 * hz && !said.contains(&hz.to_bits()) {
            said.push(hz.to_bits());
            tracing::warn!(
                "{}: TCK runs at {} Hz, the fastest the adapter can at or below the program's {hz} Hz",
                program.name,
                setting.hz
            );
        }
    }
}

/// The admin token of `--admin-token-file` or the environment.
pub fn token(args: &TargetArgs) -> anyhow::Result<Option<String>> {
    Ok(admin_token(args.admin_token_file.as_deref())?)
}

/// Runs `program` on the target and returns its scans as a real capture
/// (what `compare` and `diagnose` read from `--real` otherwise).
pub fn capture(target: &mut Opened, program: &Program) -> anyhow::Result<Vec<ScanRecord>> {
    let report = match target {
        Opened::Remote(remote) => Runner::new(remote, RunOptions::default()).run(program),
        Opened::Usb(hw) => {
            prepare(hw, program)?;
            Runner::new(&mut hw.target, RunOptions::default()).run(program)
        }
    };
    if let Some(e) = &report.error {
        anyhow::bail!("the program did not run to its end on the target: {e}");
    }
    Ok(report.scans.into_iter().map(|s| s.record).collect())
}

/// Scenario replay on a real board: no scenario with defects (the board
/// has its own), the cautions once, target power, and the chain test
/// before each scenario. Programs with hazards on the virtual board are
/// refused before (`run` checks them).
pub struct UsbTargets {
    /// The usb:// address.
    pub target: String,
    /// The GPIO map.
    pub pins: PinMap,
    /// The cautions were shown.
    pub shown: AtomicBool,
    /// `--i-have-checked`.
    pub checked: bool,
}

impl TargetSource for UsbTargets {
    fn open(
        &self,
        design: &LoadedBoard,
        _built: &LoadedBoard,
        defects: &[DefectSpec],
    ) -> Result<Box<dyn TapTarget>, TargetError> {
        let refused = TargetError::Refused;
        if !defects.is_empty() {
            return Err(refused(format!(
                "the scenario injects defects; {} is a real board, with only the defects it has",
                self.target
            )));
        }
        let mut target =
            open_usb(&self.target, self.pins, design).map_err(|e| refused(e.to_string()))?;
        for (p, name) in target.port_names().iter().enumerate() {
            if target.power_sensed(p).map_err(|e| refused(e.to_string()))? == Some(false) {
                return Err(refused(format!(
                    "no target power sensed on TAP port {name}"
                )));
            }
        }
        if !self.shown.swap(true, Ordering::SeqCst) {
            eprint!("{CAUTIONS}");
        }
        // Each program then clocks at its own FREQUENCY (the runner sets
        // it); the chain test at the board's slowest allowed, at most the
        // run's default.
        let hz = chain_test_hz(&design.board, RunOptions::default().default_hz);
        HardwareGate::new(self.checked)
            .chain_test(&mut target, design, hz)
            .map_err(|e| refused(e.to_string()))?;
        Ok(Box::new(target))
    }
}
