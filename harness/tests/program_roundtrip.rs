//! Programs through SVF and back: native → SVF export → replay gives the same scans, a hand-written header/trailer SVF file runs on one port, and the committed export stays true.

use std::path::{Path, PathBuf};

use harness::program::export::{export_svf_files, Exported};
use harness::program::native::load_program;
use harness::program::{Action, Program, Scan, ScanKind};
use harness::run::{RunOptions, RunReport, Runner, ScanRecord};
use virtual_board::{load_board, Bits, LoadedBoard};

fn repo() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .parent()
        .expect("the workspace root")
        .to_path_buf()
}

fn demo_board() -> LoadedBoard {
    load_board(&repo().join("scenarios/boards/harbor_controller.yaml"))
        .expect("the demo board loads")
}

fn demo(name: &str) -> PathBuf {
    repo().join("scenarios/programs").join(name)
}

fn temp_dir(test: &str) -> PathBuf {
    let dir = Path::new(env!("CARGO_TARGET_TMPDIR")).join(format!("program_roundtrip-{test}"));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).expect("create the test's directory");
    dir
}

fn load(path: &Path, loaded: &LoadedBoard, port: Option<&str>) -> Program {
    load_program(path, loaded, port).unwrap_or_else(|e| panic!("{e}"))
}

/// Runs `program` on a fresh copy of the board.
fn run(loaded: &LoadedBoard, program: &Program) -> RunReport {
    let mut board = loaded.board.clone();
    let report = Runner::new(&mut board, RunOptions::default()).run(program);
    assert_eq!(report.error, None, "{}", program.name);
    report
}

fn records(report: &RunReport) -> Vec<ScanRecord> {
    report.scans.iter().map(|s| s.record.clone()).collect()
}

/// Every file of an export, as (file name, text), in a fixed order.
fn texts(files: &Exported) -> Vec<(String, String)> {
    files
        .svf
        .iter()
        .map(|(_, p)| p)
        .chain(std::iter::once(&files.replay))
        .map(|p| {
            let name = p.file_name().unwrap().to_string_lossy().into_owned();
            (name, std::fs::read_to_string(p).expect("exported file"))
        })
        .collect()
}

/// native → run → export → replay → run → export, for one demo program.
struct Trip {
    native: RunReport,
    first: Vec<(String, String)>,
    replay: RunReport,
    second: Vec<(String, String)>,
}

fn trip(loaded: &LoadedBoard, name: &str) -> Trip {
    let stem = name.trim_end_matches(".yaml");
    let program = load(&demo(name), loaded, None);
    let native = run(loaded, &program);
    assert!(native.passed(), "{name} passes natively");

    let dir = temp_dir(&format!("{stem}-1"));
    let first = export_svf_files(&program, stem, &dir).expect("export");
    assert_eq!(
        first
            .svf
            .iter()
            .map(|(p, _)| p.as_str())
            .collect::<Vec<_>>(),
        program.ports(),
        "one SVF file per TAP port the program uses"
    );
    let replayed = load(&first.replay, loaded, None);
    // Step for step the same actions on the same ports, in the same order
    // (only the origins differ: the replay's steps come from the SVF files).
    let steps = |p: &Program| -> Vec<(String, Action)> {
        p.steps
            .iter()
            .map(|s| (s.port.clone(), s.action.clone()))
            .collect()
    };
    assert_eq!(steps(&replayed), steps(&program), "{name}");
    let replay = run(loaded, &replayed);

    let dir = temp_dir(&format!("{stem}-2"));
    let second = export_svf_files(&replayed, stem, &dir).expect("export again");
    Trip {
        native,
        first: texts(&first),
        replay,
        second: texts(&second),
    }
}

