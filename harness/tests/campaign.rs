//! Fault campaigns on the demo board: the universe, classification, shards
//! and their merge, and the command line.

#[path = "support/tools.rs"]
mod tools;

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
    // Every net of the board file that is not a power or ground rail, stuck
    // at 0 and at 1, the two nets the loopback plug on P5 joins counted once.
    let rails = loaded.file.power.len() + loaded.file.ground.len();
    assert_eq!(stuck, 2 * (loaded.file.nets.len() - rails - 1));
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

/// Every board file under `scenarios/boards/`, sorted.
fn bundled_boards() -> Vec<PathBuf> {
    let mut out: Vec<PathBuf> = std::fs::read_dir(repo().join("scenarios/boards"))
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|x| x == "yaml"))
        .collect();
    out.sort();
    assert!(!out.is_empty());
    out
}

#[test]
fn every_bundled_board_has_each_electrical_net_once() {
    for path in bundled_boards() {
        let loaded = load_board(&path).unwrap();
        let faults = campaign::universe(&loaded, &UniverseOptions::default());
        let mut seen = std::collections::BTreeSet::new();
        for f in &faults {
            assert!(
                seen.insert((f.class, f.label.clone())),
                "{}: `{}` twice",
                path.display(),
                f.label
            );
        }
        // The same board gives the same universe, in the same order.
        assert_eq!(
            faults,
            campaign::universe(&loaded, &UniverseOptions::default())
        );
    }
    // The demo's loopback plug on P5 joins TP_LOOP_OUT and TP_LOOP_IN into
    // one electrical net: one pair of stuck-at faults under the first name,
    // its alias in the label, and its one receiver (U2 SW_IN2) opened once.
    let loaded = load_board(&repo().join("scenarios/boards/harbor_controller.yaml")).unwrap();
    let faults = campaign::universe(&loaded, &UniverseOptions::default());
    let loop_faults: Vec<&str> = faults
        .iter()
        .filter(|f| f.label.contains("TP_LOOP") && f.defect.short.is_none())
        .map(|f| f.label.as_str())
        .collect();
    assert_eq!(
        loop_faults,
        [
            "TP_LOOP_IN stuck at 0 (TP_LOOP_IN joined with TP_LOOP_OUT)",
            "TP_LOOP_IN stuck at 1 (TP_LOOP_IN joined with TP_LOOP_OUT)",
            "open at TP_LOOP_IN (TP_LOOP_IN joined with TP_LOOP_OUT)",
        ]
    );
    let nets = campaign::electrical_nets(&loaded);
    let rails = loaded.file.power.len() + loaded.file.ground.len();
    // Every board-file net but the rails, less one for the joined pair.
    assert_eq!(nets.len(), loaded.file.nets.len() - rails - 1);
}

#[test]
fn shards_of_every_bundled_board_merge_into_the_single_run() {
    for path in bundled_boards() {
        let loaded = load_board(&path).unwrap();
        // The board's own generated interconnect test, and on the demo board
        // the bundled one too.
        let generated = harness::generate::interconnect_test(
            &loaded.board,
            harness::generate::Method::ModifiedCounting,
        )
        .unwrap()
        .program(&loaded)
        .unwrap();
        let mut programs = vec![generated];
        let bundled = repo().join("scenarios/programs/interconnect.yaml");
        if path.ends_with("harbor_controller.yaml") {
            programs.push(load_program(&bundled, &loaded, None).unwrap());
        }
        // Every class, all-pairs shorts included.
        let options = UniverseOptions {
            classes: FaultClass::ALL.into_iter().collect(),
        };
        let all = campaign::universe(&loaded, &options);
        for program in &programs {
            let whole = campaign::run_campaign(&loaded, program, &all, 2, (1, 1), &|_| {}).unwrap();
            for n in [2, 3, 7] {
                let mut parts = Vec::new();
                // Given in reverse: the merge puts them in shard order.
                for i in (1..=n).rev() {
                    let shard = campaign::shard_of(all.clone(), i, n);
                    parts.push(
                        campaign::run_campaign(&loaded, program, &shard, 2, (i, n), &|_| {})
                            .unwrap(),
                    );
                }
                assert_eq!(parts.iter().map(|p| p.faults).sum::<usize>(), all.len());
                let merged = campaign::merge(parts.clone())
                    .unwrap_or_else(|e| panic!("{} in {n} shards: {e}", path.display()));
                assert_eq!(merged.results, whole.results, "{} in {n}", path.display());
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
                assert_eq!(
                    campaign::merge(twice).unwrap_err(),
                    campaign::MergeError::ShardTwice(parts[0].shard.clone())
                );
                // Issue 19: 2 of 3 shards used to merge into a "complete" result
                // (parts are in reverse: parts[0] is shard 3, parts[2] shard 1).
                if n == 3 {
                    let some = vec![parts[0].clone(), parts[2].clone()];
                    assert_eq!(
                        campaign::merge(some).unwrap_err().to_string(),
                        "shards missing: 2/3 (a merge needs all 3)"
                    );
                }
            }
        }
    }
}

