//! `write_native`: a `Program` as native YAML text that a person can read, edit and run again.
//!
//! The text is what `program::native` reads: `name`, `frequency`, then one
//! step per line or two (`reset`, `trst`, `goto`, `idle`, `scan_ir`,
//! `scan_dr`). Bit strings are binary, most significant bit first (the
//! rightmost bit is shifted first and ends nearest TDO), with `X` where the
//! scan does not compare. A step the harness made (no source file) carries
//! its note as a comment line above it.
//!
//! # Invariants
//! Exact (reading the text back gives the same steps, origins aside) for
//! programs of TMS resets, TRST*, shortest-path `goto`s, waits in
//! Run-Test/Idle and scans whose expected bits are 0 where the mask is 0:
//! everything `generate` builds. A step the native format cannot say
//! (an explicit state path, a wait in another state or for a time, an SVF
//! SMASK) is written as near as the format allows, with a comment saying
//! what was lost.

use std::fmt::Write as _;

use virtual_board::{Bits, TapState};

use crate::program::{Action, Program, Scan, ScanKind, Step, TrstMode};

/// The program as native YAML text.
pub fn write_native(program: &Program) -> String {
    let mut text = String::new();
    if !program.name.is_empty() {
        let _ = writeln!(text, "name: {}", scalar(&program.name));
    }
    if let Some(f) = program.frequency {
        let _ = writeln!(text, "frequency: {f}");
    }
    if program.tck_stops_high {
        text.push_str("tck_stop: high\n");
    }
    text.push_str("steps:\n");
    let steps = &program.steps;
    let mut i = 0;
    while i < steps.len() {
        let step = &steps[i];
        if step.origin.file.is_none() && !step.origin.note.is_empty() {
            let _ = writeln!(text, "  # {}", comment(&step.origin.note));
        }
        let port = scalar(&step.port);
        // TRST* on then off on one port is what `reset: trst` reads as.
        let pair = matches!(step.action, Action::Trst(TrstMode::On))
            && steps.get(i + 1).is_some_and(|n| {
                n.port == step.port && matches!(n.action, Action::Trst(TrstMode::Off))
            });
        if pair {
            let _ = writeln!(text, "  - {{ port: {port}, reset: trst }}");
            i += 2;
            continue;
        }
        write_step(&mut text, &port, step);
        i += 1;
    }
    text
}

fn write_step(text: &mut String, port: &str, step: &Step) {
    match &step.action {
        Action::ResetTms => {
            let _ = writeln!(text, "  - {{ port: {port}, reset: tms }}");
        }
        Action::Trst(mode) => {
            let mode = match mode {
                TrstMode::On => "on",
                TrstMode::Off => "off",
                TrstMode::Z => "z",
                TrstMode::Absent => "absent",
            };
            let _ = writeln!(text, "  - {{ port: {port}, trst: {mode} }}");
        }
        Action::Goto { path, end } => {
            if !path.is_empty() {
                let _ = writeln!(
                    text,
                    "  # (the explicit state path of this step is not kept: shortest path instead)"
                );
            }
            let _ = writeln!(text, "  - {{ port: {port}, goto: {} }}", state_name(*end));
        }
        Action::Idle {
            state,
            cycles,
            min_seconds,
            end,
        } => {
            if *state != TapState::RunTestIdle || min_seconds.is_some() {
                let _ = writeln!(
                    text,
                    "  # (a wait in {} for {cycles} TCK{}: written as a wait in Run-Test/Idle)",
                    state_name(*state),
                    min_seconds
                        .map(|s| format!(" or at least {s} s"))
                        .unwrap_or_default()
                );
            }
            let _ = writeln!(text, "  - {{ port: {port}, idle: {cycles} }}");
            if *end != TapState::RunTestIdle {
                let _ = writeln!(text, "  - {{ port: {port}, goto: {} }}", state_name(*end));
            }
        }
        Action::Scan(scan) => write_scan(text, port, scan),
        Action::Frequency(hz) => {
            let hz = hz.map_or_else(|| "full".to_string(), |f| f.to_string());
            let _ = writeln!(text, "  - {{ port: {port}, frequency: {hz} }}");
        }
    }
}

