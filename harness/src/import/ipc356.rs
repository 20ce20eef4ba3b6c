//! The IPC-D-356A netlist (IPC's netlist for bare-board electrical test).
//!
//! What this reader takes from the published description of the format:
//! every record is one line of at most 80 columns; columns 1–3 hold the
//! operation code (`317` a through-hole test point, `327` a surface
//! (SMD) test point, `367` a non-plated tooling hole, `999` the end of the
//! file); a `C` in column 1 starts a comment and a `P` a parameter record
//! (`P  JOB`, `P  UNITS CUST 0`, `P  IMAGE PRIMARY` …); the net name is in
//! columns 4–17, and a longer name is replaced there by an alias that a
//! `P  NNAME…` record declares with the real name.
//!
//! From memory, not checked against the text of the standard, so read
//! leniently: the designator in columns 21–26, `-` in column 27 and the pin
//! in 28–31 (when column 27 is not `-`, the first `designator-pin` word
//! after column 20 is taken instead); `N/C` as the net name of an
//! unconnected pad; the pad centre as `X` and `Y` each followed by a sign
//! and digits (the first such pair after the pin; a later `X…Y…` without a
//! sign is the feature size); `UNITS CUST 0` (and `CUST`, `CUST 2`) meaning
//! 0.0001 inch and `CUST 1` (and `SI`) 0.001 mm. Records of other
//! operation codes (conductor and outline records, continuation records)
//! and lines after `999` are read and skipped, with one warning per kind.

#![cfg_attr(not(test), deny(clippy::unwrap_used, clippy::panic))]

use std::collections::{BTreeMap, HashMap};
use std::path::Path;

use super::netlist::{ImportError, ImportErrorKind, Netlist, NetlistPin, Notice, Record};

/// The net name of an unconnected pad (from memory).
pub const NO_CONNECTION: &str = "N/C";