#[test]
fn shards_are_contiguous_nearly_equal_slices() {
    // 10 faults in 3 shards: 3, 3 and 4, in order.
    assert_eq!(campaign::shard_range(10, 1, 3), (0, 3));
    assert_eq!(campaign::shard_range(10, 2, 3), (3, 6));
    assert_eq!(campaign::shard_range(10, 3, 3), (6, 10));
    // More shards than faults: some are empty, none overlap.
    assert_eq!(campaign::shard_range(2, 1, 7), (0, 0));
    assert_eq!(campaign::shard_range(2, 7, 7), (1, 2));
    assert_eq!(campaign::shard_range(5, 0, 3), (0, 0));
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
    let folder = tempfile::tempdir().unwrap();
    let dir = folder.path().to_path_buf();
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

/// The statistics line says which path evaluated how many faults of each
/// class, and the JSON holds the same counts: on the demo board every chain
/// fault (5 devices × 5, and TRST* stuck on one port) runs the board path,
/// and the paths together hold every fault.
#[test]
fn the_statistics_line_counts_the_faults_of_each_path() {
    let run = |json: bool| {
        let mut args = vec![
            "campaign",
            "--board",
            "scenarios/boards/harbor_controller.yaml",
            "--program",
            "scenarios/programs/interconnect.yaml",
        ];
        if json {
            args.push("--json");
        }
        Command::new(env!("CARGO_BIN_EXE_boardtwin"))
            .current_dir(repo())
            .args(args)
            .output()
            .unwrap()
    };
    let j: serde_json::Value = serde_json::from_slice(&run(true).stdout).unwrap();
    assert_eq!(j["paths"]["board"]["chain"], 26);
    let total: u64 = j["paths"]
        .as_object()
        .unwrap()
        .values()
        .flat_map(|classes| classes.as_object().unwrap().values())
        .map(|n| n.as_u64().unwrap())
        .sum();
    assert_eq!(total, j["faults"].as_u64().unwrap());
    assert!(j["paths"]["net-level"]["stuck"].as_u64().unwrap() > 0);
    let text = String::from_utf8(run(false).stdout).unwrap();
    let line = text
        .lines()
        .find(|l| l.starts_with("evaluated by: "))
        .unwrap_or_else(|| panic!("no statistics line in\n{text}"));
    assert!(line.contains("chain 26"), "{line}");
    assert!(line.contains("net-level "), "{line}");
}

/// The recipe in `ci/shards/run-shards`: shards as separate processes under
/// GNU parallel (an open general-purpose tool, Debian package `parallel`),
/// joined by `campaign-merge`; after an interruption only the missing shard
/// runs again. The merged result equals the single run (a round-trip check
/// of our own sharding, with parallel as the process runner).
#[test]
#[cfg_attr(
    not(has_gnu_parallel),
    ignore = "GNU parallel not found on PATH (Debian package parallel)"
)]
fn gnu_parallel_runs_the_shards_and_resumes_only_the_missing_one() {
    if tools::require_tool("parallel", "the Debian package parallel").is_none() {
        return;
    }
    let folder = tempfile::tempdir().unwrap();
    let dir = folder.path().join("shards");
    let board = "scenarios/boards/harbor_controller.yaml";
    let program = "scenarios/programs/interconnect.yaml";
    let recipe = || {
        Command::new(repo().join("ci/shards/run-shards"))
            .current_dir(repo())
            .env("BOARDTWIN", env!("CARGO_BIN_EXE_boardtwin"))
            .env("JOBS", "2")
            .args([board, program, "3"])
            .arg(&dir)
            .output()
            .unwrap()
    };
    let first = recipe();
    // Undetected faults remain on the demo (nets its test does not code): 1.
    assert_eq!(
        first.status.code(),
        Some(1),
        "{}",
        String::from_utf8_lossy(&first.stderr)
    );
    assert!(String::from_utf8_lossy(&first.stderr).contains("shards to run: 1 2 3"));
    let merged: serde_json::Value = serde_json::from_slice(&first.stdout).unwrap();
    let single = Command::new(env!("CARGO_BIN_EXE_boardtwin"))
        .current_dir(repo())
        .args(["campaign", "--board", board, "--program", program, "--json"])
        .output()
        .unwrap();
    let single: serde_json::Value = serde_json::from_slice(&single.stdout).unwrap();
    for key in [
        "faults",
        "detected",
        "undetected",
        "untestable",
        "by_class",
        "ambiguity_groups",
        "results",
    ] {
        assert_eq!(merged[key], single[key], "{key}");
    }
    // An interrupted run: shard 2's result is missing. Only it runs again;
    // the other two files are left as they were.
    let kept = |i: usize| std::fs::read(dir.join(format!("shard-{i}-of-3.json"))).unwrap();
    let (one, three) = (kept(1), kept(3));
    std::fs::remove_file(dir.join("shard-2-of-3.json")).unwrap();
    let touched = std::time::SystemTime::now();
    let again = recipe();
    assert!(String::from_utf8_lossy(&again.stderr).contains("shards to run: 2\n"));
    let modified = |i: usize| {
        std::fs::metadata(dir.join(format!("shard-{i}-of-3.json")))
            .unwrap()
            .modified()
            .unwrap()
    };
    assert!(modified(1) < touched && modified(3) < touched && modified(2) >= touched);
    assert_eq!((kept(1), kept(3)), (one, three));
    let resumed: serde_json::Value = serde_json::from_slice(&again.stdout).unwrap();
    assert_eq!(resumed["results"], single["results"]);
    let _ = std::fs::remove_dir_all(&dir);
}

