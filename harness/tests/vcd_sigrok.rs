//! VCD output: the exact text of small recordings, and an outside decoder (sigrok-cli's jtag decoder) reading a recorded scan session.

#[path = "support/tools.rs"]
mod tools;

use std::{
    path::{Path, PathBuf},
    process::Command,
};

use harness::vcd::{write_vcd, write_vcd_file, Cycle, Recorder};
use virtual_board::{load_board, Bits, Board, PortId, TapPins, TapState, TapTarget};

fn cycle(port: PortId, tms: bool, tdi: bool, trst_n: bool, tdo: Option<bool>) -> Cycle {
    Cycle {
        port,
        tms,
        tdi,
        trst_n,
        tdo,
        tck: true,
    }
}

fn names(list: &[&str]) -> Vec<String> {
    list.iter().map(|s| s.to_string()).collect()
}

fn vcd_text(cycles: &[Cycle], ports: &[String], tck_hz: f64) -> String {
    let mut out = Vec::new();
    write_vcd(cycles, ports, tck_hz, &mut out).expect("write to memory");
    String::from_utf8(out).expect("VCD is ASCII")
}

fn temp_dir(test: &str) -> PathBuf {
    let dir = Path::new(env!("CARGO_TARGET_TMPDIR")).join(format!("vcd_sigrok-{test}"));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).expect("create the test's directory");
    dir
}

/// The header for ports J1_MAIN and J2_AUX at 10 MHz (half period 50 ns).
const HEADER_TWO_PORTS: &str = "\
$date
\tnot recorded (fixed text, so that output is reproducible)
$end
$version
\tboardtwin
$end
$comment
\tTCK 10000000 Hz, half period 50 ns
$end
$timescale 1 ns $end
$scope module J1_MAIN $end
$var wire 1 ! J1_MAIN_TCK $end
$var wire 1 \" J1_MAIN_TMS $end
$var wire 1 # J1_MAIN_TDI $end
$var wire 1 $ J1_MAIN_TDO $end
$var wire 1 % J1_MAIN_TRST_N $end
$upscope $end
$scope module J2_AUX $end
$var wire 1 & J2_AUX_TCK $end
$var wire 1 ' J2_AUX_TMS $end
$var wire 1 ( J2_AUX_TDI $end
$var wire 1 ) J2_AUX_TDO $end
$var wire 1 * J2_AUX_TRST_N $end
$upscope $end
$enddefinitions $end
#0
$dumpvars
0!
1\"
1#
z$
1%
0&
1'
1(
z)
1*
$end
";

#[test]
fn three_cycles_on_two_ports_give_this_exact_text() {
    let cycles = [
        cycle(0, true, false, true, None),
        cycle(1, false, true, true, Some(true)),
        cycle(0, false, true, false, Some(false)),
    ];
    let text = vcd_text(&cycles, &names(&["J1_MAIN", "J2_AUX"]), 10e6);
    // Worked by hand from the layout in harness/src/vcd/write.rs: period i
    // starts at 50 + 100 i ns, its rising edge is 50 ns later, and only
    // changed values are written.
    let values = "\
#50
0#
#100
1!
#150
0!
0'
1)
#200
1&
#250
0&
0\"
1#
0$
0%
#300
1!
#350
0!
";
    assert_eq!(text, format!("{HEADER_TWO_PORTS}{values}"));
}

#[test]
fn a_port_without_a_name_is_left_out_and_takes_no_time() {
    let cycles = [
        cycle(0, true, false, true, None),
        cycle(1, false, true, true, Some(true)),
        cycle(0, false, true, true, Some(false)),
    ];
    let only_first = vcd_text(&cycles, &names(&["J1_MAIN", ""]), 10e6);
    let filtered: Vec<Cycle> = cycles.iter().copied().filter(|c| c.port == 0).collect();
    assert_eq!(only_first, vcd_text(&filtered, &names(&["J1_MAIN"]), 10e6));
    assert!(!only_first.contains("J2_AUX"));
    assert!(only_first.ends_with("#200\n1!\n#250\n0!\n"), "{only_first}");
}

#[test]
fn timescale_is_ps_when_half_a_period_is_not_whole_in_ns() {
    // 400 MHz: half a period is 1.25 ns = 1250 ps.
    let text = vcd_text(&[cycle(0, true, true, true, None)], &names(&["P"]), 400e6);
    assert!(text.contains("$timescale 1 ps $end\n"), "{text}");
    assert!(text.ends_with("#2500\n1!\n#3750\n0!\n"), "{text}");
}

