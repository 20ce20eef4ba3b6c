//! SVF reader semantics checked against the SVF specification's rules and a worked example of its header and trailer order.
//!
//! Every check names its source. "SVF Specification Rev E" is from memory
//! unless marked otherwise.

use std::path::Path;

use harness::program::svf::{read_svf, write_svf, SvfErrorKind, SvfProgram};
use harness::program::{Action, Scan, ScanKind, TrstMode};
use virtual_board::{Bits, TapState};

fn read(text: &str) -> SvfProgram {
    read_svf(text, None, "J1").unwrap_or_else(|e| panic!("{e}"))
}

fn scans(text: &str) -> Vec<Scan> {
    read(text)
        .program
        .steps
        .into_iter()
        .filter_map(|s| match s.action {
            Action::Scan(scan) => Some(scan),
            _ => None,
        })
        .collect()
}

/// Bits in wire order: the first character is the first bit into TDI.
fn wire(s: &str) -> Bits {
    let bools: Vec<bool> = s
        .chars()
        .filter(|c| *c == '0' || *c == '1')
        .map(|c| c == '1')
        .collect();
    Bits::from_bools(&bools)
}

fn error(text: &str) -> String {
    match read_svf(text, None, "J1") {
        Ok(p) => panic!("read without error: {:?}", p.program.steps),
        Err(e) => e.to_string(),
    }
}

#[test]
fn worked_example_header_and_trailer_order() {
    // A worked example of the header/trailer order of the SVF Specification Rev E
    // (from memory; the bits worked out by hand): HIR 2 TDI(3); TIR 3 TDI(7); SIR 4 TDI(A) gives the 9 bits
    // 1 1 | 0 1 0 1 | 1 1 1 in TDI order; HDR 1 TDI(0); TDR 1 TDI(0); SDR 8 TDI(C5)
    // gives 0 | 1 0 1 0 0 0 1 1 | 0.
    let s = scans(
        "HIR 2 TDI(3);  TIR 3 TDI(7);  SIR 4 TDI(A);\n\
         HDR 1 TDI(0);  TDR 1 TDI(0);  SDR 8 TDI(C5);\n",
    );
    assert_eq!(s.len(), 2);
    assert_eq!(s[0].kind, ScanKind::Ir);
    assert_eq!(s[0].tdi, wire("1 1 | 0 1 0 1 | 1 1 1"));
    assert_eq!(s[1].kind, ScanKind::Dr);
    assert_eq!(s[1].tdi, wire("0 | 1 0 1 0 0 0 1 1 | 0"));
    // No TDO anywhere: nothing compared. ENDIR/ENDDR default to IDLE (SVF Rev E).
    assert_eq!(s[0].expect, None);
    assert_eq!(s[0].mask, Bits::zeros(9));
    assert_eq!(s[1].end, TapState::RunTestIdle);
}

#[test]
fn worked_example_written_as_whole_chain_scans() {
    // The same example written back: the 9 IR bits 1 1 0 1 0 1 1 1 1 (first in = LSB,
    // SVF Rev E bit order ✔) are 0x1EB; the 10 DR bits 0 1 0 1 0 0 0 1 1 0 are 0x18A.
    let p = read(
        "HIR 2 TDI(3); TIR 3 TDI(7); SIR 4 TDI(A);\nHDR 1 TDI(0); TDR 1 TDI(0); SDR 8 TDI(C5);",
    );
    let text = write_svf(&p.program, "J1");
    assert!(text.contains("\nHIR 0; HDR 0; TIR 0; TDR 0;\n"), "{text}");
    assert!(
        text.contains("\nSIR 9 TDI(1EB);\nSDR 10 TDI(18A);\n"),
        "{text}"
    );
}

