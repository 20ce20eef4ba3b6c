//! `diagnose`: from a failing capture to repair instructions — syndrome
//! reasoning for interconnect failures, device-level findings for IDCODE
//! and instruction-capture mismatches, the fault dictionary for the rest;
//! every explanation reported as exact is confirmed by simulation.

use std::collections::BTreeSet;

use serde::Serialize;
use virtual_board::{DefectSpec, LoadedBoard};

use super::device::{device_findings, DeviceFinding};
use super::dictionary;
use super::error::DiagnoseError;
use super::minimal::minimal;
use super::net_view::NetView;
use super::recording::{Recorded, UnrecordedScan};
use super::syndrome;
use super::verify::verify;
use super::words::{neighbours, probes, repair_words, Probe};
use crate::campaign::{response_of, UniverseOptions};
use crate::program::{Action, Program, Step};
use crate::run::{locate, ScanRecord};

/// How to diagnose.
pub struct DiagnoseOptions<'a> {
    /// Threads.
    pub jobs: usize,
    /// The fault classes of the dictionary (the fallback).
    pub universe: UniverseOptions,
    /// Called as work advances: stage, done, total.
    pub progress: &'a (dyn Fn(&str, usize, usize) + Sync),
}

impl Default for DiagnoseOptions<'_> {
    fn default() -> Self {
        DiagnoseOptions {
            jobs: 1,
            universe: UniverseOptions::default(),
            progress: &|_, _, _| {},
        }
    }
}

/// A set of defects and how far its simulated response is from the capture.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Explanation {
    /// One defect, or several on distinct nets.
    pub defects: Vec<DefectSpec>,
    /// Recorded bits where its response differs from the capture.
    pub distance: usize,
}

/// One explanation of a capture, in repair words.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct Candidate {
    /// The defects (one, or several on distinct nets).
    pub defects: Vec<DefectSpec>,
    /// In repair words.
    pub words: String,
    /// Recorded bits where the candidate's simulated response and the
    /// capture differ (0: it explains the capture exactly).
    pub distance: usize,
    /// Each net it names, with its pins.
    pub probes: Vec<Probe>,
    /// For a short: neighbouring pins on two of its nets.
    pub neighbours: Vec<(String, String)>,
}

/// What diagnosis found.
#[derive(Clone, Debug, Default, PartialEq, Eq, Serialize)]
pub struct Diagnosis {
    /// Recorded compared bits where the capture differs from the good board.
    pub failing_bits: usize,
    /// Compared bits the recording holds.
    pub recorded_bits: usize,
    /// Recorded TDO bits that differ from the good board in scans the
    /// program does not compare (no expected value): not diagnosed, but
    /// counted as `compare` counts them.
    pub uncompared_bits_differ: usize,
    /// Compared bits of the whole program.
    pub compared_bits: usize,
    /// Scans of the program the recording does not hold (not compared).
    pub unrecorded_scans: Vec<UnrecordedScan>,
    /// Nets the failing bits read (as designed).
    pub nets_involved: Vec<String>,
    /// Devices whose registers hold failing bits that read no net.
    pub devices_involved: Vec<String>,
    /// How the candidates were found: `syndrome`, `device` or `dictionary`.
    pub method: String,
    /// IDCODE and instruction-capture findings, decoded.
    pub devices: Vec<DeviceFinding>,
    /// Explanations whose simulated response equals the capture on every
    /// recorded bit; several form an ambiguity group.
    pub exact: Vec<Candidate>,
    /// The nearest other explanations, best first.
    pub nearest: Vec<Candidate>,
    /// Explanations simulated.
    pub simulated: usize,
}

fn candidate(loaded: &LoadedBoard, e: Explanation) -> Candidate {
    let words = e
        .defects
        .iter()
        .map(|d| repair_words(loaded, d))
        .collect::<Vec<_>>()
        .join(", and ");
    let shorted: Vec<String> = e
        .defects
        .iter()
        .flat_map(|d| d.short.iter().flatten().cloned())
        .collect();
    Candidate {
        probes: probes(loaded, &e.defects),
        neighbours: if shorted.is_empty() {
            Vec::new()
        } else {
            neighbours(loaded, &shorted)
        },
        words,
        defects: e.defects,
        distance: e.distance,
    }
}

/// Diagnoses a capture of a failing board: `real` holds the captured scans
/// (all of the program's, or those of some TAP ports only).
///
/// # Errors
/// [`DiagnoseError`]: the program fails on the good board, or the dictionary campaign cannot run.
pub fn diagnose(
    loaded: &LoadedBoard,
    program: &Program,
    real: &[ScanRecord],
    options: &DiagnoseOptions<'_>,
) -> Result<Diagnosis, DiagnoseError> {
    diagnose_runs(loaded, &[(program, real)], options)
}

