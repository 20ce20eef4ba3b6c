//! Fault campaigns on the demo board: the universe, classification, shards
//! and their merge, and the command line.

use std::path::{Path, PathBuf};
use std::process::Command;

use harness::campaign::{self, FaultClass, UniverseOptions};
use harness::program::native::load_program;
use virtual_board::load_board;

fn repo() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("..")
}

#[test]
fn the_universe_has_two_stuck_faults_per_signal_net() {
    let loaded = load_board(&repo().join("scenarios/boards/harbor_controller.yaml")).unwrap();
    let faults = campaign::universe(&loaded, &UniverseOptions::default());
    let stuck = faults
        .iter()
        .filter(|f| f.class == FaultClass::Stuck)
        .count();
    // Every net of the board file that is not a power or ground rail, stuck at 0 and at 1.
    let rails = loaded.file.power.len() + loaded.file.ground.len();
    assert_eq!(stuck, 2 * (loaded.file.nets.len() - rails));
    // Chain faults: broken link, TDO stuck at 0 and 1, TMS open, TCK open for
    // each of the five devices, and TRST* stuck on the one port that has it.
    assert_eq!(
        faults
            .iter()
            .filter(|f| f.class == FaultClass::Chain)
            .count(),
        5 * 5 + 1
    );
    // No all-pairs shorts unless asked for.
    assert!(!faults.iter().any(|f| f.class == FaultClass::AnyShort));
    // Untestable faults say why.
    assert!(faults.iter().filter(|f| f.untestable.is_some()).all(|f| f
        .untestable
        .as_deref()
        .unwrap()
        .starts_with("no scan cell can observe")));
}

#[test]
fn shards_are_disjoint_and_merge_into_the_whole() {
    let loaded = load_board(&repo().join("scenarios/boards/harbor_controller.yaml")).unwrap();
    let program = load_program(
        &repo().join("scenarios/programs/interconnect.yaml"),
        &loaded,
        None,
    )
    .unwrap();
    let options = UniverseOptions {
        classes: [FaultClass::Stuck, FaultClass::Chain].into_iter().collect(),
    };
    let all = campaign::universe(&loaded, &options);
    let whole = campaign::run_campaign(&loaded, &program, &all, 2, (1, 1), &|_| {}).unwrap();
    let mut parts = Vec::new();
    for i in 1..=3 {
        let shard = campaign::shard_of(all.clone(), i, 3);
        parts.push(campaign::run_campaign(&loaded, &program, &shard, 1, (i, 3), &|_| {}).unwrap());
    }
    assert_eq!(parts.iter().map(|p| p.faults).sum::<usize>(), all.len());
    let merged = campaign::merge(parts.clone()).unwrap();
    assert_eq!(
        (
            merged.faults,
            merged.detected,
            merged.undetected,
            merged.untestable
        ),
        (
            whole.faults,
            whole.detected,
            whole.undetected,
            whole.untestable
        )
    );
    assert_eq!(merged.ambiguity_groups, whole.ambiguity_groups);
    assert_eq!(merged.by_class, whole.by_class);
    // A shard given twice is refused.
    let twice = vec![parts[0].clone(), parts[0].clone()];
    assert!(campaign::merge(twice).unwrap_err().contains("given twice"));
    // Issue 19: 2 of 3 shards used to merge into a "complete" result.
    let some = vec![parts[0].clone(), parts[2].clone()];
    assert_eq!(
        campaign::merge(some).unwrap_err(),
        "shards missing: 2/3 (a merge needs all 3)"
    );
}

#[test]
fn the_interconnect_test_catches_the_stuck_nets_it_codes() {
    let loaded = load_board(&repo().join("scenarios/boards/harbor_controller.yaml")).unwrap();
    let program = load_program(
        &repo().join("scenarios/programs/interconnect.yaml"),
        &loaded,
        None,
    )
    .unwrap();
    let options = UniverseOptions {
        classes: [FaultClass::Stuck].into_iter().collect(),
    };
    let faults = campaign::universe(&loaded, &options);
    let r = campaign::run_campaign(&loaded, &program, &faults, 2, (1, 1), &|_| {}).unwrap();
    // The twelve coded nets each see 0 and 1 (modified counting sequence,
    // P. Goel and M. T. McMahon, ITC 1982): both stuck-ats of each are caught.
    let coded = [
        "LB_D0",
        "LB_D1",
        "LB_D2",
        "LB_D3",
        "LB_A0",
        "LB_A1",
        "LB_RD_N",
        "HOST_A6",
        "HOST_A7",
        "BERTH_LAMP5_N",
        "BERTH_LAMP6_N",
        "CLK_25M_A",
    ];
    for net in coded {
        for v in [0, 1] {
            let label = format!("{net} stuck at {v}");
            let f = r
                .results
                .iter()
                .find(|x| x.fault.label == label)
                .unwrap_or_else(|| panic!("{label} in the universe"));
            assert_eq!(f.verdict, "detected", "{label}");
        }
    }
    // A net the program never reads is missed, and the reason says so.
    let missed = r
        .results
        .iter()
        .find(|x| x.fault.label == "BRD_ID0 stuck at 0")
        .unwrap();
    assert_eq!(missed.verdict, "undetected");
    assert_eq!(
        missed.reason.as_deref(),
        Some("no compared bit reads net BRD_ID0")
    );
}

#[test]
fn the_command_line_reports_the_keys_and_shards() {
    let dir = std::env::temp_dir().join(format!("boardtwin-campaign-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let run = |shard: &str, file: &Path| {
        Command::new(env!("CARGO_BIN_EXE_boardtwin"))
            .current_dir(repo())
            .args([
                "campaign",
                "--board",
                "scenarios/boards/harbor_controller.yaml",
                "--program",
                "scenarios/programs/interconnect.yaml",
                "--classes",
                "stuck,chain",
                "--shard",
                shard,
                "--json",
                "--report",
            ])
            .arg(file)
            .output()
            .unwrap()
    };
    let a = run("1/2", &dir.join("a.json"));
    let b = run("2/2", &dir.join("b.json"));
    // Undetected faults remain (nets the demo test does not code): exit 1.
    assert_eq!(a.status.code(), Some(1));
    let json: serde_json::Value = serde_json::from_slice(&a.stdout).unwrap();
    for key in [
        "faults",
        "detected",
        "undetected",
        "untestable",
        "ambiguity_groups",
        "faults_per_second",
    ] {
        assert!(json.get(key).is_some(), "missing {key}");
    }
    assert_eq!(b.status.code(), Some(1));
    let merged = Command::new(env!("CARGO_BIN_EXE_boardtwin"))
        .args(["campaign-merge", "--json"])
        .arg(dir.join("a.json"))
        .arg(dir.join("b.json"))
        .output()
        .unwrap();
    let m: serde_json::Value = serde_json::from_slice(&merged.stdout).unwrap();
    let fa = json["faults"].as_u64().unwrap();
    let fb: serde_json::Value = serde_json::from_slice(&b.stdout).unwrap();
    assert_eq!(
        m["faults"].as_u64().unwrap(),
        fa + fb["faults"].as_u64().unwrap()
    );
    let bad = Command::new(env!("CARGO_BIN_EXE_boardtwin"))
        .current_dir(repo())
        .args([
            "campaign",
            "--board",
            "scenarios/boards/harbor_controller.yaml",
            "--program",
            "scenarios/programs/interconnect.yaml",
            "--shard",
            "3/2",
        ])
        .output()
        .unwrap();
    assert_eq!(bad.status.code(), Some(2));
    let _ = std::fs::remove_dir_all(&dir);
}
