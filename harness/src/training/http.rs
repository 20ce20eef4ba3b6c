//! A minimal HTTP/1.1 server on tokio for the trainee's page: one request
//! per connection (`Connection: close`), a request line, headers up to
//! 16 KiB, a body of `Content-Length` up to 1 MiB; nothing else of HTTP.

#![cfg_attr(not(test), deny(clippy::unwrap_used, clippy::panic))]

use std::future::Future;
use std::sync::Arc;
use std::time::Duration;

use tokio::io::{AsyncReadExt, AsyncWriteExt};
use tokio::net::{TcpListener, TcpStream};
use tokio::task::JoinSet;

/// Largest header block, bytes.
const MAX_HEAD: usize = 16 * 1024;
/// Largest body (an uploaded program), bytes.
pub const MAX_BODY: usize = 1024 * 1024;
/// How long a client may take to send its request.
const READ_TIMEOUT: Duration = Duration::from_secs(10);

/// One request.
#[derive(Debug)]
pub struct HttpRequest {
    /// `GET`, `POST` …
    pub method: String,
    /// The path, query included.
    pub path: String,
    /// The body.
    pub body: Vec<u8>,
}

/// One response.
#[derive(Debug)]
pub struct HttpResponse {
    /// Status code.
    pub status: u16,
    /// `Content-Type`.
    pub content_type: &'static str,
    /// The body.
    pub body: Vec<u8>,
}

impl HttpResponse {
    /// A JSON response.
    pub fn json(status: u16, value: &serde_json::Value) -> HttpResponse {
        HttpResponse {
            status,
            content_type: "application/json",
            body: serde_json::to_vec(value).unwrap_or_default(),
        }
    }
}

/// What answers requests.
pub trait Handler: Send + Sync + 'static {
    /// The response to `request`.
    fn handle(&self, request: &HttpRequest) -> HttpResponse;
}

/// Serves `handler` on `listener` until `shutdown` completes.
///
/// # Cancel safety
/// Dropping the future aborts the connections in flight; complete
/// `shutdown` instead.
pub async fn serve_http(listener: TcpListener, handler: Arc<dyn Handler>, shutdown: impl Future) {
    let mut tasks = JoinSet::new();
    let accept = async {
        loop {
            let Ok((stream, _)) = listener.accept().await else {
                tokio::time::sleep(Duration::from_millis(50)).await;
                continue;
            };
            let handler = Arc::clone(&handler);
            tasks.spawn(async move { one(stream, handler).await });
            while tasks.try_join_next().is_some() {}
        }
    };
    tokio::select! {
        () = accept => {}
        _ = shutdown => {}
    }
    let _ = tokio::time::timeout(Duration::from_secs(5), async {
        while tasks.join_next().await.is_some() {}
    })
    .await;
}

/// Reads one request, answers it, closes.
async fn one(mut stream: TcpStream, handler: Arc<dyn Handler>) {
    let response = match tokio::time::timeout(READ_TIMEOUT, read_request(&mut stream)).await {
        Ok(Ok(request)) => {
            // The handler runs programs on the board: off the reactor.
            match tokio::task::spawn_blocking(move || handler.handle(&request)).await {
                Ok(r) => r,
                Err(_) => text(500, "the request failed"),
            }
        }
        Ok(Err(why)) => text(400, why),
        Err(_) => text(408, "the request did not arrive in time"),
    };
    let head = format!(
        "HTTP/1.1 {} {}\r\nContent-Type: {}\r\nContent-Length: {}\r\nCache-Control: no-store\r\nContent-Security-Policy: default-src 'self'; script-src 'unsafe-inline'; style-src 'unsafe-inline'; img-src data:\r\nConnection: close\r\n\r\n",
        response.status,
        reason(response.status),
        response.content_type,
        response.body.len()
    );
    let _ = stream.write_all(head.as_bytes()).await;
    let _ = stream.write_all(&response.body).await;
    let _ = stream.shutdown().await;
}

fn text(status: u16, why: &str) -> HttpResponse {
    HttpResponse {
        status,
        content_type: "text/plain; charset=utf-8",
        body: why.as_bytes().to_vec(),
    }
}

fn reason(status: u16) -> &'static str {
    match status {
        200 => "OK",
        400 => "Bad Request",
        404 => "Not Found",
        405 => "Method Not Allowed",
        408 => "Request Timeout",
        413 => "Payload Too Large",
        _ => "Error",
    }
}

async fn read_request(stream: &mut TcpStream) -> Result<HttpRequest, &'static str> {
    let mut buf = Vec::with_capacity(4096);
    let mut chunk = [0u8; 4096];
    let head_end = loop {
        if let Some(i) = buf.windows(4).position(|w| w == b"\r\n\r\n") {
            break i;
        }
        if buf.len() > MAX_HEAD {
            return Err("the request's headers are too long");
        }
        let n = stream
            .read(&mut chunk)
            .await
            .map_err(|_| "cannot read the request")?;
        if n == 0 {
            return Err("the request ended early");
        }
        buf.extend_from_slice(&chunk[..n]);
    };
    let head = std::str::from_utf8(&buf[..head_end]).map_err(|_| "the headers are not UTF-8")?;
    let mut lines = head.split("\r\n");
    let mut first = lines.next().unwrap_or("").split(' ');
    let (method, path) = match (first.next(), first.next(), first.next()) {
        (Some(m), Some(p), Some(v)) if v.starts_with("HTTP/1.") => (m.to_string(), p.to_string()),
        _ => return Err("not an HTTP/1.1 request line"),
    };
    let mut length = 0usize;
    for line in lines {
        if let Some((name, value)) = line.split_once(':') {
            if name.trim().eq_ignore_ascii_case("content-length") {
                length = value.trim().parse().map_err(|_| "a bad Content-Length")?;
            }
        }
    }
    if length > MAX_BODY {
        return Err("the body is over 1 MiB");
    }
    let mut body = buf[head_end + 4..].to_vec();
    while body.len() < length {
        let n = stream
            .read(&mut chunk)
            .await
            .map_err(|_| "cannot read the body")?;
        if n == 0 {
            return Err("the body ended early");
        }
        body.extend_from_slice(&chunk[..n]);
    }
    body.truncate(length);
    Ok(HttpRequest { method, path, body })
}
