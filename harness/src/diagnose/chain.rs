//! The chain-break locator: an IR scan read against each device's INSTRUCTION_CAPTURE.
//!
//! After Capture-IR every device of a healthy chain holds its BSDL
//! `INSTRUCTION_CAPTURE` pattern (it ends in `01`: IEEE 1149.1 clause 7, from
//! memory), so an IR scan at least as long as the chain's instruction
//! registers shows each pattern at its offset, the device nearest TDO first.
//! A broken link leaves the next TDI floating, and a floating TDI reads 1
//! (IEEE 1149.1 requires a pull-up on TDI, from memory): from the broken
//! device on, every bit reads 1. The first device from the TDO end whose
//! capture is missing is the one whose TDO link is broken.
//!
//! # Faults that give the same pattern
//! Whatever leaves a device's TDO undriven looks like a break after that
//! device, and the verdict names the same place to look:
//! - a dead device (no TAP at all);
//! - TMS open at the device: it reads TMS 1 through its pull-up, stays in
//!   Test-Logic-Reset, never captures or shifts, and its TDO stays
//!   high-impedance;
//! - TCK open at the device: frozen, in Test-Logic-Reset since power-up;
//! - its TDO stuck at 1.
//!
//! When every capture is missing (all ones), the fault may also be one that
//! silences the whole port: TRST* stuck active, TCK or TMS open at the
//! connector.
//!
//! A TDO stuck at 0 reads 0 where a floating TDI reads 1, and a missing
//! capture followed by bits that are not all ones (a device with another IR
//! length or capture: a wrong part) fit no single break: the verdict is
//! [`ChainVerdict::Unclear`], with the reason.
//!
//! The port's own TDI link cannot show in a BYPASS scan, whose TDI is 1 like
//! a floating one: [`locate_chain_break_shifted`] reads a scan longer than
//! the chain whose TDI bits that come out past the chain hold a 0.

use std::fmt;

use virtual_board::{BitPattern, Bits, Board, PatternBit, PortId};

/// Where an IR scan says a scan chain is broken.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum ChainVerdict {
    /// Every device's capture is where it should be.
    Intact,
    /// The link from `device`'s TDO to the next TDI is broken (or something
    /// else leaves that TDO undriven: see the module notes).
    BreaksAfter {
        /// The device whose TDO no longer reaches the next TDI.
        device: String,
        /// The next device toward TDO; `None`: the port's TDO.
        next: Option<String>,
    },
    /// The port's TDI does not reach the first device of the chain.
    BreaksBeforeFirst {
        /// The first device (nearest TDI).
        device: String,
    },
    /// The bits fit no single break; why, in a sentence.
    Unclear(String),
}

impl fmt::Display for ChainVerdict {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            ChainVerdict::Intact => f.write_str("chain intact"),
            ChainVerdict::BreaksAfter {
                device,
                next: Some(next),
            } => write!(f, "chain breaks between {device} and {next}"),
            ChainVerdict::BreaksAfter { device, next: None } => {
                write!(f, "chain breaks after {device}")
            }
            ChainVerdict::BreaksBeforeFirst { device } => {
                write!(f, "chain breaks at TDI before {device}")
            }
            ChainVerdict::Unclear(why) => write!(f, "chain fault unclear: {why}"),
        }
    }
}

/// Reads `captured`, what an IR scan of `port` returned (TDO bits, bit 0
/// first out), against the INSTRUCTION_CAPTURE of every device of `board`,
/// the board as designed. `captured` must be at least as long as the
/// chain's instruction registers together; a BYPASS scan (TDI all ones) of
/// exactly that length is the usual one.
pub fn locate_chain_break(board: &Board, port: PortId, captured: &Bits) -> ChainVerdict {
    locate(board, port, captured, None)
}

/// [`locate_chain_break`] for a scan that shifted `tdi` (bit 0 first) and is
/// longer than the chain: the bits past the chain are `tdi`'s first bits
/// coming out again, so a TDI pattern with a 0 among them also checks the
/// port's TDI link ([`ChainVerdict::BreaksBeforeFirst`] when they all read 1).
pub fn locate_chain_break_shifted(
    board: &Board,
    port: PortId,
    tdi: &Bits,
    captured: &Bits,
) -> ChainVerdict {
    locate(board, port, captured, Some(tdi))
}

