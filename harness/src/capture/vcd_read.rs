//! `read_vcd`: a VCD file's declared signals and the value changes of each (IEEE 1364 clause 18 subset).
//!
//! What is read (IEEE 1364 clause 18, from memory):
//! - Header: `$date`, `$version`, `$comment` (skipped, and optional),
//!   `$timescale` (1, 10 or 100 of s, ms, us, ns, ps, fs, with or without a
//!   space), `$scope <type> <name>` … `$upscope`, `$var <type> <size> <code>
//!   <reference> [bit range]` with any type, and `$enddefinitions`. Other
//!   `$keyword … $end` sections of the header are skipped.
//! - Values: `#time` (never decreasing; a repeated time is fine), scalar
//!   changes `0!`, vector changes `b0101 !`, real changes `r1.5 !`,
//!   `$dumpvars`, `$dumpall`, `$dumpon` and `$dumpoff` blocks, and
//!   `$comment` anywhere. `B`, `R`, `X` and `Z` may be upper case.
//! - Tokens may be separated by any white space, newlines included.
//!
//! A vector's level is its bit 0, the rightmost bit after left extension;
//! a real value is `x`; `$dumpoff` sets every variable to `x`.

#![cfg_attr(not(test), deny(clippy::unwrap_used, clippy::panic))]

use std::{
    collections::HashMap,
    fmt,
    path::{Path, PathBuf},
};

use serde::Serialize;
use virtual_board::{LineIndex, Span};

use super::error::{quoted, CaptureError, CaptureErrorKind};

/// Longest list of signal names an error message spells out.
const MAX_LISTED: usize = 24;

/// A four-valued logic level, as VCD writes it.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Serialize)]
pub enum Level {
    /// `0`
    Low,
    /// `1`
    High,
    /// `x`: unknown.
    Unknown,
    /// `z`: high impedance.
    HighZ,
}

impl Level {
    /// The level of a VCD value character (`0 1 x X z Z`).
    pub fn from_char(c: char) -> Option<Level> {
        match c {
            '0' => Some(Level::Low),
            '1' => Some(Level::High),
            'x' | 'X' => Some(Level::Unknown),
            'z' | 'Z' => Some(Level::HighZ),
            _ => None,
        }
    }

    /// The lower-case VCD character of the level.
    pub fn as_char(self) -> char {
        match self {
            Level::Low => '0',
            Level::High => '1',
            Level::Unknown => 'x',
            Level::HighZ => 'z',
        }
    }
}

/// The unit of a `$timescale`.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
pub enum TimeUnit {
    /// Seconds.
    S,
    /// Milliseconds.
    Ms,
    /// Microseconds.
    Us,
    /// Nanoseconds.
    Ns,
    /// Picoseconds.
    Ps,
    /// Femtoseconds.
    Fs,
}

impl TimeUnit {
    const ALL: [(TimeUnit, &'static str, u64); 6] = [
        (TimeUnit::S, "s", 1_000_000_000_000_000),
        (TimeUnit::Ms, "ms", 1_000_000_000_000),
        (TimeUnit::Us, "us", 1_000_000_000),
        (TimeUnit::Ns, "ns", 1_000_000),
        (TimeUnit::Ps, "ps", 1_000),
        (TimeUnit::Fs, "fs", 1),
    ];

    fn entry(self) -> (&'static str, u64) {
        Self::ALL
            .iter()
            .find(|(u, _, _)| *u == self)
            .map_or(("fs", 1), |&(_, name, fs)| (name, fs))
    }
}

/// A file's `$timescale`: one time unit is `number` `unit`s.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
pub struct Timescale {
    /// 1, 10 or 100.
    pub number: u16,
    /// The unit.
    pub unit: TimeUnit,
}

impl Timescale {
    /// One time unit in femtoseconds (100 s is 10^17 fs, within `u64`).
    pub fn femtoseconds(self) -> u64 {
        u64::from(self.number) * self.unit.entry().1
    }

