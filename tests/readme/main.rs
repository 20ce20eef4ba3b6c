//! The README, run as written: every shell block is one test case, run in README order in one temporary folder, with the built `boardtwin` first on the PATH.
//!
//! A fenced block's info string is its language, then markers (DEVELOPERS.md,
//! "The README is a test"):
//!
//! - `sh` (or `bash`, `shell`): run with `bash -e -o pipefail`; it must exit 0.
//!   - `exit=N`: it must exit N instead (put the failing command last).
//!   - `skip`: not run here (installing, building, the test suite itself);
//!     shown as an ignored case.
//!   - `needs=TOOL`: run only when TOOL is on the PATH; otherwise shown as
//!     ignored, or failed under `CI=true` or `BOARDTWIN_REQUIRE_TOOLS=1`.
//!   - `background`: started and left running (a server); the next block
//!     runs once it has printed its first line. It is stopped at the end.
//! - any language with `file=PATH`: the block's text is written to PATH
//!   (relative to the folder) for the blocks after it.
//! - any language with `output`: each of its lines must appear in what the
//!   last shell block printed (stdout, then stderr), `…` standing for any text.
//!
//! Blocks in other languages without markers are examples to read, not run.
//! The folder starts with copies of `scenarios/` and `ci/`, so the README's
//! paths work as they do from a clone's root. Blocks depend on the ones
//! before them (a capture written by one is read by the next), so they all
//! run once, in order, whichever case asks first; each case reports its own.

mod blocks;

use std::ffi::OsString;
use std::path::{Path, PathBuf};
use std::process::{Child, Command, ExitCode, Stdio};
use std::sync::OnceLock;
use std::time::{Duration, Instant};

use libtest_mimic::{Arguments, Failed, Trial};

use blocks::{Block, Kind};

/// Longest a block may run before it is stopped and fails.
const BLOCK_LIMIT: Duration = Duration::from_secs(600);
/// Longest a background block may take to print its first line.
const BACKGROUND_LIMIT: Duration = Duration::from_secs(60);
/// Most characters of a failing block's output shown.
const SHOWN: usize = 6000;

static BLOCKS: OnceLock<Vec<Block>> = OnceLock::new();
static RESULTS: OnceLock<Vec<Result<(), String>>> = OnceLock::new();

fn main() -> ExitCode {
    let args = Arguments::from_args();
    let readme = boardtwin::repo().join("README.md");
    let parsed = std::fs::read_to_string(&readme)
        .map_err(|e| e.to_string())
        .and_then(|t| blocks::blocks(&t));
    let all = match parsed {
        Ok(b) => BLOCKS.get_or_init(|| b),
        Err(e) => {
            eprintln!("{}: {e}", readme.display());
            return ExitCode::FAILURE;
        }
    };
    let require = tools_required();
    let mut trials = Vec::new();
    let mut last_shell_ignored = true;
    for (k, block) in all.iter().enumerate() {
        let ignored = match &block.kind {
            Kind::Example => continue,
            Kind::Skip => true,
            Kind::Needs { tool, .. } => {
                let missing = !on_path(tool);
                if missing && !require {
                    eprintln!(
                        "note: README line {}: `{tool}` is not on the PATH; the block is skipped",
                        block.line
                    );
                }
                missing && !require
            }
            Kind::Output => last_shell_ignored,
            Kind::Run { .. } | Kind::Background | Kind::File { .. } => false,
        };
        if matches!(
            block.kind,
            Kind::Run { .. } | Kind::Skip | Kind::Needs { .. } | Kind::Background
        ) {
            last_shell_ignored = ignored;
        }
        let trial = Trial::test(block.name(), move || outcome(k)).with_ignored_flag(ignored);
        trials.push(trial);
    }
    if !trials
        .iter()
        .any(|t| !t.has_ignored_flag() && t.name().contains(": boardtwin"))
    {
        eprintln!("README.md: no shell block runs `boardtwin`; the test would check nothing");
        return ExitCode::FAILURE;
    }
    libtest_mimic::run(&args, trials).exit_code()
}

/// True when a missing tool must fail its block: `BOARDTWIN_REQUIRE_TOOLS=1`,
/// or `CI=true` as CI services set it.
fn tools_required() -> bool {
    std::env::var("BOARDTWIN_REQUIRE_TOOLS").is_ok_and(|v| v == "1")
        || std::env::var("CI").is_ok_and(|v| v == "true" || v == "1")
}