/// Reads an IPC-D-356A netlist from text (`path` only names the file).
///
/// # Errors
/// A test record without `designator-pin`, an empty net name, a net alias
/// never declared, a pin on two nets, no test records at all — each placed.
pub fn read_ipc356(text: &str, path: &Path) -> Result<Netlist, ImportError> {
    let mut aliases: HashMap<String, String> = HashMap::new();
    // Records whose net field is an alias, resolved at the end: (record
    // index, alias, line).
    let mut pending: Vec<(usize, String, u32)> = Vec::new();
    let mut records: Vec<Record> = Vec::new();
    let mut skipped: BTreeMap<String, (u32, usize)> = BTreeMap::new();
    let mut warnings: Vec<Notice> = Vec::new();
    let mut scale = 0.0001 * 25.4; // 0.0001 inch in mm: UNITS CUST 0 (from memory)
    let mut unconnected = 0usize;
    let mut ended_at: Option<u32> = None;
    let mut buf: Vec<char> = Vec::with_capacity(96);
    let notice = |line: u32, column: u32, text: String| Notice {
        path: path.to_path_buf(),
        line,
        column,
        text,
    };
    for (i, raw) in text.lines().enumerate() {
        let ln = i as u32 + 1;
        if ended_at.is_some() {
            if !raw.trim().is_empty() {
                warnings.push(notice(
                    ln,
                    1,
                    "text after the `999` end record is ignored".into(),
                ));
                break;
            }
            continue;
        }
        buf.clear();
        buf.extend(raw.chars());
        let line: &[char] = &buf;
        let Some(&first) = line.first() else { continue };
        match first {
            'C' | 'c' => continue,
            'P' | 'p' => {
                let body: String = line[1..].iter().collect();
                let mut words = body.split_whitespace();
                let key = words.next().unwrap_or("").to_ascii_uppercase();
                if key.starts_with("NNAME") {
                    let name = words.collect::<Vec<_>>().join(" ");
                    if name.is_empty() {
                        return Err(ImportError::at(
                            path,
                            ln,
                            4,
                            ImportErrorKind::Empty("long net name"),
                        ));
                    }
                    aliases.insert(key, name);
                } else if key == "UNITS" {
                    let rest: Vec<String> = words.map(|w| w.to_ascii_uppercase()).collect();
                    scale = match rest.iter().map(String::as_str).collect::<Vec<_>>()[..] {
                        ["CUST", "1"] | ["SI"] | ["SI", ..] => 0.001,
                        ["CUST"] | ["CUST", "0"] | ["CUST", "2"] | ["ENGLISH", ..] => 0.0001 * 25.4,
                        _ => {
                            warnings.push(notice(
                                ln,
                                4,
                                format!(
                                    "units `{}` unknown: coordinates read as 0.0001 inch",
                                    super::csv::clip(&rest.join(" "))
                                ),
                            ));
                            0.0001 * 25.4
                        }
                    };
                }
                continue;
            }
            _ => {}
        }
        let op: String = line.iter().take(3).collect();
        match op.as_str() {
            "999" => {
                ended_at = Some(ln);
                continue;
            }
            "317" | "327" | "367" => {}
            _ => {
                if !raw.trim().is_empty() {
                    let e = skipped.entry(clip_op(&op)).or_insert((ln, 0));
                    e.1 += 1;
                }
                continue;
            }
        }
        // The net name: the first word of columns 4–17.
        let field: String = line.iter().skip(3).take(14).collect();
        let lead = field.chars().take_while(|c| *c == ' ').count();
        let net: String = field.split_whitespace().next().unwrap_or("").to_string();
        let net_end = 3 + lead + net.chars().count();
        if net.is_empty() {
            return Err(ImportError::at(
                path,
                ln,
                4,
                ImportErrorKind::Empty("net name (columns 4–17)"),
            ));
        }
        let (designator, pin, column, after) = pin_field(line, net_end)
            .ok_or_else(|| ImportError::at(path, ln, 21, ImportErrorKind::NoPinField))?;
        if net.eq_ignore_ascii_case(NO_CONNECTION) {
            unconnected += 1;
            continue;
        }
        let xy = coordinates(&line[after.min(line.len())..])
            .map(|(x, y)| (x as f64 * scale, y as f64 * scale));
        if net.to_ascii_uppercase().starts_with("NNAME") {
            pending.push((records.len(), net.to_ascii_uppercase(), ln));
        }
        records.push(Record {
            net,
            pin: NetlistPin {
                designator,
                pin,
                xy,
                line: ln,
                column,
            },
        });
    }
    for (r, alias, ln) in pending {
        let name = aliases.get(&alias).ok_or_else(|| {
            ImportError::at(path, ln, 4, ImportErrorKind::UnknownAlias(alias.clone()))
        })?;
        records[r].net = name.clone();
    }
    for (op, (first, count)) in skipped {
        warnings.push(notice(
            first,
            1,
            format!(
                "{} of operation code `{op}` read and skipped (not a test point)",
                crate::count(count, "record")
            ),
        ));
    }
    if unconnected > 0 {
        warnings.push(notice(
            0,
            0,
            format!(
                "{} on net {NO_CONNECTION} (no connection) left out",
                crate::count(unconnected, "pad")
            ),
        ));
    }
    if ended_at.is_none() {
        warnings.push(notice(
            0,
            0,
            "no `999` end record: the file may be cut short".into(),
        ));
    }
    Netlist::from_records(path, records, warnings)
}

fn clip_op(op: &str) -> String {
    op.chars().filter(|c| !c.is_control()).collect()
}

/// The designator, the pin, the designator's 1-based column and the index
/// just after the pin: the fixed columns 21–26 `-` 28–31 when column 27 is
/// `-`, else the first `designator-pin` word after the net name.
fn pin_field(line: &[char], net_end: usize) -> Option<(String, String, u32, usize)> {
    if line.get(26) == Some(&'-') {
        let des: String = line
            .get(20..26)?
            .iter()
            .collect::<String>()
            .trim()
            .to_string();
        let end = line.len().min(31);
        let pin: String = line
            .get(27..end)?
            .iter()
            .collect::<String>()
            .trim()
            .to_string();
        if !des.is_empty() && !pin.is_empty() && !des.contains(' ') && !pin.contains(' ') {
            let col = 21 + line[20..26].iter().take_while(|c| **c == ' ').count() as u32;
            return Some((des, pin, col, end));
        }
    }
    // Lenient: a word with a `-` that is neither first nor last.
    let mut i = net_end.min(line.len());
    while i < line.len() {
        while i < line.len() && line[i] == ' ' {
            i += 1;
        }
        let start = i;
        while i < line.len() && line[i] != ' ' {
            i += 1;
        }
        let word = &line[start..i];
        if let Some(dash) = word.iter().position(|&c| c == '-') {
            if dash > 0 && dash + 1 < word.len() {
                let des: String = word[..dash].iter().collect();
                // The pin is the rest of the word.
                let rest = &word[dash + 1..];
                let pin_len = rest.len();
                let pin: String = rest.iter().collect();
                return Some((des, pin, start as u32 + 1, start + dash + 1 + pin_len));
            }
        }
    }
    None
}

