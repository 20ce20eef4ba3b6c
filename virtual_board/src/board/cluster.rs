//! Non-scan clusters: parts without boundary scan between scan devices,
//! evaluated combinationally from the nets on their inputs.

use serde::{Deserialize, Serialize};

/// What a cluster is.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum ClusterKind {
    /// y = a
    Buffer,
    /// y = not a
    Inverter,
    /// y = a and b and …
    And,
    /// y = a or b or …
    Or,
    /// y = not (a and b and …)
    Nand,
    /// y = not (a or b or …)
    Nor,
    /// y = a xor b xor …
    Xor,
    /// y = a while `enable` is active, else high-impedance.
    ThreeState,
    /// Bus transceiver: while `enable` is active, `dir` at its A-to-B level
    /// drives b from a, otherwise a from b; disabled, both sides are off.
    Transceiver,
    /// Series resistor from a to b: b follows a when a is driven.
    Resistor,
}

/// One pin of a cluster and the net it sits on.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct ClusterPin {
    /// Pin name in our words (`a`, `b`, `y`, `enable`, `dir`, `in1` …).
    pub name: String,
    /// Board net index.
    pub net: Option<u32>,
    /// Defect: the pin is stuck at this level.
    pub stuck: Option<bool>,
    /// Defect: the pin is open (an input then floats; an output drives nothing).
    pub open: bool,
}

/// A non-scan part.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Cluster {
    /// Reference designator.
    pub name: String,
    /// What it is.
    pub kind: ClusterKind,
    /// Inputs (for a transceiver: a, b, dir, enable; the a/b sides are both
    /// inputs and outputs).
    pub inputs: Vec<ClusterPin>,
    /// Outputs (for a transceiver: a, b).
    pub outputs: Vec<ClusterPin>,
    /// Level of `enable` that enables (three-state buffer, transceiver).
    pub enable_active: bool,
    /// Level of `dir` that drives from a to b (transceiver).
    pub a_to_b: bool,
}

/// How a cluster input reads: the net's level, or `None` when it floats.
pub type InputLevel = Option<bool>;

impl Cluster {
    /// What output `o` drives, given how each input reads: `Some(level)`
    /// strong, `None` off.
    pub fn output(&self, o: usize, inputs: &[InputLevel]) -> Option<bool> {
        let pin = &self.outputs[o];
        if pin.open {
            return None;
        }
        if let Some(v) = pin.stuck {
            return Some(v);
        }
        // A floating input reads as the board's float policy says (already
        // applied to the net's level, or to an open pin's `open_level`); an
        // input arrives as `None` only when nothing can be said of it.
        let level = |i: usize| inputs.get(i).copied().flatten();
        let all = || (0..self.inputs.len()).map(level);
        match self.kind {
            ClusterKind::Buffer | ClusterKind::Resistor => level(0),
            ClusterKind::Inverter => level(0).map(|v| !v),
            ClusterKind::And => all()
                .collect::<Option<Vec<bool>>>()
                .map(|v| v.iter().all(|&x| x)),
            ClusterKind::Or => all()
                .collect::<Option<Vec<bool>>>()
                .map(|v| v.iter().any(|&x| x)),
            ClusterKind::Nand => all()
                .collect::<Option<Vec<bool>>>()
                .map(|v| !v.iter().all(|&x| x)),
            ClusterKind::Nor => all()
                .collect::<Option<Vec<bool>>>()
                .map(|v| !v.iter().any(|&x| x)),
            ClusterKind::Xor => all()
                .collect::<Option<Vec<bool>>>()
                .map(|v| v.iter().fold(false, |a, &x| a ^ x)),
            ClusterKind::ThreeState => {
                let enabled = level(1)? == self.enable_active;
                if enabled {
                    level(0)
                } else {
                    None
                }
            }
            ClusterKind::Transceiver => {
                // inputs: a, b, dir, enable; outputs: a (0), b (1).
                let enabled = level(3)? == self.enable_active;
                if !enabled {
                    return None;
                }
                let a_to_b = level(2)? == self.a_to_b;
                match (o, a_to_b) {
                    (1, true) => level(0),
                    (0, false) => level(1),
                    _ => None,
                }
            }
        }
    }

    /// How input `i` reads: the level of its net, or, when the pin is open,
    /// `open_level` — what a lifted input floats to by the board's float
    /// policy (common practice: TTL-style inputs float high). A series
    /// resistor cut open passes nothing (`open_level` is ignored).
    pub fn input_level(
        &self,
        i: usize,
        net_level: Option<bool>,
        open_level: Option<bool>,
    ) -> InputLevel {
        let pin = &self.inputs[i];
        if let Some(v) = pin.stuck {
            return Some(v);
        }
        if pin.open {
            return if self.kind == ClusterKind::Resistor {
                None
            } else {
                open_level
            };
        }
        net_level
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn pin(name: &str) -> ClusterPin {
        ClusterPin {
            name: name.into(),
            net: Some(0),
            stuck: None,
            open: false,
        }
    }

    fn gate(kind: ClusterKind, n: usize) -> Cluster {
        Cluster {
            name: "U".into(),
            kind,
            inputs: (0..n).map(|i| pin(&format!("in{i}"))).collect(),
            outputs: vec![pin("y")],
            enable_active: false,
            a_to_b: true,
        }
    }

    // Truth tables of the logic functions (common practice).
    #[test]
    fn gates_follow_their_truth_tables() {
        let cases = [(false, false), (false, true), (true, false), (true, true)];
        for (a, b) in cases {
            let i = [Some(a), Some(b)];
            assert_eq!(gate(ClusterKind::And, 2).output(0, &i), Some(a && b));
            assert_eq!(gate(ClusterKind::Or, 2).output(0, &i), Some(a || b));
            assert_eq!(gate(ClusterKind::Nand, 2).output(0, &i), Some(!(a && b)));
            assert_eq!(gate(ClusterKind::Nor, 2).output(0, &i), Some(!(a || b)));
            assert_eq!(gate(ClusterKind::Xor, 2).output(0, &i), Some(a ^ b));
        }
        assert_eq!(
            gate(ClusterKind::Inverter, 1).output(0, &[Some(true)]),
            Some(false)
        );
        // An open input leaves the output undefined: off.
        assert_eq!(gate(ClusterKind::Buffer, 1).output(0, &[None]), None);
    }

    #[test]
    fn three_state_and_transceiver() {
        let mut t = gate(ClusterKind::ThreeState, 2);
        t.enable_active = false; // active-low enable
        assert_eq!(t.output(0, &[Some(true), Some(false)]), Some(true));
        assert_eq!(t.output(0, &[Some(true), Some(true)]), None);
        let mut x = gate(ClusterKind::Transceiver, 4);
        x.outputs = vec![pin("a"), pin("b")];
        // a=1, b=0, dir=1 (a to b), enable=0 (active low)
        let i = [Some(true), Some(false), Some(true), Some(false)];
        assert_eq!(x.output(1, &i), Some(true));
        assert_eq!(x.output(0, &i), None);
        let back = [Some(true), Some(false), Some(false), Some(false)];
        assert_eq!(x.output(0, &back), Some(false));
        let off = [Some(true), Some(false), Some(true), Some(true)];
        assert_eq!((x.output(0, &off), x.output(1, &off)), (None, None));
    }
}