#[test]
fn bad_input_is_an_error_and_leaves_the_old_file_alone() {
    let dir = temp_dir("bad_input");
    let path = dir.join("out.vcd");
    std::fs::write(&path, "old").expect("write the old file");
    let on_port_3 = [cycle(3, true, true, true, None)];
    let err = write_vcd_file(&path, &on_port_3, &names(&["J1_MAIN"]), 10e6).unwrap_err();
    assert_eq!(err.kind(), std::io::ErrorKind::InvalidInput);
    assert!(err.to_string().contains("TAP port 3"), "{err}");
    for (ports, hz) in [
        (names(&["J1 MAIN"]), 10e6),
        (names(&["J1_MAIN", "J1_MAIN"]), 10e6),
        (names(&["J1_MAIN"]), 0.0),
        (names(&["J1_MAIN"]), f64::NAN),
    ] {
        let err = write_vcd_file(&path, &[], &ports, hz).unwrap_err();
        assert_eq!(
            err.kind(),
            std::io::ErrorKind::InvalidInput,
            "{ports:?} {hz}"
        );
    }
    let missing = dir.join("no/such/folder/out.vcd");
    let err = write_vcd_file(&missing, &[], &names(&["J1_MAIN"]), 10e6).unwrap_err();
    assert!(err.to_string().contains("no/such/folder/out.vcd"), "{err}");
    assert_eq!(std::fs::read_to_string(&path).unwrap(), "old");
    let left: Vec<_> = std::fs::read_dir(&dir).unwrap().collect();
    assert_eq!(left.len(), 1, "a temporary file was left behind: {left:?}");

    let cycles = [cycle(0, false, true, true, Some(true))];
    write_vcd_file(&path, &cycles, &names(&["J1_MAIN"]), 10e6).expect("write the file");
    assert_eq!(
        std::fs::read_to_string(&path).unwrap(),
        vcd_text(&cycles, &names(&["J1_MAIN"]), 10e6)
    );
    assert_eq!(std::fs::read_dir(&dir).unwrap().count(), 1);
}

// ---------------------------------------------------------------------------
// The outside cross-check.
//
// Source: sigrok-cli 0.7.2 jtag protocol decoder (Debian package sigrok-cli,
// with libsigrok 0.5.2 and libsigrokdecode 0.5.3), an outside decoder. It
// reads our VCD file and tracks the TAP state from TMS on each rising TCK
// edge, and prints the TDI and TDO bits of each scan.
//
// What we found by running it (and reading its decoders/jtag/pd.py):
// - Its `vcd` input names each channel by the `$var` reference alone, with
//   no scope prefix: `J1_MAIN_TCK`.
// - It starts in Run-Test/Idle, not Test-Logic-Reset, before the first edge.
//   After five TMS-high edges every start state is in Test-Logic-Reset
//   (IEEE 1149.1 clause 6, from memory), so from the fifth edge on its states
//   must equal ours exactly.
// - It prints each state when the next rising edge arrives, so the state
//   after the last edge is not printed: one state line per edge but the last.
// - It prints a scan's bits when the TAP reaches Update-xR, as
//   `IR TDI: <bits> (0x<hex>), <n> bits`. The bit string is written with the
//   LAST bit shifted on the left: reversed, it is our order (bit 0 = the
//   first bit on the wire, nearest TDO). Its hex is the value whose bit 0 is
//   the first bit shifted, the same value as our `Bits` and as SVF's hex.
// - With plain `-A jtag` the per-bit rows print bare `0`/`1` lines that
//   cannot be told apart (TDI or TDO), so we ask for the state and bit-string
//   rows only.

/// The IR value that loads `instruction` into every device of the port's
/// chain, from the devices' BSDL opcodes: the device nearest TDO comes first.
fn ir_for(board: &Board, port: PortId, instruction: &str) -> Bits {
    let mut ir = Bits::zeros(0);
    for &d in board.ports()[port].chain.iter().rev() {
        let model = board.devices()[d].model();
        let opcode = &model
            .instruction(instruction)
            .unwrap_or_else(|| panic!("{} has no {instruction}", model.entity))
            .opcodes[0];
        ir.extend(&Bits::from_bools(&opcode.resolve(0)));
    }
    ir
}

/// Drives the recorder along the shortest TMS path to `target` (TDI high).
fn goto(r: &mut Recorder<Board>, port: PortId, target: TapState) {
    let from = r.inner().port_state(port).expect("the port exists");
    for tms in from.path_to(target) {
        r.clock(port, TapPins::new(tms, true)).expect("clock");
    }
}

