//! The USB transport (cargo feature `usb`): a thin layer over libftdi1
//! through the `ftdi` crate, and the adapter list through its FFI crate
//! `libftdi1-sys` (the `ftdi` crate has no listing call). The calls, in
//! the order they are made, are listed in the README ("Hardware in the
//! loop"). Nothing here is tested on hardware in this repository.

use std::ffi::CStr;
use std::io::{Read, Write};
use std::os::raw::c_char;
use std::time::{Duration, Instant};

use ftdi::{BitMode, FlowControl};
use libftdi1_sys as ffi;

use virtual_board::{Board, TapTarget};

use super::address::{Interface, UsbAddress};
use super::clock::TckSetting;
use super::link_error::{LinkError, UsbError};
use super::pins::PinMap;
use super::target::{ChannelSpec, MpsseTarget, Transport};

/// How long a read waits for the chip's answer.
const READ_TIMEOUT: Duration = Duration::from_secs(5);

/// The FTDI vendor id and the product ids of its MPSSE chips: FT2232C/D/H
/// 6010, FT4232H 6011, FT232H 6014 (FTDI's published ids, from memory).
pub const KNOWN: [(u16, u16, &str); 3] = [
    (0x0403, 0x6010, "FT2232H family"),
    (0x0403, 0x6011, "FT4232H"),
    (0x0403, 0x6014, "FT232H"),
];

/// One MPSSE channel opened through libftdi1.
pub struct UsbChannel {
    device: ftdi::Device,
    label: String,
}

fn ftdi_interface(i: Interface) -> ftdi::Interface {
    match i {
        Interface::A => ftdi::Interface::A,
        Interface::B => ftdi::Interface::B,
        Interface::C => ftdi::Interface::C,
        Interface::D => ftdi::Interface::D,
    }
}

impl UsbChannel {
    /// Opens `interface` of the adapter at `address` and puts it in MPSSE
    /// mode: USB reset, buffers purged, latency timer 1 ms, RTS/CTS flow
    /// control, bit mode reset then MPSSE; then checks that the engine
    /// answers a bad command with 0xFA and the command (FTDI AN_108 and
    /// AN_135, from memory).
    ///
    /// # Errors
    /// [`UsbError`]: no such adapter, no permission, a channel that does not answer.
    pub fn open(address: &UsbAddress, interface: Interface) -> Result<UsbChannel, UsbError> {
        let label = format!(
            "usb://{:04x}:{:04x}{}/{interface}",
            address.vid,
            address.pid,
            address
                .serial
                .as_deref()
                .map(|s| format!("/{s}"))
                .unwrap_or_default()
        );
        let fail = |step: &'static str, e: &dyn std::fmt::Display| UsbError::Setup {
            label: label.clone(),
            step,
            why: e.to_string(),
        };
        let mut opener = ftdi::find_by_vid_pid(address.vid, address.pid);
        if let Some(serial) = &address.serial {
            if serial.contains('\0') {
                return Err(UsbError::NulInSerial { label });
            }
            opener = opener.serial(serial);
        }
        let mut device = opener
            .interface(ftdi_interface(interface))
            .open()
            .map_err(|e| {
                fail(
                    "cannot open the adapter (is it plugged in, and may this user open it?)",
                    &e,
                )
            })?;
        device.usb_reset().map_err(|e| fail("USB reset", &e))?;
        device
            .usb_purge_buffers()
            .map_err(|e| fail("purging the buffers", &e))?;
        device
            .set_latency_timer(1)
            .map_err(|e| fail("setting the latency timer", &e))?;
        device
            .set_flow_control(FlowControl::RtsCts)
            .map_err(|e| fail("setting flow control", &e))?;
        device
            .set_bitmode(0, BitMode::Reset)
            .map_err(|e| fail("resetting the bit mode", &e))?;
        device
            .set_bitmode(0, BitMode::Mpsse)
            .map_err(|e| fail("entering MPSSE mode", &e))?;
        let mut channel = UsbChannel { device, label };
        // A bad command (0xAA) is answered 0xFA 0xAA: the engine is in step.
        channel.write(&[0xAA])?;
        let mut echo = [0u8; 2];
        channel.read(&mut echo)?;
        if echo != [0xFA, 0xAA] {
            return Err(UsbError::NoEcho {
                label: channel.label,
                got: echo,
            });
        }
        Ok(channel)
    }
}

impl Transport for UsbChannel {
    fn write(&mut self, bytes: &[u8]) -> Result<(), LinkError> {
        self.device
            .write_all(bytes)
            .map_err(|e| LinkError(format!("{}: write: {e}", self.label)))
    }

