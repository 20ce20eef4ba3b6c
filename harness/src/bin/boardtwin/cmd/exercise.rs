//! `boardtwin exercise key | new | show | serve | submit`: training on
//! hidden faulted boards (`harness::training`).

use std::io::Write;
use std::net::SocketAddr;
use std::sync::Arc;
use std::time::Duration;

use anyhow::Context;
use harness::remote::{
    parse_target, run as serve_until, split_client_name, BoardService, RemoteBoard, Reply, Request,
    ServerConfig,
};
use harness::training::{draw, new_key_hex, read_key, serve_http, Class, Exercise, Level, Web};

use super::Outcome;
use crate::exercise_args::{
    ClassArgs, ExerciseAction, ExerciseArgs, NewArgs, ShowArgs, SubmitArgs,
};

/// Runs one `exercise` subcommand.
pub fn run(args: &ExerciseArgs, out: &mut dyn Write) -> anyhow::Result<Outcome> {
    match &args.action {
        ExerciseAction::Key => {
            writeln!(out, "{}", new_key_hex()?)?;
            Ok(Outcome::Passed)
        }
        ExerciseAction::New(a) => new(a, out),
        ExerciseAction::Show(a) => show(a, out),
        ExerciseAction::Serve(a) => serve(a, out),
        ExerciseAction::Submit(a) => submit(a, out),
    }
}

fn new(args: &NewArgs, out: &mut dyn Write) -> anyhow::Result<Outcome> {
    let key = read_key(args.key.key_file.as_deref())?;
    let levels = Level::parse_spec(&args.draw)?;
    let design = virtual_board::load_board(&args.board)?;
    let defects = draw(&design, &levels, args.seed)?;
    let board = std::fs::canonicalize(&args.board)
        .with_context(|| format!("{}: cannot resolve the path", args.board.display()))?;
    let exercise = Exercise {
        board,
        board_name: design.board.name().to_string(),
        draw: args.draw.clone(),
        seed: args.seed,
        defects,
    };
    harness::write_atomic(&args.output, &exercise.seal(&key))
        .with_context(|| format!("{}: cannot write the exercise", args.output.display()))?;
    writeln!(
        out,
        "sealed exercise written to {} (board {}, {}, seed {}); `exercise show` with the key reveals them",
        args.output.display(),
        exercise.board_name,
        harness::count(exercise.defects.len(), "hidden defect"),
        exercise.seed
    )?;
    Ok(Outcome::Passed)
}

fn show(args: &ShowArgs, out: &mut dyn Write) -> anyhow::Result<Outcome> {
    let key = read_key(args.key.key_file.as_deref())?;
    let exercise = Exercise::read(&args.file, &key)?;
    if args.json {
        serde_json::to_writer_pretty(&mut *out, &exercise)?;
        writeln!(out)?;
        return Ok(Outcome::Passed);
    }
    writeln!(
        out,
        "exercise on board {} ({}), drawn at {} with seed {}",
        exercise.board_name,
        exercise.board.display(),
        exercise.draw,
        exercise.seed
    )?;
    writeln!(out, "the answer:")?;
    for line in exercise.answer() {
        writeln!(out, "  {line}")?;
    }
    Ok(Outcome::Passed)
}

