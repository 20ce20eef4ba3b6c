//! SVF (Serial Vector Format, Rev E): the trade's interchange format for test programs.
//!
//! # Layout
//! - `lexer`: tokens, pulled one at a time; `! part N` comment lines.
//! - `parser`: statements as written, each with the place of its keyword.
//! - `lower`: statements → [`Program`](crate::program::Program) steps, with
//!   the sticky rules, headers and trailers ([`SvfProgram`]).
//! - `write`: a program's steps for one TAP port back to SVF ([`write_svf`]).
//! - `error`: [`SvfError`], `path:line:column: message`.
//!
//! The reader is pure over `&str` and never panics; the path is only used in
//! errors and in each step's `Origin`. Reading what [`write_svf`] wrote gives
//! back the same steps (a property test checks it), except for what SVF
//! cannot say: `Action::ResetTms` reads back as `STATE RESET`, a one-state
//! explicit path as the shortest path, and a 0-bit scan is left out.

#![cfg_attr(not(test), deny(clippy::unwrap_used, clippy::panic))]

mod error;
mod lexer;
mod lower;
mod parser;
mod write;

use std::path::Path;

use virtual_board::LineIndex;

pub use error::{SvfError, SvfErrorKind};
pub use lower::SvfProgram;
pub use parser::svf_state_name;
pub use write::write_svf;

/// Reads SVF text into a program whose steps all go to TAP port `port`.
///
/// `path` names the file in errors and in each step's `Origin` (line and
/// keyword); the program is named after the file stem (`svf` without a path).
///
/// # Errors
/// The first lexical, grammar or rule error, located by line and column.
/// Never panics, whatever the input.
pub fn read_svf(text: &str, path: Option<&Path>, port: &str) -> Result<SvfProgram, SvfError> {
    // Lines and columns are only worked out for the one error reported.
    let located = |e: error::Located| SvfError {
        path: path.map(Path::to_path_buf),
        span: LineIndex::new(text).span(text, e.place.offset, e.place.len),
        kind: e.kind,
    };
    let statements = parser::parse(text).map_err(located)?;
    lower::lower(&statements, path, port).map_err(located)
}

#[cfg(test)]
mod tests {
    //! Whole-reader properties: no input panics, and whatever reads also
    //! survives a write and a second read unchanged.
    //!
    //! Random inputs come from virtual_board's seeded SplitMix64 `Rng`
    //! (harness has no proptest dev-dependency); each case prints its seed.

    use super::*;
    use std::path::PathBuf;
    use virtual_board::Rng;

    const VALID: &str = "! a small program
FREQUENCY 1.0E6 HZ;
TRST OFF;
STATE RESET;
STATE IDLE;
HIR 2 TDI(3);  TIR 3 TDI(7);  SIR 4 TDI(A) TDO(1) MASK(3);
HDR 1 TDI(0);  TDR 1 TDI(0);  SDR 8 TDI(C5) TDO(0A) SMASK(7F);
! part 2
ENDDR DRPAUSE;
sdr 8 tdi(3c)
    tdo(FF) mask(0F);
STATE DREXIT2 DRUPDATE IDLE;
RUNTEST IDLE 100 TCK 1.0E-3 SEC MAXIMUM 2E-3 SEC ENDSTATE IDLE;
RUNTEST 1E-2 SEC;
// trailer off
TDR 0; HDR 0;
SDR 32 TDI(1234 ! split
  5678 // split
);
ENDIR IRPAUSE;
SIR 4 TDI(5);
RUNTEST DRPAUSE 10 SCK ENDSTATE DRPAUSE;
TRST ABSENT;
FREQUENCY;
";

    const PIECES: [&str; 24] = [
        "SIR",
        "SDR",
        "HDR",
        "TIR",
        "STATE",
        "RUNTEST",
        "ENDDR",
        "TRST",
        "FREQUENCY",
        "PIO",
        " ",
        "\n",
        ";",
        "(",
        ")",
        "TDI(",
        "TDO(F)",
        "MASK(0)",
        "IDLE",
        "DRPAUSE",
        "8",
        "1E-3",
        "!",
        "//",
    ];

    fn steps_without_origin(p: &SvfProgram) -> Vec<(String, crate::program::Action)> {
        p.program
            .steps
            .iter()
            .map(|s| (s.port.clone(), s.action.clone()))
            .collect()
    }