fn locate(board: &Board, port: PortId, captured: &Bits, tdi: Option<&Bits>) -> ChainVerdict {
    let Some(tap) = board.ports().get(port) else {
        return ChainVerdict::Unclear(format!("the board has no TAP port {port}"));
    };
    let devices = board.devices();
    let names: Vec<&str> = tap.chain.iter().map(|&d| devices[d].designator()).collect();
    if names.is_empty() {
        return ChainVerdict::Unclear(format!("TAP port {} has no devices", tap.name));
    }
    let total: usize = tap
        .chain
        .iter()
        .map(|&d| devices[d].model().ir_length)
        .sum();
    if captured.len() < total {
        return ChainVerdict::Unclear(format!(
            "{} bits captured, but the instruction registers of {} hold {total}",
            captured.len(),
            tap.name
        ));
    }
    // From the TDO end: the device nearest TDO owns bits 0.., the next the bits after.
    let mut at = 0;
    for (k, &d) in tap.chain.iter().enumerate().rev() {
        let model = devices[d].model();
        if !capture_at(&model.ir_capture, model.ir_length, captured, at) {
            return past_missing(&names, k, at, model.ir_length, captured);
        }
        at += model.ir_length;
    }
    match tdi {
        Some(tdi) => flushed(names[0], total, tdi, captured),
        None => ChainVerdict::Intact,
    }
}

/// True when every non-X bit of `pattern` is at bits `at..at + len` of `captured`.
fn capture_at(pattern: &BitPattern, len: usize, captured: &Bits, at: usize) -> bool {
    (0..len.min(pattern.len())).all(|i| match pattern.bit(i) {
        PatternBit::Zero => !captured.get(at + i),
        PatternBit::One => captured.get(at + i),
        PatternBit::X => true,
    })
}

/// Device `k`'s capture is missing at bit `at`: what the bits from there on say.
fn past_missing(names: &[&str], k: usize, at: usize, len: usize, captured: &Bits) -> ChainVerdict {
    let device = names[k].to_string();
    let next = names.get(k + 1).map(|n| n.to_string());
    let rest = captured.len() - at;
    let ones = (at..captured.len()).filter(|&i| captured.get(i)).count();
    if ones == rest {
        return ChainVerdict::BreaksAfter { device, next };
    }
    if ones == 0 {
        let to = match &next {
            Some(n) => format!("{n}'s TDI"),
            None => "the port's TDO".to_string(),
        };
        return ChainVerdict::Unclear(format!(
            "from bit {at} ({device}'s capture) on, every bit reads 0 where a broken link \
             reads 1 (the pull-up on TDI): {device}'s TDO stuck at 0, or the link to {to} \
             held low"
        ));
    }
    ChainVerdict::Unclear(format!(
        "{device}'s capture is missing at bits {at}..{}, yet the bits past it are not the 1s \
         of a floating TDI: no single break fits (an IR length or INSTRUCTION_CAPTURE other \
         than the BSDL's: a wrong part?)",
        at + len - 1
    ))
}

/// Every capture is in place: the bits past the chain must be `tdi` again.
fn flushed(first: &str, total: usize, tdi: &Bits, captured: &Bits) -> ChainVerdict {
    let n = (captured.len() - total).min(tdi.len());
    let differ = (0..n)
        .filter(|&i| captured.get(total + i) != tdi.get(i))
        .count();
    if differ == 0 {
        return ChainVerdict::Intact;
    }
    if (0..n).all(|i| captured.get(total + i)) {
        return ChainVerdict::BreaksBeforeFirst {
            device: first.to_string(),
        };
    }
    ChainVerdict::Unclear(format!(
        "every capture is in place, but {differ} of the {n} TDI bits that come out past bit \
         {total} are changed, and not all to the 1 of a floating TDI"
    ))
}

#[cfg(test)]
mod tests {
    use std::path::{Path, PathBuf};

    use virtual_board::{load_board, Board, DefectSpec, LoadedBoard, TapState};

