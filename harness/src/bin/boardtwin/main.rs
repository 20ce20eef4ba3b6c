//! `boardtwin`: the command line of the virtual board (exit 0 passed, 1 a check failed, 2 bad input or usage).

mod args;
mod cmd;
mod exercise_args;
mod pipe;

use std::io::{self, IsTerminal, Write};
use std::path::{Path, PathBuf};
use std::process::ExitCode;

use clap::Parser;
use harness::capture::CaptureError;
use harness::program::native::ProgramError;
use harness::SourceSnippet;
use tracing_subscriber::{filter::LevelFilter, EnvFilter};
use virtual_board::{BoardError, BoardErrorKind, BsdlError, BsdlErrorKind, Span};

use crate::args::Args;

/// Exit code when the command could not run: bad input, bad usage, I/O.
const EXIT_ERROR: u8 = 2;

/// Set by `-q`: progress bars stay hidden too.
pub static QUIET: std::sync::atomic::AtomicBool = std::sync::atomic::AtomicBool::new(false);

fn main() -> ExitCode {
    let args = match Args::try_parse() {
        Ok(args) => args,
        Err(err) => {
            // Help and version go to stdout and exit 0; usage errors go to
            // stderr and exit 2 (clap's codes).
            let _ = err.print();
            return ExitCode::from(u8::try_from(err.exit_code()).unwrap_or(EXIT_ERROR));
        }
    };
    init_tracing(args.verbose, args.quiet);

    // A reader that closes stdout early does not change the exit code.
    let mut out = io::BufWriter::new(pipe::PipeSink::new(io::stdout().lock()));
    let result = cmd::run(&args.command, &mut out).and_then(|outcome| {
        out.flush()?;
        Ok(outcome)
    });
    match result {
        Ok(outcome) => outcome.exit_code(),
        // A broken pipe elsewhere is not success: the verdict is unknown.
        Err(err) if is_broken_pipe(&err) => ExitCode::from(EXIT_ERROR),
        Err(err) => {
            // Whatever data came before the error goes out first.
            if out.flush().is_err() {
                return ExitCode::from(EXIT_ERROR);
            }
            print_error(&err);
            ExitCode::from(EXIT_ERROR)
        }
    }
}

/// Logs to stderr: warnings by default, more with each `-v`, errors only
/// with `-q` (whatever `RUST_LOG` says). `RUST_LOG` directives apply
/// otherwise; `-v` raises the default level on top of them.
fn init_tracing(verbose: u8, quiet: bool) {
    if quiet {
        QUIET.store(true, std::sync::atomic::Ordering::Relaxed);
        let _ = tracing_subscriber::fmt()
            .with_max_level(LevelFilter::ERROR)
            .with_writer(io::stderr)
            .with_ansi(io::stderr().is_terminal())
            .without_time()
            .try_init();
        return;
    }
    let level = match verbose {
        0 => LevelFilter::WARN,
        1 => LevelFilter::INFO,
        2 => LevelFilter::DEBUG,
        _ => LevelFilter::TRACE,
    };
    let mut filter = EnvFilter::builder()
        .with_default_directive(LevelFilter::WARN.into())
        .from_env_lossy();
    if verbose > 0 {
        filter = filter.add_directive(level.into());
    }
    let _ = tracing_subscriber::fmt()
        .with_env_filter(filter)
        .with_writer(io::stderr)
        .with_ansi(io::stderr().is_terminal())
        .with_target(verbose > 0)
        .without_time()
        .try_init();
}

/// True when an output was closed under us: exit quietly, but not with 0.
fn is_broken_pipe(err: &anyhow::Error) -> bool {
    err.chain().any(|cause| {
        cause
            .downcast_ref::<io::Error>()
            .is_some_and(|e| e.kind() == io::ErrorKind::BrokenPipe)
    })
}

/// `error: path:line:col: message`, then the line with a caret under the place
/// when the error has one and the file can still be read.
fn print_error(err: &anyhow::Error) {
    let mut stderr = io::stderr().lock();
    let place = place_of(err);
    let message = match err.downcast_ref::<BsdlError>() {
        // No place in the file: `path: message`, not `path:0:0: message`.
        Some(
            e @ BsdlError {
                path: Some(path),
                kind: BsdlErrorKind::Io(_),
                ..
            },
        ) => {
            format!("{}: {}", path.display(), e.kind)
        }
        _ => format!("{err:#}"),
    };
    let _ = writeln!(stderr, "error: {message}");
    // A file that is not text has no line worth printing.
    let binary = err.chain().any(|cause| {
        cause.downcast_ref::<BsdlError>().is_some_and(is_not_text)
            || cause.downcast_ref::<BoardError>().is_some_and(
                |e| matches!(&*e.kind, BoardErrorKind::Bsdl { error, .. } if is_not_text(error)),
            )
    });
    if let (Some((path, span)), false) = (place, binary) {
        if let Some(snippet) = snippet(&path, span) {
            let _ = write!(stderr, "{snippet}");
        }
    }
}

/// The file and span an error points at, for the error types that carry one.
fn place_of(err: &anyhow::Error) -> Option<(PathBuf, Span)> {
    err.chain().find_map(|cause| {
        if let Some(e) = cause.downcast_ref::<BoardError>() {
            // A BSDL problem found while loading a board: show the BSDL line.
            if let BoardErrorKind::Bsdl { error, .. } = &*e.kind {
                if let (Some(path), true) = (&error.path, error.span.line > 0) {
                    return Some((path.clone(), error.span));
                }
            }
            if let BoardErrorKind::Device {
                bsdl: Some((path, span)),
                ..
            } = &*e.kind
            {
                return Some((path.clone(), *span));
            }
            return (e.span.line > 0).then_some((e.path.clone(), e.span));
        }
        // Programs (native YAML, SVF, included SVF files) and real captures.
        if let Some(e) = cause.downcast_ref::<ProgramError>() {
            return (e.span.line > 0).then_some((e.path.clone(), e.span));
        }
        if let Some(e) = cause.downcast_ref::<CaptureError>() {
            return e
                .span
                .filter(|s| s.line > 0)
                .map(|span| (e.path.clone(), span));
        }
        let e = cause.downcast_ref::<BsdlError>()?;
        let path = e.path.clone()?;
        (e.span.line > 0).then_some((path, e.span))
    })
}

fn is_not_text(e: &BsdlError) -> bool {
    matches!(
        e.kind,
        BsdlErrorKind::NotUtf8(_) | BsdlErrorKind::ControlCharacter(_)
    )
}

fn snippet(path: &Path, span: Span) -> Option<SourceSnippet> {
    let text = std::fs::read_to_string(path).ok()?;
    SourceSnippet::new(&text, span)
}
