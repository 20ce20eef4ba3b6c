//! The server: `run(listener, service, config, shutdown)` accepts
//! connections under a cap, serves each on its own task, and at shutdown
//! lets every connection finish its requests before it returns.

#![cfg_attr(not(test), deny(clippy::unwrap_used, clippy::panic))]

use std::future::Future;
use std::sync::Arc;
use std::time::Duration;

use tokio::net::TcpListener;
use tokio::sync::{watch, Semaphore};
use tokio::task::JoinSet;
use tracing::{info, info_span, warn, Instrument};

use super::connection::{self, Limits};
use super::frame::DEFAULT_MAX_FRAME;
use super::session::BoardService;

/// How a server runs.
#[derive(Clone, Copy, Debug)]
pub struct ServerConfig {
    /// Connections served at once; later ones wait in the listen queue
    /// until one closes.
    pub max_connections: usize,
    /// Largest frame (kind + body), bytes; a larger one closes its connection.
    pub max_frame: u32,
    /// How long the rest of a frame may take once its first byte came.
    pub read_timeout: Duration,
    /// How long a connection may stay silent between frames.
    pub idle_timeout: Duration,
    /// How long shutdown waits for connections to finish their requests.
    pub drain_timeout: Duration,
}

impl Default for ServerConfig {
    fn default() -> ServerConfig {
        ServerConfig {
            max_connections: 256,
            max_frame: DEFAULT_MAX_FRAME,
            read_timeout: Duration::from_secs(10),
            idle_timeout: Duration::from_secs(600),
            drain_timeout: Duration::from_secs(10),
        }
    }
}

/// Serves `service` on `listener` until `shutdown` completes; then stops
/// accepting, lets each connection answer the requests it has whole, tells
/// its client the server is shutting down, and returns when all have
/// closed (or after [`ServerConfig::drain_timeout`]).
///
/// The caller binds the listener, so tests use `127.0.0.1:0`.
///
/// # Cancel safety
/// Dropping the future drops the connection tasks' handles: the tasks are
/// aborted wherever they are. Complete `shutdown` instead.
pub async fn run(
    listener: TcpListener,
    service: Arc<BoardService>,
    config: ServerConfig,
    shutdown: impl Future,
) {
    // Each connection holds a permit for its life; at the cap, accepting waits.
    let permits = Arc::new(Semaphore::new(config.max_connections.max(1)));
    // `true` tells every connection to finish and close.
    let (stop, stopped) = watch::channel(false);
    let mut tasks = JoinSet::new();
    let limits = Limits {
        max_frame: config.max_frame,
        read_timeout: config.read_timeout,
        idle_timeout: config.idle_timeout,
    };
    let accept = async {
        let mut next_id: u64 = 0;
        loop {
            let Ok(permit) = Arc::clone(&permits).acquire_owned().await else {
                return;
            };
            let (stream, peer) = match listener.accept().await {
                Ok(x) => x,
                Err(e) => {
                    // Out of file descriptors and the like: wait, then go on.
                    warn!("accept failed: {e}");
                    tokio::time::sleep(Duration::from_millis(100)).await;
                    continue;
                }
            };
            let _ = stream.set_nodelay(true);
            next_id += 1;
            let span = info_span!("connection", id = next_id, peer = %peer);
            let session = service.session();
            let stopped = stopped.clone();
            tasks.spawn(
                async move {
                    info!("connected");
                    connection::serve(stream, session, limits, stopped).await;
                    info!("closed");
                    drop(permit);
                }
                .instrument(span),
            );
            // Reap finished tasks so the set does not grow without bound.
            while tasks.try_join_next().is_some() {}
        }
    };
    tokio::select! {
        () = accept => {}
        _ = shutdown => info!("shutting down: finishing requests in flight"),
    }
    let _ = stop.send(true);
    let drain = async { while tasks.join_next().await.is_some() {} };
    if tokio::time::timeout(config.drain_timeout, drain)
        .await
        .is_err()
    {
        warn!("connections still open after the drain timeout: closing them");
        tasks.abort_all();
    }
}
