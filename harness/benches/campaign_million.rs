//! One million single faults against a counting-sequence interconnect test on
//! a generated 5,000-net board, on two threads; prints a statistics line.
//!
//! `cargo bench -p harness --bench campaign_million`

use std::path::Path;
use std::time::Instant;

use counting::counting_program;
use harness::campaign::{run_campaign, Fault, FaultClass};
use virtual_board::{load_board_text, DefectSpec, LoadedBoard, Rng};

#[path = "support/counting.rs"]
mod counting;
#[path = "../../virtual_board/benches/support/generated_board.rs"]
#[allow(dead_code)]
mod generated_board;

/// 26 generated devices of 500 cells on one TAP port: each device's 200
/// outputs drive the next device's inputs, 25 × 200 = 5,000 nets.
fn board() -> LoadedBoard {
    let devices = 26;
    let cells = 500;
    let text = generated_board::bsdl(cells);
    let yaml = generated_board::chain_board_yaml("generated 5000 nets", devices, cells);
    load_board_text(&yaml, Path::new("generated.yaml"), &mut |_: &Path| {
        Ok((text.clone(), "gen.bsd".into()))
    })
    .unwrap_or_else(|e| panic!("{e}"))
}

fn main() {
    let setup = Instant::now();
    let loaded = board();
    let nets: Vec<String> = loaded.file.nets.keys().cloned().collect();
    // The counting sequence (W. H. Kautz, 1974): net i gets code i, over
    // ceil(log2 N) vectors.
    let (program, width) = counting_program(&loaded, &nets, 0, "counting sequence");
    // The faults: stuck-at 0 and 1 and open on every net, then shorts
    // between random pairs of nets up to one million.
    let mut faults = Vec::with_capacity(1_000_000);
    let fault = |class, defect: DefectSpec| Fault {
        class,
        label: String::new(),
        defect,
        untestable: None,
    };
    for n in &nets {
        for v in [0, 1] {
            faults.push(fault(
                FaultClass::Stuck,
                DefectSpec {
                    stuck: Some(n.clone()),
                    value: Some(v),
                    ..Default::default()
                },
            ));
        }
        faults.push(fault(
            FaultClass::OpenNet,
            DefectSpec {
                open: Some(n.clone()),
                ..Default::default()
            },
        ));
    }
    let mut rng = Rng::new(5000);
    while faults.len() < 1_000_000 {
        let a = (rng.next_u64() % nets.len() as u64) as usize;
        let b = (rng.next_u64() % nets.len() as u64) as usize;
        if a != b {
            faults.push(fault(
                FaultClass::AnyShort,
                DefectSpec {
                    short: Some(vec![nets[a].clone(), nets[b].clone()]),
                    ..Default::default()
                },
            ));
        }
    }
    let setup_s = setup.elapsed().as_secs_f64();
    let result = run_campaign(&loaded, &program, &faults, 2, (1, 1), &|_| {})
        .unwrap_or_else(|e| panic!("{e}"));
    println!(
        "{} nets, {} vectors, {} faults: {} detected, {} undetected, {} ambiguity groups; {:.2} s on 2 threads, {:.0} faults/s (setup {:.1} s)",
        nets.len(),
        width,
        result.faults,
        result.detected,
        result.undetected,
        result.ambiguity_groups.count,
        result.wall_seconds,
        result.faults_per_second,
        setup_s
    );
}