    use super::*;

    fn demo_path() -> PathBuf {
        Path::new(env!("CARGO_MANIFEST_DIR")).join("../scenarios/boards/harbor_controller.yaml")
    }

    fn demo() -> LoadedBoard {
        load_board(&demo_path()).unwrap_or_else(|e| panic!("{e}"))
    }

    /// The demo board with one defect, written as a defect-list entry.
    fn with(defect: &str) -> Board {
        let spec: DefectSpec = serde_yaml::from_str(defect).unwrap_or_else(|e| panic!("{e}"));
        let mut source = virtual_board::bsdl_files_beside(&demo_path());
        demo()
            .with_defects(&[spec], &mut source)
            .unwrap_or_else(|e| panic!("{e}"))
            .board
    }

    fn ir_total(board: &Board, port: PortId) -> usize {
        board.ports()[port]
            .chain
            .iter()
            .map(|&d| board.devices()[d].model().ir_length)
            .sum()
    }

    /// A BYPASS IR scan (TDI all ones) of the chain's length, from power-up.
    fn bypass_ir(mut board: Board, port: &str) -> (PortId, Bits) {
        let p = board.port_index(port).unwrap_or_else(|| panic!("{port}"));
        let n = ir_total(&board, p);
        let out = board
            .scan_ir(p, &Bits::ones(n), TapState::RunTestIdle)
            .unwrap_or_else(|e| panic!("{e}"));
        (p, out)
    }

    fn verdict(defect: &str, port: &str) -> ChainVerdict {
        let (p, captured) = bypass_ir(with(defect), port);
        locate_chain_break(&demo().board, p, &captured)
    }

    #[test]
    fn the_good_board_is_intact_on_both_ports() {
        for port in ["J1_MAIN", "J2_AUX"] {
            let (p, captured) = bypass_ir(demo().board, port);
            let v = locate_chain_break(&demo().board, p, &captured);
            assert_eq!(v, ChainVerdict::Intact, "{port}");
            assert_eq!(v.to_string(), "chain intact");
        }
    }

    #[test]
    fn a_break_after_each_device_is_named() {
        // J1_MAIN: TDI -> U1 -> U3 -> TDO; J2_AUX: TDI -> U2 -> U5 -> U4 -> TDO.
        for (device, port, next, words) in [
            (
                "U1",
                "J1_MAIN",
                Some("U3"),
                "chain breaks between U1 and U3",
            ),
            ("U3", "J1_MAIN", None, "chain breaks after U3"),
            ("U2", "J2_AUX", Some("U5"), "chain breaks between U2 and U5"),
            ("U5", "J2_AUX", Some("U4"), "chain breaks between U5 and U4"),
            ("U4", "J2_AUX", None, "chain breaks after U4"),
        ] {
            let v = verdict(&format!("{{broken_link: {device}}}"), port);
            assert_eq!(
                v,
                ChainVerdict::BreaksAfter {
                    device: device.into(),
                    next: next.map(String::from)
                }
            );
            assert_eq!(v.to_string(), words);
        }
    }

    #[test]
    fn faults_that_leave_a_tdo_undriven_read_as_a_break_after_that_device() {
        // A dead device, TMS or TCK open (the device stays in Test-Logic-Reset,
        // TDO high-impedance) and a TDO stuck at 1 all return what a broken
        // link after U5 returns, bit for bit.
        let (_, broken) = bypass_ir(with("{broken_link: U5}"), "J2_AUX");
        for defect in [
            "{dead: U5}",
            "{tms_open: U5}",
            "{tck_open: U5}",
            "{tdo_stuck: U5, value: 1}",
        ] {
            let (p, captured) = bypass_ir(with(defect), "J2_AUX");
            assert_eq!(captured, broken, "{defect}");
            assert_eq!(
                locate_chain_break(&demo().board, p, &captured).to_string(),
                "chain breaks between U5 and U4",
                "{defect}"
            );
        }
    }