    /// Parses `1ns`, `10 ps`, `100us` (the tokens joined without spaces).
    fn parse(text: &str) -> Option<Timescale> {
        let digits = text.len() - text.trim_start_matches(|c: char| c.is_ascii_digit()).len();
        let number = match text.get(..digits)? {
            "1" => 1,
            "10" => 10,
            "100" => 100,
            _ => return None,
        };
        let unit = text.get(digits..)?;
        TimeUnit::ALL
            .iter()
            .find(|(_, name, _)| name.eq_ignore_ascii_case(unit))
            .map(|&(unit, _, _)| Timescale { number, unit })
    }
}

impl fmt::Display for Timescale {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{} {}", self.number, self.unit.entry().0)
    }
}

/// One `$var` of the file.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct Signal {
    /// The enclosing scopes, outermost first.
    pub scope: Vec<String>,
    /// The reference name, without its bit range.
    pub name: String,
    /// The bit range written after the reference (`[7:0]`), if any.
    pub range: Option<String>,
    /// The variable type (`wire`, `reg`, …).
    pub var_type: String,
    /// Declared size in bits.
    pub width: u32,
    /// Identifier code; aliases share one.
    pub code: String,
    /// Where the `$var` is.
    pub span: Span,
    #[serde(skip)]
    changes: usize,
}

impl Signal {
    /// The scopes and the name joined with dots (`J1_MAIN.J1_MAIN_TCK`).
    pub fn full_name(&self) -> String {
        let mut s = self.scope.join(".");
        if !s.is_empty() {
            s.push('.');
        }
        s.push_str(&self.name);
        s
    }
}

/// A VCD file read: its signals and, per identifier code, every value
/// change as `(time, level)` in file order (times never decrease).
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Vcd {
    path: PathBuf,
    timescale: Option<Timescale>,
    signals: Vec<Signal>,
    changes: Vec<Vec<(u64, Level)>>,
    end_time: u64,
}

impl Vcd {
    /// The file it was read from.
    pub fn path(&self) -> &Path {
        &self.path
    }

    /// The `$timescale`, when the file gives one.
    pub fn timescale(&self) -> Option<Timescale> {
        self.timescale
    }

    /// Every `$var`, in declaration order.
    pub fn signals(&self) -> &[Signal] {
        &self.signals
    }

    /// The last `#time` of the file (0 when it has none).
    pub fn end_time(&self) -> u64 {
        self.end_time
    }

    /// The value changes of `signal` (one of [`Vcd::signals`]).
    pub fn changes(&self, signal: &Signal) -> &[(u64, Level)] {
        self.changes.get(signal.changes).map_or(&[], Vec::as_slice)
    }

    /// The signal called `name`: its reference name, or `scope.name` (any
    /// trailing run of scopes) when `name` holds a dot.
    ///
    /// # Errors
    /// `MissingSignal` (listing the signals present) when none fits;
    /// `AmbiguousSignal` when signals with different codes fit.
    pub fn find(&self, name: &str) -> Result<&Signal, CaptureError> {
        let mut matches: Vec<&Signal> = Vec::new();
        if name.contains('.') {
            let suffix = format!(".{name}");
            matches.extend(self.signals.iter().filter(|s| {
                let full = s.full_name();
                full == name || full.ends_with(&suffix)
            }));
        }
        if matches.is_empty() {
            matches.extend(self.signals.iter().filter(|s| s.name == name));
        }
        let fail = |kind| CaptureError {
            path: self.path.clone(),
            span: None,
            kind,
        };
        match matches.first() {
            None => Err(fail(CaptureErrorKind::MissingSignal {
                name: name.to_string(),
                present: listed(self.signals.iter()),
            })),
            Some(first) if matches.iter().all(|s| s.changes == first.changes) => Ok(first),
            Some(_) => Err(fail(CaptureErrorKind::AmbiguousSignal {
                name: name.to_string(),
                matches: listed(matches.into_iter()),
            })),
        }
    }

    /// The value changes of the signal called `name` (see [`Vcd::find`]).
    ///
    /// # Errors
    /// As [`Vcd::find`].
    pub fn signal(&self, name: &str) -> Result<&[(u64, Level)], CaptureError> {
        Ok(self.changes(self.find(name)?))
    }
}

