//! `boardtwin serve` and `--target`: a served board gives the same capture
//! log and scenario results as the in-process board; a board that is not
//! the board file's is refused naming the difference; defects need the
//! admin token; loopback unless asked; SIGTERM stops it cleanly.

use std::io::{BufRead, BufReader};
use std::path::{Path, PathBuf};
use std::process::{Child, Stdio};

use serde_json::Value;

use crate::cli::{boardtwin, repo, stderr_of, stdout_of, temp_dir, ExitsWith};

fn board() -> PathBuf {
    repo().join("scenarios/boards/harbor_controller.yaml")
}

/// A `boardtwin serve` process on a port the OS picks; killed on drop.
struct Served {
    child: Child,
    target: String,
}

impl Served {
    fn start(board: &Path, extra: &[&str], token_file: Option<&Path>) -> Served {
        let mut cmd = boardtwin();
        cmd.arg("serve")
            .arg("--board")
            .arg(board)
            .args(["--listen", "127.0.0.1:0"])
            .args(extra)
            .env_remove("BOARDTWIN_ADMIN_TOKEN")
            .stdout(Stdio::piped())
            .stderr(Stdio::piped());
        if let Some(f) = token_file {
            cmd.arg("--admin-token-file").arg(f);
        }
        let mut child = cmd.spawn().expect("start boardtwin serve");
        let stdout = child.stdout.take().expect("stdout");
        let mut line = String::new();
        BufReader::new(stdout)
            .read_line(&mut line)
            .expect("first line");
        let target = line
            .split_whitespace()
            .find(|w| w.starts_with("tcp://"))
            .unwrap_or_else(|| panic!("no address in `{line}`"))
            .to_string();
        Served { child, target }
    }

    /// Sends SIGTERM and returns the exit status and stderr.
    fn terminate(mut self) -> (Option<i32>, String) {
        let pid = self.child.id().to_string();
        // The shell's own `kill`, present wherever `sh` is.
        let sent = std::process::Command::new("sh")
            .args(["-c", &format!("kill -TERM {pid}")])
            .status()
            .is_ok_and(|s| s.success());
        assert!(sent, "SIGTERM could not be sent");
        let status = self.child.wait().expect("wait");
        let mut err = String::new();
        if let Some(mut e) = self.child.stderr.take() {
            let _ = std::io::Read::read_to_string(&mut e, &mut err);
        }
        (status.code(), err)
    }
}

impl Drop for Served {
    fn drop(&mut self) {
        let _ = self.child.kill();
        let _ = self.child.wait();
    }
}

#[test]
fn play_on_a_served_board_writes_the_same_capture_log() {
    let dir = temp_dir("serve-play");
    let served = Served::start(&board(), &[], None);
    let program = repo().join("scenarios/programs/interconnect.yaml");
    let local = dir.join("local.jsonl");
    let far = dir.join("far.jsonl");
    for (log, target) in [(&local, None), (&far, Some(&served.target))] {
        let mut cmd = boardtwin();
        cmd.arg("play")
            .arg("--board")
            .arg(board())
            .arg(&program)
            .arg("--log")
            .arg(log);
        if let Some(t) = target {
            cmd.args(["--target", t]);
        }
        cmd.exits(0);
    }
    let (a, b) = (
        std::fs::read_to_string(local).unwrap(),
        std::fs::read_to_string(far).unwrap(),
    );
    assert!(a.lines().count() > 10);
    assert_eq!(a, b);
    let (code, _) = served.terminate();
    assert_eq!(code, Some(0), "SIGTERM ends serve with exit 0");
}

#[test]
fn run_on_a_served_board_meets_every_scenario_with_the_token() {
    let dir = temp_dir("serve-run");
    let token = dir.join("token");
    std::fs::write(&token, "t0ken-for-tests\n").unwrap();
    let served = Served::start(&board(), &[], Some(&token));
    let json = |extra: &[&str]| -> Value {
        let out = boardtwin()
            .arg("run")
            .arg(repo().join("scenarios"))
            .arg("--json")
            .args(extra)
            .exits(0);
        serde_json::from_str(&stdout_of(&out)).unwrap()
    };
    let strip = |v: &Value| -> Vec<(String, String, String)> {
        v["scenarios"]
            .as_array()
            .expect("scenarios")
            .iter()
            .map(|s| {
                (
                    s["scenario"].to_string(),
                    s["outcome"].to_string(),
                    s["mismatches"].to_string(),
                )
            })
            .collect()
    };
    let token_arg = token.display().to_string();
    let local = json(&[]);
    let far = json(&["--target", &served.target, "--admin-token-file", &token_arg]);
    assert_eq!(strip(&local).len(), 20);
    assert_eq!(strip(&local), strip(&far));
}

