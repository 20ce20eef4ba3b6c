//! What an open net disconnects: its drivers, and nothing else. The pulls,
//! the inputs and the input side of bidirectional pins stay on the net, so a
//! pulled receiver reads its pull whether the net or its only driver pin is
//! opened (the same physical fault, two ways to write it). Common practice
//! of interconnect fault models: an open cuts the driver from the receivers,
//! and what the receivers then read is the board's pull or float level.

use std::path::Path;

use virtual_board::{bsdl_files_beside, load_board, DefectSpec, LoadedBoard};

fn demo() -> LoadedBoard {
    let path =
        Path::new(env!("CARGO_MANIFEST_DIR")).join("../scenarios/boards/harbor_controller.yaml");
    load_board(&path).unwrap_or_else(|e| panic!("{e}"))
}

fn open(loaded: &LoadedBoard, what: &str) -> LoadedBoard {
    let spec = DefectSpec {
        open: Some(what.to_string()),
        ..DefectSpec::default()
    };
    loaded
        .with_defects(&[spec], &mut bsdl_files_beside(&loaded.path))
        .unwrap_or_else(|e| panic!("{e}"))
}

#[test]
fn an_open_net_keeps_its_pulls_and_every_pin_that_reads_it() {
    let good = demo();
    let mut checked = 0;
    let mut bidirectional = 0;
    for (i, net) in good.board.nets().iter().enumerate() {
        if net.pull.is_none() || net.rail.is_some() || net.drivers.is_empty() {
            continue;
        }
        let faulty = open(&good, &net.name);
        let after = &faulty.board.nets()[i];
        assert_eq!(after.name, net.name);
        assert_eq!(after.pull, net.pull, "{}: the pull stays", net.name);
        assert!(after.drivers.is_empty(), "{}: no pin drives it", net.name);
        let reads: Vec<(usize, usize)> = net.receivers.iter().map(|r| (r.0, r.1)).collect();
        let still: Vec<(usize, usize)> = after.receivers.iter().map(|r| (r.0, r.1)).collect();
        assert_eq!(
            still, reads,
            "{}: every pin that read it still does",
            net.name
        );
        bidirectional += net
            .drivers
            .iter()
            .filter(|d| reads.contains(&(d.0, d.1)))
            .count();
        // With no driver left and no other weak driver, the net reads its pull.
        let r = faulty.board.net_read(i);
        if !r.floating {
            assert_eq!(Some(r.value), net.pull, "{}", net.name);
        }
        checked += 1;
    }
    // The demo has pulled nets, some with bidirectional pins (which the old
    // model cut off the net, so they floated).
    assert!(checked >= 5, "{checked} pulled nets");
    assert!(bidirectional >= 1, "no bidirectional pin on a pulled net");
}
