//! Fault campaigns: which real defects a program catches.
//!
//! `universe` builds the single faults of a board (stuck-at, opens, shorts
//! between adjacent pins, chain and cluster faults); `pad_geometry` says
//! which pins are adjacent (pad distance where the board gives pads, else
//! the pin names); `simulate` runs each on
//! the cycle-level board — the reference — and classifies it, and groups
//! the detected faults by identical response (the diagnostic resolution,
//! counted in `ambiguity`); `fast` answers net-level faults from the good
//! run alone (`fast/bit_parallel` 64 faults to a machine word); `workers`
//! spreads the faults over a pool of threads; `chain_only` runs chain
//! faults that cut the chain on the board's chains without its nets;
//! `merge_error` says why shard
//! results do not join; `campaign_error` why a campaign could not run.

mod ambiguity;
mod campaign_error;
mod chain_only;
mod fast;
mod merge_error;
mod pad_geometry;
mod simulate;
mod universe;
mod workers;

pub use campaign_error::CampaignError;
pub use fast::FastModel;
pub use merge_error::MergeError;
pub use pad_geometry::{device_neighbours, pairs_within};
pub use simulate::{
    flips_of, merge, response_of, run_campaign, run_campaign_with, shard_of, shard_range,
    summarise, AmbiguityGroups, CampaignResult, Counts, FaultResult,
};
pub use universe::{
    adjacent_pairs, adjacent_pairs_as, electrical_nets, universe, ElectricalNet, Fault, FaultClass,
    UniverseOptions,
};
pub use workers::Evaluation;
