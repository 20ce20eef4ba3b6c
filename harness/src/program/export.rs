//! Exporting a program as SVF for the tester: one file per TAP port, and a
//! native program that replays the files in the original order.
//!
//! A tester runs one SVF file per TAP port. A program that moves between
//! ports (a cross-port interconnect test) must interleave them as it did
//! here, so each file is cut into parts (`! part N` comments, invisible to
//! the tester) and `<stem>.replay.yaml` lists the parts in order.
//!
//! The files of such a program work only together: each one begins with a
//! caution saying so, and [`interleave_warning`] is what the commands print.

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

/// The caution at the top of each SVF file of a program on several TAP
/// ports (`None` for one port): the files work only interleaved.
fn interleave_caution(ports: &[String], port: &str, stem: &str) -> Option<String> {
    if ports.len() < 2 {
        return None;
    }
    let others: Vec<String> = ports
        .iter()
        .filter(|p| p.as_str() != port)
        .map(|p| format!("{stem}.{}.svf", safe_name(p)))
        .collect();
    let text = format!(
        "CAUTION: this file is one of {n} that together make one program, on TAP ports \
         {ports}. It works only interleaved with the others ({others}): part by part \
         (the `! part N` comments), in the order {stem}.replay.yaml lists. Do not run it \
         alone, or to its end before the others: its captures expect the other ports' \
         drivers to be set up at that point and fail, and on a real board its EXTEST \
         drivers can fight devices on the other ports that are still under their \
         system logic.",
        n = ports.len(),
        ports = ports.join(", "),
        others = others.join(", "),
    );
    // Comment lines: a control character in a name would end the comment.
    let text: String = text
        .chars()
        .map(|c| if c.is_control() { ' ' } else { c })
        .collect();
    let mut out = String::new();
    let mut line = String::from("!");
    for word in text.split(' ') {
        if line.len() + 1 + word.len() > 78 && line.len() > 1 {
            out.push_str(&line);
            out.push('\n');
            line = String::from("!");
        }
        line.push(' ');
        line.push_str(word);
    }
    out.push_str(&line);
    out.push('\n');
    Some(out)
}

/// What a command prints after writing the files of `exported`: for a
/// program on several TAP ports, that the files work only interleaved, in
/// the order of the replay program. `None` for a program on one port.
pub fn interleave_warning(exported: &Exported) -> Option<String> {
    if exported.svf.len() < 2 {
        return None;
    }
    let ports: Vec<&str> = exported.svf.iter().map(|(p, _)| p.as_str()).collect();
    Some(format!(
        "warning: the {n} SVF files (TAP ports {ports}) work only interleaved, part by part \
         in the order of {replay}; a tester that runs them one after another gets cross-port \
         failures, and its EXTEST drivers can fight devices still under system logic",
        n = ports.len(),
        ports = ports.join(", "),
        replay = exported.replay.display(),
    ))
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
    let ports = program.ports();
    for port in &ports {
        let path = dir.join(format!("{stem}.{}.svf", safe_name(port)));
        let text =
            interleave_caution(&ports, port, &stem).unwrap_or_default() + &write_svf(program, port);
        write_atomic(&path, text.as_bytes())?;
        svf.push((port.clone(), path));
    }
    let replay = dir.join(format!("{stem}.replay.yaml"));
    write_atomic(&replay, replay_yaml(program, &stem).as_bytes())?;
    Ok(Exported { svf, replay })
}
