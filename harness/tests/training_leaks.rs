//! Secrets never leak: every byte an exercise server sends a trainee,
//! across every program and request a trainee can send, is the same as a
//! class on the board as designed would send, except the TDO bits (the
//! evidence a real tester gets); and neither those bytes nor anything the
//! trainee's command writes (report, JSON, capture log, VCD) holds the
//! answer's repair words or its defect-list form. The answer comes only in
//! the grade.

#[path = "support/class.rs"]
#[allow(dead_code)]
mod class;
#[path = "support/demo.rs"]
mod demo;

use std::path::{Path, PathBuf};
use std::process::Command;
use std::time::Duration;

use harness::program::native::load_program;
use harness::program::Program;
use harness::remote::{parse_frame, RemoteBoard, Reply, Request, Scope, DEFAULT_MAX_FRAME};
use harness::training::{draw, Level};
use virtual_board::{Bits, DefectSpec};

use class::{exercise, run_as, submit_as, ClassServer, Proxy};
use demo::{demo, repo};

/// The programs a trainee can run: the bundled ones, the SVF export, and
/// generated interconnect and infrastructure tests.
fn programs(dir: &Path) -> Vec<(String, Program)> {
    let bin = env!("CARGO_BIN_EXE_boardtwin");
    let board = repo().join("scenarios/boards/harbor_controller.yaml");
    for (args, out) in [
        (vec!["--method", "modified-counting"], "ic.yaml"),
        (vec!["--method", "walking-ones"], "walk.yaml"),
        (vec!["--infrastructure"], "infra.yaml"),
    ] {
        let status = Command::new(bin)
            .arg("-q")
            .arg("generate")
            .arg("--board")
            .arg(&board)
            .args(&args)
            .arg("-o")
            .arg(dir.join(out))
            .stdout(std::process::Stdio::null())
            .status()
            .unwrap();
        assert!(status.success(), "generate {args:?}");
    }
    let p = |rel: &Path, port: Option<&str>| {
        load_program(rel, demo(), port).unwrap_or_else(|e| panic!("{e}"))
    };
    let bundled = repo().join("scenarios/programs");
    let mut out: Vec<(String, Program)> = [
        "infrastructure.yaml",
        "interconnect.yaml",
        "cluster_path.yaml",
        "hazard_extest_without_preload.yaml",
    ]
    .iter()
    .map(|f| (f.to_string(), p(&bundled.join(f), None)))
    .collect();
    out.push((
        "exported J1 SVF".into(),
        p(
            &bundled.join("exported/interconnect.J1_MAIN.svf"),
            Some("J1_MAIN"),
        ),
    ));
    for f in ["ic.yaml", "walk.yaml", "infra.yaml"] {
        out.push((f.into(), p(&dir.join(f), None)));
    }
    out
}

/// A trainee's whole session through `proxy`: every request kind a trainee
/// can send by hand (the administrative ones refused), then every program.
fn session(proxy: &Proxy, name: &str, programs: &[(String, Program)]) {
    let mut raw = RemoteBoard::connect_as(&proxy.address, Duration::from_secs(60), name).unwrap();
    let ports = raw.description().ports.len() as u16;
    let mut requests = vec![Request::Events, Request::Reset];
    for port in 0..=ports {
        requests.push(Request::Layout { port, ir: true });
        requests.push(Request::Layout { port, ir: false });
        requests.push(Request::TckLimits { port });
        requests.push(Request::Idle {
            port,
            tms: false,
            count: 3,
        });
        requests.push(Request::Shift {
            port,
            tdi: Bits::ones(40),
        });
        requests.push(Request::Trst {
            port,
            asserted: true,
        });
    }
    for scope in [Scope::Session, Scope::Server] {
        requests.push(Request::List {
            token: "guess".into(),
            scope,
        });
        requests.push(Request::Clear {
            token: String::new(),
            scope,
        });
        requests.push(Request::Inject {
            token: "guess".into(),
            scope,
            defects: vec![],
        });
    }
    for r in &requests {
        let _ = raw.call(r);
    }
    let _ = raw.bye();
    for (_, program) in programs {
        let _ = run_as(demo(), &proxy.address, name, program);
    }
}

/// The replies in `bytes` with every TDO bit (and whether TDO was driven)
/// blanked: what a trainee learns besides the captures.
fn without_tdo(bytes: &[u8]) -> Vec<String> {
    let mut out = Vec::new();
    let mut rest = bytes;
    while let Ok((frame, used)) = parse_frame(rest, DEFAULT_MAX_FRAME) {
        let reply = Reply::decode(frame).expect("a reply");
        out.push(match reply {
            Reply::Burst { tdo, .. } => format!("burst of {}", tdo.len()),
            Reply::Shift { tdo } => format!("shift of {}", tdo.len()),
            other => format!("{other:?}"),
        });
        rest = &rest[used..];
    }
    assert!(rest.is_empty(), "the proxy saw whole frames only");
    out
}

