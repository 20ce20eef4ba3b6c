//! Aliasing and confounding in interconnect tests, reproduced on the demo
//! board (N. Jarwala and C. W. Yau, ITC 1989, from memory).

use std::path::Path;

#[path = "support/net_faults.rs"]
mod net_faults;

use harness::campaign::response_of;
use harness::program::native::parse_native;
use harness::program::Program;
use harness::run::{RunOptions, Runner};
use virtual_board::{load_board, Bits, DefectSpec, LoadedBoard, ShortRule};

// Four nets driven by U1 on J1_MAIN and received by U5 on J2_AUX.
const NETS: [&str; 4] = ["LB_D0", "LB_D1", "LB_D2", "LB_D3"];

fn board() -> LoadedBoard {
    load_board(
        &Path::new(env!("CARGO_MANIFEST_DIR")).join("../scenarios/boards/harbor_controller.yaml"),
    )
    .unwrap()
}

/// A net-level program giving net i the code `codes[i]` (written most
/// significant vector first, as in the papers' tables: "01" means vector 0
/// drives 1 and vector 1 drives 0).
fn program(loaded: &LoadedBoard, codes: &[&str]) -> Program {
    let width = codes[0].len();
    let mut yaml = String::from("name: codes\nsteps:\n  - { port: J1_MAIN, reset: tms }\n  - { port: J2_AUX, reset: tms }\n  - patterns:\n      vectors:\n");
    for k in 0..width {
        let vals: Vec<String> = codes
            .iter()
            .enumerate()
            .map(|(i, c)| format!("{}: {}", NETS[i], &c[width - 1 - k..width - k]))
            .collect();
        yaml += &format!(
            "        - {{ drive: {{ {0} }}, expect: {{ {0} }} }}\n",
            vals.join(", ")
        );
    }
    parse_native(&yaml, &loaded.path, loaded).unwrap()
}

fn response(loaded: &LoadedBoard, program: &Program, shorts: &[&[usize]], rule: ShortRule) -> Bits {
    let defects: Vec<DefectSpec> = shorts
        .iter()
        .map(|g| DefectSpec {
            short: Some(g.iter().map(|&i| NETS[i].to_string()).collect()),
            behaviour: Some(rule),
            ..Default::default()
        })
        .collect();
    let mut source = virtual_board::bsdl_files_beside(&loaded.path);
    let faulty = loaded.with_defects(&defects, &mut source).unwrap();
    let mut b = faulty.board;
    response_of(&Runner::new(&mut b, RunOptions::default()).run(program))
}

// Aliasing (Jarwala and Yau, ITC 1989, from memory): counting codes A=01,
// B=10, C=11. A wired-OR short A–B makes A and B read 11, C's own code, so
// the response cannot say whether C is in the short too.
#[test]
fn counting_codes_alias_under_a_wired_or_short() {
    let loaded = board();
    let p = program(&loaded, &["01", "10", "11"]);
    let ab = response(&loaded, &p, &[&[0, 1]], ShortRule::WiredOr);
    let abc = response(&loaded, &p, &[&[0, 1, 2]], ShortRule::WiredOr);
    let good = response(&loaded, &p, &[], ShortRule::WiredOr);
    assert_ne!(ab, good, "the short is detected");
    assert_eq!(
        ab, abc,
        "but A–B and A–B–C give the same response: aliasing"
    );
}

// True/complement (P. T. Wagner, ITC 1987, from memory) removes that
// aliasing: A–B wired-OR reads 1111, which is no valid true/complement code,
// while C keeps 11|00, so A–B and A–B–C now differ.
#[test]
fn true_complement_removes_the_aliasing() {
    let loaded = board();
    // Each code followed by its complement: 01|10, 10|01, 11|00.
    let p = program(&loaded, &["1001", "0110", "0011"]);
    let ab = response(&loaded, &p, &[&[0, 1]], ShortRule::WiredOr);
    let abc = response(&loaded, &p, &[&[0, 1, 2]], ShortRule::WiredOr);
    assert_ne!(ab, abc);
}

