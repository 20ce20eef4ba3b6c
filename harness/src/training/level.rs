//! The levels an exercise is drawn at, in our own names, each a class of
//! the fault universe (or a wrong part, or two defects at once).

use crate::campaign::FaultClass;

use super::error::TrainingError;

/// One level of an exercise.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum Level {
    /// A solder bridge between neighbouring pins of one package.
    Bridge,
    /// One receiving pin lifted from its net.
    LiftedPin,
    /// A whole net cut from its drivers.
    CutNet,
    /// A net held at 0 or 1.
    StuckNet,
    /// A fault in the scan chain itself (a broken link, TDO stuck, TMS or
    /// TCK open, TRST* held).
    Chain,
    /// Another part fitted in a scan device's place (its IDCODE differs).
    WrongPart,
    /// A pin of a non-scan part stuck or open, seen only through it.
    BehindLogic,
    /// Two net-level defects at once, on different nets.
    Double,
}

impl Level {
    /// Every level, in the order the help lists them.
    pub const ALL: [Level; 8] = [
        Level::Bridge,
        Level::LiftedPin,
        Level::CutNet,
        Level::StuckNet,
        Level::Chain,
        Level::WrongPart,
        Level::BehindLogic,
        Level::Double,
    ];

    /// The name `--draw` takes.
    pub fn name(self) -> &'static str {
        match self {
            Level::Bridge => "bridge",
            Level::LiftedPin => "lifted-pin",
            Level::CutNet => "cut-net",
            Level::StuckNet => "stuck-net",
            Level::Chain => "chain",
            Level::WrongPart => "wrong-part",
            Level::BehindLogic => "behind-logic",
            Level::Double => "double",
        }
    }

    /// The fault-universe class a level draws from (`None`: wrong part and
    /// double, which are drawn otherwise).
    pub fn class(self) -> Option<FaultClass> {
        match self {
            Level::Bridge => Some(FaultClass::AdjacentShort),
            Level::LiftedPin => Some(FaultClass::OpenPin),
            Level::CutNet => Some(FaultClass::OpenNet),
            Level::StuckNet => Some(FaultClass::Stuck),
            Level::Chain => Some(FaultClass::Chain),
            Level::BehindLogic => Some(FaultClass::ClusterPin),
            Level::WrongPart | Level::Double => None,
        }
    }

    /// Reads a `--draw` specification: level names joined by commas, one
    /// defect each (`double` is two).
    ///
    /// # Errors
    /// An empty specification or an unknown name (the known ones listed).
    pub fn parse_spec(spec: &str) -> Result<Vec<Level>, TrainingError> {
        let mut out = Vec::new();
        for word in spec.split(',').map(str::trim) {
            match Level::ALL.into_iter().find(|l| l.name() == word) {
                Some(l) => out.push(l),
                None => {
                    return Err(TrainingError::Draw {
                        spec: virtual_board::clip(spec),
                        why: format!(
                            "`{}` is not a level; the levels are {}",
                            virtual_board::clip(word),
                            Level::ALL.map(Level::name).join(", ")
                        ),
                    })
                }
            }
        }
        Ok(out)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn specs() {
        assert_eq!(Level::parse_spec("bridge").unwrap(), vec![Level::Bridge]);
        assert_eq!(
            Level::parse_spec("stuck-net, double").unwrap(),
            vec![Level::StuckNet, Level::Double]
        );
        assert!(Level::parse_spec("").is_err());
        assert!(Level::parse_spec("bridge,,").is_err());
        assert!(Level::parse_spec("volcano")
            .unwrap_err()
            .to_string()
            .contains("lifted-pin"));
    }
}
