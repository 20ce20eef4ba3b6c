//! `DiagnoseError`: why a diagnosis or a follow-up test could not be made.

use crate::campaign::CampaignError;
use crate::generate::GenerateError;
use crate::program::PatternError;

/// Why [`diagnose`](super::diagnose), [`diagnose_runs`](super::diagnose_runs)
/// or [`follow_up`](super::follow_up) gave no answer.
#[derive(Clone, Debug, PartialEq, Eq, thiserror::Error)]
#[non_exhaustive]
pub enum DiagnoseError {
    /// The programs fail on the good board: diagnosis needs programs that pass.
    #[error("the program fails on the good board ({failed} of {scans} scans): diagnosis needs a program that passes")]
    GoodBoardFails {
        /// Failing scans.
        failed: usize,
        /// Scans of the run.
        scans: usize,
    },
    /// The fault dictionary's campaign could not run.
    #[error(transparent)]
    Campaign(#[from] CampaignError),
    /// A follow-up asked for fewer than two explanations.
    #[error("one explanation fits the capture: there is nothing to tell apart")]
    NothingToTellApart,
    /// The board has no interconnect test to build a follow-up on.
    #[error(transparent)]
    Generate(#[from] GenerateError),
    /// The explanations name no net the interconnect test drives.
    #[error("the explanations name no net that an interconnect test can drive")]
    NoDrivenNet,
    /// No vector over the nets tells the explanations apart.
    #[error("no vector over {} tells the explanations apart: every net-level test sees them alike", .nets.join(", "))]
    Indistinguishable {
        /// The nets tried.
        nets: Vec<String>,
    },
    /// The follow-up's patterns did not compile.
    #[error(transparent)]
    Patterns(#[from] PatternError),
}