// Confounding (Jarwala and Yau, ITC 1989, from memory): codes A=001, B=110,
// C=010, D=101; the wired-AND shorts A–B and C–D make all four nets read
// 000, exactly as one short of all four nets does, so the response cannot
// say how the nets are grouped. (A common retelling also lists A–C with
// B–D and A–D with B–C as the same; by the wired-AND arithmetic they are
// not: B AND D = 100 and A AND D = 001. The model agrees with the
// arithmetic, and this test asserts it.)
#[test]
fn disjoint_wired_and_shorts_confound() {
    let loaded = board();
    let p = program(&loaded, &["001", "110", "010", "101"]);
    let r = |g: &[&[usize]]| response(&loaded, &p, g, ShortRule::WiredAnd);
    let ab_cd = r(&[&[0, 1], &[2, 3]]);
    assert_eq!(ab_cd, r(&[&[0, 1, 2, 3]]));
    assert_ne!(ab_cd, r(&[&[0, 2], &[1, 3]]));
    assert_ne!(ab_cd, r(&[&[0, 3], &[1, 2]]));
}

// True/complement does not remove this confounding (Jarwala and Yau, ITC
// 1989, from memory):
// A–B plus C–D still reads all zeros, like the four shorted together.
#[test]
fn true_complement_keeps_the_confounding() {
    let loaded = board();
    let p = program(&loaded, &["110001", "001110", "101010", "010101"]);
    let r = |g: &[&[usize]]| response(&loaded, &p, g, ShortRule::WiredAnd);
    assert_eq!(r(&[&[0, 1], &[2, 3]]), r(&[&[0, 1, 2, 3]]));
}

// Walking ones diagnose wired-OR shorts exactly, walking zeros wired-AND
// (Jarwala and Yau, ITC 1989, from memory): every pair short gives its own
// response.
#[test]
fn walking_sequences_tell_every_pair_apart() {
    let loaded = board();
    let pairs: Vec<[usize; 2]> = (0..4)
        .flat_map(|a| (a + 1..4).map(move |b| [a, b]))
        .collect();
    for (codes, rule) in [
        (["0001", "0010", "0100", "1000"], ShortRule::WiredOr),
        (["1110", "1101", "1011", "0111"], ShortRule::WiredAnd),
    ] {
        let p = program(&loaded, &codes);
        let responses: Vec<Bits> = pairs
            .iter()
            .map(|g| response(&loaded, &p, &[&g[..]], rule))
            .collect();
        for i in 0..responses.len() {
            for j in i + 1..responses.len() {
                assert_ne!(
                    responses[i], responses[j],
                    "{:?} and {:?} under {rule:?}",
                    pairs[i], pairs[j]
                );
            }
        }
    }
}

// P. Goel and M. T. McMahon, ITC 1982 (from memory): with the modified
// counting sequence every net sees both 0 and 1 and all codes differ, so a
// campaign detects every single stuck-at and every single wired-AND or
// wired-OR short among the coded (fully scan-accessible) nets.
#[test]
fn modified_counting_detects_every_single_stuck_at_and_short() {
    use harness::campaign::run_campaign;
    use harness::generate::{interconnect_test, Method};
    let loaded = board();
    let test = interconnect_test(&loaded.board, Method::ModifiedCounting).unwrap();
    let program = test.program(&loaded).unwrap();
    let nets: Vec<String> = test
        .nets
        .iter()
        .map(|n| n.net.clone())
        .filter(|n| !n.contains('+'))
        .collect();
    assert!(nets.len() >= 40, "{} coded nets", nets.len());
    let faults = net_faults::stuck_and_pair_shorts(&nets);
    let r = run_campaign(&loaded, &program, &faults, 2, (1, 1), &|_| {}).unwrap();
    let missed: Vec<&str> = r
        .results
        .iter()
        .filter(|x| x.verdict != "detected")
        .map(|x| x.fault.label.as_str())
        .collect();
    assert!(
        missed.is_empty(),
        "{} of {} missed: {:?}",
        missed.len(),
        r.faults,
        &missed[..missed.len().min(10)]
    );
}
