//! `read_capture_log`: a capture log (JSON Lines, one `ScanRecord` a line) read back and checked.

#![cfg_attr(not(test), deny(clippy::unwrap_used, clippy::panic))]

use std::path::Path;

use virtual_board::Span;

use super::error::{quoted, CaptureError, CaptureErrorKind};
use crate::run::ScanRecord;

/// Longest scan a capture log or a comparison accepts, in bits.
///
/// No board chain comes near it; the limit keeps a damaged `length` from
/// making a reader allocate gigabytes.
pub const MAX_SCAN_BITS: usize = crate::program::MAX_SCAN_BITS;

/// The scan records of a capture log, in file order.
///
/// Each non-blank line is one JSON object in the shape of [`ScanRecord`]
/// (what `boardtwin play --log` writes). Keys the record does not have,
/// such as the `hazards` a log line may carry, are ignored. Lines may end
/// in `\r\n`.
///
/// # Errors
/// A [`CaptureError`] at `path:line:column` for the first line that is not
/// a scan record (serde_json's message, its column placed in the line), or
/// whose fields disagree: `register` other than `IR`/`DR`, a `length` above
/// [`MAX_SCAN_BITS`], `tdi`, `tdo`, `expected` or `mask` not hexadecimal or
/// holding more than `length` bits, or a `failing_bits` entry at or past
/// `length`.
pub fn read_capture_log(text: &str, path: &Path) -> Result<Vec<ScanRecord>, CaptureError> {
    let mut records = Vec::new();
    let mut offset = 0;
    for (n, raw) in text.split('\n').enumerate() {
        let line_start = offset;
        offset += raw.len() + 1;
        let line = raw.strip_suffix('\r').unwrap_or(raw);
        if line.trim().is_empty() {
            continue;
        }
        let at = |column_byte: usize| {
            let column_byte = column_byte.min(line.len());
            let column = line
                .get(..column_byte)
                .map_or(column_byte, |s| s.chars().count());
            Span {
                offset: (line_start + column_byte) as u32,
                len: 0,
                line: n as u32 + 1,
                column: column as u32 + 1,
            }
        };
        let fail = |column_byte: usize, kind: CaptureErrorKind| CaptureError {
            path: path.to_path_buf(),
            span: Some(at(column_byte)),
            kind,
        };
        let record: ScanRecord = serde_json::from_str(line).map_err(|e| {
            let message = e.to_string();
            let suffix = format!(" at line {} column {}", e.line(), e.column());
            let message = message
                .strip_suffix(&suffix)
                .map(str::to_string)
                .unwrap_or(message);
            // serde_json counts columns from 1, in bytes, within `line`.
            fail(
                e.column().saturating_sub(1),
                CaptureErrorKind::Json(message),
            )
        })?;
        check(&record).map_err(|(field, message)| {
            fail(
                value_column(line, field),
                CaptureErrorKind::BadField { field, message },
            )
        })?;
        records.push(record);
    }
    Ok(records)
}

/// [`read_capture_log`] of the file at `path`.
///
/// # Errors
/// As [`read_capture_log`], and an `Io` error when the file cannot be read.
pub fn read_capture_log_file(path: &Path) -> Result<Vec<ScanRecord>, CaptureError> {
    let text = std::fs::read_to_string(path).map_err(|e| CaptureError {
        path: path.to_path_buf(),
        span: None,
        kind: CaptureErrorKind::Io(e.to_string()),
    })?;
    read_capture_log(&text, path)
}

/// The field at fault and what is wrong with it.
fn check(r: &ScanRecord) -> Result<(), (&'static str, String)> {
    if r.register != "IR" && r.register != "DR" {
        return Err((
            "register",
            format!("`{}`: it must be `IR` or `DR`", quoted(&r.register)),
        ));
    }
    if r.length > MAX_SCAN_BITS {
        return Err((
            "length",
            format!(
                "{} bits is longer than any scan this reader accepts ({MAX_SCAN_BITS})",
                r.length
            ),
        ));
    }
    let hex = [
        ("tdi", Some(&r.tdi)),
        ("tdo", Some(&r.tdo)),
        ("expected", r.expected.as_ref()),
        ("mask", r.mask.as_ref()),
    ];
    for (field, value) in hex {
        if let Some(value) = value {
            fits(value, r.length).map_err(|m| (field, m))?;
        }
    }
    if let Some(&bit) = r.failing_bits.iter().find(|&&b| b >= r.length) {
        return Err((
            "failing_bits",
            format!("bit {bit} is outside a scan of {} bits", r.length),
        ));
    }
    Ok(())
}

/// Checks that `hex` (most significant digit first) is hexadecimal and its
/// value fits `length` bits; leading zero digits are allowed.
fn fits(hex: &str, length: usize) -> Result<(), String> {
    if hex.is_empty() {
        return Err("no hex digits".into());
    }
    if let Some(c) = hex.chars().find(|c| !c.is_ascii_hexdigit()) {
        return Err(format!("`{c}` is not a hex digit"));
    }
    let significant = hex.trim_start_matches('0');
    let bits = match significant.chars().next().and_then(|c| c.to_digit(16)) {
        None => 0,
        Some(top) => 4 * (significant.len() - 1) + (32 - top.leading_zeros()) as usize,
    };
    if bits > length {
        return Err(format!(
            "{} holds {bits} bits, more than the scan's length of {length}",
            quoted(hex)
        ));
    }
    Ok(())
}

