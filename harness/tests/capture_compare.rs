//! Real captures against virtual runs: round trips (our VCD files decode back to the run's scans, after a logic analyzer's changes too; a run matches its own capture log), the outside check (sigrok-cli's decoder reads the same bits), garbled recordings give located errors, and `compare` places every differing bit on the board.
//!
//! A round trip compares the program with its own output, so it shows the
//! writer and the reader agree, not that either is right; each also checks
//! figures worked out by hand from the BSDL files and the programs.

#[path = "support/tools.rs"]
mod tools;

use std::{
    path::{Path, PathBuf},
    process::Command,
};

use harness::capture::{
    compare, decode_jtag, read_capture_log, read_vcd, CaptureErrorKind, Decoded, JtagSignals,
};
use harness::program::native::load_program;
use harness::run::{RunOptions, RunReport, Runner, ScanRecord};
use harness::vcd::{write_vcd, Recorder};
use virtual_board::{
    load_board, Bits, BsdlError, BsdlErrorKind, DefectSpec, LoadedBoard, Rng, TapTarget,
};

const PROGRAMS: [&str; 2] = ["infrastructure.yaml", "interconnect.yaml"];
const PORTS: [&str; 2] = ["J1_MAIN", "J2_AUX"];

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

/// The demo board built with LB_D0 shorted to LB_D1.
fn shorted_board(good: &LoadedBoard) -> LoadedBoard {
    let base = repo().join("scenarios/boards");
    let mut source = |p: &Path| {
        let full = base.join(p);
        std::fs::read_to_string(&full)
            .map(|t| (t, full.clone()))
            .map_err(|e| BsdlError {
                path: Some(full.clone()),
                span: Default::default(),
                kind: BsdlErrorKind::Io(e.to_string()),
            })
    };
    let short = DefectSpec {
        short: Some(vec!["LB_D0".into(), "LB_D1".into()]),
        ..Default::default()
    };
    good.with_defects(&[short], &mut source)
        .expect("the short applies")
}

fn temp_dir(test: &str) -> PathBuf {
    let dir = Path::new(env!("CARGO_TARGET_TMPDIR")).join(format!("capture_compare-{test}"));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).expect("create the test's directory");
    dir
}

/// A run and the VCD text of every TCK period it clocked.
struct Recording {
    report: RunReport,
    vcd: String,
}

/// Runs demo program `name`, written for `design`, on `built` through the
/// recorder, and writes the recording as VCD (all TAP ports).
fn record_on(design: &LoadedBoard, built: &LoadedBoard, name: &str) -> Recording {
    let path = repo().join("scenarios/programs").join(name);
    let program = load_program(&path, design, None).unwrap_or_else(|e| panic!("{e}"));
    let mut recorder = Recorder::new(built.board.clone());
    let report = Runner::new(&mut recorder, RunOptions::default()).run(&program);
    assert_eq!(report.error, None, "{name}");
    let ports = built.board.port_names();
    assert_eq!(ports, PORTS);
    let mut out = Vec::new();
    write_vcd(recorder.cycles(), &ports, report.tck_hz, &mut out).expect("write to memory");
    Recording {
        report,
        vcd: String::from_utf8(out).expect("VCD is ASCII"),
    }
}

fn record(loaded: &LoadedBoard, name: &str) -> Recording {
    record_on(loaded, loaded, name)
}

fn decode(text: &str, port: &str) -> Decoded {
    let vcd = read_vcd(text, Path::new("run.vcd")).unwrap_or_else(|e| panic!("{e}"));
    decode_jtag(&vcd, &JtagSignals::for_port(port), None).unwrap_or_else(|e| panic!("{e}"))
}

/// Every port's decoded scans, J1_MAIN's then J2_AUX's.
fn decode_all(text: &str) -> Vec<ScanRecord> {
    PORTS
        .iter()
        .flat_map(|p| decode(text, p).records())
        .collect()
}

/// A scan as it was on the wire: port, register, length, TDI, TDO.
type WireScan = (String, String, usize, String, String);

