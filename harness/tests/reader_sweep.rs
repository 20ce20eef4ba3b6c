//! The bad-input sweep of issue 19, kept as a property test: every reader
//! (board, native program, SVF, scenario, defect list, VCD, capture log)
//! gets mutations of the demo's own files and hostile pieces (deep nesting,
//! huge numbers, a second document, aliases, duplicate keys). Each must
//! answer `Ok` or a located `Err`, never panic. Cases are bounded so the
//! sweep stays a few seconds; no timing is asserted here.

#[path = "support/demo.rs"]
mod demo_support;
#[path = "support/located.rs"]
mod located;

use std::path::Path;

use demo_support::{demo, repo};
use harness::capture::{read_capture_log, read_vcd};
use harness::program::native::parse_native;
use harness::program::svf::read_svf;
use harness::run::{RunOptions, Runner};
use harness::scenario::ScenarioFile;
use located::assert_located;
use proptest::prelude::*;
use virtual_board::{load_board_text, read_yaml, DefectSpec};

fn seed(relative: &str) -> String {
    std::fs::read_to_string(repo().join("scenarios").join(relative)).expect("seed file")
}

/// Pieces that broke readers before (issue 19), spliced into seeds.
const HOSTILE: &[&str] = &[
    "\n---\nname: x\n",
    "[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[",
    "a: &a [x, x, x, x]\nb: &b [*a, *a, *a, *a]\nc: [*b, *b, *b, *b]\n",
    "99999999999999999999999999",
    "length: 125000000000",
    "idle: 1000000000000",
    "frequency: -1",
    "frequency: .nan",
    "RUNTEST 1E12 TCK;",
    "SDR 4294967296 TDI (0);",
    "result: fial",
    "hazards_absent: yes",
    "idcode: 0x117420A01",
    "\u{0}\u{feff}é",
    "- { short: [A, A] }",
];

#[derive(Clone, Debug)]
enum Mutation {
    /// Replace the byte at a position (taken modulo the length).
    Flip(usize, u8),
    /// Cut a range out.
    Cut(usize, usize),
    /// Repeat a line.
    RepeatLine(usize),
    /// Splice in a hostile piece.
    Splice(usize, usize),
}

fn mutation() -> impl Strategy<Value = Mutation> {
    prop_oneof![
        (any::<usize>(), any::<u8>()).prop_map(|(p, b)| Mutation::Flip(p, b)),
        (any::<usize>(), 0usize..64).prop_map(|(p, n)| Mutation::Cut(p, n)),
        any::<usize>().prop_map(Mutation::RepeatLine),
        (any::<usize>(), 0..HOSTILE.len()).prop_map(|(p, h)| Mutation::Splice(p, h)),
    ]
}

/// Applies the mutations; the result may not be UTF-8 at a byte level, so
/// it is made valid lossily (readers take `&str`).
fn mutate(text: &str, mutations: &[Mutation]) -> String {
    let mut bytes = text.as_bytes().to_vec();
    for m in mutations {
        let len = bytes.len().max(1);
        match *m {
            Mutation::Flip(p, b) => {
                if !bytes.is_empty() {
                    bytes[p % len] = b;
                }
            }
            Mutation::Cut(p, n) => {
                let start = p % len;
                let end = (start + n).min(bytes.len());
                bytes.drain(start.min(end)..end);
            }
            Mutation::RepeatLine(p) => {
                let lines: Vec<&[u8]> = bytes.split(|b| *b == b'\n').collect();
                let k = p % lines.len();
                let mut out = Vec::new();
                for (i, l) in lines.iter().enumerate() {
                    out.extend_from_slice(l);
                    out.push(b'\n');
                    if i == k {
                        out.extend_from_slice(l);
                        out.push(b'\n');
                    }
                }
                bytes = out;
            }
            Mutation::Splice(p, h) => {
                let at = p % (bytes.len() + 1);
                let piece = HOSTILE[h].as_bytes();
                bytes.splice(at..at, piece.iter().copied());
            }
        }
    }
    String::from_utf8_lossy(&bytes).into_owned()
}