/// Byte column of the value of `"field"` in a JSON line, or 0 when it is
/// not found (the line's start).
fn value_column(line: &str, field: &str) -> usize {
    let key = format!("\"{field}\"");
    let Some(k) = line.find(&key) else { return 0 };
    let after = k + key.len();
    let rest = line.get(after..).unwrap_or("");
    let colon = rest.find(':').map_or(0, |c| c + 1);
    let value = rest
        .get(colon..)
        .map_or(0, |v| v.len() - v.trim_start().len());
    after + colon + value
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::program::ScanKind;
    use virtual_board::Bits;

    fn line(r: &ScanRecord) -> String {
        serde_json::to_string(r).unwrap()
    }

    fn sample() -> Vec<ScanRecord> {
        let tdi = Bits::from_u64(0b1011, 4);
        let tdo = Bits::from_u64(0b0110, 4);
        vec![
            ScanRecord::new(0, "J1_MAIN", ScanKind::Ir, &tdi, &tdo, None, &Bits::ones(4)),
            ScanRecord::new(
                1,
                "J2_AUX",
                ScanKind::Dr,
                &Bits::from_u64(0x1_2345, 17),
                &Bits::from_u64(0x1_0000, 17),
                Some(&Bits::from_u64(0x0_0001, 17)),
                &Bits::ones(17),
            ),
        ]
    }

    fn read(text: &str) -> Result<Vec<ScanRecord>, CaptureError> {
        read_capture_log(text, Path::new("run.log"))
    }

    fn error(text: &str) -> String {
        read(text).unwrap_err().to_string()
    }

    #[test]
    fn records_come_back_as_written_with_blank_lines_and_crlf() {
        let records = sample();
        let text = format!("\n{}\r\n   \n{}", line(&records[0]), line(&records[1]));
        assert_eq!(read(&text).unwrap(), records);
        assert_eq!(read("").unwrap(), []);
    }

    #[test]
    fn keys_a_record_lacks_are_ignored() {
        let mut value = serde_json::to_value(&sample()[0]).unwrap();
        value["hazards"] = serde_json::json!([{ "kind": "contention" }]);
        let text = serde_json::to_string(&value).unwrap();
        assert_eq!(read(&text).unwrap(), sample()[..1]);
    }

    #[test]
    fn a_json_error_is_placed_on_its_line_and_column() {
        let good = line(&sample()[0]);
        // Line 3: serde_json finds the object short of its fields at the
        // `}`, column 11.
        let text = format!("{good}\n\n{{\"index\":1}}\n");
        let e = read(&text).unwrap_err();
        let span = e.span.unwrap();
        assert_eq!((span.line, span.column), (3, 11));
        assert_eq!(
            e.to_string(),
            "run.log:3:11: not a scan record: missing field `port`"
        );
        assert_eq!(
            error("{\"index\": x}"),
            "run.log:1:11: not a scan record: expected value"
        );
    }

    #[test]
    fn hex_fields_must_fit_the_length() {
        let mut r = sample()[0].clone();
        r.tdo = "1F".into();
        let text = line(&r);
        let column = text.find("\"1F\"").unwrap() + 1;
        assert_eq!(
            error(&text),
            format!("run.log:1:{column}: `tdo`: 1F holds 5 bits, more than the scan's length of 4")
        );
        // Leading zeros are fine; so is a value that uses every bit.
        r.tdo = "000F".into();
        assert_eq!(read(&line(&r)).unwrap(), [r.clone()]);
        r.tdi = "G".into();
        assert!(error(&line(&r)).contains("`tdi`: `G` is not a hex digit"));
        r.tdi = String::new();
        assert!(error(&line(&r)).contains("`tdi`: no hex digits"));
        let mut r = sample()[1].clone();
        r.mask = Some("3FFFF".into());
        assert!(error(&line(&r)).contains("`mask`: 3FFFF holds 18 bits"));
    }

    #[test]
    fn other_fields_are_checked() {
        let mut r = sample()[0].clone();
        r.register = "XR".into();
        assert!(error(&line(&r)).contains("`register`: `XR`: it must be `IR` or `DR`"));
        let mut r = sample()[0].clone();
        r.failing_bits = vec![4];
        assert!(error(&line(&r)).contains("`failing_bits`: bit 4 is outside a scan of 4 bits"));
        let mut r = sample()[0].clone();
        r.length = MAX_SCAN_BITS + 1;
        assert!(error(&line(&r)).contains("`length`: 16777217 bits is longer"));
    }

    #[test]
    fn a_missing_file_is_an_io_error_naming_it() {
        let e = read_capture_log_file(Path::new("/no/such/dir/run.log")).unwrap_err();
        assert_eq!(e.span, None);
        assert!(e
            .to_string()
            .starts_with("/no/such/dir/run.log: cannot read the file"));
    }
}
