//! Random shorts of 2 and 3 nets, anywhere on the demo board and on random
//! generated boards, in every behaviour, are named by diagnosis.
//!
//! The oracle for "the program can tell the injected short apart" is the
//! fault campaign's ambiguity groups (faults with identical responses) over
//! every fault that could be confused with it: the stuck-at and open faults
//! of its nets, every 2-net short touching one of its nets and every 3-net
//! short sharing two of them, each wired-AND, wired-OR and with each member
//! dominant. Faults in one group cannot be told apart by any diagnosis
//! (N. Jarwala and C. W. Yau, ITC 1989: aliasing and confounding, from
//! memory); when the injected short is alone in its group it must be among
//! the exact matches.

use std::collections::BTreeSet;
use std::path::Path;

use harness::campaign::{response_of, run_campaign, Fault, FaultClass};
use harness::diagnose::{diagnose, DiagnoseOptions};
use harness::generate::{interconnect_test, Method};
use harness::program::Program;
use harness::run::{RunOptions, Runner, ScanRecord};
use virtual_board::{load_board, Bits, DefectSpec, LoadedBoard, Rng, ShortRule};

#[path = "support/random_generated.rs"]
mod random_generated;

use random_generated::{generated, pick};

fn demo() -> LoadedBoard {
    load_board(
        &Path::new(env!("CARGO_MANIFEST_DIR")).join("../scenarios/boards/harbor_controller.yaml"),
    )
    .unwrap()
}

/// The interconnect test of a method, and the nets it codes and reads back.
fn program(loaded: &LoadedBoard, method: Method) -> (Program, Vec<String>) {
    let test = interconnect_test(&loaded.board, method).unwrap();
    let coded = test
        .nets
        .iter()
        .filter(|n| !n.receivers.is_empty() && loaded.file.nets.contains_key(&n.net))
        .map(|n| n.net.clone())
        .collect();
    (test.program(loaded).unwrap(), coded)
}

fn short(nets: &[&String], how: usize) -> DefectSpec {
    DefectSpec {
        short: Some(nets.iter().map(|n| n.to_string()).collect()),
        behaviour: match how {
            0 => Some(ShortRule::WiredAnd),
            1 => Some(ShortRule::WiredOr),
            _ => None,
        },
        dominant: (how >= 2).then(|| nets[how - 2].to_string()),
        ..Default::default()
    }
}

/// The same defect (a short's nets in any order; the board's rule for a short without one).
fn same(loaded: &LoadedBoard, a: &DefectSpec, b: &DefectSpec) -> bool {
    let nets = |d: &DefectSpec| {
        d.short
            .clone()
            .map(|v| v.into_iter().collect::<BTreeSet<_>>())
    };
    let rule = |d: &DefectSpec| d.behaviour.unwrap_or(loaded.file.shorts);
    nets(a) == nets(b) && a.dominant == b.dominant && (a.dominant.is_some() || rule(a) == rule(b))
}

/// Every fault the injected short could be confused with, the short first:
/// stuck-at and open on its nets, shorts of one of its nets with any net
/// the test codes, and shorts of two of its nets with any coded net.
fn confusable(all: &[String], injected: &DefectSpec) -> Vec<Fault> {
    let members: Vec<String> = injected.short.clone().unwrap();
    let fault = |defect: DefectSpec| Fault {
        class: FaultClass::AnyShort,
        label: defect.describe(),
        defect,
        untestable: None,
    };
    let mut out = vec![fault(injected.clone())];
    for m in &members {
        for v in [0, 1] {
            out.push(fault(DefectSpec {
                stuck: Some(m.clone()),
                value: Some(v),
                ..Default::default()
            }));
        }
        out.push(fault(DefectSpec {
            open: Some(m.clone()),
            ..Default::default()
        }));
        for x in all.iter().filter(|x| !members.contains(x)) {
            for how in 0..4 {
                out.push(fault(short(&[m, x], how)));
            }
        }
    }
    for (i, a) in members.iter().enumerate() {
        for b in &members[i + 1..] {
            for x in all.iter().filter(|x| !members.contains(x)) {
                for how in 0..5 {
                    out.push(fault(short(&[a, b, x], how)));
                }
            }
            if members.len() == 3 {
                for how in 0..4 {
                    out.push(fault(short(&[a, b], how)));
                }
            }
        }
    }
    out
}