fn serve(args: &ClassArgs, out: &mut dyn Write) -> anyhow::Result<Outcome> {
    let key = read_key(args.key.key_file.as_deref())?;
    let exercise = Exercise::read(&args.file, &key)?;
    let board_path = args.board.clone().unwrap_or_else(|| exercise.board.clone());
    let design = virtual_board::load_board(&board_path)?;
    if design.board.name() != exercise.board_name {
        anyhow::bail!(
            "{}: the exercise was made on board `{}`, this file is board `{}`",
            board_path.display(),
            exercise.board_name,
            design.board.name()
        );
    }
    if let Some(dir) = &args.scores {
        std::fs::create_dir_all(dir)
            .with_context(|| format!("{}: cannot make the score sheet folder", dir.display()))?;
    }
    let class = Arc::new(Class::new(design.clone(), &exercise, args.scores.clone())?);
    let runtime = tokio::runtime::Builder::new_multi_thread()
        .enable_all()
        .build()
        .context("starting the server's runtime")?;
    let listener = bind(&runtime, "--listen", &args.listen, args.allow_network)?;
    let bound = listener.local_addr()?;
    if !bound.ip().is_loopback() {
        eprintln!("warning: serving the exercise on {bound}, reachable from other machines; the protocol is not encrypted");
    }
    writeln!(
        out,
        "serving an exercise on board {} at tcp://{bound}; trainees connect as tcp://NAME@{bound}",
        design.board.name()
    )?;
    out.flush()?;
    let web = match &args.http {
        Some(http) => {
            let listener = bind(&runtime, "--http", http, args.allow_network)?;
            let page = listener.local_addr()?;
            writeln!(out, "the trainees' page: http://{page}/")?;
            let web = Arc::new(Web::new(
                Arc::clone(&class),
                design.clone(),
                args.programs.as_deref(),
            ));
            Some((listener, web))
        }
        None => None,
    };
    out.flush()?;
    if let Some((listener, web)) = web {
        runtime.spawn(serve_http(listener, web, std::future::pending::<()>()));
    }
    let service = Arc::new(BoardService::with_classroom(design, class));
    let config = ServerConfig {
        idle_timeout: Duration::from_secs(3600),
        ..ServerConfig::default()
    };
    runtime.block_on(serve_until(
        listener,
        service,
        config,
        super::serve::stop_signal(),
    ));
    writeln!(out, "stopped")?;
    Ok(Outcome::Passed)
}

/// Binds `text` (`ADDR:PORT`, given as `flag`), on loopback unless `allow_network`.
fn bind(
    runtime: &tokio::runtime::Runtime,
    flag: &str,
    text: &str,
    allow_network: bool,
) -> anyhow::Result<tokio::net::TcpListener> {
    let at: SocketAddr = text.parse().with_context(|| {
        format!(
            "{flag} {}: give an address and port, e.g. 127.0.0.1:7150",
            virtual_board::clip(text)
        )
    })?;
    if !at.ip().is_loopback() && !allow_network {
        anyhow::bail!(
            "{flag} {at} is not a loopback address: other machines could reach the class; add --allow-network to mean it"
        );
    }
    runtime
        .block_on(tokio::net::TcpListener::bind(at))
        .with_context(|| format!("cannot listen on {at}"))
}

fn submit(args: &SubmitArgs, out: &mut dyn Write) -> anyhow::Result<Outcome> {
    let (name, bare) = split_client_name(&args.target);
    let Some(name) = name else {
        anyhow::bail!(
            "--target {}: give your name before the address, tcp://NAME@HOST:PORT",
            virtual_board::clip(&args.target)
        );
    };
    let defects = super::play::read_defects(&args.defects, args.defects_file.as_deref())?;
    if defects.is_empty() {
        anyhow::bail!(
            "no diagnosis: give --defect YAML (repeat for several) or --defects-file FILE"
        );
    }
    let address = parse_target(&bare)?;
    let mut remote = RemoteBoard::connect_as(&address, Duration::from_secs(300), &name)?;
    let reply = remote.call(&Request::Submit { defects })?;
    let _ = remote.bye();
    let grade = match reply {
        Reply::Grade(g) => g,
        Reply::Error { message, .. } => anyhow::bail!("the exercise server refused: {message}"),
        other => anyhow::bail!(
            "the exercise server answered {} to a submission",
            other.what()
        ),
    };
    let debrief = grade
        .get("debrief")
        .and_then(|d| d.as_str())
        .unwrap_or_default()
        .to_string();
    if let Some(path) = &args.debrief {
        harness::write_atomic(path, debrief.as_bytes())
            .with_context(|| format!("{}: cannot write the debrief", path.display()))?;
    }
    if args.json {
        serde_json::to_writer_pretty(&mut *out, &grade)?;
        writeln!(out)?;
    } else {
        write!(out, "{debrief}")?;
    }
    let verdict = grade.get("verdict").and_then(|v| v.as_str()).unwrap_or("");
    Ok(match verdict {
        "exact" | "within-group" => Outcome::Passed,
        _ => Outcome::Failed,
    })
}