/// Full names of `signals`, comma-separated, at most [`MAX_LISTED`].
fn listed<'a>(signals: impl Iterator<Item = &'a Signal>) -> String {
    let names: Vec<String> = signals.map(Signal::full_name).collect();
    if names.is_empty() {
        return "none".into();
    }
    let mut out = names
        .iter()
        .take(MAX_LISTED)
        .cloned()
        .collect::<Vec<_>>()
        .join(", ");
    if names.len() > MAX_LISTED {
        out.push_str(&format!(" and {} more", names.len() - MAX_LISTED));
    }
    out
}

/// Reads VCD text; `path` names it in errors.
///
/// # Errors
/// A [`CaptureError`] at `path:line:column` for the first thing the reader
/// cannot accept: a header without `$enddefinitions`, a section without its
/// `$end`, a malformed `$var` or `$timescale`, `$upscope` with no scope
/// open, a time that goes backwards or does not fit 64 bits, a value for an
/// undeclared code, a vector wider than its variable, or a token that is
/// not a time, a value change or a keyword. Never panics.
pub fn read_vcd(text: &str, path: &Path) -> Result<Vcd, CaptureError> {
    Reader {
        tokens: Tokens { text, pos: 0 },
        path,
        lines: LineIndex::new(text),
    }
    .read()
}

/// [`read_vcd`] of the file at `path`.
///
/// # Errors
/// As [`read_vcd`], and an `Io` error when the file cannot be read as text.
pub fn read_vcd_file(path: &Path) -> Result<Vcd, CaptureError> {
    let text = std::fs::read_to_string(path).map_err(|e| CaptureError {
        path: path.to_path_buf(),
        span: None,
        kind: CaptureErrorKind::Io(e.to_string()),
    })?;
    read_vcd(&text, path)
}

/// White-space separated tokens with their byte offsets.
struct Tokens<'a> {
    text: &'a str,
    pos: usize,
}

impl<'a> Iterator for Tokens<'a> {
    type Item = (usize, &'a str);

    fn next(&mut self) -> Option<(usize, &'a str)> {
        let bytes = self.text.as_bytes();
        while bytes.get(self.pos).is_some_and(u8::is_ascii_whitespace) {
            self.pos += 1;
        }
        let start = self.pos;
        while bytes
            .get(self.pos)
            .is_some_and(|b| !b.is_ascii_whitespace())
        {
            self.pos += 1;
        }
        // Splitting at ASCII white space keeps UTF-8 boundaries.
        self.text
            .get(start..self.pos)
            .filter(|t| !t.is_empty())
            .map(|t| (start, t))
    }
}

struct Reader<'a> {
    tokens: Tokens<'a>,
    path: &'a Path,
    lines: LineIndex,
}

/// Where the value section is: inside which dump block, if any.
struct Values {
    time: u64,
    seen_time: bool,
    block: Option<&'static str>,
}

impl<'a> Reader<'a> {
    fn error(&self, offset: usize, len: usize, kind: CaptureErrorKind) -> CaptureError {
        CaptureError {
            path: self.path.to_path_buf(),
            span: Some(self.lines.span(self.tokens.text, offset, len)),
            kind,
        }
    }

    fn unexpected(&self, at: usize, found: &str, expected: &str) -> CaptureError {
        self.error(
            at,
            found.len(),
            CaptureErrorKind::Unexpected {
                expected: expected.to_string(),
                found: quoted(found),
            },
        )
    }

    fn at_end(&self, expected: &str) -> CaptureError {
        let end = self.tokens.text.len();
        self.error(
            end,
            0,
            CaptureErrorKind::UnexpectedEnd {
                expected: expected.to_string(),
            },
        )
    }

    /// The next token, which must not be `$end`.
    fn word(&mut self, expected: &str) -> Result<(usize, &'a str), CaptureError> {
        match self.tokens.next() {
            None => Err(self.at_end(expected)),
            Some((at, "$end")) => Err(self.unexpected(at, "$end", expected)),
            Some(t) => Ok(t),
        }
    }