/// Phrases that would give the answer away: each defect's repair words
/// and defect-list form, and the repair phrases of every kind of defect.
fn giveaways(defects: &[DefectSpec]) -> Vec<String> {
    let mut out: Vec<String> = [
        "short between",
        "stuck at",
        "open at",
        "wrong device",
        "chain breaks",
        "TRST* stuck",
        "TDO of",
        "TMS open",
        "TCK open",
        "dead device",
        "\"stuck\"",
        "\"short\"",
        "\"open\"",
        "\"wrong_device\"",
        "\"broken_link\"",
    ]
    .map(String::from)
    .to_vec();
    for d in defects {
        out.push(d.describe());
        out.push(serde_json::to_string(d).unwrap());
    }
    out
}

fn find(hay: &[u8], needle: &str) -> bool {
    hay.windows(needle.len()).any(|w| w == needle.as_bytes())
}

fn assert_clean(what: &str, bytes: &[u8], defects: &[DefectSpec]) {
    for g in giveaways(defects) {
        assert!(!find(bytes, &g), "{what}: `{g}` reaches the trainee");
    }
}

#[test]
fn nothing_but_tdo_depends_on_the_hidden_defects_at_any_level() {
    let dir = tempfile::tempdir().unwrap();
    let programs = programs(dir.path());
    let plain = ClassServer::start(demo(), &exercise(demo(), vec![]), None);
    let plain_proxy = Proxy::start(&plain.address);
    session(&plain_proxy, "control", &programs);
    let control: Vec<Vec<String>> = plain_proxy.bytes().iter().map(|b| without_tdo(b)).collect();
    for level in Level::ALL {
        let defects = draw(demo(), &[level], 7).unwrap();
        let server = ClassServer::start(demo(), &exercise(demo(), defects.clone()), None);
        let proxy = Proxy::start(&server.address);
        session(&proxy, "trainee", &programs);
        let seen = proxy.bytes();
        assert_eq!(seen.len(), control.len(), "{}", level.name());
        for (k, bytes) in seen.iter().enumerate() {
            assert_clean(level.name(), bytes, &defects);
            assert_eq!(
                without_tdo(bytes),
                control[k],
                "{}: connection {k} learns more than TDO",
                level.name()
            );
        }
        // The scan is not blind: the grade, and only the grade, names the answer.
        let before = seen.len();
        let grade = submit_as(&proxy.address, "trainee", &defects);
        assert!(matches!(grade, Reply::Grade(_)));
        let after = proxy.bytes();
        assert_eq!(after.len(), before + 1);
        assert!(
            find(&after[before], &defects[0].describe()),
            "{}",
            level.name()
        );
    }
}

#[test]
fn the_trainee_command_writes_nothing_of_the_answer() {
    let dir = tempfile::tempdir().unwrap();
    let defects = vec![serde_yaml::from_str::<DefectSpec>("{short: [LB_D0, LB_D1]}").unwrap()];
    let server = ClassServer::start(demo(), &exercise(demo(), defects.clone()), None);
    let bin = env!("CARGO_BIN_EXE_boardtwin");
    let out: PathBuf = dir.path().to_path_buf();
    let play = Command::new(bin)
        .arg("play")
        .arg("--board")
        .arg(repo().join("scenarios/boards/harbor_controller.yaml"))
        .arg(repo().join("scenarios/programs/interconnect.yaml"))
        .arg("--target")
        .arg(format!("tcp://pat@{}", server.address))
        .arg("--log")
        .arg(out.join("capture.jsonl"))
        .arg("--vcd")
        .arg(out.join("run.vcd"))
        .output()
        .unwrap();
    assert_eq!(play.status.code(), Some(1), "the short fails the test");
    // The evidence is there: the failing nets are named...
    assert!(find(&play.stdout, "LB_D0") && find(&play.stdout, "LB_D1"));
    // ...but not the answer.
    assert_clean("play's report", &play.stdout, &defects);
    assert_clean("play's stderr", &play.stderr, &defects);
    for f in ["capture.jsonl", "run.vcd"] {
        assert_clean(f, &std::fs::read(out.join(f)).unwrap(), &defects);
    }
    let json = Command::new(bin)
        .arg("play")
        .arg("--json")
        .arg("--board")
        .arg(repo().join("scenarios/boards/harbor_controller.yaml"))
        .arg(repo().join("scenarios/programs/interconnect.yaml"))
        .arg("--target")
        .arg(format!("tcp://pat@{}", server.address))
        .output()
        .unwrap();
    assert_clean("play --json", &json.stdout, &defects);
    assert!(server.scores().is_empty(), "nothing graded, nothing told");
}