#[test]
fn each_segment_keeps_its_own_tdo_and_mask() {
    // SVF Specification Rev E (from memory): expected TDO and MASK follow the same
    // header ++ data ++ trailer concatenation; a segment without TDO is not compared.
    let s = scans("HDR 2 TDI(0) TDO(1);\nSDR 4 TDI(F) TDO(5) MASK(7);\nTDR 1 TDI(1);\nSDR 4;");
    assert_eq!(s[0].expect, Some(wire("10 1010")));
    assert_eq!(s[0].mask, wire("11 1110"));
    assert_eq!(s[1].tdi, wire("00 1111 1"));
    // The header's TDO belongs to the header and persists; the SDR's TDO does not.
    assert_eq!(s[1].expect, Some(wire("10 0000 0")));
    assert_eq!(s[1].mask, wire("11 0000 0"));
}

#[test]
fn tdi_mask_and_smask_are_sticky() {
    // SVF Specification Rev E (from memory): TDI, MASK and SMASK are remembered per
    // command and reused when omitted, as long as the length is unchanged.
    let s = scans(
        "SIR 6 TDI(2A) TDO(00) MASK(0F) SMASK(3C);\n\
         SIR 6 TDO(15);\n\
         SDR 6 TDI(01);\n\
         SIR 6 TDI(3F) TDO(3F);",
    );
    assert_eq!(s[1].tdi, Bits::from_u64(0x2A, 6));
    assert_eq!(s[1].mask, Bits::from_u64(0x0F, 6));
    assert_eq!(s[1].smask, Some(Bits::from_u64(0x3C, 6)));
    // SDR has its own values: SIR's MASK and SMASK do not leak into it.
    assert_eq!(s[2].smask, None);
    assert_eq!(s[2].expect, None);
    assert_eq!(s[3].tdi, Bits::from_u64(0x3F, 6));
    assert_eq!(s[3].mask, Bits::from_u64(0x0F, 6));
}

#[test]
fn a_length_change_resets_mask_and_needs_tdi() {
    // SVF Specification Rev E (from memory): when the length changes, TDI must be given
    // again and MASK and SMASK return to all ones.
    let s = scans("SDR 4 TDI(1) TDO(1) MASK(1) SMASK(1);\nSDR 5 TDI(2) TDO(2);");
    assert_eq!(s[1].mask, Bits::ones(5));
    assert_eq!(s[1].smask, None);
    assert_eq!(
        error("SDR 4 TDI(1);\n\n    SDR 5 TDO(2);"),
        "<svf>:3:5: SDR 5: TDI must be given when the length changes (the last SDR had 4 bits)"
    );
    let e = read_svf("SIR 4 TDI(1);\nSIR 8;", Some(Path::new("t/a.svf")), "J1").unwrap_err();
    assert_eq!(e.span.line, 2);
    assert_eq!(e.span.column, 1);
    assert!(
        e.to_string()
            .starts_with("t/a.svf:2:1: SIR 8: TDI must be given"),
        "{e}"
    );
}

#[test]
fn tdo_is_not_sticky() {
    // SVF Specification Rev E (from memory): TDO is not remembered; omitted, that scan
    // is not compared.
    let s = scans("SDR 8 TDI(C5) TDO(3A) MASK(FF);\nSDR 8;");
    assert_eq!(s[0].expect, Some(Bits::from_u64(0x3A, 8)));
    assert_eq!(s[0].mask, Bits::ones(8));
    assert_eq!(s[1].expect, None);
    assert_eq!(s[1].tdi, Bits::from_u64(0xC5, 8));
}

#[test]
fn length_zero_removes_a_header() {
    // SVF Specification Rev E (from memory): header and trailer persist until
    // redefined; length 0 removes them.
    let s = scans("HIR 3 TDI(7);\nSIR 2 TDI(1);\nSIR 2;\nHIR 0;\nSIR 2;");
    assert_eq!(s[0].tdi, wire("111 10"));
    assert_eq!(s[1].tdi, wire("111 10"));
    assert_eq!(s[2].tdi, wire("10"));
}

#[test]
fn hex_wider_than_the_length_is_an_error() {
    // SVF Specification Rev E (from memory): the value may not exceed the stated
    // length; leading zeros are implied.
    assert_eq!(
        error("SIR 4 TDI(10);"),
        "<svf>:1:10: TDI value has bits set beyond the length of 4 bits"
    );
    assert_eq!(scans("SIR 4 TDI(0000F);")[0].tdi, Bits::ones(4));
}