/// The batch-cluster files read the shard index from the scheduler's
/// variable and write the file names `run-shards` and the merge expect.
#[test]
fn the_cluster_job_files_name_the_shard_from_the_scheduler() {
    let slurm = std::fs::read_to_string(repo().join("ci/shards/slurm-campaign.sbatch")).unwrap();
    assert!(slurm.contains("#SBATCH --array=1-8"));
    assert!(slurm.contains("i=${SLURM_ARRAY_TASK_ID"));
    assert!(slurm.contains("--shard \"$i/$n\"") && slurm.contains("shard-$i-of-$n.json"));
    let text = std::fs::read_to_string(repo().join("ci/shards/k8s-campaign-job.yaml")).unwrap();
    let job: serde_yaml::Value = serde_yaml::from_str(&text).unwrap();
    assert_eq!(job["kind"].as_str(), Some("Job"));
    assert_eq!(job["spec"]["completionMode"].as_str(), Some("Indexed"));
    assert_eq!(job["spec"]["completions"].as_u64(), Some(8));
    let script = job["spec"]["template"]["spec"]["containers"][0]["args"][0]
        .as_str()
        .unwrap();
    assert!(script.contains("i=$((JOB_COMPLETION_INDEX + 1))"));
    assert!(script.contains("--shard \"$i/$n\"") && script.contains("shard-$i-of-$n.json"));
}