fn wire_scan(r: &ScanRecord) -> WireScan {
    (
        r.port.clone(),
        r.register.clone(),
        r.length,
        r.tdi.clone(),
        r.tdo.clone(),
    )
}

/// The run's scans on `port`, as they were on the wire.
fn run_scans(report: &RunReport, port: &str) -> Vec<WireScan> {
    report
        .scans
        .iter()
        .filter(|s| s.record.port == port)
        .map(|s| wire_scan(&s.record))
        .collect()
}

fn decoded_scans(d: &Decoded) -> Vec<WireScan> {
    d.scans.iter().map(|s| wire_scan(&s.record)).collect()
}

fn records(report: &RunReport) -> Vec<ScanRecord> {
    report.scans.iter().map(|s| s.record.clone()).collect()
}

// ---------------------------------------------------------------------------
// Round trip: our own VCD files decode to the run's scans.

/// Scan lengths of infrastructure.yaml per port, worked out by hand from the
/// BSDL files (IEEE 1149.1 clauses 7, 8 and 10, from memory: BYPASS is one
/// bit, IDCODE 32): J1_MAIN = QM7420 + QM5508, IR 4 + 8 = 12, the BYPASS
/// check 2 bypass bits + 8 flushed = 10, IDCODE 32 + 32 = 64; J2_AUX =
/// QM3310 ×2 + QM2040, IR 6 + 6 + 5 = 17, BYPASS 3 + 8 = 11, and after
/// reset two BYPASS bits (the QM3310 has no IDCODE) + 32 = 34.
fn infrastructure_lengths(port: &str) -> Vec<usize> {
    match port {
        "J1_MAIN" => vec![12, 10, 64],
        _ => vec![17, 11, 34],
    }
}

#[test]
fn round_trip_our_vcd_decodes_to_exactly_the_runs_scans() {
    let loaded = demo_board();
    for name in PROGRAMS {
        let rec = record(&loaded, name);
        for port in PORTS {
            let d = decode(&rec.vcd, port);
            let want = run_scans(&rec.report, port);
            assert!(!want.is_empty(), "{name} {port}");
            if name == "infrastructure.yaml" {
                let lengths: Vec<usize> = d.scans.iter().map(|s| s.record.length).collect();
                assert_eq!(lengths, infrastructure_lengths(port), "{port}");
            }
            assert_eq!(decoded_scans(&d), want, "{name} {port}");
            for (k, s) in d.scans.iter().enumerate() {
                assert_eq!(s.record.index, k);
                assert!(!s.partial, "{name} {port} scan {k}");
                assert_eq!(s.undriven_tdo_bits, 0, "{name} {port} scan {k}");
                assert_eq!(
                    (s.record.expected.as_ref(), s.record.mask.as_ref()),
                    (None, None)
                );
                assert!(s.record.passed);
            }
            assert!(d.reset_time.is_some());
        }
    }
}

/// Our writer's VCD as (time, value, code) changes after its header (the
/// text up to and including `$enddefinitions $end`). Its value section is
/// one `#time` or one scalar change a line, the first ones in `$dumpvars`
/// (harness/src/vcd/write.rs).
fn split_ours(text: &str) -> (String, Vec<(u64, char, String)>) {
    let (header, body) = text
        .split_once("$enddefinitions $end\n")
        .expect("our header ends with $enddefinitions");
    let mut time = 0;
    let mut changes = Vec::new();
    for line in body.lines() {
        if let Some(t) = line.strip_prefix('#') {
            time = t.parse().expect("a time");
        } else if line != "$dumpvars" && line != "$end" {
            let mut chars = line.chars();
            let value = chars.next().expect("a change");
            changes.push((time, value, chars.as_str().to_string()));
        }
    }
    (format!("{header}$enddefinitions $end\n"), changes)
}