/// One scan through the recorder: to `shift`, shift `tdi`, back to Run-Test/Idle.
fn scan(r: &mut Recorder<Board>, port: PortId, shift: TapState, tdi: &Bits) -> Bits {
    goto(r, port, shift);
    let tdo = r.shift(port, tdi).expect("shift");
    goto(r, port, TapState::RunTestIdle);
    tdo
}

/// A scan as bit strings in wire order (first bit shifted first).
#[derive(Debug, PartialEq, Eq)]
struct Scan {
    register: &'static str,
    tdi: String,
    tdo: String,
}

fn wire_order(bits: &Bits) -> String {
    (0..bits.len())
        .map(|i| if bits.get(i) { '1' } else { '0' })
        .collect()
}

/// The states after each rising edge, from `start`, and the scans, from
/// the recorded TMS, TDI and TDO alone.
fn walk(cycles: &[Cycle], start: TapState) -> (Vec<TapState>, Vec<Scan>) {
    let mut state = start;
    let mut states = Vec::new();
    let mut scans = Vec::new();
    let (mut tdi, mut tdo) = (String::new(), String::new());
    for c in cycles {
        let before = state;
        state = state.next(c.tms);
        states.push(state);
        if before.is_shift() {
            tdi.push(if c.tdi { '1' } else { '0' });
            tdo.push(c.tdo.map_or('z', |b| if b { '1' } else { '0' }));
            if !state.is_shift() {
                scans.push(Scan {
                    register: if before == TapState::ShiftIr {
                        "IR"
                    } else {
                        "DR"
                    },
                    tdi: std::mem::take(&mut tdi),
                    tdo: std::mem::take(&mut tdo),
                });
            }
        }
    }
    (states, scans)
}

/// Sigrok's upper-case state name (`SHIFT-DR`) as our state.
fn sigrok_state(name: &str) -> Option<TapState> {
    TapState::ALL
        .into_iter()
        .find(|s| s.name().to_ascii_uppercase() == name)
}

/// One bit-string line of the decoder, e.g. `IR TDI: 0010 (0x2), 4 bits`.
#[derive(Debug)]
struct SigrokBits {
    register: String,
    pin: String,
    /// As printed: the last bit shifted first.
    printed: String,
    value: u128,
}

fn parse_bits_line(line: &str) -> Option<SigrokBits> {
    let (head, rest) = line.split_once(": ")?;
    let (register, pin) = head.split_once(' ')?;
    let mut words = rest.split(' ');
    let printed = words.next()?.to_string();
    let hex = words.next()?.strip_prefix("(0x")?.strip_suffix("),")?;
    let count: usize = words.next()?.parse().ok()?;
    if words.next()? != "bits" || count != printed.len() {
        return None;
    }
    Some(SigrokBits {
        register: register.to_string(),
        pin: pin.to_string(),
        printed,
        value: u128::from_str_radix(hex, 16).ok()?,
    })
}

fn value_of(bits: &Bits) -> u128 {
    (0..bits.len())
        .filter(|&i| bits.get(i))
        .fold(0, |v, i| v | 1 << i)
}