    /// The next token, which must be `$end`.
    fn end(&mut self, closing: &str) -> Result<(), CaptureError> {
        let expected = format!("`$end` closing `{closing}`");
        match self.tokens.next() {
            None => Err(self.at_end(&expected)),
            Some((_, "$end")) => Ok(()),
            Some((at, t)) => Err(self.unexpected(at, t, &expected)),
        }
    }

    /// Every token up to the next `$end`.
    fn until_end(&mut self, closing: &str) -> Result<Vec<(usize, &'a str)>, CaptureError> {
        let mut out = Vec::new();
        loop {
            match self.tokens.next() {
                None => return Err(self.at_end(&format!("`$end` closing `{closing}`"))),
                Some((_, "$end")) => return Ok(out),
                Some(t) => out.push(t),
            }
        }
    }

    /// Skips to the next `$end`.
    fn skip(&mut self, closing: &str) -> Result<(), CaptureError> {
        loop {
            match self.tokens.next() {
                None => return Err(self.at_end(&format!("`$end` closing `{closing}`"))),
                Some((_, "$end")) => return Ok(()),
                Some(_) => {}
            }
        }
    }

    fn read(mut self) -> Result<Vcd, CaptureError> {
        let mut vcd = Vcd {
            path: self.path.to_path_buf(),
            timescale: None,
            signals: Vec::new(),
            changes: Vec::new(),
            end_time: 0,
        };
        let mut codes: HashMap<&'a str, usize> = HashMap::new();
        let mut widths: Vec<u32> = Vec::new();
        self.header(&mut vcd, &mut codes, &mut widths)?;
        self.values(&mut vcd, &codes, &widths)?;
        Ok(vcd)
    }

    fn header(
        &mut self,
        vcd: &mut Vcd,
        codes: &mut HashMap<&'a str, usize>,
        widths: &mut Vec<u32>,
    ) -> Result<(), CaptureError> {
        let mut scopes: Vec<String> = Vec::new();
        loop {
            let Some((at, token)) = self.tokens.next() else {
                return Err(self.at_end("`$enddefinitions`"));
            };
            match token {
                "$enddefinitions" => return self.end("$enddefinitions"),
                "$timescale" => {
                    let words = self.until_end("$timescale")?;
                    let joined: String = words.iter().map(|(_, w)| *w).collect();
                    let first = words.first().map_or(at, |(a, _)| *a);
                    vcd.timescale = Some(Timescale::parse(&joined).ok_or_else(|| {
                        self.error(
                            first,
                            joined.len(),
                            CaptureErrorKind::BadTimescale(quoted(&joined)),
                        )
                    })?);
                }
                "$scope" => {
                    self.word("the scope type")?;
                    let (_, name) = self.word("the scope name")?;
                    self.end("$scope")?;
                    scopes.push(name.to_string());
                }
                "$upscope" => {
                    if scopes.pop().is_none() {
                        return Err(self.error(
                            at,
                            token.len(),
                            CaptureErrorKind::UnmatchedUpscope,
                        ));
                    }
                    self.end("$upscope")?;
                }
                "$var" => {
                    let signal = self.var(at, &scopes, codes, widths)?;
                    if signal.changes == vcd.changes.len() {
                        vcd.changes.push(Vec::new());
                    }
                    vcd.signals.push(signal);
                }
                "$end" => return Err(self.unexpected(at, token, "a header keyword")),
                keyword if keyword.starts_with('$') => self.skip(keyword)?,
                other => {
                    return Err(self.unexpected(at, other, "a `$` keyword of the header"));
                }
            }
        }
    }

