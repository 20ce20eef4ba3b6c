//! What the BSDL files say that the model does not simulate, on the command line: design warnings once per device, unmodelled attributes once per file at `-v`, and a file that is not text refused at its first bad byte.

use std::path::{Path, PathBuf};
use std::process::Output;

use crate::cli::{boardtwin, repo, stderr_of, stdout_of, temp_dir, ExitsWith};

fn devices() -> PathBuf {
    repo().join("scenarios/devices")
}

/// The DESIGN_WARNING string of a BSDL file, read here by text search (not
/// by the reader): every `"…"` piece from the attribute to its `;`, joined,
/// white space collapsed.
fn design_warning_of(file: &Path) -> String {
    let text = std::fs::read_to_string(file).expect("reads");
    let start = text.find("attribute DESIGN_WARNING").expect("has one");
    let value = &text[start..];
    let value = &value[..value.find(';').expect("ends")];
    let pieces: Vec<&str> = value.split('"').skip(1).step_by(2).collect();
    pieces
        .concat()
        .split_whitespace()
        .collect::<Vec<_>>()
        .join(" ")
}

/// The lines of `text` that contain `needle`.
fn lines_with<'a>(text: &'a str, needle: &str) -> Vec<&'a str> {
    text.lines().filter(|l| l.contains(needle)).collect()
}

/// Stderr of a run that passed and warned each of `warnings` once, in
/// order, and said nothing of unmodelled attributes.
fn warned_once(out: &Output, warnings: &[&str]) -> String {
    let stderr = stderr_of(out);
    assert_eq!(out.status.code(), Some(0), "{stderr}");
    let warned = lines_with(&stderr, "design warning");
    assert_eq!(warned.len(), warnings.len(), "{stderr}");
    for (line, w) in warned.iter().zip(warnings) {
        assert!(line.ends_with(w), "{stderr}");
    }
    assert_eq!(lines_with(&stderr, "not modelled"), Vec::<&str>::new());
    stderr
}

fn run(args: &[&str], dir: &Path) -> Output {
    boardtwin()
        .args(args)
        .current_dir(dir)
        .output()
        .expect("runs")
}

// IEEE 1149.1-2001 Annex B (from memory): DESIGN_WARNING is the device
// maker's note to the test engineer, so it is shown with the device (not as
// a "not modelled" warning), once per device of the board.
#[test]
fn design_warnings_show_once_per_device() {
    let u1 = design_warning_of(&devices().join("qm7420_bus_bridge.bsd"));
    let u3 = design_warning_of(&devices().join("qm5508_port_controller.bsd"));
    assert!(u1.starts_with("EXTEST drives LB_D"), "{u1}");
    let w1 = format!("design warning for U1 (QM7420): {u1}");
    let w3 = format!("design warning for U3 (QM5508): {u3}");
    let here = repo();

    // `device`: the text, wrapped, under its own heading.
    let out = run(
        &["device", "scenarios/devices/qm7420_bus_bridge.bsd"],
        &here,
    );
    assert_eq!(out.status.code(), Some(0), "{}", stderr_of(&out));
    let text = stdout_of(&out);
    let section = text
        .split("design warning (from the device maker)\n")
        .nth(1)
        .expect("a design warning section");
    let shown: Vec<&str> = section
        .lines()
        .take_while(|l| l.starts_with("  "))
        .flat_map(str::split_whitespace)
        .collect();
    assert_eq!(shown.join(" "), u1);
    assert_eq!(
        lines_with(&stderr_of(&out), "not modelled"),
        Vec::<&str>::new()
    );

    // `board`: in the summary, once per part; no warning on stderr.
    let out = run(&["board", "scenarios/boards/harbor_controller.yaml"], &here);
    assert_eq!(out.status.code(), Some(0), "{}", stderr_of(&out));
    assert_eq!(lines_with(&stdout_of(&out), "design warning"), [&w1, &w3]);
    assert_eq!(stderr_of(&out), "");

    // `play`: on stderr, once each, before the run.
    let out = run(
        &[
            "play",
            "--board",
            "scenarios/boards/harbor_controller.yaml",
            "scenarios/programs/infrastructure.yaml",
        ],
        &here,
    );
    warned_once(&out, &[&w1, &w3]);

    // `run`: once for the whole run, though every scenario loads the board,
    // and never with the temporary folder the demo is unpacked into.
    let dir = temp_dir("notes-run");
    let out = run(&["run"], &dir);
    let stderr = warned_once(&out, &[&w1, &w3]);
    let temp = std::env::temp_dir().display().to_string();
    assert!(!stderr.contains(&temp), "{stderr}");
    let _ = std::fs::remove_dir_all(&dir);
}

// Common practice: attributes a reader does not use are mentioned, not
// repeated on every command: one line per file, at `-v` only.
#[test]
fn unmodelled_attributes_are_one_line_per_file_at_v() {
    let here = repo();
    let line = "scenarios/devices/qm2040_clock_buffer.bsd: QM2040 attributes not modelled, kept by name: REGISTER_MNEMONICS, REGISTER_FIELDS";
    let out = run(
        &["-v", "board", "scenarios/boards/harbor_controller.yaml"],
        &here,
    );
    assert_eq!(out.status.code(), Some(0), "{}", stderr_of(&out));
    let stderr = stderr_of(&out);
    let said = lines_with(&stderr, "not modelled");
    assert_eq!(said.len(), 1, "{stderr}");
    assert!(said[0].ends_with(line), "{stderr}");

    // `run -v` on the demo: the same line once, the file named inside the
    // demo, not inside the temporary folder it is unpacked into.
    let dir = temp_dir("notes-run-v");
    let out = run(&["-v", "run"], &dir);
    assert_eq!(out.status.code(), Some(0), "{}", stderr_of(&out));
    let stderr = stderr_of(&out);
    let said = lines_with(&stderr, "not modelled");
    assert_eq!(said.len(), 1, "{stderr}");
    assert!(
        said[0].ends_with(line.trim_start_matches("scenarios/")),
        "{stderr}"
    );
    assert!(
        !said[0].contains(&std::env::temp_dir().display().to_string()),
        "{stderr}"
    );
    let _ = std::fs::remove_dir_all(&dir);
}

// Common practice: a BSDL file is plain text. A binary file given by
// mistake is refused at its first bad byte (exit 2), with no source line
// printed under the message.
#[test]
fn a_bsdl_file_that_is_not_text_exits_2_at_its_first_bad_byte() {
    let dir = temp_dir("not-text");
    let path = dir.join("image.bsd");
    // Two text lines, then bytes that are not UTF-8.
    std::fs::write(&path, b"-- a BSDL file\n-- saved as \xe9t\xe9\n").unwrap();
    let out = boardtwin().arg("device").arg(&path).exits(2);
    assert_eq!(stdout_of(&out), "");
    assert_eq!(
        stderr_of(&out),
        format!(
            "error: {}:2:13: the file is not text: byte 0xE9 is not UTF-8 (a BSDL file is plain ASCII or UTF-8 text)\n",
            path.display()
        )
    );
    let _ = std::fs::remove_dir_all(&dir);
}