#[test]
#[cfg_attr(
    not(has_sigrok_cli),
    ignore = "sigrok-cli not found on PATH (Debian package sigrok-cli)"
)]
fn sigrok_jtag_decoder_sees_our_states_and_scan_bits() {
    let Some(sigrok) = tools::require_tool("sigrok-cli", "the Debian package sigrok-cli") else {
        return;
    };
    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join("..");
    let board = load_board(&root.join("scenarios/boards/harbor_controller.yaml"))
        .expect("the demo board loads")
        .board;
    let main = board.port_index("J1_MAIN").expect("J1_MAIN");
    let aux = board.port_index("J2_AUX").expect("J2_AUX");
    let bypass = ir_for(&board, main, "BYPASS");
    let idcode = ir_for(&board, main, "IDCODE");
    assert_eq!(bypass, Bits::ones(12));
    let mut r = Recorder::new(board);

    // Reset by TMS: five TCKs with TMS high.
    for _ in 0..5 {
        r.clock(main, TapPins::new(true, true)).expect("clock");
    }
    let ir_bypass = scan(&mut r, main, TapState::ShiftIr, &bypass);
    // Traffic on the other port, which the file leaves out.
    for _ in 0..5 {
        r.clock(aux, TapPins::new(true, true)).expect("clock");
    }
    let ir_idcode = scan(&mut r, main, TapState::ShiftIr, &idcode);
    let dr_tdi = Bits::from_u64(0x0123_4567_89AB_CDEF, 64);
    let dr_tdo = scan(&mut r, main, TapState::ShiftDr, &dr_tdi);
    // The two IDCODEs, U3 (nearest TDO) first: the values of the demo
    // files (U3's BSDL IDCODE_REGISTER, U1's idcode in the board file).
    assert_eq!(dr_tdo.to_u64(), 0x2742_0A01_2550_8A01);

    let cycles: Vec<Cycle> = r
        .cycles()
        .iter()
        .copied()
        .filter(|c| c.port == main)
        .collect();
    assert!(cycles.iter().all(|c| c.trst_n), "TRST* stays released");
    let (ours, our_scans) = walk(&cycles, TapState::TestLogicReset);
    assert_eq!(ours.last().copied(), r.inner().port_state(main));
    assert_eq!(
        our_scans,
        [
            Scan {
                register: "IR",
                tdi: wire_order(&bypass),
                tdo: wire_order(&ir_bypass)
            },
            Scan {
                register: "IR",
                tdi: wire_order(&idcode),
                tdo: wire_order(&ir_idcode)
            },
            Scan {
                register: "DR",
                tdi: wire_order(&dr_tdi),
                tdo: wire_order(&dr_tdo)
            },
        ]
    );

    let dir = temp_dir("sigrok");
    let file = dir.join("j1_main.vcd");
    // The recorder forwards the board's port names; J2_AUX is left out.
    let mut ports = r.port_names();
    assert_eq!(ports, ["J1_MAIN", "J2_AUX"]);
    ports[aux].clear();
    write_vcd_file(&file, r.cycles(), &ports, 10e6).expect("write the VCD");

    let output = Command::new(&sigrok)
        .arg("-I")
        .arg("vcd")
        .arg("-i")
        .arg(&file)
        .arg("-P")
        .arg("jtag:tck=J1_MAIN_TCK:tms=J1_MAIN_TMS:tdi=J1_MAIN_TDI:tdo=J1_MAIN_TDO")
        .arg("-A")
        .arg("jtag=states:bitstrings-tdi:bitstrings-tdo")
        .output()
        .expect("run sigrok-cli");
    let stdout = String::from_utf8_lossy(&output.stdout);
    assert!(
        output.status.success(),
        "sigrok-cli failed: {}\n{stdout}",
        String::from_utf8_lossy(&output.stderr)
    );

    let mut states = Vec::new();
    let mut lines = Vec::new();
    for line in stdout.lines() {
        let (_, text) = line
            .split_once(": ")
            .unwrap_or_else(|| panic!("unexpected sigrok line `{line}`"));
        if let Some(s) = sigrok_state(text) {
            states.push(s);
        } else {
            lines.push(
                parse_bits_line(text).unwrap_or_else(|| panic!("unexpected sigrok line `{line}`")),
            );
        }
    }

    // States: one line per rising edge but the last.
    assert_eq!(states.len(), cycles.len() - 1);
    assert_eq!(states[4..], ours[4..cycles.len() - 1]);
    // Before that, the decoder's own start state (Run-Test/Idle) shows.
    let (from_idle, _) = walk(&cycles, TapState::RunTestIdle);
    assert_eq!(states[..4], from_idle[..4]);

    // Scans: a TDI line then a TDO line each.
    assert_eq!(lines.len(), 2 * our_scans.len(), "{lines:?}");
    let bits = [
        (&bypass, &ir_bypass),
        (&idcode, &ir_idcode),
        (&dr_tdi, &dr_tdo),
    ];
    for ((pair, want), (tdi, tdo)) in lines.chunks(2).zip(&our_scans).zip(bits) {
        let [got_tdi, got_tdo] = pair else {
            unreachable!()
        };
        for (got, pin, wire, value) in [
            (got_tdi, "TDI", &want.tdi, tdi),
            (got_tdo, "TDO", &want.tdo, tdo),
        ] {
            assert_eq!(
                (got.register.as_str(), got.pin.as_str()),
                (want.register, pin)
            );
            let reversed: String = got.printed.chars().rev().collect();
            assert_eq!(&reversed, wire, "{} {pin}", want.register);
            assert_eq!(got.value, value_of(value), "{} {pin} hex", want.register);
        }
    }
}