/// The first `X<sign>digits` followed (after optional spaces) by
/// `Y<sign>digits`; a signless pair is a feature size, not a centre.
fn coordinates(rest: &[char]) -> Option<(i64, i64)> {
    let mut i = 0;
    while i < rest.len() {
        if rest[i] == 'X' {
            if let Some((x, next)) = signed(rest, i + 1) {
                let mut j = next;
                while j < rest.len() && rest[j] == ' ' {
                    j += 1;
                }
                if rest.get(j) == Some(&'Y') {
                    if let Some((y, _)) = signed(rest, j + 1) {
                        return Some((x, y));
                    }
                }
            }
        }
        i += 1;
    }
    None
}

/// A sign, then up to nine digits (spaces between sign and digits allowed).
fn signed(s: &[char], mut i: usize) -> Option<(i64, usize)> {
    let negative = match s.get(i) {
        Some('+') => false,
        Some('-') => true,
        _ => return None,
    };
    i += 1;
    while s.get(i) == Some(&' ') {
        i += 1;
    }
    let start = i;
    let mut v: i64 = 0;
    while let Some(d) = s.get(i).and_then(|c| c.to_digit(10)) {
        if i - start >= 9 {
            return None;
        }
        v = v * 10 + i64::from(d);
        i += 1;
    }
    (i > start).then_some((if negative { -v } else { v }, i))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn read(text: &str) -> Result<Netlist, ImportError> {
        read_ipc356(text, Path::new("n.ipc"))
    }

    #[test]
    fn fixed_columns_alias_and_end() {
        // Column rulers: 1-3 op, 4-17 net, 21-26 designator, 27 '-', 28-31 pin.
        let text = "\
C  a comment
P  JOB   TEST
P  UNITS CUST 1
P  NNAME1     A_VERY_LONG_NET_NAME_INDEED
317GND              U1    -7    D0320PA00X+001000Y-002000X0600Y0600R000 S0
327NNAME1           R12   -2          A01X+000100Y+000200X0300Y0200R090 S1
999
";
        let n = read(text).unwrap();
        assert_eq!(n.nets[0].name, "GND");
        assert_eq!(n.nets[0].pins[0].designator, "U1");
        assert_eq!(n.nets[0].pins[0].pin, "7");
        assert_eq!(n.nets[0].pins[0].column, 21);
        // CUST 1: 0.001 mm, so X+001000 is 1 mm.
        assert_eq!(n.nets[0].pins[0].xy, Some((1.0, -2.0)));
        assert_eq!(n.nets[1].name, "A_VERY_LONG_NET_NAME_INDEED");
        assert_eq!(n.nets[1].pins[0].pin, "2");
        assert!(n.warnings.is_empty(), "{:?}", n.warnings);
    }

    #[test]
    fn lenient_layout_and_skipped_records() {
        let text = "317NET1 U12-A3 X+10 Y+20\n378NET1 trace\n999\nrest\n";
        let n = read(text).unwrap();
        assert_eq!(n.nets[0].pins[0].designator, "U12");
        assert_eq!(n.nets[0].pins[0].pin, "A3");
        assert_eq!(n.warnings.len(), 2, "{:?}", n.warnings);
    }

    #[test]
    fn errors_are_placed() {
        let e = read("317                 U1    -1\n").unwrap_err();
        assert_eq!(
            e.to_string(),
            "n.ipc:1:4: the net name (columns 4–17) is empty"
        );
        let e = read("317NET\n").unwrap_err();
        assert_eq!(
            e.to_string(),
            "n.ipc:1:21: a test record needs `designator-pin` after the net name (columns 21–31)"
        );
        let e = read("317NNAME7           U1    -1\n").unwrap_err();
        assert_eq!(
            e.to_string(),
            "n.ipc:1:4: net alias NNAME7 is used but no `P  NNAME` record declares it"
        );
        let e = read("C only\n999\n").unwrap_err();
        assert_eq!(e.to_string(), "n.ipc:0:0: the netlist holds no pin records");
    }
}
