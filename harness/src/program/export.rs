//! Exporting a program as SVF for the tester: one file per TAP port, and a
//! native program that replays the files in the original order.
//!
//! A tester runs one SVF file per TAP port. A program that moves between
//! ports (a cross-port interconnect test) must interleave them as it did
//! here, so each file is cut into parts (`! part N` comments, invisible to
//! the tester) and `<stem>.replay.yaml` lists the parts in order.

use std::path::{Path, PathBuf};

use super::svf::write_svf;
use super::Program;
use crate::report::atomic::write_atomic;

/// The files one export writes.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Exported {
    /// One SVF file per TAP port the program uses.
    pub svf: Vec<(String, PathBuf)>,
    /// The native program replaying the parts in order.
    pub replay: PathBuf,
}

/// A file-name-safe version of a name.
fn safe_name(name: &str) -> String {
    let s: String = name
        .chars()
        .map(|c| {
            if c.is_ascii_alphanumeric() || c == '-' || c == '_' {
                c
            } else {
                '_'
            }
        })
        .collect();
    if s.is_empty() {
        "program".into()
    } else {
        s
    }
}

/// The replay program: one `svf` step per run of steps on one port.
pub fn replay_yaml(program: &Program, stem: &str) -> String {
    let mut text = format!(
        "# Replays the SVF export of `{}` in its original order: each step runs one\n# part of one TAP port's file (written by boardtwin).\nname: {}\n",
        // One comment line: a line break in the name would end the comment.
        program.name.chars().map(|c| if c.is_control() { ' ' } else { c }).collect::<String>(),
        // The name is kept as it is, so that exporting the replay again
        // writes the same files (the export is a fixed point).
        serde_yaml::to_string(&program.name).unwrap_or_default().trim()
    );
    if let Some(f) = program.frequency {
        text.push_str(&format!("frequency: {f}\n"));
    }
    text.push_str("steps:\n");
    let mut runs: Vec<(String, u32)> = Vec::new();
    let mut counts: std::collections::BTreeMap<String, u32> = Default::default();
    for step in &program.steps {
        if runs.last().is_some_and(|(p, _)| *p == step.port) {
            continue;
        }
        let k = counts.entry(step.port.clone()).or_insert(0);
        *k += 1;
        runs.push((step.port.clone(), *k));
    }
    for (port, part) in runs {
        text.push_str(&format!(
            "  - {{ port: {port}, svf: {stem}.{}.svf, part: {part} }}\n",
            safe_name(&port)
        ));
    }
    text
}

/// Writes `<stem>.<PORT>.svf` for every port the program uses, and
/// `<stem>.replay.yaml`, into `dir` (created if missing).
///
/// # Errors
/// Any I/O error; each file is written whole or not at all.
pub fn export_svf_files(program: &Program, stem: &str, dir: &Path) -> std::io::Result<Exported> {
    std::fs::create_dir_all(dir)?;
    let stem = safe_name(stem);
    let mut svf = Vec::new();
    for port in program.ports() {
        let path = dir.join(format!("{stem}.{}.svf", safe_name(&port)));
        write_atomic(&path, write_svf(program, &port).as_bytes())?;
        svf.push((port, path));
    }
    let replay = dir.join(format!("{stem}.replay.yaml"));
    write_atomic(&replay, replay_yaml(program, &stem).as_bytes())?;
    Ok(Exported { svf, replay })
}