/// VCD text from a header and changes in time order, every time's changes
/// on its line after the time (white space other than our writer's).
fn join(header: &str, changes: &[(u64, char, String)]) -> String {
    let mut out = header.to_string();
    let mut last = None;
    for (t, v, code) in changes {
        if last != Some(*t) {
            out.push_str(&format!("\n#{t}\n\t"));
            last = Some(*t);
        }
        out.push_str(&format!("{v}{code}  "));
    }
    out.push('\n');
    out
}

/// The codes our writer declares, in order.
fn codes(header: &str) -> Vec<String> {
    header
        .lines()
        .filter_map(|l| l.strip_prefix("$var wire 1 "))
        .map(|l| l.split(' ').next().expect("a code").to_string())
        .collect()
}

/// 1 ns → 1 ps, every time × 1000.
fn to_picoseconds(
    header: &str,
    changes: &[(u64, char, String)],
) -> (String, Vec<(u64, char, String)>) {
    assert!(header.contains("$timescale 1 ns $end\n"), "{header}");
    let header = header.replace("$timescale 1 ns $end\n", "$timescale\n 1ps\n$end\n");
    let changes = changes
        .iter()
        .map(|(t, v, c)| (t * 1000, *v, c.clone()))
        .collect();
    (header, changes)
}

/// Another signal (a free-running clock of period 74, not related to TCK)
/// in a scope of its own.
fn with_extra_signal(
    header: &str,
    changes: &[(u64, char, String)],
) -> (String, Vec<(u64, char, String)>) {
    let header = header.replace(
        "$enddefinitions $end\n",
        "$scope module analyzer $end\n$var reg 1 {} SYS_CLK $end\n$upscope $end\n$enddefinitions $end\n",
    );
    let end = changes.last().map_or(0, |c| c.0);
    let mut all = changes.to_vec();
    all.extend(
        (0..=end / 37).map(|k| (k * 37, if k % 2 == 0 { '0' } else { '1' }, "{}".to_string())),
    );
    all.sort_by_key(|c| c.0); // stable: a time's own changes keep their order
    (header, all)
}

/// What a logic analyzer records: every signal's level at each sample
/// time, the samples 3 to 17 ns apart at random (several per TCK half
/// period of 50 ns, never evenly spaced), `z` written upper case.
fn sampled(header: &str, changes: &[(u64, char, String)], seed: u64) -> Vec<(u64, char, String)> {
    let codes = codes(header);
    let mut level: Vec<char> = vec!['x'; codes.len()];
    let end = changes.last().map_or(0, |c| c.0);
    let mut rng = Rng::new(seed);
    let mut out = Vec::new();
    let mut next = 0;
    let mut t = 0;
    loop {
        while let Some((ct, v, code)) = changes.get(next) {
            if *ct > t {
                break;
            }
            let k = codes
                .iter()
                .position(|c| c == code)
                .expect("a declared code");
            level[k] = *v;
            next += 1;
        }
        for (k, code) in codes.iter().enumerate() {
            let v = if level[k] == 'z' { 'Z' } else { level[k] };
            out.push((t, v, code.clone()));
        }
        if t > end {
            return out;
        }
        t += 3 + rng.next_u64() % 15;
    }
}

#[test]
fn round_trip_a_logic_analyzers_recording_decodes_to_the_same_scans() {
    let loaded = demo_board();
    for name in PROGRAMS {
        let rec = record(&loaded, name);
        let (header, changes) = split_ours(&rec.vcd);
        let mut variants: Vec<(&str, String)> = Vec::new();
        let (h, c) = to_picoseconds(&header, &changes);
        variants.push(("1 ps", join(&h, &c)));
        let (h, c) = with_extra_signal(&header, &changes);
        variants.push(("extra signal", join(&h, &c)));
        let s = sampled(&header, &changes, 1);
        // Several samples per TCK period: our file has a time for each
        // TCK edge, so about two per period.
        let times = |c: &[(u64, char, String)]| {
            let mut t: Vec<u64> = c.iter().map(|x| x.0).collect();
            t.dedup();
            t.len()
        };
        assert!(times(&s) > 4 * times(&changes), "{name}: too few samples");
        variants.push(("sampled", join(&header, &s)));
        let (h, c) = with_extra_signal(&header, &sampled(&header, &changes, 2));
        let (h, c) = to_picoseconds(&h, &c);
        variants.push(("all three", join(&h, &c)));
        for (what, text) in &variants {
            assert_ne!(text, &rec.vcd);
            for port in PORTS {
                let d = decode(text, port);
                assert_eq!(
                    decoded_scans(&d),
                    run_scans(&rec.report, port),
                    "{name} {port}: {what}"
                );
                assert!(d
                    .scans
                    .iter()
                    .all(|s| !s.partial && s.undriven_tdo_bits == 0));
            }
        }
    }
}