    fn read(&mut self, buf: &mut [u8]) -> Result<(), LinkError> {
        let start = Instant::now();
        let mut at = 0;
        while at < buf.len() {
            let n = self
                .device
                .read(&mut buf[at..])
                .map_err(|e| LinkError(format!("{}: read: {e}", self.label)))?;
            at += n;
            if n == 0 && start.elapsed() > READ_TIMEOUT {
                return Err(LinkError(format!(
                    "{}: the adapter sent {at} of {} bytes in {} s",
                    self.label,
                    buf.len(),
                    READ_TIMEOUT.as_secs()
                )));
            }
        }
        Ok(())
    }
}

/// One connected adapter.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct AdapterInfo {
    /// USB vendor id.
    pub vid: u16,
    /// USB product id.
    pub pid: u16,
    /// The chip family the product id names.
    pub family: &'static str,
    /// Manufacturer string, as the adapter reports it.
    pub manufacturer: String,
    /// Product description.
    pub description: String,
    /// Serial number.
    pub serial: String,
}

/// The connected adapters of the known MPSSE product ids.
///
/// # Errors
/// [`UsbError::Library`]: libftdi1 cannot start or enumerate.
pub fn list_adapters() -> Result<Vec<AdapterInfo>, UsbError> {
    // SAFETY: a fresh context from ftdi_new, checked for null and freed
    // with ftdi_free on every path below.
    let ctx = unsafe { ffi::ftdi_new() };
    if ctx.is_null() {
        return Err(UsbError::Library(
            "libftdi1 could not allocate a context".into(),
        ));
    }
    let mut out = Vec::new();
    let mut result = Ok(());
    for (vid, pid, family) in KNOWN {
        let mut list: *mut ffi::ftdi_device_list = std::ptr::null_mut();
        // SAFETY: ctx is valid; list receives a list libftdi1 allocates,
        // freed with ftdi_list_free below.
        let n = unsafe { ffi::ftdi_usb_find_all(ctx, &mut list, i32::from(vid), i32::from(pid)) };
        if n < 0 {
            result = Err(UsbError::Library(format!(
                "libftdi1 cannot enumerate USB devices ({n}); is libusb usable by this user?"
            )));
            break;
        }
        let mut node = list;
        while !node.is_null() {
            let mut strings = [[0 as c_char; 128]; 3];
            let [m, d, s] = &mut strings;
            // SAFETY: node is a valid list entry; each buffer is 128 bytes
            // and its length is passed.
            let r = unsafe {
                ffi::ftdi_usb_get_strings(
                    ctx,
                    (*node).dev,
                    m.as_mut_ptr(),
                    128,
                    d.as_mut_ptr(),
                    128,
                    s.as_mut_ptr(),
                    128,
                )
            };
            let text = |b: &[c_char; 128]| {
                if r < 0 {
                    return String::from("?");
                }
                // SAFETY: libftdi1 writes NUL-terminated strings within the
                // lengths given; the buffers start zeroed.
                unsafe { CStr::from_ptr(b.as_ptr()) }
                    .to_string_lossy()
                    .into_owned()
            };
            out.push(AdapterInfo {
                vid,
                pid,
                family,
                manufacturer: text(&strings[0]),
                description: text(&strings[1]),
                serial: text(&strings[2]),
            });
            // SAFETY: node is a valid entry; next is null or valid.
            node = unsafe { (*node).next };
        }
        // SAFETY: list came from ftdi_usb_find_all (or is null).
        unsafe { ffi::ftdi_list_free(&mut list) };
    }
    // SAFETY: ctx came from ftdi_new and is not used after this.
    unsafe { ffi::ftdi_free(ctx) };
    result.map(|()| out)
}

/// The adapter at `address` as a target for `board`: one channel per TAP
/// port, in the board's order, each with `pins`, clocked at `clock`.
///
/// # Errors
/// [`UsbError`]: a channel count that does not fit the board, an adapter
/// that cannot be opened or set up.
pub fn open_target(
    address: &UsbAddress,
    board: &Board,
    pins: PinMap,
    clock: TckSetting,
) -> Result<MpsseTarget, UsbError> {
    let names = board.port_names();
    let interfaces = address.interfaces_for(names.len())?;
    let mut specs = Vec::with_capacity(names.len());
    for (p, (name, interface)) in names.into_iter().zip(interfaces).enumerate() {
        specs.push(ChannelSpec {
            name,
            pins,
            link: Box::new(UsbChannel::open(address, interface)?),
            limits: board.tck_limits(p),
        });
    }
    Ok(MpsseTarget::new(specs, clock)?)
}