fn check_trip(name: &str) {
    let loaded = demo_board();
    let t = trip(&loaded, name);
    // The replay's scans are the native run's, record for record: port,
    // register, length, TDI, TDO, expected, mask, result, in the same order.
    assert_eq!(records(&t.replay), records(&t.native), "{name}");
    assert!(t.replay.passed(), "{name}");
    // A TMS reset is written as `STATE RESET;` and read back as five TCK
    // with TMS high, so the replay clocks as many TCK as the original.
    assert_eq!(t.replay.tck_cycles, t.native.tck_cycles, "{name}");
    // Exporting the replay writes the same files, byte for byte: the export
    // is a fixed point.
    assert_eq!(t.second.len(), t.first.len(), "{name}");
    for ((file, a), (again, b)) in t.first.iter().zip(&t.second) {
        assert_eq!(again, file, "{name}");
        assert!(
            a == b,
            "{name}: {file} differs after a round trip:\n--- first\n{a}\n--- second\n{b}"
        );
    }
}

#[test]
fn infrastructure_survives_svf_and_back() {
    check_trip("infrastructure.yaml");
}

#[test]
fn interconnect_survives_svf_and_back_with_its_port_order() {
    check_trip("interconnect.yaml");
    // The cross-port test moves between the ports; the replay interleaves
    // the two files' parts exactly as the native program did.
    let loaded = demo_board();
    let program = load(&demo("interconnect.yaml"), &loaded, None);
    let native = run(&loaded, &program);
    let ports: Vec<&str> = native
        .scans
        .iter()
        .map(|s| s.record.port.as_str())
        .collect();
    assert!(
        ports.windows(2).any(|w| w[0] != w[1]),
        "the test crosses ports: {ports:?}"
    );
}

#[test]
fn a_name_with_a_line_break_survives_the_replay_file() {
    // The replay file names the program in a `#` comment and in `name:`; a
    // line break in the name must not end the comment early.
    let loaded = demo_board();
    let mut program = load(&demo("infrastructure.yaml"), &loaded, None);
    program.name = "HC-210\ninfrastructure: second line".to_string();
    let dir = temp_dir("name");
    let files = export_svf_files(&program, "named", &dir).expect("export");
    let replayed = load(&files.replay, &loaded, None);
    assert_eq!(replayed.name, program.name);
    assert_eq!(
        records(&run(&loaded, &replayed)),
        records(&run(&loaded, &program))
    );
}

/// Bits in wire order: the first character is the first bit into TDI.
/// `x` (not compared) is written as 0.
fn wire(s: &str) -> Bits {
    let bools: Vec<bool> = s
        .chars()
        .filter(|c| !c.is_whitespace() && *c != '|')
        .map(|c| c == '1')
        .collect();
    Bits::from_bools(&bools)
}

/// `1` where the wire-order text gives a bit, `0` where it says `x`.
fn given(s: &str) -> Bits {
    let bools: Vec<bool> = s
        .chars()
        .filter(|c| !c.is_whitespace() && *c != '|')
        .map(|c| c != 'x')
        .collect();
    Bits::from_bools(&bools)
}

/// The start of the hand-written files: no TRST* on J2_AUX, end states
/// IDLE, reset.
const HAND_PROLOGUE: &str = "\
! Hand-written for the boardtwin tests (SVF Rev E style): U4's IDCODE on J2_AUX,
! chain TDI -> U2 (QM3310) -> U5 (QM3310) -> U4 (QM2040) -> TDO.
TRST ABSENT;
ENDIR IDLE;
ENDDR IDLE;
STATE RESET;
STATE IDLE;
";

/// U4 as the SVF target: trailer for U5 and U2. Opcodes and captures from
/// the demo BSDL files: QM2040 (U4) IR 5 bits, IDCODE 00011, capture 00001,
/// IDCODE 0x12040A01; QM3310 (U5, U2) IR 6 bits, BYPASS 111111, capture
/// XX0001, no IDCODE.
const HAND_TARGET_U4: &str = "\
! U4 is the target. Nothing lies between it and TDO: no header.
! U5 and U2, nearer TDI, are the trailer: all ones, BYPASS.
HIR 0;
HDR 0;
TIR 12 TDI(FFF) TDO(041) MASK(3CF);
TDR 2 TDI(3) TDO(0) MASK(3);
SIR 5 TDI(03) TDO(01) MASK(1F);
SDR 32 TDI(00000000) TDO(12040A01) MASK(FFFFFFFF);
";

