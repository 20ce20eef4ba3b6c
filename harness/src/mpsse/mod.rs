//! Hardware in the loop: a USB JTAG adapter built on an MPSSE (FT232H /
//! FT2232H / FT4232H family) behind the same `TapTarget` as the virtual
//! board.
//!
//! The command encoder ([`encoder`], [`target`]) is pure Rust and always
//! built; the USB transport ([`usb`]) needs the `usb` cargo feature and
//! libftdi1. Every command value is from FTDI application note AN_108,
//! from memory ([`command`]).

pub mod address;
mod address_error;
pub mod clock;
pub mod command;
pub mod encoder;
mod link_error;
pub mod pins;
pub mod safety;
pub mod session;
pub mod target;
#[cfg(feature = "usb")]
pub mod usb;

pub use address::UsbAddress;
pub use address_error::{AddressError, PinError};
pub use clock::{ClockError, TckSetting};
pub use link_error::{LinkError, UsbError};
pub use pins::{GpioPin, PinMap};
pub use session::{program_frequencies, program_hz, HardwareSession, SessionError};
pub use target::{ChannelSpec, LinkStatistics, MpsseTarget, Transport};
