//! The `boardtwin` command line, run as a process: exit codes, output and error messages.

use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};

use assert_cmd::prelude::*;
use serde_json::Value;

pub fn boardtwin() -> Command {
    let mut cmd = Command::new(::boardtwin::boardtwin_path());
    cmd.env_remove("RUST_LOG");
    cmd
}

pub fn repo() -> PathBuf {
    ::boardtwin::repo()
}

/// Demo BSDL files, sorted; at least one (a test over none would prove nothing).
fn demo_devices() -> Vec<PathBuf> {
    let dir = repo().join("scenarios").join("devices");
    let mut files: Vec<PathBuf> = std::fs::read_dir(&dir)
        .map(|entries| {
            entries
                .filter_map(|e| e.ok().map(|e| e.path()))
                .filter(|p| p.extension().is_some_and(|x| x.eq_ignore_ascii_case("bsd")))
                .collect()
        })
        .unwrap_or_default();
    files.sort();
    assert!(
        !files.is_empty(),
        "no BSDL files under {}: the demo files are missing",
        dir.display()
    );
    files
}

/// A fresh folder of our own under the system temp folder, removed when
/// the value is dropped (at the end of the test that made it).
pub fn temp_dir(name: &str) -> Scratch {
    let dir = tempfile::Builder::new()
        .prefix(&format!("boardtwin-cli-{name}-"))
        .tempdir()
        .expect("create temp dir");
    Scratch(dir)
}

/// A temporary folder that derefs to its path and is removed on drop.
pub struct Scratch(tempfile::TempDir);

impl std::ops::Deref for Scratch {
    type Target = Path;
    fn deref(&self) -> &Path {
        self.0.path()
    }
}

impl AsRef<Path> for Scratch {
    fn as_ref(&self) -> &Path {
        self.0.path()
    }
}

impl AsRef<std::ffi::OsStr> for Scratch {
    fn as_ref(&self) -> &std::ffi::OsStr {
        self.0.path().as_os_str()
    }
}

pub fn stdout_of(output: &std::process::Output) -> String {
    String::from_utf8_lossy(&output.stdout).into_owned()
}

pub fn stderr_of(output: &std::process::Output) -> String {
    String::from_utf8_lossy(&output.stderr).into_owned()
}

/// A small valid BSDL text (invented device, demo data of our own) with
/// `cells` BC_1 input cells on port `IN_D`; `bad_port`, when given, is
/// written as the last cell's port instead.
fn small_bsdl(cells: usize, bad_port: Option<&str>) -> String {
    let mut text = String::new();
    text.push_str("entity WIDE is\n");
    text.push_str("  generic (PHYSICAL_PIN_MAP : string := \"P\");\n");
    text.push_str(&format!(
        "  port (IN_D : in bit_vector(0 to {}); TCK, TMS, TDI : in bit; TDO : out bit);\n",
        cells - 1
    ));
    text.push_str("  use STD_1149_1_2001.all;\n");
    text.push_str("  attribute PIN_MAP of WIDE : entity is PHYSICAL_PIN_MAP;\n");
    text.push_str("  constant P : PIN_MAP_STRING := \"TCK:1, TMS:2, TDI:3, TDO:4, \" &\n");
    let pins: Vec<String> = (0..cells).map(|i| (i + 5).to_string()).collect();
    text.push_str(&format!("    \"IN_D:({})\";\n", pins.join(",")));
    text.push_str("  attribute TAP_SCAN_IN of TDI : signal is true;\n");
    text.push_str("  attribute TAP_SCAN_MODE of TMS : signal is true;\n");
    text.push_str("  attribute TAP_SCAN_OUT of TDO : signal is true;\n");
    text.push_str("  attribute TAP_SCAN_CLOCK of TCK : signal is (10.0e6, BOTH);\n");
    text.push_str("  attribute INSTRUCTION_LENGTH of WIDE : entity is 2;\n");
    text.push_str(
        "  attribute INSTRUCTION_OPCODE of WIDE : entity is \"EXTEST (00), SAMPLE (01), BYPASS (11)\";\n",
    );
    text.push_str("  attribute INSTRUCTION_CAPTURE of WIDE : entity is \"01\";\n");
    text.push_str(&format!(
        "  attribute BOUNDARY_LENGTH of WIDE : entity is {cells};\n"
    ));
    text.push_str("  attribute BOUNDARY_REGISTER of WIDE : entity is\n");
    for i in 0..cells {
        let last = i + 1 == cells;
        let port = match bad_port {
            Some(bad) if last => bad.to_string(),
            _ => format!("IN_D({i})"),
        };
        let (comma, join) = if last { ("", ";") } else { (",", " &") };
        text.push_str(&format!(
            "    \"{i} (BC_1, {port}, INPUT, X){comma}\"{join}\n"
        ));
    }
    text.push_str("end WIDE;\n");
    text
}

