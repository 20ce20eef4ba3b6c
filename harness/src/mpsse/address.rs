//! `usb://VID:PID[/SERIAL][/INTERFACE]`: which adapter, and which of its
//! MPSSE channels (interfaces A–D) serve the board's TAP ports.

use std::fmt;

use super::address_error::AddressError;

/// One MPSSE channel of a chip: interface A, B, C or D (an FT2232H has A
/// and B, an FT4232H A–D with the MPSSE on A and B, an FT232H only A;
/// FTDI datasheets, from memory).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Interface {
    /// Interface A.
    A,
    /// Interface B.
    B,
    /// Interface C.
    C,
    /// Interface D.
    D,
}

impl Interface {
    fn parse(c: char) -> Option<Interface> {
        match c.to_ascii_uppercase() {
            'A' => Some(Interface::A),
            'B' => Some(Interface::B),
            'C' => Some(Interface::C),
            'D' => Some(Interface::D),
            _ => None,
        }
    }

    /// The interfaces in order.
    pub const ALL: [Interface; 4] = [Interface::A, Interface::B, Interface::C, Interface::D];
}

impl fmt::Display for Interface {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let c = match self {
            Interface::A => "A",
            Interface::B => "B",
            Interface::C => "C",
            Interface::D => "D",
        };
        f.write_str(c)
    }
}

/// A parsed `usb://` target.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct UsbAddress {
    /// USB vendor id.
    pub vid: u16,
    /// USB product id.
    pub pid: u16,
    /// The adapter's serial number, when several share VID:PID.
    pub serial: Option<String>,
    /// The channels, one per TAP port in the board's order; empty: A, B, …
    /// as many as the board has ports.
    pub interfaces: Vec<Interface>,
}

/// True for `usb://…` targets.
pub fn is_usb(target: &str) -> bool {
    target.starts_with("usb://")
}

impl UsbAddress {
    /// Reads `usb://VID:PID[/SERIAL][/INTERFACE]`: VID and PID in hex; the
    /// interface a letter A–D, or several joined by `+` (one per TAP port,
    /// in the board's order). A last part that reads as interfaces is
    /// taken as them; a serial that looks like one needs the interface
    /// after it.
    ///
    /// # Errors
    /// [`AddressError`]: another scheme, bad hex, too many parts, an
    /// interface named twice.
    pub fn parse(target: &str) -> Result<UsbAddress, AddressError> {
        let usage = || AddressError::Usage(target.to_string());
        let rest = target.strip_prefix("usb://").ok_or_else(usage)?;
        let mut parts = rest.split('/');
        let ids = parts.next().unwrap_or("");
        let (vid, pid) = ids.split_once(':').ok_or_else(usage)?;
        let hex = |s: &str| {
            let s = s.trim_start_matches("0x");
            if s.is_empty() || s.len() > 4 {
                return None;
            }
            u16::from_str_radix(s, 16).ok()
        };
        let (Some(vid), Some(pid)) = (hex(vid), hex(pid)) else {
            return Err(usage());
        };
        let rest: Vec<&str> = parts.collect();
        let (serial, interfaces) = match rest.as_slice() {
            [] => (None, Vec::new()),
            [one] => match interfaces_of(one) {
                Some(i) => (None, i),
                None => (Some(*one), Vec::new()),
            },
            [serial, inter] => (
                Some(*serial),
                interfaces_of(inter).ok_or_else(|| AddressError::NotInterfaces {
                    part: inter.to_string(),
                    target: target.to_string(),
                })?,
            ),
            _ => return Err(usage()),
        };
        if serial.is_some_and(str::is_empty) {
            return Err(usage());
        }
        for (k, i) in interfaces.iter().enumerate() {
            if interfaces[..k].contains(i) {
                return Err(AddressError::Twice {
                    target: target.to_string(),
                    interface: *i,
                });
            }
        }
        Ok(UsbAddress {
            vid,
            pid,
            serial: serial.map(str::to_string),
            interfaces,
        })
    }

    /// The interfaces for a board of `ports` TAP ports.
    ///
    /// # Errors
    /// [`AddressError`]: a count that differs from the ports given, or more
    /// than four ports.
    pub fn interfaces_for(&self, ports: usize) -> Result<Vec<Interface>, AddressError> {
        if self.interfaces.is_empty() {
            if ports > Interface::ALL.len() {
                return Err(AddressError::TooManyPorts { ports });
            }
            return Ok(Interface::ALL[..ports].to_vec());
        }
        if self.interfaces.len() != ports {
            return Err(AddressError::PortCount {
                ports,
                named: self.interfaces.len(),
            });
        }
        Ok(self.interfaces.clone())
    }
}

/// `A`, `B+A`, …; `None` if not interfaces.
fn interfaces_of(s: &str) -> Option<Vec<Interface>> {
    s.split('+')
        .map(|p| {
            let mut cs = p.chars();
            match (cs.next(), cs.next()) {
                (Some(c), None) => Interface::parse(c),
                _ => None,
            }
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn addresses_read_and_refused() {
        let a = UsbAddress::parse("usb://0403:6010").unwrap();
        assert_eq!(
            (a.vid, a.pid, a.serial, a.interfaces),
            (0x0403, 0x6010, None, vec![])
        );
        let a = UsbAddress::parse("usb://0403:6014/FT1X2Y3Z").unwrap();
        assert_eq!(a.serial.as_deref(), Some("FT1X2Y3Z"));
        let a = UsbAddress::parse("usb://0403:6010/b").unwrap();
        assert_eq!((a.serial, a.interfaces), (None, vec![Interface::B]));
        let a = UsbAddress::parse("usb://0403:6010/A/A+B").unwrap();
        assert_eq!(a.serial.as_deref(), Some("A"));
        assert_eq!(a.interfaces, vec![Interface::A, Interface::B]);
        assert_eq!(
            a.interfaces_for(2).unwrap(),
            vec![Interface::A, Interface::B]
        );
        assert!(a.interfaces_for(1).is_err());
        for bad in [
            "tcp://x:1",
            "usb://0403",
            "usb://zz:6010",
            "usb://12345:1",
            "usb://0403:6010/S/E",
            "usb://0403:6010/S/A/B",
            "usb://0403:6010/A+A",
            "usb://0403:6010//A",
        ] {
            assert!(UsbAddress::parse(bad).is_err(), "{bad}");
        }
        let a = UsbAddress::parse("usb://0403:6010").unwrap();
        assert_eq!(
            a.interfaces_for(2).unwrap(),
            vec![Interface::A, Interface::B]
        );
        assert!(a.interfaces_for(5).is_err());
    }
}