/// The result of block `k`; the first call runs every block, in order.
fn outcome(k: usize) -> Result<(), Failed> {
    let blocks = BLOCKS.get().expect("set in main");
    let results = RESULTS.get_or_init(|| run_all(blocks));
    match &results[k] {
        Ok(()) => Ok(()),
        Err(e) => Err(e.as_str().into()),
    }
}

/// Runs every block in one fresh folder; one result per block.
fn run_all(blocks: &[Block]) -> Vec<Result<(), String>> {
    let folder = tempfile::Builder::new()
        .prefix("boardtwin-readme-")
        .tempdir()
        .expect("a temporary folder");
    let logs = tempfile::Builder::new()
        .prefix("boardtwin-readme-logs-")
        .tempdir()
        .expect("a temporary folder");
    let dir = folder.path();
    for sub in ["scenarios", "ci"] {
        copy_tree(&boardtwin::repo().join(sub), &dir.join(sub))
            .expect("copy the repository's files");
    }
    let bin = boardtwin::boardtwin_path();
    let mut path = OsString::from(bin.parent().expect("the binary's folder"));
    if let Some(old) = std::env::var_os("PATH") {
        path.push(":");
        path.push(old);
    }
    let require = tools_required();
    let mut background: Vec<Child> = Vec::new();
    let mut last_output: Option<String> = None;
    let mut results = Vec::new();
    for (k, block) in blocks.iter().enumerate() {
        let log = logs.path().join(format!("block-{k}"));
        let result = match &block.kind {
            Kind::Example => Ok(()),
            Kind::Skip => {
                last_output = None;
                Ok(())
            }
            Kind::Needs { tool, .. } if !on_path(tool) => {
                last_output = None;
                if require {
                    Err(format!(
                        "`{tool}` is not on the PATH (CI=true or BOARDTWIN_REQUIRE_TOOLS=1)"
                    ))
                } else {
                    Ok(())
                }
            }
            Kind::Run { exit } | Kind::Needs { exit, .. } => {
                let ran = run_block(block, dir, &path, &log);
                let result = ran.and_then(|(code, out)| {
                    let r = if code == Some(*exit) {
                        Ok(())
                    } else {
                        Err(format!(
                            "exit code {} (the README expects {exit})\n\n{}",
                            code.map_or("none (killed)".to_string(), |c| c.to_string()),
                            clip(&out)
                        ))
                    };
                    last_output = Some(out);
                    r
                });
                if result.is_err() && last_output.is_none() {
                    last_output = Some(String::new());
                }
                result
            }
            Kind::Background => match start_background(block, dir, &path, &log) {
                Ok(child) => {
                    background.push(child);
                    last_output = None;
                    Ok(())
                }
                Err(e) => Err(e),
            },
            Kind::File { path: file } => write_file(dir, file, &block.text),
            Kind::Output => match &last_output {
                Some(out) => check_output(&block.text, out),
                None => Ok(()),
            },
        };
        results.push(result);
    }
    for mut child in background {
        stop(&mut child);
    }
    results
}

/// Runs one shell block to its end (or the time limit): its exit code and
/// what it printed (stdout, then stderr).
fn run_block(
    block: &Block,
    dir: &Path,
    path: &OsString,
    log: &Path,
) -> Result<(Option<i32>, String), String> {
    let mut child = spawn(block, dir, path, log)?;
    let start = Instant::now();
    let status = loop {
        match child.try_wait() {
            Ok(Some(status)) => break Some(status),
            Ok(None) if start.elapsed() > BLOCK_LIMIT => {
                stop(&mut child);
                break None;
            }
            Ok(None) => std::thread::sleep(Duration::from_millis(20)),
            Err(e) => return Err(format!("waiting for bash: {e}")),
        }
    };
    let out = read_log(log);
    match status {
        Some(s) => Ok((s.code(), out)),
        None => Err(format!(
            "still running after {} s: stopped\n\n{}",
            BLOCK_LIMIT.as_secs(),
            clip(&out)
        )),
    }
}

