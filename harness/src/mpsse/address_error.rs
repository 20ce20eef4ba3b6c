//! `AddressError` and `PinError`: why an adapter address or a GPIO pin name
//! was refused.

use super::address::Interface;
use super::pins::GpioPin;

/// Why [`UsbAddress::parse`](super::UsbAddress::parse) or
/// [`UsbAddress::interfaces_for`](super::UsbAddress::interfaces_for) refused.
#[derive(Clone, Debug, PartialEq, Eq, thiserror::Error)]
#[non_exhaustive]
pub enum AddressError {
    /// Not of the form `usb://VID:PID[/SERIAL][/INTERFACE]`.
    #[error("`{0}` is not an adapter address: write usb://VID:PID[/SERIAL][/INTERFACE], VID and PID in hex (e.g. usb://0403:6010/A)")]
    Usage(String),
    /// A last part that is not interfaces.
    #[error(
        "`{part}` in `{target}` is not an interface: write A, B, C or D, or several joined by +"
    )]
    NotInterfaces {
        /// The part.
        part: String,
        /// The address.
        target: String,
    },
    /// One interface named twice.
    #[error("`{target}` names interface {interface} twice")]
    Twice {
        /// The address.
        target: String,
        /// The interface.
        interface: Interface,
    },
    /// More TAP ports than one adapter has channels.
    #[error("the board has {ports} TAP ports; one adapter has at most four channels")]
    TooManyPorts {
        /// The board's TAP ports.
        ports: usize,
    },
    /// Another count of interfaces than of TAP ports.
    #[error("the board has {} and the address names {}: name one per port, in the board's order, joined by +", crate::count(*.ports, "TAP port"), crate::count(*.named, "interface"))]
    PortCount {
        /// The board's TAP ports.
        ports: usize,
        /// The interfaces named.
        named: usize,
    },
}

/// Why [`GpioPin::parse`](super::GpioPin::parse) or
/// [`PinMap::new`](super::PinMap::new) refused.
#[derive(Clone, Debug, PartialEq, Eq, thiserror::Error)]
#[non_exhaustive]
pub enum PinError {
    /// Not `ADBUSn` or `ACBUSn`.
    #[error("`{0}` is not an adapter pin: write ADBUS4…ADBUS7 or ACBUS0…ACBUS7")]
    Name(String),
    /// A bit other than 0…7.
    #[error("`{0}` is not an adapter pin: the bit is 0…7")]
    Bit(String),
    /// One of the four JTAG pins.
    #[error("`{0}` carries TCK, TDI, TDO or TMS: map TRST* and the power sense to ADBUS4…ADBUS7 or ACBUS0…ACBUS7")]
    Jtag(String),
    /// TRST* and the power sense on one pin.
    #[error("TRST* and the power sense are both on {0}")]
    Shared(GpioPin),
}
