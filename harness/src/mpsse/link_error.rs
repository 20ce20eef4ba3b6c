//! `LinkError` and `UsbError`: why bytes did not move to or from an adapter
//! channel, and why an adapter could not be opened as a target.

use super::address_error::AddressError;

/// A [`Transport`](super::Transport) failed: the link's own words (a USB
/// library's message, a short read).
#[derive(Clone, Debug, PartialEq, Eq, thiserror::Error)]
#[error("{0}")]
pub struct LinkError(pub String);

/// Why an adapter could not be listed, opened or set up (the `usb` feature).
#[derive(Clone, Debug, PartialEq, Eq, thiserror::Error)]
#[non_exhaustive]
pub enum UsbError {
    /// The address does not fit the board.
    #[error(transparent)]
    Address(#[from] AddressError),
    /// A serial number with a NUL byte, which USB strings cannot hold.
    #[error("{label}: a serial number with a NUL byte")]
    NulInSerial {
        /// The channel, `usb://VID:PID[/SERIAL]/INTERFACE`.
        label: String,
    },
    /// One step of opening or setting up a channel failed.
    #[error("{label}: {step}: {why}")]
    Setup {
        /// The channel.
        label: String,
        /// The step, in words.
        step: &'static str,
        /// The library's message.
        why: String,
    },
    /// The link failed while the channel was being checked.
    #[error(transparent)]
    Link(#[from] LinkError),
    /// The engine did not answer a bad command with 0xFA and the command.
    #[error("{label}: the MPSSE does not answer as expected (got {:02X} {:02X})", .got[0], .got[1])]
    NoEcho {
        /// The channel.
        label: String,
        /// The two bytes it sent.
        got: [u8; 2],
    },
    /// The USB library could not start or enumerate.
    #[error("{0}")]
    Library(String),
    /// The channels do not make a target (clock, pins).
    #[error(transparent)]
    Target(#[from] virtual_board::TargetError),
}