    /// `$var <type> <size> <code> <reference> [range] $end`, after `$var`.
    fn var(
        &mut self,
        at: usize,
        scopes: &[String],
        codes: &mut HashMap<&'a str, usize>,
        widths: &mut Vec<u32>,
    ) -> Result<Signal, CaptureError> {
        let (_, var_type) = self.word("the variable type")?;
        let (size_at, size) = self.word("the variable size")?;
        let width = size.parse::<u32>().ok().filter(|&w| w > 0).ok_or_else(|| {
            self.unexpected(size_at, size, "the variable size (a positive number)")
        })?;
        let (code_at, code) = self.word("the identifier code")?;
        if !code.bytes().all(|b| (b'!'..=b'~').contains(&b)) {
            return Err(self.unexpected(
                code_at,
                code,
                "an identifier code (printable ASCII, `!` to `~`)",
            ));
        }
        let (name_at, reference) = self.word("the reference name")?;
        let (name, attached) = match reference.find('[') {
            Some(i) => (reference.get(..i).unwrap_or(""), reference.get(i..)),
            None => (reference, None),
        };
        if name.is_empty() {
            return Err(self.unexpected(name_at, reference, "the reference name"));
        }
        let rest = self.until_end("$var")?;
        let mut range: String = attached.unwrap_or("").to_string();
        for (_, w) in &rest {
            range.push_str(w);
        }
        let bracketed = range.starts_with('[') && range.ends_with(']');
        if !range.is_empty() && !bracketed {
            let (bad_at, bad) = rest.first().copied().unwrap_or((name_at, reference));
            return Err(self.unexpected(bad_at, bad, "a bit range such as `[7:0]`, or `$end`"));
        }
        let end = self.tokens.pos;
        let next = codes.len();
        let changes = *codes.entry(code).or_insert(next);
        if changes == widths.len() {
            widths.push(width);
        } else if let Some(w) = widths.get_mut(changes) {
            *w = (*w).max(width);
        }
        Ok(Signal {
            scope: scopes.to_vec(),
            name: name.to_string(),
            range: (!range.is_empty()).then_some(range),
            var_type: var_type.to_string(),
            width,
            code: code.to_string(),
            span: self.lines.span(self.tokens.text, at, end - at),
            changes,
        })
    }

    fn values(
        &mut self,
        vcd: &mut Vcd,
        codes: &HashMap<&'a str, usize>,
        widths: &[u32],
    ) -> Result<(), CaptureError> {
        let mut v = Values {
            time: 0,
            seen_time: false,
            block: None,
        };
        while let Some((at, token)) = self.tokens.next() {
            let first = token.as_bytes().first().copied().unwrap_or(b' ');
            match first {
                b'#' => {
                    let digits = token.get(1..).unwrap_or("");
                    if digits.is_empty() || !digits.bytes().all(|b| b.is_ascii_digit()) {
                        return Err(self.unexpected(at, token, "a time: `#` and digits"));
                    }
                    let Ok(time) = digits.parse::<u64>() else {
                        return Err(self.unexpected(at, token, "a time that fits 64 bits"));
                    };
                    if v.seen_time && time < v.time {
                        return Err(self.error(
                            at,
                            token.len(),
                            CaptureErrorKind::TimeBackwards {
                                time,
                                previous: v.time,
                            },
                        ));
                    }
                    v.time = time;
                    v.seen_time = true;
                    vcd.end_time = time;
                }
                b'$' => self.keyword(at, token, &mut v, vcd)?,
                b'0' | b'1' | b'x' | b'X' | b'z' | b'Z' => {
                    let level = Level::from_char(char::from(first)).unwrap_or(Level::Unknown);
                    let code = token.get(1..).unwrap_or("");
                    if code.is_empty() {
                        return Err(self.unexpected(
                            at,
                            token,
                            "a scalar change: the value then the code, with no space",
                        ));
                    }
                    let k = self.code(at + 1, code, codes)?;
                    push(vcd, k, v.time, level);
                }
                b'b' | b'B' => {
                    let bits = token.get(1..).unwrap_or("");
                    let mut level = None;
                    for c in bits.chars() {
                        level = Some(Level::from_char(c).ok_or_else(|| {
                            self.unexpected(at, token, "a vector value: `b` and 0, 1, x, z")
                        })?);
                    }
                    let Some(level) = level else {
                        return Err(self.unexpected(
                            at,
                            token,
                            "a vector value: `b` and 0, 1, x, z",
                        ));
                    };
                    let (code_at, code) = self.word("the identifier code of a vector value")?;
                    let k = self.code(code_at, code, codes)?;
                    let width = widths.get(k).copied().unwrap_or(1);
                    if bits.len() > width as usize {
                        return Err(self.error(
                            at,
                            token.len(),
                            CaptureErrorKind::VectorTooWide {
                                bits: bits.len(),
                                width,
                                code: quoted(code),
                            },
                        ));
                    }
                    push(vcd, k, v.time, level);
                }
                b'r' | b'R' => {
                    let real = token.get(1..).unwrap_or("");
                    if real.parse::<f64>().is_err() {
                        return Err(self.unexpected(at, token, "a real value: `r` and a number"));
                    }
                    let (code_at, code) = self.word("the identifier code of a real value")?;
                    let k = self.code(code_at, code, codes)?;
                    push(vcd, k, v.time, Level::Unknown);
                }
                _ => {
                    return Err(self.unexpected(
                        at,
                        token,
                        "a time (`#`), a value change or a dump keyword",
                    ))
                }
            }
        }
        match v.block {
            Some(block) => Err(self.at_end(&format!("`$end` closing `{block}`"))),
            None => Ok(()),
        }
    }

