//! The remote board against the in-process board: every bundled scenario
//! replayed through a server gives the same records; 100 clients at once
//! running the interconnect program all get the in-process run; a bounded
//! load of pipelined bursts and whole scans ends by itself, every answer right.

#[path = "support/demo.rs"]
mod demo;
#[path = "support/server.rs"]
#[allow(dead_code)]
mod server;

use std::time::Duration;

use harness::program::native::load_program;
use harness::remote::{Burst, RemoteBoard, RemoteTargets};
use harness::run::{RunOptions, RunReport, Runner};
use harness::scenario::{find_all, replay, replay_on};
use virtual_board::{Bits, TapPins, TapTarget};

use demo::{demo, repo};
use server::TestServer;

/// What must be the same between two runs: every scan record (bits in,
/// out, expected, verdict), every hazard, the error, the cycles.
fn same_runs(a: &[RunReport], b: &[RunReport]) -> Result<(), String> {
    if a.len() != b.len() {
        return Err(format!("{} runs against {}", a.len(), b.len()));
    }
    for (x, y) in a.iter().zip(b) {
        let records = |r: &RunReport| -> Vec<_> {
            r.scans
                .iter()
                .map(|s| (s.record.clone(), s.origin.clone()))
                .collect()
        };
        if records(x) != records(y) {
            return Err(format!("{}: scan records differ", x.program));
        }
        if x.hazards != y.hazards || x.error != y.error || x.tck_cycles != y.tck_cycles {
            return Err(format!(
                "{}: hazards, error or cycles differ: {:?} / {:?}, {:?} / {:?}, {} / {}",
                x.program, x.hazards, y.hazards, x.error, y.error, x.tck_cycles, y.tck_cycles
            ));
        }
    }
    Ok(())
}

#[test]
fn every_bundled_scenario_gives_the_same_records_remotely() {
    let server = TestServer::demo(demo(), Some("scenario-token"));
    let remote = RemoteTargets {
        target: server.target(),
        token: Some("scenario-token".into()),
    };
    let scenarios = find_all(&repo().join("scenarios"));
    assert!(scenarios.len() >= 20, "found {}", scenarios.len());
    for path in scenarios {
        let local = replay(&path).unwrap_or_else(|e| panic!("{e}"));
        let far = replay_on(&path, &remote).unwrap_or_else(|e| panic!("{e}"));
        assert!(!local.runs.is_empty());
        same_runs(&local.runs, &far.runs).unwrap_or_else(|e| panic!("{}: {e}", path.display()));
        assert_eq!(local.mismatches, far.mismatches, "{}", path.display());
        assert_eq!(local.outcome, far.outcome, "{}", path.display());
    }
}

#[test]
fn a_hundred_clients_at_once_all_get_the_in_process_run() {
    let server = TestServer::demo(demo(), None);
    let program = load_program(
        &repo().join("scenarios/programs/interconnect.yaml"),
        demo(),
        None,
    )
    .unwrap();
    let mut board = demo().board.clone();
    let reference = Runner::new(&mut board, RunOptions::default()).run(&program);
    assert!(reference.passed() && reference.scans.len() > 10);
    let runs: Vec<RunReport> = std::thread::scope(|s| {
        let handles: Vec<_> = (0..100)
            .map(|_| {
                s.spawn(|| {
                    let mut remote =
                        RemoteBoard::connect(&server.address, Duration::from_secs(60)).unwrap();
                    Runner::new(&mut remote, RunOptions::default()).run(&program)
                })
            })
            .collect();
        handles.into_iter().map(|h| h.join().unwrap()).collect()
    });
    assert_eq!(runs.len(), 100);
    for run in &runs {
        same_runs(std::slice::from_ref(&reference), std::slice::from_ref(run)).unwrap();
    }
}

#[test]
fn a_bounded_load_of_bursts_and_scans_ends_by_itself_with_every_answer_right() {
    let server = TestServer::demo(demo(), None);
    // Pipelined bursts of 4,096 periods (a DR scan of random bits after a
    // reset, through the IDCODE path), then a whole scan; each client's
    // answers checked against an in-process copy.
    let clients = 8;
    let rounds = 40;
    std::thread::scope(|s| {
        for c in 0..clients {
            let address = server.address.clone();
            s.spawn(move || {
                let mut remote = RemoteBoard::connect(&address, Duration::from_secs(60)).unwrap();
                let mut board = demo().board.clone();
                let port = c % 2;
                let mut seed = 0x9E37_79B9_7F4A_7C15u64 ^ c as u64;
                let mut next = || {
                    seed ^= seed << 13;
                    seed ^= seed >> 7;
                    seed ^= seed << 17;
                    seed
                };
                for _ in 0..rounds {
                    let bursts: Vec<Burst> = (0..4).map(|_| scan_burst(&mut next)).collect();
                    let got = remote.bursts(port, &bursts, 4).unwrap();
                    for (b, out) in bursts.iter().zip(&got) {
                        for i in 0..b.tms.len() {
                            let want = board
                                .clock(port, TapPins::new(b.tms.get(i), b.tdi.get(i)))
                                .unwrap();
                            assert_eq!(out.driven.get(i).then(|| out.tdo.get(i)), want);
                        }
                    }
                    let tdi = Bits::from_words(vec![next(), next()], 100);
                    // A whole scan from wherever the TAP is: both sides agree.
                    assert_eq!(
                        remote.shift(port, &tdi).unwrap(),
                        board.shift(port, &tdi).unwrap()
                    );
                }
                assert_eq!(remote.take_events(), board.take_events());
            });
        }
    });
}

/// 4,096 periods: five TMS=1 to Test-Logic-Reset, Run-Test/Idle,
/// Select-DR-Scan, Capture-DR, Shift-DR (IEEE 1149.1 clause 6, from
/// memory), random TDI through the IDCODE path, then Exit1-DR, Update-DR
/// and Run-Test/Idle. No instruction is loaded, so no refusal can come.
fn scan_burst(next: &mut dyn FnMut() -> u64) -> Burst {
    let n = 4096;
    let mut tms = vec![true; 5];
    tms.extend([false, true, false, false]);
    tms.resize(n - 3, false);
    tms.extend([true, true, false]);
    let tdi = Bits::from_words((0..n / 64).map(|_| next()).collect(), n);
    Burst {
        tms: Bits::from_bools(&tms),
        tdi,
        trst_n: Bits::ones(n),
    }
}
