//! `--target usb://…` and `boardtwin adapters` in the default build (no
//! `usb` feature): a clear refusal, exit 2; bad addresses, pins and
//! defects on a real board are refused before any adapter is opened.

use crate::cli::{boardtwin, repo, stderr_of, ExitsWith};

fn play_on(target: &str, extra: &[&str]) -> std::process::Output {
    boardtwin()
        .arg("play")
        .arg("--board")
        .arg(repo().join("scenarios/boards/harbor_controller.yaml"))
        .arg(repo().join("scenarios/programs/interconnect.yaml"))
        .args(["--target", target])
        .args(extra)
        .output()
        .expect("run boardtwin")
}

#[test]
fn adapters_without_usb_support_says_so_and_exits_2() {
    let out = boardtwin().arg("adapters").exits(2);
    let err = stderr_of(&out);
    assert!(err.contains("no USB support"), "{err}");
    assert!(err.contains("--features usb"), "{err}");
}

#[test]
fn a_usb_target_without_usb_support_is_refused() {
    let out = play_on("usb://0403:6010/A+B", &["--trst-pin", "ADBUS4"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(
        stderr_of(&out).contains("no USB support"),
        "{}",
        stderr_of(&out)
    );
}

#[test]
fn bad_addresses_pins_and_defects_are_refused_first() {
    let out = play_on("usb://04x3:6010", &[]);
    assert_eq!(out.status.code(), Some(2));
    assert!(stderr_of(&out).contains("is not an adapter address"));
    let out = play_on("usb://0403:6010", &["--trst-pin", "ADBUS3"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(stderr_of(&out).contains("carries TCK, TDI, TDO or TMS"));
    let out = play_on("usb://0403:6010", &["--defect", "{ broken_link: U1 }"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(
        stderr_of(&out).contains("is a real board"),
        "{}",
        stderr_of(&out)
    );
}