#[test]
fn enddr_drpause_ends_the_scan_in_pause_dr() {
    // SVF Specification Rev E (from memory): ENDIR/ENDDR take one stable state; with
    // DRPAUSE the scan stops in Pause-DR and Update-DR waits for the next command
    // (Pause → Exit2 → Update, IEEE 1149.1 diagram).
    let p = read("ENDDR DRPAUSE;\nSDR 8 TDI(00);\nSTATE DREXIT2 DRUPDATE IDLE;\nSIR 2 TDI(3);");
    let Action::Scan(dr) = &p.program.steps[0].action else {
        panic!("{:?}", p.program.steps)
    };
    assert_eq!(dr.end, TapState::PauseDr);
    let Action::Scan(ir) = &p.program.steps[2].action else {
        panic!("{:?}", p.program.steps)
    };
    assert_eq!(ir.end, TapState::RunTestIdle);
    assert!(error("ENDDR DRSHIFT;").contains("must be a stable state"));
}

#[test]
fn state_with_and_without_a_path() {
    // SVF Specification Rev E (from memory): `STATE [path…] stable;` each listed state one
    // TCK from the previous (IEEE 1149.1 clause 6 diagram, from memory).
    let p = read(
        "STATE RESET;\nSTATE IDLE DRSELECT DRCAPTURE DREXIT1 DRPAUSE;\n\
         STATE DREXIT2 DRUPDATE DRSELECT IRSELECT IRCAPTURE IREXIT1 IRPAUSE;",
    );
    use TapState::*;
    let actions: Vec<Action> = p.program.steps.into_iter().map(|s| s.action).collect();
    // A lone `STATE RESET;` is five TCK with TMS high: it reaches
    // Test-Logic-Reset from any state (IEEE 1149.1 clause 6, from memory).
    assert_eq!(
        actions,
        [
            Action::ResetTms,
            Action::Goto {
                path: vec![RunTestIdle, SelectDrScan, CaptureDr, Exit1Dr, PauseDr],
                end: PauseDr
            },
            Action::Goto {
                path: vec![
                    Exit2Dr,
                    UpdateDr,
                    SelectDrScan,
                    SelectIrScan,
                    CaptureIr,
                    Exit1Ir,
                    PauseIr
                ],
                end: PauseIr
            },
        ]
    );
    // Capture-DR to Pause-DR skips Exit1-DR: not one TCK.
    assert_eq!(
        error("STATE RESET;\nSTATE IDLE DRSELECT DRCAPTURE DRPAUSE;"),
        "<svf>:2:31: STATE path: DRPAUSE is not one TCK from DRCAPTURE"
    );
    assert_eq!(
        error("STATE IDLE DRSELECT;"),
        "<svf>:1:12: the last state of STATE must be a stable state (RESET, IDLE, DRPAUSE or IRPAUSE), not DRSELECT"
    );
}

#[test]
fn runtest_forms_and_defaults() {
    // SVF Specification Rev E (from memory): both RUNTEST forms;
    // run_state defaults to the previous RUNTEST's (IDLE at first); the end state to
    // run_state when given, else the previous end state.
    let p = read(
        "RUNTEST 1000 TCK;\n\
         RUNTEST DRPAUSE 20 TCK 1.0E-3 SEC MAXIMUM 1E-2 SEC;\n\
         RUNTEST 3 SCK;\n\
         RUNTEST 2.5E-1 SEC ENDSTATE IDLE;\n\
         RUNTEST IRPAUSE 5E-6 SEC MAXIMUM 1 SEC ENDSTATE RESET;",
    );
    use TapState::*;
    let got: Vec<Action> = p.program.steps.into_iter().map(|s| s.action).collect();
    let idle = |state, cycles, min_seconds, end| Action::Idle {
        state,
        cycles,
        min_seconds,
        end,
    };
    assert_eq!(
        got,
        [
            idle(RunTestIdle, 1000, None, RunTestIdle),
            idle(PauseDr, 20, Some(1.0e-3), PauseDr),
            // SCK: taken as TCK cycles in run_state (the board has no system clock).
            idle(PauseDr, 3, None, PauseDr),
            idle(PauseDr, 0, Some(0.25), RunTestIdle),
            idle(PauseIr, 0, Some(5.0e-6), TestLogicReset),
        ]
    );
    assert!(error("RUNTEST 1 SEC MAXIMUM 1E-3 SEC;").contains("less than the minimum"));
}

