//! The plain CSV netlist: a header line naming the columns `net`,
//! `designator` and `pin` (any order, any case; optional `x` and `y` in
//! millimetres; an optional `part` giving the part number of the record's
//! designator; other columns are read and ignored), then one pin per line.
//! Fields may be quoted with `"` (a `""` inside is one quote, common CSV
//! practice as RFC 4180 writes it); blank lines are skipped.

#![cfg_attr(not(test), deny(clippy::unwrap_used, clippy::panic))]

use std::path::Path;

use super::netlist::{ImportError, ImportErrorKind, Netlist, NetlistPin, Record};

/// Reads a CSV netlist from text (`path` only names the file in errors).
///
/// # Errors
/// A missing header column, a record with too few fields, an empty net,
/// designator or pin, a bad coordinate, an unclosed quote, a pin on two
/// nets — each at its line and column.
pub fn read_csv(text: &str, path: &Path) -> Result<Netlist, ImportError> {
    let mut lines = text
        .lines()
        .enumerate()
        .filter(|(_, l)| !l.trim().is_empty());
    let Some((hline, header)) = lines.next() else {
        return Err(ImportError::at(path, 0, 0, ImportErrorKind::NoRecords));
    };
    let hline = hline as u32 + 1;
    let names: Vec<String> = split(header, path, hline)?
        .into_iter()
        .map(|(f, _)| f.trim().to_ascii_lowercase())
        .collect();
    let col = |name: &'static str| {
        names
            .iter()
            .position(|n| n == name)
            .ok_or_else(|| ImportError::at(path, hline, 1, ImportErrorKind::MissingColumn(name)))
    };
    let (net_c, des_c, pin_c) = (col("net")?, col("designator")?, col("pin")?);
    let x_c = names.iter().position(|n| n == "x");
    let y_c = names.iter().position(|n| n == "y");
    let part_c = names.iter().position(|n| n == "part");
    // Designator → (part number, line) from the `part` column.
    let mut part_numbers: std::collections::BTreeMap<String, (String, u32)> =
        std::collections::BTreeMap::new();
    let wanted = [Some(net_c), Some(des_c), Some(pin_c), x_c, y_c]
        .into_iter()
        .flatten()
        .max()
        .unwrap_or(0)
        + 1;
    let mut records = Vec::new();
    for (i, line) in lines {
        let ln = i as u32 + 1;
        let fields = split(line, path, ln)?;
        if fields.len() < wanted {
            return Err(ImportError::at(
                path,
                ln,
                1,
                ImportErrorKind::FieldCount {
                    found: fields.len(),
                    wanted: names.len(),
                },
            ));
        }
        let field = |c: usize, what: &'static str| -> Result<(String, u32), ImportError> {
            let (f, column) = &fields[c];
            let t = f.trim();
            if t.is_empty() {
                return Err(ImportError::at(
                    path,
                    ln,
                    *column,
                    ImportErrorKind::Empty(what),
                ));
            }
            Ok((t.to_string(), *column))
        };
        let (net, _) = field(net_c, "net name")?;
        let (designator, column) = field(des_c, "designator")?;
        let (pin, _) = field(pin_c, "pin")?;
        let number = |c: Option<usize>| -> Result<Option<f64>, ImportError> {
            let Some(c) = c else { return Ok(None) };
            let (f, column) = &fields[c];
            let t = f.trim();
            if t.is_empty() {
                return Ok(None);
            }
            t.parse::<f64>()
                .ok()
                .filter(|v| v.is_finite())
                .map(Some)
                .ok_or_else(|| {
                    ImportError::at(path, ln, *column, ImportErrorKind::BadNumber(clip(t)))
                })
        };
        let xy = match (number(x_c)?, number(y_c)?) {
            (Some(x), Some(y)) => Some((x, y)),
            _ => None,
        };
        if let Some((f, pcol)) = part_c.and_then(|c| fields.get(c)) {
            let part = f.trim();
            if !part.is_empty() {
                match part_numbers.get(&designator) {
                    Some((first, first_line)) if first != part => {
                        return Err(ImportError::at(
                            path,
                            ln,
                            *pcol,
                            ImportErrorKind::Other(format!(
                                "{designator} is part {} here and part {} at line {first_line}",
                                clip(part),
                                clip(first)
                            )),
                        ))
                    }
                    Some(_) => {}
                    None => {
                        part_numbers.insert(designator.clone(), (part.to_string(), ln));
                    }
                }
            }
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
    let mut netlist = Netlist::from_records(path, records, Vec::new())?;
    netlist.part_numbers = part_numbers;
    Ok(netlist)
}