// ---------------------------------------------------------------------------
// Garbled recordings.

#[test]
fn a_missing_tdo_is_an_error_that_names_it() {
    let rec = record(&demo_board(), "infrastructure.yaml");
    // The analyzer's TDO probe was not connected: no `$var`, no changes.
    let (header, changes) = split_ours(&rec.vcd);
    let line = "$var wire 1 $ J1_MAIN_TDO $end\n";
    assert!(header.contains(line));
    let header = header.replace(line, "");
    let changes: Vec<_> = changes.into_iter().filter(|c| c.2 != "$").collect();
    let text = join(&header, &changes);
    let vcd = read_vcd(&text, Path::new("run.vcd")).expect("still a good VCD");
    let e = decode_jtag(&vcd, &JtagSignals::for_port("J1_MAIN"), None).unwrap_err();
    assert_eq!(
        e.to_string(),
        "run.vcd: the recording has no signal `J1_MAIN_TDO` (signals present: \
         J1_MAIN.J1_MAIN_TCK, J1_MAIN.J1_MAIN_TMS, J1_MAIN.J1_MAIN_TDI, J1_MAIN.J1_MAIN_TRST_N, \
         J2_AUX.J2_AUX_TCK, J2_AUX.J2_AUX_TMS, J2_AUX.J2_AUX_TDI, J2_AUX.J2_AUX_TDO, \
         J2_AUX.J2_AUX_TRST_N)"
    );
    // The other port is whole.
    assert_eq!(
        decoded_scans(&decode_jtag(&vcd, &JtagSignals::for_port("J2_AUX"), None).unwrap()),
        run_scans(&rec.report, "J2_AUX")
    );
}

#[test]
fn a_tck_that_never_toggles_is_an_error() {
    let rec = record(&demo_board(), "infrastructure.yaml");
    let (header, changes) = split_ours(&rec.vcd);
    // J1_MAIN_TCK (code `!`) keeps its $dumpvars level, 0, for ever.
    let changes: Vec<_> = changes
        .into_iter()
        .filter(|c| c.2 != "!" || c.0 == 0)
        .collect();
    let text = join(&header, &changes);
    let vcd = read_vcd(&text, Path::new("run.vcd")).expect("still a good VCD");
    let e = decode_jtag(&vcd, &JtagSignals::for_port("J1_MAIN"), None).unwrap_err();
    assert!(matches!(e.kind, CaptureErrorKind::TckNeverRises { .. }));
    // Placed at TCK's `$var`, line 12 of our header.
    assert_eq!(
        e.to_string(),
        "run.vcd:12:1: TCK `J1_MAIN_TCK` never rises from 0 to 1: the recording holds no TCK edges"
    );
}