/// U5 as the SVF target (BYPASS): header for U4 (left in IDCODE, so its ID
/// comes out in the header's TDO), trailer for U2.
const HAND_TARGET_U5: &str = "\
! U5 is the target (BYPASS); U4, behind it, is the header and is in IDCODE.
HIR 5 TDI(03) TDO(01) MASK(1F);
TIR 6 TDI(3F) TDO(01) MASK(0F);
SIR 6 TDI(3F) TDO(01) MASK(0F);
HDR 32 TDI(00000000) TDO(12040A01);
TDR 1 TDI(1) TDO(0);
SDR 1 TDI(1) TDO(0);
";

/// Writes an SVF file and reads it for TAP port J2_AUX (`--port J2_AUX`).
fn hand_program(loaded: &LoadedBoard, test: &str, parts: &[&str]) -> Program {
    let path = temp_dir(test).join("u4_idcode.svf");
    std::fs::write(&path, parts.concat()).unwrap();
    let program = load(&path, loaded, Some("J2_AUX"));
    assert!(program.steps.iter().all(|s| s.port == "J2_AUX"));
    program
}

fn scans_of(program: &Program) -> Vec<&Scan> {
    program
        .steps
        .iter()
        .filter_map(|s| match &s.action {
            Action::Scan(scan) => Some(scan),
            _ => None,
        })
        .collect()
}

#[test]
fn a_hand_written_header_and_trailer_file_lowers_to_the_hand_computed_bits() {
    let loaded = demo_board();
    let program = hand_program(
        &loaded,
        "hand-bits",
        &[HAND_PROLOGUE, HAND_TARGET_U4, HAND_TARGET_U5],
    );
    let scans = scans_of(&program);
    assert_eq!(scans.len(), 4);

    // SVF Specification Rev E (from memory): the header is shifted in first,
    // then the SIR/SDR data, then the trailer; each part LSB first (its hex
    // value's bit 0 goes first). So the header ends nearest TDO.
    //
    // U4's IDCODE as its BSDL writes it, bit 31 first, reversed by hand into
    // wire order (bit 0 first):
    //   0001 0010000001000000 10100000000 1  →
    //   1 00000000101 0000001000000100 1000
    let idcode = "1 00000000101 0000001000000100 1000";
    let capture_u4 = "1 0 0 0 0"; // 00001, bit 0 first
    let capture_qm3310 = "1 0 0 0 x x"; // XX0001, bit 0 first

    // 1. SIR: U4 IDCODE (00011 → 1 1 0 0 0) | trailer: U5 BYPASS, U2 BYPASS.
    let tdi = "1 1 0 0 0 | 111111 111111";
    let tdo = format!("{capture_u4} | {capture_qm3310} {capture_qm3310}");
    assert_eq!(scans[0].kind, ScanKind::Ir);
    assert_eq!(scans[0].tdi, wire(tdi));
    assert_eq!(scans[0].expect, Some(wire(&tdo)));
    assert_eq!(scans[0].mask, given(&tdo));
    // 2. SDR: U4's 32 ID bits | trailer: U5's and U2's bypass bits (0).
    let tdi = format!("{} | 1 1", "0".repeat(32));
    let tdo = format!("{idcode} | 0 0");
    assert_eq!(scans[1].kind, ScanKind::Dr);
    assert_eq!(scans[1].tdi, wire(&tdi));
    assert_eq!(scans[1].expect, Some(wire(&tdo)));
    assert_eq!(scans[1].mask, given(&tdo));
    // 3. SIR: header: U4 IDCODE | U5 BYPASS | trailer: U2 BYPASS.
    let tdo = format!("{capture_u4} | {capture_qm3310} | {capture_qm3310}");
    assert_eq!(scans[2].kind, ScanKind::Ir);
    assert_eq!(scans[2].tdi, wire("1 1 0 0 0 | 111111 | 111111"));
    assert_eq!(scans[2].expect, Some(wire(&tdo)));
    assert_eq!(scans[2].mask, given(&tdo));
    // 4. SDR: header: U4's ID bits (MASK all ones: the HDR length changed) |
    //    U5's bypass bit | trailer: U2's bypass bit.
    let tdi = format!("{} | 1 | 1", "0".repeat(32));
    let tdo = format!("{idcode} | 0 | 0");
    assert_eq!(scans[3].kind, ScanKind::Dr);
    assert_eq!(scans[3].tdi, wire(&tdi));
    assert_eq!(scans[3].expect, Some(wire(&tdo)));
    assert_eq!(scans[3].mask, given(&tdo));
}

