//! `PatternError`: why net-level patterns do not compile into scans for a board.

/// Why [`compile_patterns`](super::net_level::compile_patterns) refused a
/// pattern set.
#[derive(Clone, Debug, PartialEq, Eq, thiserror::Error)]
#[non_exhaustive]
pub enum PatternError {
    /// The set has no vector.
    #[error("the pattern set has no vectors")]
    NoVectors,
    /// A net the board does not have.
    #[error("unknown net `{0}`")]
    UnknownNet(String),
    /// `from:` names a device the board does not have.
    #[error("from: unknown device `{device}` for net {net}")]
    UnknownDevice {
        /// The device as written.
        device: String,
        /// The net it was given for.
        net: String,
    },
    /// A level other than 0 or 1.
    #[error("net {net}: {value} is not 0 or 1")]
    NotABit {
        /// The net.
        net: String,
        /// The level as written.
        value: u8,
    },
    /// A driven net no scan cell (of the `from:` device, when given) can drive.
    #[error("vector {vector}: {}", match .device {
        Some(d) => format!("device {d} has no scan driver on net {}", .net),
        None => format!("net {} has no scan driver (no output or bidirectional cell)", .net),
    })]
    NoDriver {
        /// The vector, from 1.
        vector: usize,
        /// The net.
        net: String,
        /// The `from:` device, when the set names one.
        device: Option<String>,
    },
    /// An expected net no scan cell reads.
    #[error("vector {vector}: net {net} has no scan receiver (no input or bidirectional cell)")]
    NoReceiver {
        /// The vector, from 1.
        vector: usize,
        /// The net.
        net: String,
    },
    /// Two drivers would fight, or a driver's control cell would enable
    /// another pin onto a driven net or a receiver: the whole sentence,
    /// naming the vector and the pins.
    #[error("{0}")]
    Fight(String),
    /// The pipelined schedule could not keep a level it needs (a bug, not
    /// bad input).
    #[error("{0}")]
    Internal(String),
}

/// A scan schedule name other than `pipelined` or `apply-then-capture`.
#[derive(Clone, Debug, PartialEq, Eq, thiserror::Error)]
#[error("`{0}` is not a schedule: pipelined or apply-then-capture")]
pub struct UnknownSchedule(pub String);