    fn keyword(
        &mut self,
        at: usize,
        token: &str,
        v: &mut Values,
        vcd: &mut Vcd,
    ) -> Result<(), CaptureError> {
        const DUMPS: [&str; 4] = ["$dumpvars", "$dumpall", "$dumpon", "$dumpoff"];
        if let Some(&dump) = DUMPS.iter().find(|&&d| d == token) {
            if let Some(open) = v.block {
                return Err(self.unexpected(at, token, &format!("`$end` closing `{open}`")));
            }
            v.block = Some(dump);
            if dump == "$dumpoff" {
                for k in 0..vcd.changes.len() {
                    push(vcd, k, v.time, Level::Unknown);
                }
            }
            return Ok(());
        }
        match token {
            "$end" if v.block.is_some() => {
                v.block = None;
                Ok(())
            }
            "$comment" => self.skip("$comment"),
            _ => Err(self.unexpected(at, token, "a time (`#`), a value change or a dump keyword")),
        }
    }

    fn code(
        &self,
        at: usize,
        code: &str,
        codes: &HashMap<&'a str, usize>,
    ) -> Result<usize, CaptureError> {
        codes
            .get(code)
            .copied()
            .ok_or_else(|| self.error(at, code.len(), CaptureErrorKind::UnknownCode(quoted(code))))
    }
}

