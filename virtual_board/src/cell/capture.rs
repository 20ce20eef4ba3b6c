//! The capture table (`capture_table.txt`) as a lookup.

use std::collections::HashMap;
use std::sync::OnceLock;

use crate::model::device::{CellFunction, CellType};

/// The text of the capture table, compiled in.
pub const CAPTURE_TABLE: &str = include_str!("capture_table.txt");

/// What Capture-DR loads into a cell, in the standard package's words.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum CaptureSource {
    /// The cell's parallel input: the pin for input cells, the system logic for output and control cells.
    Pi,
    /// The cell's parallel output: for self-monitoring cells the pad as read back.
    Po,
    /// The cell's own update latch.
    Upd,
    /// The capture stage keeps its value.
    Cap,
    /// Undefined: the model loads an arbitrary (seeded) value.
    X,
    /// Constant 0.
    Zero,
    /// Constant 1.
    One,
}

/// The instruction classes of the capture table.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum InstructionClass {
    /// EXTEST (and the 1149.6 EXTEST_PULSE / EXTEST_TRAIN).
    Extest,
    /// SAMPLE, PRELOAD and SAMPLE/PRELOAD.
    Sample,
    /// INTEST and RUNBIST.
    Intest,
}

/// A cell function as the capture table splits it (BIDIR is two rows).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum CaptureFunction {
    /// Any function but BIDIR.
    Plain(CellFunction),
    /// A BIDIR cell whose driver is disabled.
    BidirIn,
    /// A BIDIR cell whose driver is enabled.
    BidirOut,
}

type Key = (u8, CaptureFunction, InstructionClass);

fn table() -> &'static HashMap<Key, CaptureSource> {
    static TABLE: OnceLock<HashMap<Key, CaptureSource>> = OnceLock::new();
    TABLE.get_or_init(|| parse(CAPTURE_TABLE).unwrap_or_default())
}

/// The source of (cell, function, class), or `None` when the table has no
/// such row: the cell does not support that pair, or the cell type is not
/// one the table knows.
pub fn capture_source(
    cell: &CellType,
    function: CaptureFunction,
    class: InstructionClass,
) -> Option<CaptureSource> {
    match cell {
        CellType::Bc(n) => table().get(&(*n, function, class)).copied(),
        CellType::Other(_) => None,
    }
}

fn parse_function(text: &str) -> Option<CaptureFunction> {
    Some(match text {
        "BIDIR_IN" => CaptureFunction::BidirIn,
        "BIDIR_OUT" => CaptureFunction::BidirOut,
        "INPUT" => CaptureFunction::Plain(CellFunction::Input),
        "OUTPUT2" => CaptureFunction::Plain(CellFunction::Output2),
        "OUTPUT3" => CaptureFunction::Plain(CellFunction::Output3),
        "CONTROL" => CaptureFunction::Plain(CellFunction::Control),
        "CONTROLR" => CaptureFunction::Plain(CellFunction::Controlr),
        "CLOCK" => CaptureFunction::Plain(CellFunction::Clock),
        "OBSERVE_ONLY" => CaptureFunction::Plain(CellFunction::ObserveOnly),
        "INTERNAL" => CaptureFunction::Plain(CellFunction::Internal),
        _ => return None,
    })
}

fn parse_source(text: &str) -> Option<Option<CaptureSource>> {
    Some(Some(match text {
        "PI" => CaptureSource::Pi,
        "PO" => CaptureSource::Po,
        "UPD" => CaptureSource::Upd,
        "CAP" => CaptureSource::Cap,
        "X" => CaptureSource::X,
        "ZERO" => CaptureSource::Zero,
        "ONE" => CaptureSource::One,
        "-" => return Some(None),
        _ => return None,
    }))
}

/// Parses the table text; `Err` names the first bad line (1-based).
fn parse(text: &str) -> Result<HashMap<Key, CaptureSource>, usize> {
    let mut map = HashMap::new();
    for (i, line) in text.lines().enumerate() {
        let line = line.split('#').next().unwrap_or("").trim();
        if line.is_empty() {
            continue;
        }
        let f: Vec<&str> = line.split_whitespace().collect();
        let [cell, function, extest, sample, intest] = f.as_slice() else {
            return Err(i + 1);
        };
        let n = cell
            .strip_prefix("BC_")
            .and_then(|n| n.parse::<u8>().ok())
            .ok_or(i + 1)?;
        let function = parse_function(function).ok_or(i + 1)?;
        for (class, src) in [
            (InstructionClass::Extest, extest),
            (InstructionClass::Sample, sample),
            (InstructionClass::Intest, intest),
        ] {
            if let Some(s) = parse_source(src).ok_or(i + 1)? {
                if map.insert((n, function, class), s).is_some() {
                    return Err(i + 1);
                }
            }
        }
    }
    Ok(map)
}

#[cfg(test)]
mod tests {
    use super::*;
    use CaptureSource::*;
    use InstructionClass::*;

    #[test]
    fn the_compiled_table_parses_completely() {
        let map = parse(CAPTURE_TABLE).expect("capture_table.txt must parse");
        assert_eq!(map.len(), table().len());
        assert!(map.len() > 90, "{} rows", map.len());
    }

    // IEEE 1149.1-2001 Annex B, STD_1149_1_2001 (from memory):
    // BC_1 captures PI in every row, so an output cell in EXTEST captures the
    // system logic's data, not the pin.
    #[test]
    fn bc_1_output_captures_its_parallel_input() {
        let f = CaptureFunction::Plain(CellFunction::Output3);
        assert_eq!(capture_source(&CellType::Bc(1), f, Extest), Some(Pi));
        assert_eq!(
            capture_source(&CellType::Bc(1), CaptureFunction::BidirIn, Extest),
            None
        );
    }

    // Same source: BC_7 BIDIR_OUT captures PO (the pad read back) in EXTEST.
    #[test]
    fn bc_7_bidir_out_reads_the_pad_in_extest() {
        assert_eq!(
            capture_source(&CellType::Bc(7), CaptureFunction::BidirOut, Extest),
            Some(Po)
        );
        assert_eq!(
            capture_source(&CellType::Bc(7), CaptureFunction::BidirIn, Extest),
            Some(Pi)
        );
        assert_eq!(
            capture_source(
                &CellType::Bc(2),
                CaptureFunction::Plain(CellFunction::Output3),
                Extest
            ),
            Some(Upd)
        );
        assert_eq!(
            capture_source(
                &CellType::Other("AC_1".into()),
                CaptureFunction::BidirIn,
                Extest
            ),
            None
        );
    }

    #[test]
    fn bad_rows_are_reported_with_their_line() {
        assert_eq!(parse("BC_1 INPUT PI PI\n").unwrap_err(), 1);
        assert_eq!(parse("# c\nBC_1 INPUT PI PI QQ\n").unwrap_err(), 2);
        assert_eq!(
            parse("BC_1 INPUT PI PI PI\nBC_1 INPUT PI PI PI\n").unwrap_err(),
            2
        );
    }
}