/// IR and boundary lengths of the demo parts, read by hand from each BSDL
/// file's INSTRUCTION_LENGTH and BOUNDARY_LENGTH attributes.
const DEMO_LENGTHS: [(&str, u64, u64); 4] = [
    ("QM2040", 5, 12),
    ("QM3310", 6, 29),
    ("QM5508", 8, 50),
    ("QM7420", 4, 40),
];

/// A round trip (the command's JSON against the library's own model of the
/// same file), plus the lengths above and the IDCODE layout of the standard.
#[test]
fn device_json_round_trips_the_model_of_every_demo_file() {
    let mut seen = Vec::new();
    for path in demo_devices() {
        let model = virtual_board::read_bsdl(&path)
            .unwrap_or_else(|e| panic!("the library rejects a demo file: {e}"));

        let text = boardtwin().arg("device").arg(&path).unwrap();
        let shown = stdout_of(&text);
        assert!(
            shown.starts_with(&format!("device {}\n", model.entity)),
            "{}:\n{shown}",
            path.display()
        );

        let output = boardtwin().arg("device").arg(&path).arg("--json").unwrap();
        let json: Value = serde_json::from_str(&stdout_of(&output))
            .unwrap_or_else(|e| panic!("{}: --json is not JSON: {e}", path.display()));
        for key in [
            "entity",
            "package",
            "ir_length",
            "idcode",
            "boundary_length",
            "instructions",
            "cells",
            "registers",
            "pins",
        ] {
            assert!(json.get(key).is_some(), "{}: no key {key}", path.display());
        }
        let at = path.display();
        let entity = json["entity"].as_str().unwrap_or_default().to_string();
        let (_, ir, cells) = DEMO_LENGTHS
            .iter()
            .find(|(e, _, _)| *e == entity)
            .unwrap_or_else(|| panic!("{at}: no hand-read lengths for `{entity}`"));
        assert_eq!(json["ir_length"], *ir, "{at}");
        assert_eq!(json["boundary_length"], *cells, "{at}");
        seen.push(entity);
        assert_eq!(json["entity"], model.entity.as_str(), "{at}");
        assert_eq!(json["package"], model.package.as_str(), "{at}");
        assert_eq!(json["ir_length"], model.ir_length, "{at}");
        assert_eq!(json["boundary_length"], model.boundary_length, "{at}");
        assert_eq!(
            json["cells"].as_array().map(Vec::len),
            Some(model.cells.len()),
            "{at}"
        );
        let instructions = json["instructions"]
            .as_object()
            .expect("instructions object");
        assert_eq!(instructions.len(), model.instructions.len(), "{at}");
        for ins in &model.instructions {
            let opcodes: Vec<String> = ins.opcodes.iter().map(ToString::to_string).collect();
            assert_eq!(
                instructions[&ins.name],
                serde_json::json!(opcodes),
                "{at} {}",
                ins.name
            );
        }
        for (row, cell) in json["cells"]
            .as_array()
            .into_iter()
            .flatten()
            .zip(&model.cells)
        {
            assert_eq!(row["num"], cell.num, "{at}");
            assert_eq!(row["function"], cell.function.as_str(), "{at}");
            assert_eq!(
                row["control_cell"],
                serde_json::json!(cell.control.map(|c| c.cell)),
                "{at}"
            );
        }

        match &model.idcode {
            None => assert_eq!(json["idcode"], Value::Null, "{at}"),
            Some(pattern) => {
                assert_eq!(
                    json["idcode"],
                    format!("0x{:08x}", pattern.value_u64()),
                    "{at}"
                );
                assert_eq!(
                    json["idcode_mask"],
                    format!("0x{:08x}", pattern.mask_u64()),
                    "{at}"
                );
                assert_eq!(json["idcode_pattern"], pattern.to_string(), "{at}");
                // IEEE 1149.1 clause 10 (from memory): MSB first, bits 31:28
                // version, 27:12 part number, 11:1 manufacturer, bit 0 = 1.
                let bits = pattern.to_string();
                assert_eq!(&bits[31..], "1", "{at}");
                let fields = &json["idcode_fields"];
                assert_eq!(fields["version"]["bits"], &bits[0..4], "{at}");
                assert_eq!(fields["part_number"]["bits"], &bits[4..20], "{at}");
                assert_eq!(fields["manufacturer"]["bits"], &bits[20..31], "{at}");
                if !bits[4..20].contains('X') {
                    let part = u32::from_str_radix(&bits[4..20], 2).expect("binary");
                    assert_eq!(
                        fields["part_number"]["value"],
                        format!("0x{part:04x}"),
                        "{at}"
                    );
                }
            }
        }
    }
    seen.sort();
    assert_eq!(seen, ["QM2040", "QM3310", "QM5508", "QM7420"]);
}

