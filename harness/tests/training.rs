//! Exercises: drawing by level and seed, sealing (the file names nothing of
//! the answer; the key opens it, another key or none does not), grading
//! (exact, within the group of what the trainee ran, partly right, wrong),
//! costs against the runner's own count, and ten trainees at once.

#[path = "support/class.rs"]
#[allow(dead_code)]
mod class;
#[path = "support/demo.rs"]
mod demo;

use std::process::Command;

use harness::program::native::load_program;
use harness::remote::Reply;
use harness::training::{draw, Exercise, ExerciseKey, Level, Verdict, MAGIC};
use virtual_board::DefectSpec;

use class::{exercise, run_as, submit_as, ClassServer};
use demo::{demo, repo};

fn key() -> ExerciseKey {
    ExerciseKey([0x5a; 32])
}

fn defect(yaml: &str) -> DefectSpec {
    serde_yaml::from_str(yaml).unwrap()
}

/// Every name a defect list could give away: nets, pins as `DEVICE.PIN`,
/// designators, and the repair words of each defect.
fn secrets(defects: &[DefectSpec]) -> Vec<String> {
    let mut out = Vec::new();
    for d in defects {
        out.push(d.describe());
        out.push(serde_json::to_string(d).unwrap());
        out.extend(harness::training::names_in(d));
    }
    out
}

fn contains(hay: &[u8], needle: &str) -> bool {
    !needle.is_empty() && hay.windows(needle.len()).any(|w| w == needle.as_bytes())
}

#[test]
fn every_level_draws_the_same_defects_for_a_seed_and_seals_them_unreadably() {
    for level in Level::ALL {
        let a = draw(demo(), &[level], 11).unwrap_or_else(|e| panic!("{}: {e}", level.name()));
        let b = draw(demo(), &[level], 11).unwrap();
        assert_eq!(a, b, "{}", level.name());
        let want = if level == Level::Double { 2 } else { 1 };
        assert_eq!(a.len(), want, "{}", level.name());
        let ex = exercise(demo(), a.clone());
        let sealed = ex.seal(&key());
        assert_eq!(sealed, ex.seal(&key()), "deterministic for a seed and key");
        assert!(sealed.starts_with(MAGIC));
        // The sealed bytes hold none of the answer's kind, nets, pins or
        // designators, nor the board's path or name.
        let body = &sealed[MAGIC.len()..];
        for s in secrets(&a).iter().chain([
            &"short".to_string(),
            &"stuck".to_string(),
            &"open".to_string(),
            &"wrong_device".to_string(),
            &"harbor".to_string(),
        ]) {
            assert!(
                !contains(body, s),
                "{}: `{s}` is readable in the sealed file",
                level.name()
            );
        }
    }
    // Different seeds draw differently (a bridge among many adjacent pairs).
    let seeds: std::collections::BTreeSet<String> = (0..8)
        .map(|s| draw(demo(), &[Level::Bridge], s).unwrap()[0].describe())
        .collect();
    assert!(seeds.len() > 2, "{seeds:?}");
}

#[test]
fn the_key_opens_the_file_and_nothing_else_does() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("ex.bin");
    let ex = exercise(demo(), vec![defect("{stuck: LB_D0, value: 1}")]);
    std::fs::write(&path, ex.seal(&key())).unwrap();
    assert_eq!(Exercise::read(&path, &key()).unwrap(), ex);
    assert!(Exercise::read(&path, &ExerciseKey([0x5b; 32])).is_err());
    // The command line: with the key in the environment it prints the
    // answer; without it, it refuses (exit 2) and prints nothing on stdout.
    let bin = env!("CARGO_BIN_EXE_boardtwin");
    let hex: String = key().0.iter().map(|b| format!("{b:02x}")).collect();
    let shown = Command::new(bin)
        .args(["exercise", "show"])
        .arg(&path)
        .env("BOARDTWIN_EXERCISE_KEY", &hex)
        .output()
        .unwrap();
    assert_eq!(shown.status.code(), Some(0));
    assert!(String::from_utf8_lossy(&shown.stdout).contains("LB_D0 stuck at 1"));
    let refused = Command::new(bin)
        .args(["exercise", "show"])
        .arg(&path)
        .env_remove("BOARDTWIN_EXERCISE_KEY")
        .output()
        .unwrap();
    assert_eq!(refused.status.code(), Some(2));
    assert!(refused.stdout.is_empty());
    assert!(String::from_utf8_lossy(&refused.stderr).contains("no exercise key"));
}

fn grade_of(reply: Reply) -> serde_json::Value {
    match reply {
        Reply::Grade(g) => g,
        other => panic!("expected a grade, got {other:?}"),
    }
}

