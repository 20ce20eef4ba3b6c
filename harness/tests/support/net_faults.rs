//! Hand-built net fault lists for tests that check a campaign against the
//! theory of interconnect tests: stuck-at 0 and 1 on every net, and every
//! pair of nets shorted under each wired rule, each labelled as a repair
//! would name it.

use harness::campaign::{Fault, FaultClass};
use virtual_board::{DefectSpec, ShortRule};

fn fault(class: FaultClass, defect: DefectSpec) -> Fault {
    Fault {
        class,
        label: defect.describe(),
        defect,
        untestable: None,
    }
}

/// Stuck-at 0 then 1 on each net, in order; then each pair of nets (in
/// order, first with later) shorted wired-AND then wired-OR.
pub fn stuck_and_pair_shorts(nets: &[String]) -> Vec<Fault> {
    let mut faults = Vec::new();
    for n in nets {
        for v in [0, 1] {
            let d = DefectSpec {
                stuck: Some(n.clone()),
                value: Some(v),
                ..Default::default()
            };
            faults.push(fault(FaultClass::Stuck, d));
        }
    }
    for (i, a) in nets.iter().enumerate() {
        for b in &nets[i + 1..] {
            for rule in [ShortRule::WiredAnd, ShortRule::WiredOr] {
                let d = DefectSpec {
                    short: Some(vec![a.clone(), b.clone()]),
                    behaviour: Some(rule),
                    ..Default::default()
                };
                faults.push(fault(FaultClass::AnyShort, d));
            }
        }
    }
    faults
}