fn cases() -> ProptestConfig {
    ProptestConfig {
        cases: 48,
        failure_persistence: None,
        ..ProptestConfig::default()
    }
}

proptest! {
    #![proptest_config(cases())]

    #[test]
    fn board_files(ms in prop::collection::vec(mutation(), 1..4)) {
        let text = mutate(&seed("boards/harbor_controller.yaml"), &ms);
        let dir = repo().join("scenarios/boards");
        let result = load_board_text(&text, Path::new("b.yaml"), &mut |p: &Path| {
            let full = dir.join(p);
            std::fs::read_to_string(&full).map(|t| (t, full.clone())).map_err(|e| {
                virtual_board::BsdlError {
                    path: Some(full),
                    span: Default::default(),
                    kind: virtual_board::BsdlErrorKind::Io(e.to_string()),
                }
            })
        });
        if let Err(e) = result {
            if !matches!(*e.kind, virtual_board::BoardErrorKind::Bsdl { .. }) {
                assert_located(&e.to_string(), "b.yaml");
            }
        }
    }

    #[test]
    fn native_programs(ms in prop::collection::vec(mutation(), 1..4)) {
        let text = mutate(&seed("programs/infrastructure.yaml"), &ms);
        let path = repo().join("scenarios/programs/p.yaml");
        match parse_native(&text, &path, demo()) {
            Ok(program) => {
                // What reads also runs, and to an end.
                let mut board = demo().board.clone();
                let _ = Runner::new(&mut board, RunOptions::default()).run(&program);
            }
            Err(e) => assert_located(&e.to_string(), &path.display().to_string()),
        }
    }

    #[test]
    fn svf_programs(ms in prop::collection::vec(mutation(), 1..4)) {
        let text = mutate(&seed("programs/exported/interconnect.J2_AUX.svf"), &ms);
        if let Ok(svf) = read_svf(&text, Some(Path::new("p.svf")), "J2_AUX") {
            let mut board = demo().board.clone();
            let _ = Runner::new(&mut board, RunOptions::default()).run(&svf.program);
        }
    }

    #[test]
    fn scenarios(ms in prop::collection::vec(mutation(), 1..4)) {
        let text = mutate(&seed("cases/short_wired_and.yaml"), &ms);
        let _ = read_yaml::<ScenarioFile>(&text);
    }

    #[test]
    fn defect_lists(ms in prop::collection::vec(mutation(), 1..4)) {
        let text = mutate(
            "- { short: [LB_D0, LB_D1], behaviour: wired-and }\n- { stuck: HOST_A6, value: 0 }\n\
             - { open: LB_A0 }\n- { wrong_device: U4, idcode: 0x22040A01 }\n- { tdo_stuck: U3, value: 1 }\n",
            &ms,
        );
        if let Ok((list, _)) = read_yaml::<Vec<DefectSpec>>(&text) {
            let mut none = |p: &Path| Err(virtual_board::BsdlError {
                path: Some(p.to_path_buf()),
                span: Default::default(),
                kind: virtual_board::BsdlErrorKind::Io("no file".into()),
            });
            let _ = demo().with_defects(&list, &mut none);
        }
    }

    #[test]
    fn vcd_recordings(ms in prop::collection::vec(mutation(), 1..4)) {
        let text = mutate(&seed("captures/j2_aux_lb_d0_d1_short.vcd"), &ms);
        let _ = read_vcd(&text, Path::new("c.vcd"));
    }

    #[test]
    fn capture_logs(ms in prop::collection::vec(mutation(), 1..4)) {
        let line = r#"{"index":0,"port":"J1_MAIN","register":"IR","length":8,"tdi":"FF","tdo":"81","expected":"81","mask":"FF","passed":true}"#;
        let text = mutate(&format!("{line}\n{line}\n"), &ms);
        let _ = read_capture_log(&text, Path::new("c.jsonl"));
    }
}