/// Diagnoses the captures of several programs run one after the other on
/// the failing board, each with its own recording (a test and the
/// follow-up that tells its ambiguity group apart): the programs are
/// diagnosed as one, so a net's code is its sequence over all their
/// vectors.
///
/// # Errors
/// [`DiagnoseError`]: the programs fail on the good board, or the dictionary campaign cannot run.
pub fn diagnose_runs(
    loaded: &LoadedBoard,
    runs: &[(&Program, &[ScanRecord])],
    options: &DiagnoseOptions<'_>,
) -> Result<Diagnosis, DiagnoseError> {
    let program = &joined(runs.iter().map(|r| r.0));
    let (good, view) = NetView::build(loaded, program);
    if !good.passed() {
        return Err(DiagnoseError::GoodBoardFails {
            failed: good.failed_scans(),
            scans: good.scans.len(),
        });
    }
    let good_response = response_of(&good);
    let parts: Vec<(usize, &[ScanRecord])> = runs.iter().map(|(p, r)| (scans_of(p), *r)).collect();
    let recorded = Recorded::of_parts(&good, &parts);
    let failing = recorded.failing(&good_response);
    let mut out = Diagnosis {
        failing_bits: failing.len(),
        recorded_bits: recorded.held(),
        uncompared_bits_differ: recorded.uncompared_differing(&good),
        compared_bits: good_response.len(),
        unrecorded_scans: recorded.unrecorded.clone(),
        ..Diagnosis::default()
    };
    if failing.is_empty() {
        return Ok(out);
    }
    // Where the failing bits are, as designed.
    let mut nets = BTreeSet::new();
    let mut devices = BTreeSet::new();
    let mut k = 0;
    let failing_set: BTreeSet<usize> = failing.iter().copied().collect();
    for s in &good.scans {
        let r = &s.record;
        let Some(mask) = r
            .mask
            .as_deref()
            .and_then(|m| virtual_board::Bits::from_hex(m, r.length))
        else {
            continue;
        };
        for i in (0..r.length).filter(|&i| mask.get(i)) {
            if failing_set.contains(&k) {
                let place = s.layout.as_deref().and_then(|l| locate(l, i));
                match place
                    .and_then(|(seg, c)| seg.cells.get(c))
                    .and_then(|c| c.net.clone())
                {
                    Some(net) => {
                        nets.insert(net);
                    }
                    None => {
                        if let Some((seg, _)) = place {
                            devices.insert(seg.device.clone());
                        }
                    }
                }
            }
            k += 1;
        }
    }
    out.nets_involved = nets.iter().cloned().collect();
    out.devices_involved = devices.into_iter().collect();

    // The defect sets to simulate: from the syndrome of a net-level
    // program, else from device-level findings (IDCODE, IR capture).
    let sets: Vec<Vec<DefectSpec>> =
        if let Some(classes) = syndrome::classes(loaded, &view, &recorded, &good_response) {
            out.method = "syndrome".into();
            syndrome::combinations(loaded, &classes)
        } else {
            out.devices = device_findings(&good, &recorded);
            if !out.devices.is_empty() {
                out.method = "device".into();
            }
            out.devices
                .iter()
                .flat_map(|f| f.candidates.iter().map(|d| vec![d.clone()]))
                .collect()
        };
    out.simulated += sets.len();
    let mut explanations: Vec<Explanation> = if sets.is_empty() {
        Vec::new()
    } else {
        verify(
            loaded,
            program,
            &recorded,
            sets,
            options,
            "verifying explanations",
        )
    };
    if !explanations.iter().any(|e| e.distance == 0) {
        out.method = "dictionary".into();
        let (ranked, simulated) =
            dictionary::rank(loaded, program, &good_response, &recorded, &nets, options)?;
        out.simulated += simulated;
        explanations.extend(ranked);
    }
    let (explanations, extra) = minimal(loaded, program, &recorded, explanations, options);
    out.simulated += extra;
    let mut all: Vec<Candidate> = explanations
        .into_iter()
        .map(|e| candidate(loaded, e))
        .collect();
    all.sort_by(|a, b| {
        a.distance
            .cmp(&b.distance)
            .then(a.defects.len().cmp(&b.defects.len()))
            .then(a.words.cmp(&b.words))
    });
    all.dedup_by(|a, b| a.words == b.words);
    let (exact, rest): (Vec<Candidate>, Vec<Candidate>) =
        all.into_iter().partition(|c| c.distance == 0);
    out.exact = exact;
    out.nearest = rest.into_iter().take(5).collect();
    Ok(out)
}

/// Scan steps of a program (each makes one scan of the run; an empty scan
/// makes none).
fn scans_of(program: &Program) -> usize {
    program
        .steps
        .iter()
        .filter(|s| matches!(&s.action, Action::Scan(x) if !x.tdi.is_empty()))
        .count()
}

/// Programs one after the other, as one program; a later program's TCK
/// frequency is set where it starts.
fn joined<'a>(programs: impl Iterator<Item = &'a Program>) -> Program {
    let mut out = Program::default();
    let mut names = Vec::new();
    for (k, p) in programs.enumerate() {
        names.push(p.name.clone());
        if k == 0 {
            out.frequency = p.frequency;
            out.tck_stops_high = p.tck_stops_high;
        } else if let (Some(f), Some(first)) = (p.frequency, p.steps.first()) {
            out.steps.push(Step {
                port: first.port.clone(),
                action: Action::Frequency(Some(f)),
                origin: first.origin.clone(),
            });
        }
        out.steps.extend(p.steps.iter().cloned());
    }
    out.name = names.join(", then ");
    out
}
