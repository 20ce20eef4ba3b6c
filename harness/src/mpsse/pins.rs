//! The adapter's GPIO pins the user maps: TRST* and a target-power sense.
//!
//! ADBUS0–3 carry TCK, TDI, TDO and TMS; ADBUS4–7 and ACBUS0–7 are free
//! GPIO (FTDI AN_108, from memory; putting TRST* and a power sense there
//! is common practice).

use std::fmt;

use super::address_error::PinError;

/// One GPIO pin of the adapter.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct GpioPin {
    /// True for the high byte (ACBUS), false for the low byte (ADBUS).
    pub high: bool,
    /// Bit 0–7 of that byte.
    pub bit: u8,
}

impl GpioPin {
    /// The pin's mask in its byte.
    pub fn mask(self) -> u8 {
        1 << self.bit
    }

    /// Reads `ADBUS4`…`ADBUS7` or `ACBUS0`…`ACBUS7` (any case).
    ///
    /// # Errors
    /// [`PinError`]: another name, or one of the four JTAG pins.
    pub fn parse(text: &str) -> Result<GpioPin, PinError> {
        let t = text.trim().to_ascii_uppercase();
        let (high, rest) = if let Some(r) = t.strip_prefix("ACBUS") {
            (true, r)
        } else if let Some(r) = t.strip_prefix("ADBUS") {
            (false, r)
        } else {
            return Err(PinError::Name(text.to_string()));
        };
        let bit: u8 = match rest.parse() {
            Ok(b) if b < 8 => b,
            _ => return Err(PinError::Bit(text.to_string())),
        };
        if !high && bit < 4 {
            return Err(PinError::Jtag(text.to_string()));
        }
        Ok(GpioPin { high, bit })
    }
}

impl fmt::Display for GpioPin {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let bank = if self.high { "ACBUS" } else { "ADBUS" };
        write!(f, "{bank}{}", self.bit)
    }
}

/// Which GPIO pins do what on one adapter channel.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct PinMap {
    /// TRST* (driven low to assert, high to release), if wired.
    pub trst: Option<GpioPin>,
    /// Target-power sense (an input, high while the target is powered), if
    /// wired.
    pub power: Option<GpioPin>,
}

impl PinMap {
    /// A map, refusing one pin for both jobs.
    ///
    /// # Errors
    /// [`PinError::Shared`]: TRST* and the power sense on the same pin.
    pub fn new(trst: Option<GpioPin>, power: Option<GpioPin>) -> Result<PinMap, PinError> {
        if let (Some(t), Some(p)) = (trst, power) {
            if t == p {
                return Err(PinError::Shared(t));
            }
        }
        Ok(PinMap { trst, power })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn pin_names_read_and_refused() {
        assert_eq!(
            GpioPin::parse("adbus4"),
            Ok(GpioPin {
                high: false,
                bit: 4
            })
        );
        assert_eq!(GpioPin::parse("ACBUS7").unwrap().to_string(), "ACBUS7");
        assert_eq!(
            GpioPin::parse("ADBUS3"),
            Err(PinError::Jtag("ADBUS3".into()))
        );
        assert!(GpioPin::parse("ACBUS8").is_err());
        assert!(GpioPin::parse("PB4").is_err());
        let p = GpioPin::parse("ACBUS1").ok();
        assert_eq!(
            PinMap::new(p, p).unwrap_err().to_string(),
            "TRST* and the power sense are both on ACBUS1"
        );
    }
}