fn push(vcd: &mut Vcd, k: usize, time: u64, level: Level) {
    if let Some(list) = vcd.changes.get_mut(k) {
        list.push((time, level));
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use virtual_board::Rng;

    /// A small file using every feature the reader takes.
    const FULL: &str = "$date today $end
$version some tool 1.2 $end
$comment two
  lines $end
$timescale
  10ps
$end
$scope module top $end
$var wire 1 ! clk $end
$scope module inner $end
$var reg 4 \"# bus [3:0] $end
$var wire 1 ! clk_alias $end
$var tri1 1 $ clk $end
$upscope $end
$var integer 8 % count[7:0] $end
$var real 64 & level $end
$upscope $end
$enddefinitions $end
#0
$dumpvars
0!
bx \"#
z$
b0 %
r0.5 &
$end
#5 1! B1Z \"# X$
#5
b10 %
$comment mid-file $end
#7 $dumpoff x! bx \"# x$ bx % $end
#9 $dumpon 0! b0001 \"# 1$ b11 % $end
#12 Z$
";

    fn read(text: &str) -> Result<Vcd, CaptureError> {
        read_vcd(text, Path::new("t.vcd"))
    }

    fn error(text: &str) -> String {
        read(text).unwrap_err().to_string()
    }

    fn levels(s: &str) -> Vec<Level> {
        s.chars().map(|c| Level::from_char(c).unwrap()).collect()
    }

    fn trace(vcd: &Vcd, name: &str) -> (Vec<u64>, Vec<Level>) {
        vcd.signal(name).unwrap().iter().copied().unzip()
    }

    #[test]
    fn every_feature_reads() {
        let vcd = read(FULL).unwrap();
        assert_eq!(
            vcd.timescale(),
            Some(Timescale {
                number: 10,
                unit: TimeUnit::Ps
            })
        );
        assert_eq!(vcd.timescale().unwrap().femtoseconds(), 10_000);
        assert_eq!(vcd.end_time(), 12);
        let names: Vec<String> = vcd.signals().iter().map(Signal::full_name).collect();
        assert_eq!(
            names,
            [
                "top.clk",
                "top.inner.bus",
                "top.inner.clk_alias",
                "top.inner.clk",
                "top.count",
                "top.level"
            ]
        );
        let bus = &vcd.signals()[1];
        assert_eq!(
            (bus.width, bus.code.as_str(), bus.range.as_deref()),
            (4, "\"#", Some("[3:0]"))
        );
        assert_eq!(vcd.signals()[4].range.as_deref(), Some("[7:0]"));
        assert_eq!((bus.span.line, bus.span.column), (11, 1));
        // `!` and its alias: $dumpoff makes x, then the listed x again.
        assert_eq!(
            trace(&vcd, "top.clk"),
            (vec![0, 5, 7, 7, 9], levels("01xx0"))
        );
        assert_eq!(trace(&vcd, "clk_alias"), trace(&vcd, "top.clk"));
        // A vector's level is its bit 0.
        assert_eq!(trace(&vcd, "bus"), (vec![0, 5, 7, 7, 9], levels("xzxx1")));
        assert_eq!(
            trace(&vcd, "inner.clk"),
            (vec![0, 5, 7, 7, 9, 12], levels("zxxx1z"))
        );
        assert_eq!(trace(&vcd, "count").1, levels("00xx1"));
        assert_eq!(trace(&vcd, "level").1, levels("xx"));
    }

    #[test]
    fn names_are_found_by_reference_or_by_scope() {
        let vcd = read(FULL).unwrap();
        // `clk` is two different signals (codes `!` and `$`).
        let e = vcd.find("clk").unwrap_err().to_string();
        assert_eq!(
            e,
            "t.vcd: `clk` names several signals (top.clk, top.inner.clk); give it as scope.name"
        );
        assert_eq!(vcd.find("top.clk").unwrap().code, "!");
        assert_eq!(vcd.find("inner.clk").unwrap().code, "$");
        assert_eq!(vcd.find("top.inner.clk").unwrap().code, "$");
        let e = vcd.find("tck").unwrap_err().to_string();
        assert!(
            e.starts_with("t.vcd: the recording has no signal `tck` (signals present: top.clk, top.inner.bus,"),
            "{e}"
        );
    }

    #[test]
    fn dates_versions_and_timescale_may_be_missing() {
        let vcd = read("$var wire 1 ! a $end $enddefinitions $end 1!").unwrap();
        assert_eq!(vcd.timescale(), None);
        assert_eq!(vcd.signal("a").unwrap(), [(0, Level::High)]);
        for (text, number, unit) in [
            ("1 s", 1, TimeUnit::S),
            ("100ms", 100, TimeUnit::Ms),
            ("10 us", 10, TimeUnit::Us),
            ("1 ns", 1, TimeUnit::Ns),
            ("1 ps", 1, TimeUnit::Ps),
            ("100 fs", 100, TimeUnit::Fs),
        ] {
            let vcd = read(&format!("$timescale {text} $end $enddefinitions $end")).unwrap();
            assert_eq!(vcd.timescale(), Some(Timescale { number, unit }), "{text}");
        }
        assert_eq!(
            Timescale {
                number: 100,
                unit: TimeUnit::S
            }
            .femtoseconds(),
            100_000_000_000_000_000
        );
    }

    #[test]
    fn errors_are_placed() {
        let cases: [(&str, &str); 16] = [
            (
                "",
                "t.vcd:1:1: the file ends where `$enddefinitions` should be",
            ),
            (
                "$date x",
                "t.vcd:1:8: the file ends where `$end` closing `$date` should be",
            ),
            (
                "$timescale 2 ns $end",
                "t.vcd:1:12: timescale `2ns`: give 1, 10 or 100 and one of s, ms, us, ns, ps, fs",
            ),
            (
                "$upscope $end",
                "t.vcd:1:1: `$upscope` with no `$scope` open",
            ),
            (
                "$var wire 0 ! a $end",
                "t.vcd:1:11: expected the variable size (a positive number), found `0`",
            ),
            (
                "$var wire 1 ! a 7:0] $end",
                "t.vcd:1:17: expected a bit range such as `[7:0]`, or `$end`, found `7:0]`",
            ),
            (
                "$var wire 1 ! $end",
                "t.vcd:1:15: expected the reference name, found `$end`",
            ),
            (
                "$scope module a $end\nwire",
                "t.vcd:2:1: expected a `$` keyword of the header, found `wire`",
            ),
            (
                "$enddefinitions $end\n  1?",
                "t.vcd:2:4: no `$var` declares identifier code `?`",
            ),
            (
                "$var wire 1 ! a $end $enddefinitions $end #5 #4",
                "t.vcd:1:46: time 4 is earlier than the time before it (5)",
            ),
            (
                "$var wire 2 ! a $end $enddefinitions $end b101 !",
                "t.vcd:1:43: value of 3 bits for `!`, declared 2 bits wide",
            ),
            (
                "$var wire 1 ! a $end $enddefinitions $end b12 !",
                "t.vcd:1:43: expected a vector value: `b` and 0, 1, x, z, found `b12`",
            ),
            (
                "$enddefinitions $end #1x",
                "t.vcd:1:22: expected a time: `#` and digits, found `#1x`",
            ),
            (
                "$enddefinitions $end #99999999999999999999",
                "t.vcd:1:22: expected a time that fits 64 bits, found `#99999999999999999999`",
            ),
            (
                "$enddefinitions $end $dumpvars\n",
                "t.vcd:2:1: the file ends where `$end` closing `$dumpvars` should be",
            ),
            (
                "$enddefinitions $end $end",
                "t.vcd:1:22: expected a time (`#`), a value change or a dump keyword, found `$end`",
            ),
        ];
        for (text, want) in cases {
            assert_eq!(error(text), want, "{text:?}");
        }
    }

    /// Property: no input makes the reader panic; every error points inside
    /// the text (line within it, column within that line plus one).
    fn check_no_panic(text: &str) {
        if let Err(e) = read(text) {
            let span = e.span.expect("reader errors are placed");
            let lines: Vec<&str> = text.split('\n').collect();
            assert!(span.line >= 1 && span.line as usize <= lines.len(), "{e}");
            let line = lines[span.line as usize - 1];
            assert!(span.column as usize <= line.chars().count() + 1, "{e}");
        }
    }

    #[test]
    fn random_bytes_never_panic() {
        let mut rng = Rng::new(0x5EED_0001);
        let alphabet = b"$#01xzXZbBr! \n\t\"%&[]:endvarscopeup";
        for round in 0..3000 {
            let len = (rng.next_u64() % 200) as usize;
            let bytes: Vec<u8> = (0..len)
                .map(|_| {
                    let r = rng.next_u64();
                    if round % 2 == 0 {
                        r as u8
                    } else {
                        alphabet[(r % alphabet.len() as u64) as usize]
                    }
                })
                .collect();
            check_no_panic(&String::from_utf8_lossy(&bytes));
        }
    }

    #[test]
    fn mutations_of_a_valid_file_never_panic() {
        let mut rng = Rng::new(0x5EED_0002);
        let base = FULL.as_bytes();
        let mut accepted = 0;
        for _ in 0..3000 {
            let mut bytes = base.to_vec();
            for _ in 0..1 + rng.next_u64() % 4 {
                let at = (rng.next_u64() % (bytes.len() as u64 + 1)) as usize;
                match rng.next_u64() % 4 {
                    0 if at < bytes.len() => {
                        bytes.remove(at);
                    }
                    1 => bytes.insert(at, rng.next_u64() as u8),
                    2 if at < bytes.len() => {
                        bytes[at] = b" $#01xb!\n"[(rng.next_u64() % 9) as usize]
                    }
                    _ => bytes.truncate(at),
                }
            }
            let text = String::from_utf8_lossy(&bytes);
            check_no_panic(&text);
            accepted += usize::from(read(&text).is_ok());
        }
        // Both outcomes happen: the mutations are not all fatal, nor all harmless.
        assert!(accepted > 0 && accepted < 3000, "{accepted}");
    }
}