#[test]
fn a_bad_bsdl_file_exits_2_with_its_place_and_a_caret() {
    let dir = temp_dir("bad");
    let path = dir.join("bad.bsd");
    let text = small_bsdl(4, Some("NO_SUCH_PORT"));
    std::fs::write(&path, &text).expect("write bad.bsd");

    // Where the planted error is, counted here from the text itself.
    let offset = text.find("NO_SUCH_PORT").expect("planted");
    let line = text[..offset].matches('\n').count() + 1;
    let line_start = text[..offset].rfind('\n').map_or(0, |i| i + 1);
    let column = text[line_start..offset].chars().count() + 1;
    let source_line = text.lines().nth(line - 1).expect("line");

    let output = boardtwin().arg("device").arg(&path).exits(2);
    assert_eq!(stdout_of(&output), "");
    let stderr = stderr_of(&output);
    let lines: Vec<&str> = stderr.lines().collect();
    let gutter = " ".repeat(line.to_string().len());
    assert_eq!(
        lines,
        [
            format!(
                "error: {}:{line}:{column}: `NO_SUCH_PORT` is not a port of this entity",
                path.display()
            ),
            format!("{gutter} |"),
            format!("{line} | {source_line}"),
            format!(
                "{gutter} | {}{}",
                " ".repeat(column - 1),
                "^".repeat("NO_SUCH_PORT".len())
            ),
        ],
        "stderr was:\n{stderr}"
    );
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn a_good_generated_file_reads_and_its_counts_match() {
    let dir = temp_dir("good");
    let path = dir.join("wide.bsd");
    std::fs::write(&path, small_bsdl(16, None)).expect("write wide.bsd");
    let output = boardtwin().arg("device").arg(&path).arg("--json").unwrap();
    let json: Value = serde_json::from_str(&stdout_of(&output)).expect("JSON");
    assert_eq!(json["entity"], "WIDE");
    assert_eq!(json["boundary_length"], 16);
    assert_eq!(json["cell_functions"], serde_json::json!({"INPUT": 16}));
    assert_eq!(json["idcode"], Value::Null);
    // BYPASS is one bit (IEEE 1149.1 clause 10, from memory).
    assert_eq!(
        json["registers"][0],
        serde_json::json!({"name": "BYPASS", "length": 1, "instructions": ["BYPASS"]})
    );
    assert_eq!(json["pin_count"], 20);
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn a_missing_file_exits_2() {
    let path = temp_dir("missing").join("absent.bsd");
    let output = boardtwin().arg("device").arg(&path).exits(2);
    let stderr = stderr_of(&output);
    assert!(
        stderr.starts_with(&format!(
            "error: {}: cannot read the file: ",
            path.display()
        )),
        "{stderr}"
    );
    assert_eq!(stderr.lines().count(), 1, "{stderr}");
}

#[test]
fn usage_errors_exit_2() {
    for args in [
        &["frobnicate"][..],
        &[],
        &["device"],
        &["device", "a.bsd", "--colour"],
    ] {
        let output = boardtwin().args(args).output().expect("run");
        assert_eq!(output.status.code(), Some(2), "boardtwin {args:?}");
        assert!(!stderr_of(&output).is_empty(), "boardtwin {args:?}");
    }
}

#[test]
fn help_and_version_exit_0() {
    let output = boardtwin().arg("--help").unwrap();
    assert!(stdout_of(&output).contains("Usage: boardtwin"));
    assert!(stdout_of(&output).contains("device"));
    let output = boardtwin().args(["device", "--help"]).unwrap();
    assert!(stdout_of(&output).contains("--json"));
    let output = boardtwin().arg("--version").unwrap();
    assert_eq!(
        stdout_of(&output),
        format!("boardtwin {}\n", env!("CARGO_PKG_VERSION"))
    );
}

#[test]
fn a_closed_stdout_exits_quietly() {
    let dir = temp_dir("pipe");
    let path = dir.join("wide.bsd");
    // Enough cells that the JSON is far larger than a pipe's buffer.
    std::fs::write(&path, small_bsdl(3000, None)).expect("write wide.bsd");
    let mut child = boardtwin()
        .arg("device")
        .arg(&path)
        .arg("--json")
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("spawn");
    drop(child.stdout.take());
    let output = child.wait_with_output().expect("wait");
    assert_eq!(output.status.code(), Some(0));
    assert_eq!(stderr_of(&output), "");
    let _ = std::fs::remove_dir_all(&dir);
}

/// Runs a `boardtwin` command and checks its exit code.
pub trait ExitsWith {
    /// Runs the command to its end, asserts it exited with `code` (showing
    /// its stderr when not) and returns its output.
    fn exits(&mut self, code: i32) -> std::process::Output;
}

impl ExitsWith for Command {
    fn exits(&mut self, code: i32) -> std::process::Output {
        let out = self.output().expect("boardtwin runs");
        assert_eq!(out.status.code(), Some(code), "{}", stderr_of(&out));
        out
    }
}