#[test]
fn a_recording_cut_inside_a_scan_ends_with_a_partial_scan() {
    let rec = record(&demo_board(), "infrastructure.yaml");
    let whole = decode(&rec.vcd, "J2_AUX");
    let last = whole.scans.last().expect("J2_AUX has scans");
    // The file's last scan is J2_AUX's 34-bit IDCODE read: cut it halfway.
    assert_eq!(
        (last.record.register.as_str(), last.record.length),
        ("DR", 34)
    );
    let cut = (last.start_time + last.end_time) / 2;
    let at = rec
        .vcd
        .lines()
        .position(|l| {
            l.strip_prefix('#')
                .is_some_and(|t| t.parse::<u64>().unwrap() > cut)
        })
        .expect("a time after the cut");
    let text: String = rec.vcd.lines().take(at).map(|l| format!("{l}\n")).collect();
    let d = decode(&text, "J2_AUX");
    assert_eq!(d.scans.len(), whole.scans.len());
    let (first, [end]) = d.scans.split_at(d.scans.len() - 1) else {
        unreachable!()
    };
    assert_eq!(first, &whole.scans[..first.len()]);
    assert!(end.partial);
    assert_eq!(end.record.register, "DR");
    assert!(
        end.record.length > 0 && end.record.length < 34,
        "{}",
        end.record.length
    );
    // What it has is the beginning of the whole scan.
    let n = end.record.length;
    let prefix = |hex: &str, len: usize| Bits::from_hex(hex, len).unwrap().slice(0, n);
    assert_eq!(
        Bits::from_hex(&end.record.tdo, n).unwrap(),
        prefix(&last.record.tdo, 34)
    );
    assert_eq!(
        Bits::from_hex(&end.record.tdi, n).unwrap(),
        prefix(&last.record.tdi, 34)
    );
    assert!(d.end_state.is_shift());
    // J1_MAIN's scans all ended before the cut.
    let j1 = decode(&text, "J1_MAIN");
    assert_eq!(decoded_scans(&j1), run_scans(&rec.report, "J1_MAIN"));
}

#[test]
fn mutated_recordings_never_panic_the_reader_or_the_decoder() {
    let rec = record(&demo_board(), "infrastructure.yaml");
    let base = rec.vcd.as_bytes();
    let mut rng = Rng::new(0xCA97_0001);
    let mut decoded = 0;
    for _ in 0..400 {
        let mut bytes = base.to_vec();
        for _ in 0..1 + rng.next_u64() % 6 {
            let at = (rng.next_u64() % bytes.len() as u64) as usize;
            match rng.next_u64() % 4 {
                0 => {
                    bytes.remove(at);
                }
                1 => bytes.insert(at, b"01xz#$ \n!\"b"[(rng.next_u64() % 11) as usize]),
                2 => bytes[at] = rng.next_u64() as u8,
                _ => {
                    let len = (rng.next_u64() % 64) as usize;
                    bytes.drain(at..(at + len).min(bytes.len()));
                }
            }
        }
        let text = String::from_utf8_lossy(&bytes);
        if let Ok(vcd) = read_vcd(&text, Path::new("m.vcd")) {
            for port in PORTS {
                decoded +=
                    usize::from(decode_jtag(&vcd, &JtagSignals::for_port(port), None).is_ok());
            }
        }
    }
    assert!(decoded > 0, "some mutations keep a decodable file");
}

// ---------------------------------------------------------------------------
// The outside check.
//
// Source: sigrok-cli 0.7.2 jtag protocol decoder (Debian package
// sigrok-cli), an outside JTAG decoder. It reads our VCD file, follows the
// TAP state from TMS on each rising TCK edge and prints, when the TAP
// reaches Update-xR, `IR TDI: <bits> (0x<hex>), <n> bits` and the same for
// TDO, the last bit shifted leftmost (harness/tests/vcd_sigrok.rs found
// these by running it). It starts in Run-Test/Idle and ignores TRST*; both
// demo programs begin with TMS held high, so its states meet ours before
// the first scan.

/// One scan as sigrok prints it, in our wire order (first bit shifted first).
#[derive(Debug, PartialEq, Eq)]
struct BitStrings {
    register: String,
    tdi: String,
    tdo: String,
}