#[test]
fn a_hand_written_header_and_trailer_file_reads_u4_idcode() {
    // Each file alone, on a fresh board.
    let loaded = demo_board();
    for (test, part) in [("hand-u4", HAND_TARGET_U4), ("hand-u5", HAND_TARGET_U5)] {
        let program = hand_program(&loaded, test, &[HAND_PROLOGUE, part]);
        let report = run(&loaded, &program);
        assert!(report.passed(), "{test}: {:?}", records(&report));
        assert_eq!(report.scans.len(), 2, "{test}");
        // What came out of TDO, as hex (bit 0 = the last digit's bit 0): U4's
        // IDCODE with the two bypass bits (0) above it.
        assert_eq!(report.scans[1].record.tdo, "012040A01", "{test}");
    }
}

/// Both reads in one run: the second IDCODE read must give the ID again,
/// not the zeros the first one shifted in (IEEE 1149.1 clause 10, from
/// memory: the ID register loads its fixed value at every Capture-DR while
/// IDCODE is the instruction).
#[test]
fn two_idcode_reads_in_one_run_both_pass() {
    let loaded = demo_board();
    let program = hand_program(
        &loaded,
        "hand-both",
        &[HAND_PROLOGUE, HAND_TARGET_U4, HAND_TARGET_U5],
    );
    let report = run(&loaded, &program);
    assert!(report.passed(), "{:?}", records(&report));
}

/// The committed export of the demo interconnect test.
fn committed() -> PathBuf {
    repo().join("scenarios/programs/exported")
}

#[test]
fn the_committed_export_is_what_the_exporter_writes() {
    let loaded = demo_board();
    let program = load(&demo("interconnect.yaml"), &loaded, None);
    let dir = temp_dir("committed");
    let files = export_svf_files(&program, "interconnect", &dir).expect("export");
    let written = texts(&files);
    let names: Vec<&str> = written.iter().map(|(n, _)| n.as_str()).collect();
    assert_eq!(
        names,
        [
            "interconnect.J1_MAIN.svf",
            "interconnect.J2_AUX.svf",
            "interconnect.replay.yaml"
        ]
    );
    for (name, text) in &written {
        let kept = std::fs::read_to_string(committed().join(name))
            .unwrap_or_else(|e| panic!("scenarios/programs/exported/{name}: {e}"));
        assert!(
            kept == *text,
            "scenarios/programs/exported/{name} is stale: write it again with \
             `boardtwin play --board scenarios/boards/harbor_controller.yaml \
             scenarios/programs/interconnect.yaml --export-svf scenarios/programs/exported`"
        );
    }
}

#[test]
fn the_committed_replay_gives_the_native_scans() {
    let loaded = demo_board();
    let native = run(&loaded, &load(&demo("interconnect.yaml"), &loaded, None));
    let replay = run(
        &loaded,
        &load(&committed().join("interconnect.replay.yaml"), &loaded, None),
    );
    assert_eq!(records(&replay), records(&native));
    assert!(replay.passed());
}