/// At most 40 characters of input, for messages.
pub(crate) fn clip(s: &str) -> String {
    let mut out: String = s.chars().take(40).collect();
    if s.chars().count() > 40 {
        out.push('…');
    }
    out
}

/// Splits one CSV line into fields, each with its 1-based column.
fn split(line: &str, path: &Path, ln: u32) -> Result<Vec<(String, u32)>, ImportError> {
    let chars: Vec<char> = line.chars().collect();
    let mut fields = Vec::new();
    let mut field = String::new();
    let mut start = 1u32;
    let mut quoted_at: Option<u32> = None;
    let mut i = 0;
    while i < chars.len() {
        let (c, column) = (chars[i], i as u32 + 1);
        if quoted_at.is_some() {
            if c == '"' {
                if chars.get(i + 1) == Some(&'"') {
                    field.push('"');
                    i += 1;
                } else {
                    quoted_at = None;
                }
            } else {
                field.push(c);
            }
        } else if c == '"' && field.trim().is_empty() {
            field.clear();
            quoted_at = Some(column);
        } else if c == ',' {
            fields.push((std::mem::take(&mut field), start));
            start = column + 1;
        } else {
            field.push(c);
        }
        i += 1;
    }
    if let Some(at) = quoted_at {
        return Err(ImportError::at(path, ln, at, ImportErrorKind::OpenQuote));
    }
    fields.push((field, start));
    Ok(fields)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn read(text: &str) -> Result<Netlist, ImportError> {
        read_csv(text, Path::new("n.csv"))
    }

    #[test]
    fn reads_nets_in_order_with_places() {
        let n = read("net,designator,pin\nA,U1,3\nB,U2,A4\nA,U2,5\n").unwrap();
        assert_eq!(n.nets.len(), 2);
        assert_eq!(n.nets[0].name, "A");
        assert_eq!(n.nets[0].pins.len(), 2);
        assert_eq!((n.nets[0].pins[1].line, n.nets[0].pins[1].column), (4, 3));
        assert_eq!(n.nets[1].pins[0].pin, "A4");
    }

    #[test]
    fn columns_in_any_order_quotes_and_coordinates() {
        let n =
            read("Pin, Designator ,NET,x,y,part\n\"1\",R1,\"A,\"\"B\"\"\",1.5,-2,RES\n").unwrap();
        assert_eq!(n.nets[0].name, "A,\"B\"");
        assert_eq!(n.nets[0].pins[0].xy, Some((1.5, -2.0)));
        assert_eq!(n.part_numbers["R1"], ("RES".to_string(), 2));
    }

    #[test]
    fn a_designator_with_two_part_numbers_is_an_error() {
        let n = read("net,designator,pin,part\nA,U1,1,QB244\nB,U1,2,\nC,U1,3,QB244\n").unwrap();
        assert_eq!(n.part_numbers["U1"], ("QB244".to_string(), 2));
        let e = read("net,designator,pin,part\nA,U1,1,QB244\nB,U1,2,QB245\n").unwrap_err();
        assert_eq!(
            e.to_string(),
            "n.csv:3:8: U1 is part QB245 here and part QB244 at line 2"
        );
    }

    #[test]
    fn errors_are_placed() {
        let e = read("net,pin\n").unwrap_err();
        assert_eq!(
            e.to_string(),
            "n.csv:1:1: the header has no `designator` column (it needs net, designator and pin)"
        );
        let e = read("net,designator,pin\nA,U1\n").unwrap_err();
        assert_eq!(e.to_string(), "n.csv:2:1: 2 fields, but the header has 3");
        let e = read("net,designator,pin\nA, ,3\n").unwrap_err();
        assert_eq!(e.to_string(), "n.csv:2:3: the designator is empty");
        let e = read("net,designator,pin\n\"A,U1,3\n").unwrap_err();
        assert_eq!(
            e.to_string(),
            "n.csv:2:1: a quoted field is not closed on this line"
        );
        let e = read("net,designator,pin,x,y\nA,U1,3,1e,2\n").unwrap_err();
        assert_eq!(e.to_string(), "n.csv:2:8: `1e` is not a coordinate");
        let e = read("net,designator,pin\nA,U1,3\nB,U1,3\n").unwrap_err();
        assert_eq!(
            e.to_string(),
            "n.csv:3:3: pin U1-3 is on net B here and on net A at line 2"
        );
    }

    #[test]
    fn a_repeated_record_is_a_warning() {
        let n = read("net,designator,pin\nA,U1,3\nA,U1,3\n").unwrap();
        assert_eq!(n.pin_count(), 1);
        assert_eq!(n.warnings.len(), 1);
        assert!(n.warnings[0]
            .to_string()
            .starts_with("n.csv:3:3: pin U1-3 is listed again"));
    }
}