/// `play` of the interconnect program on `target` with a stuck net, the
/// admin token variable set to `token` (or unset); exit code and stderr.
fn play_with_defect(target: &str, token: Option<&str>) -> (Option<i32>, String) {
    let mut cmd = boardtwin();
    cmd.arg("play")
        .arg("--board")
        .arg(board())
        .arg(repo().join("scenarios/programs/interconnect.yaml"))
        .args(["--target", target, "--defect", "{stuck: LB_D0, value: 0}"])
        .env_remove("BOARDTWIN_ADMIN_TOKEN");
    if let Some(t) = token {
        cmd.env("BOARDTWIN_ADMIN_TOKEN", t);
    }
    let out = cmd.output().expect("play");
    (out.status.code(), stderr_of(&out))
}

#[test]
fn defects_on_a_served_board_need_its_admin_token() {
    let served = Served::start(&board(), &[], None);
    let (code, err) = play_with_defect(&served.target, None);
    assert_eq!(code, Some(2));
    assert!(
        err.contains("can be set only with its admin token"),
        "{err}"
    );
    // With a token the server was not given: refused by the server.
    let (code, err) = play_with_defect(&served.target, Some("guess"));
    assert_eq!(code, Some(2));
    assert!(err.contains("started without an admin token"), "{err}");
}

#[test]
fn a_served_board_that_is_not_the_board_file_is_refused_naming_the_difference() {
    // The demo board with its second TAP port renamed, BSDL paths made absolute.
    let dir = temp_dir("serve-mismatch");
    let devices = repo().join("scenarios/devices");
    let text = std::fs::read_to_string(board())
        .unwrap()
        .replace("../devices/", &format!("{}/", devices.display()))
        .replace("J2_AUX", "J2_SIDE");
    let other = dir.join("other.yaml");
    std::fs::write(&other, text).unwrap();
    let served = Served::start(&other, &[], None);
    let out = boardtwin()
        .arg("compare")
        .arg("--board")
        .arg(board())
        .arg("--program")
        .arg(repo().join("scenarios/programs/interconnect.yaml"))
        .args(["--target", &served.target])
        .exits(2);
    let err = stderr_of(&out);
    assert!(
        err.contains(
            "TAP ports: the board file has J1_MAIN, J2_AUX, the remote board has J1_MAIN, J2_SIDE"
        ),
        "{err}"
    );
}

#[test]
fn compare_and_diagnose_take_the_capture_from_a_served_faulty_board() {
    let dir = temp_dir("serve-diagnose");
    let defects = dir.join("defects.yaml");
    std::fs::write(
        &defects,
        "- { short: [LB_D0, LB_D1], behaviour: wired-and }\n",
    )
    .unwrap();
    let served = Served::start(&board(), &["--defects", defects.to_str().unwrap()], None);
    let program = repo().join("scenarios/programs/interconnect.yaml");
    boardtwin()
        .arg("compare")
        .arg("--board")
        .arg(board())
        .arg("--program")
        .arg(&program)
        .args(["--target", &served.target])
        .exits(1);
    let out = boardtwin()
        .arg("diagnose")
        .arg("--board")
        .arg(board())
        .arg("--program")
        .arg(&program)
        .args(["--target", &served.target, "--jobs", "1"])
        .exits(1);
    assert!(
        stdout_of(&out).contains("short between nets LB_D0 and LB_D1 (wired-AND)"),
        "{}",
        stdout_of(&out)
    );
}

#[test]
fn serve_listens_on_loopback_unless_told_otherwise() {
    let out = boardtwin()
        .arg("serve")
        .arg("--board")
        .arg(board())
        .args(["--listen", "0.0.0.0:0"])
        .exits(2);
    assert!(
        stderr_of(&out).contains("add --allow-network"),
        "{}",
        stderr_of(&out)
    );
    let out = boardtwin()
        .arg("play")
        .arg("--board")
        .arg(board())
        .arg(repo().join("scenarios/programs/interconnect.yaml"))
        .args(["--target", "http://127.0.0.1:1"])
        .exits(2);
    assert!(
        stderr_of(&out).contains("write tcp://HOST:PORT"),
        "{}",
        stderr_of(&out)
    );
}