fn records(
    loaded: &LoadedBoard,
    program: &Program,
    defects: &[DefectSpec],
) -> (Bits, Vec<ScanRecord>) {
    let mut source = virtual_board::bsdl_files_beside(&loaded.path);
    let mut board = loaded.with_defects(defects, &mut source).unwrap().board;
    let report = Runner::new(&mut board, RunOptions::default()).run(program);
    (
        response_of(&report),
        report.scans.into_iter().map(|s| s.record).collect(),
    )
}

#[derive(Default, Debug)]
struct Tally {
    named_alone: usize,
    ambiguous: usize,
    undetected: usize,
}

fn check(
    loaded: &LoadedBoard,
    (program, coded): &(Program, Vec<String>),
    injected: &DefectSpec,
    tally: &mut Tally,
) {
    let words = injected.describe();
    let (response, capture) = records(loaded, program, std::slice::from_ref(injected));
    let d = diagnose(
        loaded,
        program,
        &capture,
        &DiagnoseOptions {
            jobs: 2,
            ..Default::default()
        },
    )
    .unwrap();
    let faults = confusable(coded, injected);
    let campaign = run_campaign(loaded, program, &faults, 2, (1, 1), &|_| {}).unwrap();
    let flips = |k: usize| campaign.results[k].flips.clone();
    if campaign.results[0].verdict == "undetected" {
        assert_eq!(d.failing_bits, 0, "{words}: undetected, yet diagnosed");
        tally.undetected += 1;
        return;
    }
    assert!(d.failing_bits > 0, "{words}");
    // Every exact explanation, simulated again here, gives the capture bit for bit.
    for c in &d.exact {
        assert_eq!(
            records(loaded, program, &c.defects).0,
            response,
            "{words}: `{}` was reported exact",
            c.words
        );
    }
    let group: Vec<usize> = (0..faults.len())
        .filter(|&k| flips(k) == flips(0))
        .collect();
    let named = d
        .exact
        .iter()
        .any(|c| c.defects.len() == 1 && same(loaded, &c.defects[0], injected));
    // Alone in its ambiguity group: the codes tell it from every other
    // fault, so the diagnosis must name it (Jarwala and Yau, ITC 1989).
    if group.len() == 1 {
        assert!(
            named,
            "{words}: alone in its ambiguity group, but the exact matches are {:?} (nearest {:?})",
            d.exact.iter().map(|c| &c.words).collect::<Vec<_>>(),
            d.nearest
                .iter()
                .map(|c| (&c.words, c.distance))
                .collect::<Vec<_>>()
        );
        tally.named_alone += 1;
    } else {
        assert!(!d.exact.is_empty(), "{words}: nothing exact");
        tally.ambiguous += 1;
    }
}

fn random_shorts(
    loaded: &LoadedBoard,
    test: &(Program, Vec<String>),
    rng: &mut Rng,
    count: usize,
    tally: &mut Tally,
) {
    let nets = &test.1;
    for t in 0..count {
        let size = 2 + t % 2;
        let mut chosen: Vec<&String> = Vec::new();
        while chosen.len() < size {
            let n = &nets[pick(rng, nets.len())];
            if !chosen.contains(&n) {
                chosen.push(n);
            }
        }
        let how = pick(rng, 2 + size);
        check(loaded, test, &short(&chosen, how), tally);
    }
}

#[test]
fn random_shorts_anywhere_on_the_demo_board_are_named() {
    let loaded = demo();
    let mut tally = Tally::default();
    let mut rng = Rng::new(11);
    for method in [Method::ModifiedCounting, Method::TrueComplement] {
        let p = program(&loaded, method);
        random_shorts(&loaded, &p, &mut rng, 3, &mut tally);
    }
    eprintln!("demo board: {tally:?}");
    assert!(tally.named_alone > 0, "{tally:?}");
}

#[test]
fn random_shorts_on_random_generated_boards_are_named() {
    let mut tally = Tally::default();
    let mut rng = Rng::new(2011);
    let methods = [
        Method::Counting,
        Method::ModifiedCounting,
        Method::TrueComplement,
        Method::WalkingOnes,
        Method::WalkingZeros,
    ];
    for b in 0..8 {
        let (_folder, loaded) = generated(&mut rng);
        let p = program(&loaded, methods[b % methods.len()]);
        random_shorts(&loaded, &p, &mut rng, 4, &mut tally);
    }
    eprintln!("generated boards: {tally:?}");
    assert!(tally.named_alone > 0, "{tally:?}");
}