#[test]
fn trst_modes() {
    // SVF Specification Rev E (from memory): TRST ON|OFF|Z|ABSENT.
    let p = read("TRST ON;\ntrst off;\nTRST Z;\nTRST ABSENT;");
    let got: Vec<Action> = p.program.steps.into_iter().map(|s| s.action).collect();
    assert_eq!(
        got,
        [
            Action::Trst(TrstMode::On),
            Action::Trst(TrstMode::Off),
            Action::Trst(TrstMode::Z),
            Action::Trst(TrstMode::Absent)
        ]
    );
}

#[test]
fn frequency_takes_the_last_value() {
    // SVF Specification Rev E (from memory): FREQUENCY [cycles HZ]; without an argument
    // the test clock returns to full speed.
    assert_eq!(read("FREQUENCY 10E6 HZ;").program.frequency, Some(1.0e7));
    assert_eq!(
        read("FREQUENCY 1E6 HZ;\nFREQUENCY 2.5E5 HZ;")
            .program
            .frequency,
        Some(2.5e5)
    );
    assert_eq!(
        read("FREQUENCY 1E6 HZ;\nFREQUENCY;").program.frequency,
        None
    );
    assert_eq!(read("SIR 1 TDI(1);").program.frequency, None);
}

#[test]
fn pio_is_not_supported() {
    // SVF Specification Rev E (from memory): PIO and PIOMAP are parallel-vector statements.
    assert_eq!(
        error("SIR 1 TDI(1);\nPIOMAP (IN A);"),
        "<svf>:2:1: PIOMAP is not supported: boardtwin drives TAP ports only, not parallel I/O"
    );
    let e = read_svf("  PIO (HLX);", None, "J1").unwrap_err();
    assert_eq!(e.kind, SvfErrorKind::NotSupported("PIO"));
    assert_eq!((e.span.line, e.span.column), (1, 3));
}

#[test]
fn layout_comments_and_case() {
    // SVF Specification Rev E (from memory): case-insensitive; `!` and `//`
    // comments; a statement may span lines; hex in ( ) may continue across lines.
    let text = "! header comment\n\
                sir 8\n   tdi (A5) // comment after data\n;\n\
                // a whole-line comment\n\
                Sdr 64 TDI(0123 4567\n  89AB\tCDEF) ! more\n  tdo(0000000000000000)\n  mask(FFFF0000FFFF0000);\n";
    let s = scans(text);
    assert_eq!(s[0].tdi, Bits::from_u64(0xA5, 8));
    assert_eq!(s[1].tdi, Bits::from_u64(0x0123_4567_89AB_CDEF, 64));
    assert_eq!(s[1].mask, Bits::from_u64(0xFFFF_0000_FFFF_0000, 64));
    assert_eq!(s[1].expect, Some(Bits::zeros(64)));
}

#[test]
fn origins_and_parts() {
    let text = "SIR 2 TDI(1);\n! part 1\nSDR 2 TDI(1);\nRUNTEST 10 TCK;\n! part 2\nSTATE RESET;\n";
    let p = read_svf(text, Some(Path::new("dir/infra.svf")), "J7").unwrap();
    assert_eq!(p.program.name, "infra");
    assert_eq!(p.part_of_step, [0, 1, 1, 2]);
    let s = &p.program.steps[2];
    assert_eq!(s.port, "J7");
    assert_eq!(s.origin.line, 4);
    assert_eq!(s.origin.note, "RUNTEST");
    assert_eq!(s.origin.file.as_deref(), Some(Path::new("dir/infra.svf")));
}
