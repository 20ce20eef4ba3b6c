//! `boardtwin serve --board B`: the virtual board over TCP until Ctrl-C or
//! SIGTERM, which let the requests in flight finish.

use std::io::Write;
use std::net::SocketAddr;
use std::sync::Arc;
use std::time::Duration;

use anyhow::Context;
use harness::remote::{admin_token, run, BoardService, ServerConfig};

use super::Outcome;
use crate::args::ServeArgs;

/// Loads the board, binds, prints the address, serves until a signal.
pub fn run_serve(args: &ServeArgs, out: &mut dyn Write) -> anyhow::Result<Outcome> {
    let design = tracing::warn_span!("board", file = %args.board.display())
        .in_scope(|| virtual_board::load_board(&args.board))?;
    let defects = super::play::read_defects(&[], args.defects.as_deref())?;
    let faulty = if defects.is_empty() {
        design.board.clone()
    } else {
        let mut source = virtual_board::bsdl_files_beside(&args.board);
        design
            .with_defects(&defects, &mut source)
            .map_err(|e| super::play::locate_defect(0, args.defects.as_deref(), e))?
            .board
    };
    let token = admin_token(args.admin_token_file.as_deref())?;
    let address: SocketAddr = args.listen.parse().with_context(|| {
        format!(
            "--listen {}: give an address and port, e.g. 127.0.0.1:7149",
            virtual_board::clip(&args.listen)
        )
    })?;
    if !address.ip().is_loopback() && !args.allow_network {
        anyhow::bail!(
            "--listen {address} is not a loopback address: other machines could reach the board; add --allow-network to mean it"
        );
    }
    let runtime = tokio::runtime::Builder::new_multi_thread()
        .enable_all()
        .build()
        .context("starting the server's runtime")?;
    let listener = runtime
        .block_on(tokio::net::TcpListener::bind(address))
        .with_context(|| format!("cannot listen on {address}"))?;
    let bound = listener.local_addr()?;
    if !bound.ip().is_loopback() {
        eprintln!(
            "warning: serving on {bound}, reachable from other machines: anyone who reaches it can drive the virtual board, and the protocol is not encrypted (the admin token travels in clear)"
        );
    }
    let shared = if args.shared {
        "one shared board"
    } else {
        "a board per connection"
    };
    let admin = if token.is_some() {
        "admin token set"
    } else {
        "no admin token: defects cannot be changed or listed"
    };
    writeln!(
        out,
        "serving {} on tcp://{bound} ({shared}; {admin})",
        design.board.name()
    )?;
    out.flush()?;
    let service = Arc::new(BoardService::new(
        design,
        faulty,
        defects,
        args.shared,
        token,
    ));
    let config = ServerConfig {
        max_connections: args.max_connections,
        idle_timeout: Duration::from_secs(args.idle_timeout.max(1)),
        ..ServerConfig::default()
    };
    runtime.block_on(run(listener, service, config, stop_signal()));
    writeln!(out, "stopped")?;
    Ok(Outcome::Passed)
}

/// Completes on Ctrl-C, or on SIGTERM where there are signals.
pub async fn stop_signal() {
    #[cfg(unix)]
    {
        use tokio::signal::unix::{signal, SignalKind};
        if let Ok(mut term) = signal(SignalKind::terminate()) {
            tokio::select! {
                _ = tokio::signal::ctrl_c() => {}
                _ = term.recv() => {}
            }
            return;
        }
    }
    let _ = tokio::signal::ctrl_c().await;
}