/// Starts a background block and waits for its first line of output.
fn start_background(
    block: &Block,
    dir: &Path,
    path: &OsString,
    log: &Path,
) -> Result<Child, String> {
    let mut child = spawn(block, dir, path, log)?;
    let start = Instant::now();
    loop {
        let out = read_log(log);
        if out.contains('\n') {
            return Ok(child);
        }
        if let Ok(Some(status)) = child.try_wait() {
            return Err(format!(
                "ended ({status}) before it printed a line\n\n{}",
                clip(&out)
            ));
        }
        if start.elapsed() > BACKGROUND_LIMIT {
            stop(&mut child);
            return Err(format!(
                "printed no line in {} s: stopped",
                BACKGROUND_LIMIT.as_secs()
            ));
        }
        std::thread::sleep(Duration::from_millis(20));
    }
}

/// `bash -e -o pipefail` on the block's text, in its own process group, in
/// `dir`, with stdout in `log.out` and stderr in `log.err`.
fn spawn(block: &Block, dir: &Path, path: &OsString, log: &Path) -> Result<Child, String> {
    let file = |ext: &str| {
        std::fs::File::create(log.with_extension(ext))
            .map_err(|e| format!("{}: {e}", log.display()))
    };
    let mut command = Command::new("bash");
    command
        .args(["-e", "-o", "pipefail", "-c", &block.text])
        .current_dir(dir)
        .env("PATH", path)
        .env_remove("RUST_LOG")
        .stdin(Stdio::null())
        .stdout(file("out")?)
        .stderr(file("err")?);
    #[cfg(unix)]
    std::os::unix::process::CommandExt::process_group(&mut command, 0);
    command
        .spawn()
        .map_err(|e| format!("cannot start bash: {e}"))
}

/// Stops a block's whole process group (bash and what it started).
fn stop(child: &mut Child) {
    #[cfg(unix)]
    let _ = Command::new("kill")
        .args(["-KILL", "--", &format!("-{}", child.id())])
        .status();
    let _ = child.kill();
    let _ = child.wait();
}

fn read_log(log: &Path) -> String {
    let read = |ext: &str| std::fs::read_to_string(log.with_extension(ext)).unwrap_or_default();
    read("out") + &read("err")
}

/// Writes a `file=PATH` block under `dir`; PATH stays inside it.
fn write_file(dir: &Path, file: &str, text: &str) -> Result<(), String> {
    let rel = PathBuf::from(file);
    if rel.is_absolute()
        || rel
            .components()
            .any(|c| c == std::path::Component::ParentDir)
    {
        return Err(format!(
            "`{file}`: a file block's path stays inside the folder"
        ));
    }
    let path = dir.join(rel);
    if let Some(parent) = path.parent() {
        std::fs::create_dir_all(parent).map_err(|e| format!("{}: {e}", parent.display()))?;
    }
    std::fs::write(&path, text).map_err(|e| format!("{}: {e}", path.display()))
}

/// Every non-empty line of `expected` must match a line of `got`, in the
/// same order, where `…` stands for any text.
fn check_output(expected: &str, got: &str) -> Result<(), String> {
    let mut lines = got.lines();
    for want in expected.lines().filter(|l| !l.trim().is_empty()) {
        if !lines.any(|l| matches(want.trim(), l)) {
            return Err(format!(
                "the README shows\n  {want}\nbut the block before printed no such line (after the ones matched before it):\n\n{}",
                clip(got)
            ));
        }
    }
    Ok(())
}

/// Whether `line` holds the pieces of `pattern` between its `…`, in order.
fn matches(pattern: &str, line: &str) -> bool {
    let mut rest = line;
    for piece in pattern.split('…') {
        match rest.find(piece) {
            Some(at) => rest = &rest[at + piece.len()..],
            None => return false,
        }
    }
    true
}

fn on_path(tool: &str) -> bool {
    std::env::var_os("PATH")
        .is_some_and(|p| std::env::split_paths(&p).any(|d| d.join(tool).is_file()))
}

fn copy_tree(from: &Path, to: &Path) -> std::io::Result<()> {
    std::fs::create_dir_all(to)?;
    for entry in std::fs::read_dir(from)? {
        let entry = entry?;
        let target = to.join(entry.file_name());
        if entry.file_type()?.is_dir() {
            copy_tree(&entry.path(), &target)?;
        } else {
            std::fs::copy(entry.path(), &target)?;
        }
    }
    Ok(())
}

fn clip(text: &str) -> String {
    if text.chars().count() <= SHOWN {
        return text.to_string();
    }
    let tail: String = text
        .chars()
        .rev()
        .take(SHOWN)
        .collect::<Vec<_>>()
        .into_iter()
        .rev()
        .collect();
    format!("…{tail}")
}