fn sigrok_scans(sigrok: &Path, file: &Path, port: &str) -> Vec<BitStrings> {
    let output = Command::new(sigrok)
        .arg("-I")
        .arg("vcd")
        .arg("-i")
        .arg(file)
        .arg("-P")
        .arg(format!(
            "jtag:tck={port}_TCK:tms={port}_TMS:tdi={port}_TDI:tdo={port}_TDO"
        ))
        .arg("-A")
        .arg("jtag=bitstrings-tdi:bitstrings-tdo")
        .output()
        .expect("run sigrok-cli");
    let stdout = String::from_utf8_lossy(&output.stdout);
    assert!(
        output.status.success(),
        "sigrok-cli failed: {}\n{stdout}",
        String::from_utf8_lossy(&output.stderr)
    );
    // Lines: `jtag-1: IR TDI: 0101 (0x5), 4 bits`, TDI then TDO per scan.
    let mut lines = Vec::new();
    for line in stdout.lines() {
        let fields: Vec<&str> = line.split(' ').collect();
        let [_, register, pin, printed, _hex, count, "bits"] = fields[..] else {
            panic!("unexpected sigrok line `{line}`")
        };
        assert_eq!(count.parse().ok(), Some(printed.len()), "{line}");
        let wire: String = printed.chars().rev().collect();
        lines.push((register.to_string(), pin.to_string(), wire));
    }
    lines
        .chunks(2)
        .map(|pair| {
            let [(reg, tdi_pin, tdi), (reg2, tdo_pin, tdo)] = pair else {
                panic!("a TDI line without its TDO line: {pair:?}")
            };
            assert_eq!(
                (reg, tdi_pin.as_str(), tdo_pin.as_str()),
                (reg2, "TDI:", "TDO:")
            );
            BitStrings {
                register: reg.clone(),
                tdi: tdi.clone(),
                tdo: tdo.clone(),
            }
        })
        .collect()
}

fn wire_order(hex: &str, len: usize) -> String {
    let bits = Bits::from_hex(hex, len).expect("hex of its length");
    (0..len)
        .map(|i| if bits.get(i) { '1' } else { '0' })
        .collect()
}

#[test]
#[cfg_attr(
    not(has_sigrok_cli),
    ignore = "sigrok-cli not found on PATH (Debian package sigrok-cli)"
)]
fn sigrok_jtag_decoder_reads_the_same_scan_bits() {
    let Some(sigrok) = tools::require_tool("sigrok-cli", "the Debian package sigrok-cli") else {
        return;
    };
    let loaded = demo_board();
    let dir = temp_dir("sigrok");
    for name in PROGRAMS {
        let rec = record(&loaded, name);
        let file = dir.join(name.replace(".yaml", ".vcd"));
        std::fs::write(&file, &rec.vcd).expect("write the VCD");
        for port in PORTS {
            let ours: Vec<BitStrings> = decode(&rec.vcd, port)
                .scans
                .iter()
                .map(|s| BitStrings {
                    register: s.record.register.clone(),
                    tdi: wire_order(&s.record.tdi, s.record.length),
                    tdo: wire_order(&s.record.tdo, s.record.length),
                })
                .collect();
            assert!(!ours.is_empty());
            assert_eq!(sigrok_scans(&sigrok, &file, port), ours, "{name} {port}");
        }
    }
}

// ---------------------------------------------------------------------------
// compare()

/// TDO bits a comparison looks at: the mask's ones, or every bit.
fn bits_to_compare(report: &RunReport) -> usize {
    report
        .scans
        .iter()
        .map(|s| {
            let r = &s.record;
            r.mask.as_deref().map_or(r.length, |m| {
                Bits::from_hex(m, r.length).unwrap().count_ones()
            })
        })
        .sum()
}

#[test]
fn round_trip_a_run_matches_its_own_capture_log_and_its_decoded_recording() {
    let loaded = demo_board();
    for name in PROGRAMS {
        let rec = record(&loaded, name);
        // The capture log as `boardtwin play --log` writes it: one record a line.
        let log: String = rec
            .report
            .scans
            .iter()
            .map(|s| serde_json::to_string(&s.record).unwrap() + "\n")
            .collect();
        let real = read_capture_log(&log, Path::new("run.log")).unwrap_or_else(|e| panic!("{e}"));
        assert_eq!(real, records(&rec.report));
        let c = compare(&rec.report, &real);
        assert!(c.is_match(), "{name}\n{c}");
        assert_eq!(c.scans_compared, rec.report.scans.len());
        assert_eq!(c.bits_compared, bits_to_compare(&rec.report));
        if name == "infrastructure.yaml" {
            // By hand: 148 bits scanned, 11 of them X in the expectations.
            assert_eq!(c.bits_compared, 137);
        }
        assert!(c.to_string().ends_with("\nMATCH\n"), "{c}");
        // The recording, decoded port by port, is the same capture.
        let c = compare(&rec.report, &decode_all(&rec.vcd));
        assert!(c.is_match(), "{name}\n{c}");
        assert_eq!(c.scans_compared, rec.report.scans.len());
    }
}