    /// Reads `text`; when it reads, writing and reading again must agree.
    fn check(text: &str, seed: u64) {
        let first = read_svf(text, None, "J1");
        if let Ok(p) = first {
            let out = write_svf(&p.program, "J1");
            let again = read_svf(&out, None, "J1").unwrap_or_else(|e| {
                panic!("seed {seed}: the written text does not read: {e}\n--- input\n{text}\n--- written\n{out}")
            });
            assert_eq!(
                steps_without_origin(&again),
                steps_without_origin(&p),
                "seed {seed}\n--- input\n{text}\n--- written\n{out}"
            );
            assert_eq!(again.program.frequency, p.program.frequency, "seed {seed}");
        }
    }

    fn mutate(rng: &mut Rng, text: &str) -> String {
        let mut chars: Vec<char> = text.chars().collect();
        let edits = 1 + rng.next_u64() % 4;
        for _ in 0..edits {
            let n = chars.len().max(1);
            let at = (rng.next_u64() as usize) % n;
            match rng.next_u64() % 7 {
                // Changes a reader must not care about: case and white space.
                5 if at < chars.len() => chars[at] = chars[at].to_ascii_lowercase(),
                6 => {
                    let at = at.min(chars.len());
                    chars.splice(at..at, " \n\t".chars().take(1 + at % 3));
                }
                0 => {
                    let len = (rng.next_u64() as usize % 12).min(chars.len().saturating_sub(at));
                    chars.drain(at..at + len);
                }
                1 => {
                    let piece = PIECES[rng.next_u64() as usize % PIECES.len()];
                    let at = at.min(chars.len());
                    chars.splice(at..at, piece.chars());
                }
                2 if at < chars.len() => {
                    chars[at] = char::from(32 + (rng.next_u64() % 95) as u8);
                }
                3 => {
                    let digits = (rng.next_u64() % 100_000_000_000).to_string();
                    let at = at.min(chars.len());
                    chars.splice(at..at, digits.chars());
                }
                _ if !chars.is_empty() => {
                    let len = (rng.next_u64() as usize % 40).min(chars.len() - at);
                    let copy: Vec<char> = chars[at..at + len].to_vec();
                    let to = (rng.next_u64() as usize) % chars.len();
                    chars.splice(to..to, copy);
                }
                _ => {}
            }
        }
        chars.into_iter().collect()
    }

    #[test]
    fn the_valid_sample_reads() {
        let p = read_svf(VALID, Some(Path::new("x/sample.svf")), "J1").unwrap();
        assert_eq!(p.program.name, "sample");
        // FREQUENCY applies from where it stands (SVF Specification Rev E,
        // from memory): the first, before any step, is the start frequency;
        // the last, with no argument, is a step back to full speed.
        assert_eq!(p.program.frequency, Some(1.0e6));
        assert_eq!(p.program.steps.len(), 14);
        assert_eq!(
            p.program.steps.last().map(|s| &s.action),
            Some(&crate::program::Action::Frequency(None))
        );
        assert_eq!(
            p.program.steps[0].origin.file,
            Some(PathBuf::from("x/sample.svf"))
        );
        check(VALID, 0);
    }

    #[test]
    fn random_bytes_never_panic() {
        for seed in 0..3000u64 {
            let mut rng = Rng::new(seed);
            let len = rng.next_u64() % 200;
            let bytes: Vec<u8> = (0..len).map(|_| rng.next_u64() as u8).collect();
            check(&String::from_utf8_lossy(&bytes), seed);
            let tokens: String = (0..len / 4)
                .map(|_| PIECES[rng.next_u64() as usize % PIECES.len()])
                .collect::<Vec<_>>()
                .join(" ");
            check(&tokens, seed);
        }
    }

    #[test]
    fn mutations_of_valid_svf_never_panic() {
        let mut read_ok = 0;
        for seed in 0..3000u64 {
            let mut rng = Rng::new(seed);
            let text = mutate(&mut rng, VALID);
            read_ok += usize::from(read_svf(&text, None, "J1").is_ok());
            check(&text, seed);
        }
        // The mutations must leave some programs readable, or the second
        // half of `check` would never run.
        assert!(read_ok > 200, "only {read_ok} mutated texts read");
    }
}
