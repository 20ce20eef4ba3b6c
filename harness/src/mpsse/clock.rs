//! The TCK divisor for a frequency: TCK = base / ((1 + divisor) × 2), with
//! a 60 MHz base (divide-by-5 off) or a 12 MHz base (divide-by-5 on), and a
//! 16-bit divisor (FTDI AN_108, "Set TCK/SK Divisor" and the divide-by-5
//! commands, from memory).

/// The base clock with divide-by-5 off (FT232H, FT2232H, FT4232H).
pub const BASE_FAST_HZ: f64 = 60e6;
/// The base clock with divide-by-5 on.
pub const BASE_SLOW_HZ: f64 = 12e6;
/// The fastest TCK: 60 MHz / 2.
pub const FASTEST_HZ: f64 = BASE_FAST_HZ / 2.0;
/// The slowest TCK: 12 MHz / (65,536 × 2), about 91.55 Hz.
pub const SLOWEST_HZ: f64 = BASE_SLOW_HZ / (65_536.0 * 2.0);

/// How the chip's clock is set for one frequency.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct TckSetting {
    /// True for the 12 MHz base (divide-by-5 on).
    pub divide_by_5: bool,
    /// The 16-bit divisor.
    pub divisor: u16,
    /// The TCK frequency this gives, Hz.
    pub hz: f64,
}

/// A frequency the chip cannot make.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum ClockError {
    /// Not a positive, finite frequency.
    #[error("{0} Hz is not a TCK frequency")]
    NotAFrequency(f64),
    /// Faster than the chip's fastest TCK.
    #[error("the adapter cannot clock TCK at {asked} Hz: the fastest it can is {nearest} Hz")]
    TooFast {
        /// What was asked.
        asked: f64,
        /// The nearest it can.
        nearest: f64,
    },
    /// Slower than the chip's slowest TCK.
    #[error("the adapter cannot clock TCK at {asked} Hz: the slowest it can is {nearest:.2} Hz")]
    TooSlow {
        /// What was asked.
        asked: f64,
        /// The nearest it can.
        nearest: f64,
    },
}

impl TckSetting {
    /// The fastest setting at or below `hz` (a program's FREQUENCY is the
    /// highest the test may run at, SVF Rev E §4.13 FREQUENCY, from
    /// memory), on the 60 MHz base where it reaches, else the 12 MHz base.
    ///
    /// # Errors
    /// Above 30 MHz, below about 91.55 Hz, or not a frequency: each
    /// naming the nearest the chip can.
    pub fn for_hz(hz: f64) -> Result<TckSetting, ClockError> {
        if !(hz.is_finite() && hz > 0.0) {
            return Err(ClockError::NotAFrequency(hz));
        }
        if hz > FASTEST_HZ * (1.0 + 1e-12) {
            return Err(ClockError::TooFast {
                asked: hz,
                nearest: FASTEST_HZ,
            });
        }
        for (divide_by_5, base) in [(false, BASE_FAST_HZ), (true, BASE_SLOW_HZ)] {
            // base / (2 (1 + d)) <= hz  ⇔  d >= base / (2 hz) − 1; a ratio a
            // hair over a whole number from rounding is that whole number.
            let ratio = base / (2.0 * hz) - 1.0;
            let d = (ratio - 1e-9 * ratio.abs().max(1.0)).ceil().max(0.0);
            if d <= f64::from(u16::MAX) {
                let divisor = d as u16;
                return Ok(TckSetting {
                    divide_by_5,
                    divisor,
                    hz: Self::hz_of(divide_by_5, divisor),
                });
            }
        }
        Err(ClockError::TooSlow {
            asked: hz,
            nearest: SLOWEST_HZ,
        })
    }

    /// The TCK frequency of a base and divisor.
    pub fn hz_of(divide_by_5: bool, divisor: u16) -> f64 {
        let base = if divide_by_5 {
            BASE_SLOW_HZ
        } else {
            BASE_FAST_HZ
        };
        base / ((1.0 + f64::from(divisor)) * 2.0)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    // Values worked by hand from TCK = base / ((1 + divisor) × 2) (FTDI
    // AN_108, from memory).
    #[test]
    fn divisors_worked_by_hand() {
        let s = TckSetting::for_hz(30e6).unwrap();
        assert_eq!((s.divide_by_5, s.divisor, s.hz), (false, 0, 30e6));
        let s = TckSetting::for_hz(1e6).unwrap();
        assert_eq!((s.divide_by_5, s.divisor, s.hz), (false, 29, 1e6));
        // 7 MHz is not reachable: 30 / (1 + 4) = 6 MHz is the fastest below.
        let s = TckSetting::for_hz(7e6).unwrap();
        assert_eq!((s.divisor, s.hz), (4, 6e6));
        // 500 Hz: 60 MHz / 2 / 500 − 1 = 59,999 fits 16 bits.
        let s = TckSetting::for_hz(500.0).unwrap();
        assert_eq!((s.divide_by_5, s.divisor), (false, 59_999));
        // 400 Hz: 30 MHz / 400 − 1 = 74,999 does not fit; the 12 MHz base:
        // 6 MHz / 400 − 1 = 14,999.
        let s = TckSetting::for_hz(400.0).unwrap();
        assert_eq!((s.divide_by_5, s.divisor, s.hz), (true, 14_999, 400.0));
    }

    #[test]
    fn what_the_chip_cannot_do_is_refused_naming_the_nearest() {
        assert_eq!(
            TckSetting::for_hz(40e6),
            Err(ClockError::TooFast {
                asked: 40e6,
                nearest: 30e6
            })
        );
        let e = TckSetting::for_hz(50.0).unwrap_err();
        assert_eq!(
            e,
            ClockError::TooSlow {
                asked: 50.0,
                nearest: 12e6 / 131_072.0
            }
        );
        assert!(e.to_string().contains("91.55 Hz"), "{e}");
        assert!(TckSetting::for_hz(0.0).is_err());
        assert!(TckSetting::for_hz(f64::NAN).is_err());
        assert!(TckSetting::for_hz(-1.0).is_err());
    }
}