/// (TAP port, simulated scan, bit) of every TDO bit that differs where the
/// simulated scan compares, worked out bit by bit from the two runs.
fn differing_bits(sim: &RunReport, real: &RunReport) -> Vec<(String, usize, usize)> {
    let mut out = Vec::new();
    for (s, r) in sim.scans.iter().zip(&real.scans) {
        let (s, r) = (&s.record, &r.record);
        assert_eq!(
            (&s.port, &s.register, s.length),
            (&r.port, &r.register, r.length)
        );
        let a = s.tdo_bits().unwrap();
        let b = r.tdo_bits().unwrap();
        let mask = s
            .mask
            .as_deref()
            .map(|m| Bits::from_hex(m, s.length).unwrap());
        for bit in 0..s.length {
            let compared = match &mask {
                Some(m) => m.get(bit),
                None => true,
            };
            if compared && a.get(bit) != b.get(bit) {
                out.push((s.port.clone(), s.index, bit));
            }
        }
    }
    out
}

#[test]
fn a_short_shows_as_exactly_the_bits_it_changes_each_placed_on_its_net() {
    let good = demo_board();
    let shorted = shorted_board(&good);
    let sim = record(&good, "interconnect.yaml");
    let real = record_on(&good, &shorted, "interconnect.yaml");
    assert!(sim.report.passed());
    assert!(!real.report.passed(), "the short fails the test");
    assert_eq!(sim.report.scans.len(), real.report.scans.len());

    // The real tester's capture: the shorted board's recording, decoded.
    let captured = decode_all(&real.vcd);
    let c = compare(&sim.report, &captured);
    assert!(c.issues.is_empty(), "{c}");
    assert_eq!(c.scans_compared, sim.report.scans.len());
    let found: Vec<(String, usize, usize)> = c
        .bits
        .iter()
        .map(|b| (b.tap_port.clone(), b.sim_scan, b.bit))
        .collect();
    assert_eq!(found, differing_bits(&sim.report, &real.report));

    // Worked by hand. LB_D0 carries code 1 and LB_D1 code 2 of the counting
    // sequence (scenarios/programs/interconnect.yaml), so only vector 0
    // drives LB_D0 high and only vector 1 drives LB_D1 high; the short is
    // wired-AND (the board file's `shorts: wired-and`), so each reads 0 in
    // the vector where it alone is high, and nowhere else differs. J2_AUX
    // DR scans 7 + 4k and 9 + 4k capture vector k (9 + 4k is the one with
    // an expectation; 7 + 4k compares every bit). The receiver is U5:
    // SW_IN(0) and SW_IN(1) are its boundary cells 21 and 22 (QM3310 BSDL,
    // INPUT cells), balls A1 and A2 in the BG49 pin map (board file: U5
    // package BG49; LB_D0: U5.A1, LB_D1: U5.A2). U4's 12-cell boundary
    // register sits between U5 and TDO, so cell 21 is scan bit 33.
    type Placed<'a> = (
        usize,
        usize,
        usize,
        bool,
        bool,
        &'a str,
        &'a str,
        usize,
        &'a str,
        &'a str,
        &'a str,
        &'a str,
    );
    let placed: Vec<Placed> = c
        .bits
        .iter()
        .map(|b| {
            (
                b.sim_scan,
                b.real_scan,
                b.bit,
                b.simulated,
                b.real,
                b.device.as_deref().unwrap(),
                b.register.as_deref().unwrap(),
                b.register_bit.unwrap(),
                b.function.as_deref().unwrap(),
                b.port.as_deref().unwrap(),
                b.pin.as_deref().unwrap(),
                b.net.as_deref().unwrap(),
            )
        })
        .collect();
    let d0 = |sim, real| {
        (
            sim, real, 33, true, false, "U5", "BOUNDARY", 21, "INPUT", "SW_IN(0)", "A1", "LB_D0",
        )
    };
    let d1 = |sim, real| {
        (
            sim, real, 34, true, false, "U5", "BOUNDARY", 22, "INPUT", "SW_IN(1)", "A2", "LB_D1",
        )
    };
    // The decoded capture counts J2_AUX's scans alone: sim scan 7 is its 3rd.
    assert_eq!(placed, [d0(7, 3), d0(9, 4), d1(11, 5), d1(13, 6)]);
    assert!(c.bits.iter().all(|b| b.tap_port == "J2_AUX"));
    // The masked scans did expect 1 there: vector k's code bit of the net.
    for (scan, bit) in [(9, 33), (13, 34)] {
        let r = &sim.report.scans[scan].record;
        let expected = Bits::from_hex(r.expected.as_deref().unwrap(), r.length).unwrap();
        let mask = Bits::from_hex(r.mask.as_deref().unwrap(), r.length).unwrap();
        assert!(expected.get(bit) && mask.get(bit), "scan {scan} bit {bit}");
    }

    // The same against the capture log of the shorted run: same bits, the
    // captured scans numbered as in the run.
    let c_log = compare(&sim.report, &records(&real.report));
    let same: Vec<_> = c_log
        .bits
        .iter()
        .map(|b| (b.sim_scan, b.real_scan, b.bit, b.net.clone()))
        .collect();
    assert_eq!(
        same,
        [
            (7, 7, 33, Some("LB_D0".to_string())),
            (9, 9, 33, Some("LB_D0".to_string())),
            (11, 11, 34, Some("LB_D1".to_string())),
            (13, 13, 34, Some("LB_D1".to_string())),
        ]
    );

    let text = c.to_string();
    assert!(
        text.contains("J2_AUX    7         3          33   1          0     U5      BOUNDARY  21    INPUT     SW_IN(0)  A1   LB_D0"),
        "{text}"
    );
    assert!(
        text.ends_with(
            "DIFFERENT: 0 scan differences, 4 TDO bits differ (2 of them compared by the program)\n"
        ),
        "{text}"
    );
    // The program gives expected values to scans 9 and 13 only; scans 7
    // and 11 capture the same nets with nothing expected (worked out from
    // the program: each vector's response is read twice on J2_AUX).
    let in_program: Vec<(usize, bool)> = c
        .bits
        .iter()
        .map(|b| (b.sim_scan, b.program_compares))
        .collect();
    assert_eq!(in_program, [(7, false), (9, true), (11, false), (13, true)]);
    let json = serde_json::to_value(&c).unwrap();
    assert_eq!(json["bits"][3]["net"], "LB_D1");
}

#[test]
fn a_capture_missing_its_last_scan_is_reported_by_index_and_port() {
    let rec = record(&demo_board(), "infrastructure.yaml");
    let mut real = records(&rec.report);
    let last = real.pop().unwrap();
    let c = compare(&rec.report, &real);
    assert_eq!(
        serde_json::to_value(&c.issues).unwrap(),
        serde_json::json!([{ "kind": "missing", "port": "J2_AUX", "sim_scan": 5, "register": "DR", "length": 34 }])
    );
    // And a capture with one scan too many.
    real.push(last.clone());
    real.push(ScanRecord { index: 6, ..last });
    let c = compare(&rec.report, &real);
    assert_eq!(
        serde_json::to_value(&c.issues).unwrap(),
        serde_json::json!([{ "kind": "extra", "port": "J2_AUX", "real_scan": 6, "register": "DR", "length": 34 }])
    );
    assert!(c.bits.is_empty());
}
