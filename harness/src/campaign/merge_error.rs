//! `MergeError`: why shard results do not join into one campaign result.

/// Why [`merge`](super::merge) refused a set of shard results.
#[derive(Clone, Debug, PartialEq, Eq, thiserror::Error)]
#[non_exhaustive]
pub enum MergeError {
    /// No results were given.
    #[error("nothing to merge")]
    Empty,
    /// The results are of different programs.
    #[error("results of different programs: `{first}` and `{other}`")]
    Programs {
        /// The first result's program.
        first: String,
        /// Another result's program.
        other: String,
    },
    /// One shard given twice.
    #[error("shard {0} given twice")]
    ShardTwice(String),
    /// One fault in two shards (shards of different splits).
    #[error("fault `{0}` is in two shards")]
    FaultTwice(String),
    /// A shard name that is not `i/n`, or shards of different `n`.
    #[error("{0}")]
    Shards(String),
    /// Not every shard of the split is there.
    #[error("shards missing: {missing} (a merge needs all {of})")]
    Missing {
        /// The missing shards, `i/n`, comma-separated.
        missing: String,
        /// How many shards the split has.
        of: usize,
    },
}