    #[test]
    fn trst_stuck_silences_the_whole_port_and_reads_as_the_last_link() {
        // Both J1_MAIN devices have TRST*: held in Test-Logic-Reset, neither
        // drives TDO, and every bit reads 1.
        let (p, captured) = bypass_ir(with("{trst_stuck: J1_MAIN}"), "J1_MAIN");
        assert_eq!(captured, Bits::ones(12));
        assert_eq!(
            locate_chain_break(&demo().board, p, &captured).to_string(),
            "chain breaks after U3"
        );
    }

    #[test]
    fn a_tdo_stuck_at_0_fits_no_break() {
        let v = verdict("{tdo_stuck: U1, value: 0}", "J1_MAIN");
        assert_eq!(
            v.to_string(),
            "chain fault unclear: from bit 8 (U1's capture) on, every bit reads 0 where a \
             broken link reads 1 (the pull-up on TDI): U1's TDO stuck at 0, or the link to \
             U3's TDI held low"
        );
        let v = verdict("{tdo_stuck: U3, value: 0}", "J1_MAIN");
        assert_eq!(
            v.to_string(),
            "chain fault unclear: from bit 0 (U3's capture) on, every bit reads 0 where a \
             broken link reads 1 (the pull-up on TDI): U3's TDO stuck at 0, or the link to \
             the port's TDO held low"
        );
    }

    #[test]
    fn a_capture_unlike_the_bsdl_in_front_of_good_data_fits_no_break() {
        // J2_AUX from TDO: U4 bits 0..4 ("00001"), U5 bits 5..10 ("XX0001"),
        // U2 bits 11..16. Bit 6 is U5's capture bit 1, a 0 in the BSDL.
        let (p, mut captured) = bypass_ir(demo().board, "J2_AUX");
        captured.set(6, true);
        assert_eq!(
            locate_chain_break(&demo().board, p, &captured).to_string(),
            "chain fault unclear: U5's capture is missing at bits 5..10, yet the bits past it \
             are not the 1s of a floating TDI: no single break fits (an IR length or \
             INSTRUCTION_CAPTURE other than the BSDL's: a wrong part?)"
        );
    }

    #[test]
    fn a_scan_shorter_than_the_chain_is_unclear() {
        let (p, captured) = bypass_ir(demo().board, "J1_MAIN");
        let short = captured.slice(0, 11);
        assert_eq!(
            locate_chain_break(&demo().board, p, &short).to_string(),
            "chain fault unclear: 11 bits captured, but the instruction registers of J1_MAIN \
             hold 12"
        );
        assert_eq!(
            locate_chain_break(&demo().board, 7, &captured).to_string(),
            "chain fault unclear: the board has no TAP port 7"
        );
    }

    #[test]
    fn the_port_tdi_link_shows_only_in_a_scan_longer_than_the_chain() {
        // 4 zeros first (they come out past the 12 IR bits), then 12 ones (BYPASS).
        let mut tdi = Bits::zeros(4);
        tdi.extend(&Bits::ones(12));
        let mut good = demo().board;
        let p = good.port_index("J1_MAIN").unwrap_or_default();
        let captured = good
            .scan_ir(p, &tdi, TapState::RunTestIdle)
            .unwrap_or_else(|e| panic!("{e}"));
        assert_eq!(captured.slice(12, 4), Bits::zeros(4));
        let design = demo().board;
        assert_eq!(
            locate_chain_break_shifted(&design, p, &tdi, &captured),
            ChainVerdict::Intact
        );
        // With the port's TDI open the devices see 1 whatever the tester
        // drives (the pull-up on TDI): the same board shifting all ones is
        // that board. Every capture is in place; the zeros never come out.
        let mut open_tdi = demo().board;
        let captured = open_tdi
            .scan_ir(p, &Bits::ones(16), TapState::RunTestIdle)
            .unwrap_or_else(|e| panic!("{e}"));
        assert_eq!(
            locate_chain_break(&design, p, &captured),
            ChainVerdict::Intact
        );
        let v = locate_chain_break_shifted(&design, p, &tdi, &captured);
        assert_eq!(
            v,
            ChainVerdict::BreaksBeforeFirst {
                device: "U1".into()
            }
        );
        assert_eq!(v.to_string(), "chain breaks at TDI before U1");
    }
}
