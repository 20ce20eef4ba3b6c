//! `CampaignError`: why a fault campaign could not run.

use virtual_board::DefectError;

/// Why [`run_campaign`](super::run_campaign) could not run.
#[derive(Clone, Debug, PartialEq, Eq, thiserror::Error)]
#[non_exhaustive]
pub enum CampaignError {
    /// The program fails on the good board: a campaign (and a fault
    /// dictionary) needs a program that passes.
    #[error("the program fails on the good board ({failed} of {scans} scans): a campaign needs a program that passes")]
    GoodBoardFails {
        /// Failing scans.
        failed: usize,
        /// Scans of the run.
        scans: usize,
    },
    /// A fault of the list does not fit the board.
    #[error("{fault}: {error}")]
    Fault {
        /// The fault's label.
        fault: String,
        /// What is wrong.
        error: DefectError,
    },
}