fn write_scan(text: &mut String, port: &str, scan: &Scan) {
    if scan.smask.is_some() {
        let _ = writeln!(text, "  # (the SVF SMASK of this scan is not kept)");
    }
    let key = match scan.kind {
        ScanKind::Ir => "scan_ir",
        ScanKind::Dr => "scan_dr",
    };
    let mut fields = format!("tdi: \"{}\"", binary(&scan.tdi, None));
    if let Some(expect) = &scan.expect {
        let _ = write!(fields, ", expect: \"{}\"", binary(expect, Some(&scan.mask)));
    }
    if scan.end != TapState::RunTestIdle {
        let _ = write!(fields, ", end: {}", state_name(scan.end));
    }
    let _ = writeln!(text, "  - port: {port}\n    {key}: {{ {fields} }}");
}

/// Bits as binary text, most significant first; `X` where `mask` is 0.
pub fn binary(bits: &Bits, mask: Option<&Bits>) -> String {
    (0..bits.len())
        .rev()
        .map(|i| match mask {
            Some(m) if !m.get(i) => 'X',
            _ if bits.get(i) => '1',
            _ => '0',
        })
        .collect()
}

/// The SVF name of a stable state, lower case, as `goto` and `end` take it.
pub fn state_name(state: TapState) -> &'static str {
    use TapState::*;
    match state {
        TestLogicReset => "reset",
        RunTestIdle => "idle",
        SelectDrScan => "drselect",
        CaptureDr => "drcapture",
        ShiftDr => "drshift",
        Exit1Dr => "drexit1",
        PauseDr => "drpause",
        Exit2Dr => "drexit2",
        UpdateDr => "drupdate",
        SelectIrScan => "irselect",
        CaptureIr => "ircapture",
        ShiftIr => "irshift",
        Exit1Ir => "irexit1",
        PauseIr => "irpause",
        Exit2Ir => "irexit2",
        UpdateIr => "irupdate",
    }
}

/// A YAML scalar for a name: plain where that reads back as the same
/// string (in block and flow context), double-quoted otherwise.
pub fn scalar(s: &str) -> String {
    let plain = s
        .chars()
        .next()
        .is_some_and(|c| c.is_ascii_alphabetic() || c == '_')
        && s.chars()
            .all(|c| c.is_ascii_alphanumeric() || "_.()+-/".contains(c))
        && !matches!(
            s.to_ascii_lowercase().as_str(),
            "true" | "false" | "null" | "yes" | "no" | "on" | "off" | "y" | "n" | "nan" | "inf"
        );
    if plain {
        s.to_string()
    } else {
        serde_json::to_string(s).unwrap_or_else(|_| format!("{s:?}"))
    }
}

/// Text made safe for one comment line.
pub fn comment(s: &str) -> String {
    s.chars()
        .map(|c| if c.is_control() { ' ' } else { c })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::program::Origin;

    fn step(action: Action) -> Step {
        Step {
            port: "J1".into(),
            action,
            origin: Origin::default(),
        }
    }

    #[test]
    fn bit_strings_are_msb_first_with_x() {
        let bits = Bits::from_u64(0b0110, 4);
        assert_eq!(binary(&bits, None), "0110");
        assert_eq!(binary(&bits, Some(&Bits::from_u64(0b1101, 4))), "01X0");
    }

    #[test]
    fn names_that_would_not_read_back_are_quoted() {
        assert_eq!(scalar("J1_MAIN"), "J1_MAIN");
        assert_eq!(scalar("HOST_D(0)"), "HOST_D(0)");
        assert_eq!(scalar("on"), "\"on\"");
        assert_eq!(scalar("12"), "\"12\"");
        assert_eq!(scalar("a, b"), "\"a, b\"");
        assert_eq!(scalar("a: b"), "\"a: b\"");
    }

    #[test]
    fn steps_are_written_in_the_native_keys() {
        let program = Program {
            name: "t".into(),
            frequency: None,
            tck_stops_high: false,
            steps: vec![
                step(Action::Trst(TrstMode::On)),
                step(Action::Trst(TrstMode::Off)),
                step(Action::ResetTms),
                step(Action::Scan(Scan {
                    kind: ScanKind::Ir,
                    tdi: Bits::ones(3),
                    expect: Some(Bits::from_u64(0b001, 3)),
                    mask: Bits::from_u64(0b011, 3),
                    smask: None,
                    end: TapState::PauseIr,
                })),
            ],
        };
        assert_eq!(
            write_native(&program),
            "name: t\nsteps:\n  - { port: J1, reset: trst }\n  - { port: J1, reset: tms }\n  \
             - port: J1\n    scan_ir: { tdi: \"111\", expect: \"X01\", end: irpause }\n"
        );
    }
}