#[test]
fn grades_exact_within_group_partly_right_and_wrong() {
    // LB_D0 stuck at 1. The net is pulled up where it is read, so the same
    // net open (its receivers floating high) reads the same on every scan:
    // no net-level test tells them apart (common practice: a stuck-at-1 and
    // an open on a pulled-up net are one ambiguity group).
    let answer = defect("{stuck: LB_D0, value: 1}");
    let ex = exercise(demo(), vec![answer]);
    let dir = tempfile::tempdir().unwrap();
    let server = ClassServer::start(demo(), &ex, Some(dir.path().to_path_buf()));
    let program = load_program(
        &repo().join("scenarios/programs/interconnect.yaml"),
        demo(),
        None,
    )
    .unwrap();
    let cases = [
        ("ada", "{stuck: LB_D0, value: 1}", Verdict::Exact),
        ("bo", "{open: LB_D0}", Verdict::WithinGroup),
        ("cy", "{stuck: LB_D0, value: 0}", Verdict::PartlyRight),
        ("di", "{open: HOST_D3}", Verdict::Wrong),
    ];
    let mut report = None;
    for (name, diagnosis, _) in &cases {
        let r = run_as(demo(), &server.address, name, &program);
        assert!(!r.passed(), "the stuck net fails the interconnect test");
        let g = grade_of(submit_as(&server.address, name, &[defect(diagnosis)]));
        assert!(g["debrief"]
            .as_str()
            .unwrap()
            .contains("current-limited supply"));
        assert_eq!(g["answer"][0], "LB_D0 stuck at 1");
        report = Some(r);
    }
    let report = report.unwrap();
    // The answer's net with another one: not the same places, so wrong.
    let r = run_as(demo(), &server.address, "ed", &program);
    assert!(!r.passed());
    let partly = grade_of(submit_as(
        &server.address,
        "ed",
        &[defect("{short: [LB_D0, LB_D1]}")],
    ));
    assert_eq!(partly["verdict"], "wrong", "LB_D1 is not the answer's");
    let scores = server.scores();
    for ((name, _, verdict), score) in cases.iter().zip(&scores) {
        assert_eq!(&score.trainee, name);
        assert_eq!(score.verdict, *verdict, "{name}");
        // Costs: the TCK the desk counted is the runner's own count.
        assert_eq!(score.costs.tck, report.tck_cycles, "{name}");
        assert_eq!(score.costs.scans as usize, report.scans.len(), "{name}");
    }
    // A second submission gets the first grade again.
    let again = grade_of(submit_as(
        &server.address,
        "di",
        &[defect("{stuck: LB_D0, value: 1}")],
    ));
    assert_eq!(again["verdict"], "wrong");
    // The instructor's sheets: one row per trainee.
    let csv = std::fs::read_to_string(dir.path().join("scores.csv")).unwrap();
    assert_eq!(csv.lines().count(), 6, "{csv}");
    assert!(csv.lines().nth(1).unwrap().starts_with("ada,exact,100,"));
    let json: serde_json::Value =
        serde_json::from_slice(&std::fs::read(dir.path().join("scores.json")).unwrap()).unwrap();
    assert_eq!(json.as_array().unwrap().len(), 5);
    // The group shown holds the answer, and the failing bits sit on its nets.
    let first = &scores[0].grade;
    assert!(
        first.group.contains(&"LB_D0 stuck at 1".to_string()),
        "{:?}",
        first.group
    );
    assert!(
        first.group.contains(&"open at LB_D0".to_string()),
        "{:?}",
        first.group
    );
    let nets: Vec<&str> = first
        .differing_nets
        .iter()
        .map(|(n, _)| n.as_str())
        .collect();
    assert_eq!(nets, ["LB_D0"]);
}

#[test]
fn nothing_seen_earns_no_group_credit() {
    let ex = exercise(demo(), vec![defect("{stuck: LB_D0, value: 1}")]);
    let server = ClassServer::start(demo(), &ex, None);
    // No scan at all: an equivalent-looking guess is not credited.
    let g = grade_of(submit_as(
        &server.address,
        "fay",
        &[defect("{stuck: LB_D1, value: 1}")],
    ));
    assert_eq!(g["verdict"], "wrong");
    assert_eq!(g["grade"]["group_size"], 0);
}

#[test]
fn ten_trainees_at_once_each_on_a_board_of_their_own() {
    let ex = exercise(demo(), vec![defect("{stuck: LB_D1, value: 0}")]);
    let server = ClassServer::start(demo(), &ex, None);
    let program = load_program(
        &repo().join("scenarios/programs/interconnect.yaml"),
        demo(),
        None,
    )
    .unwrap();
    let mut board = demo()
        .with_defects(
            &ex.defects,
            &mut virtual_board::bsdl_files_beside(&demo().path),
        )
        .unwrap()
        .board;
    let reference = harness::run::Runner::new(&mut board, Default::default()).run(&program);
    assert!(!reference.passed());
    let grades: Vec<serde_json::Value> = std::thread::scope(|s| {
        let handles: Vec<_> = (0..10)
            .map(|k| {
                let (address, program, reference) = (&server.address, &program, &reference);
                s.spawn(move || {
                    let name = format!("trainee-{k}");
                    let report = run_as(demo(), address, &name, program);
                    // Each trainee's run is the in-process run on the faulted board.
                    assert_eq!(report.failed_scans(), reference.failed_scans());
                    let guess = if k % 2 == 0 {
                        "{stuck: LB_D1, value: 0}"
                    } else {
                        "{open: LB_D0}"
                    };
                    grade_of(submit_as(address, &name, &[defect(guess)]))
                })
            })
            .collect();
        handles.into_iter().map(|h| h.join().unwrap()).collect()
    });
    for (k, g) in grades.iter().enumerate() {
        assert_eq!(g["trainee"], format!("trainee-{k}"));
        assert_eq!(g["verdict"], if k % 2 == 0 { "exact" } else { "wrong" });
        assert_eq!(g["costs"]["tck"], reference.tck_cycles);
    }
    assert_eq!(server.scores().len(), 10);
}
