//! An exercise class on 127.0.0.1:0 in a thread of its own, a recording
//! proxy (every byte the server sends a trainee), and trainee helpers.

use std::io::{Read, Write};
use std::net::{TcpListener, TcpStream};
use std::sync::{Arc, Mutex};
use std::time::Duration;

use harness::program::Program;
use harness::remote::{open_target, BoardService, RemoteBoard, Reply, Request, ServerConfig};
use harness::run::{RunOptions, RunReport, Runner};
use harness::training::{serve_http, Class, Exercise, Score, Web};
use virtual_board::{DefectSpec, LoadedBoard};

#[path = "server.rs"]
#[allow(dead_code)]
mod server;

use server::TestServer;

/// A running class.
pub struct ClassServer {
    /// `HOST:PORT`.
    pub address: String,
    /// The class, to read its scores.
    pub class: Arc<Class>,
    /// Stops the class when dropped.
    _server: TestServer,
}

/// An exercise with these defects on `design` (drawn by hand).
pub fn exercise(design: &LoadedBoard, defects: Vec<DefectSpec>) -> Exercise {
    Exercise {
        board: design.path.clone(),
        board_name: design.board.name().to_string(),
        draw: "by hand".into(),
        seed: 0,
        defects,
    }
}

impl ClassServer {
    /// Hosts `exercise` on `design`.
    pub fn start(
        design: &LoadedBoard,
        exercise: &Exercise,
        sheets: Option<std::path::PathBuf>,
    ) -> ClassServer {
        let class = Arc::new(Class::new(design.clone(), exercise, sheets).expect("exercise fits"));
        let service = Arc::new(BoardService::with_classroom(design.clone(), class.clone()));
        let server = TestServer::serve(service, ServerConfig::default());
        ClassServer {
            address: server.address.clone(),
            class,
            _server: server,
        }
    }

    /// The scores graded so far.
    pub fn scores(&self) -> Vec<Score> {
        self.class.scores()
    }
}

/// Runs `program` as trainee `name` on the class at `address`.
pub fn run_as(design: &LoadedBoard, address: &str, name: &str, program: &Program) -> RunReport {
    let mut remote = open_target(&format!("tcp://{name}@{address}"), design, None, None)
        .unwrap_or_else(|e| panic!("{e}"));
    Runner::new(&mut remote, RunOptions::default()).run(program)
}

/// Submits `defects` as trainee `name`; the reply.
pub fn submit_as(address: &str, name: &str, defects: &[DefectSpec]) -> Reply {
    let mut remote =
        RemoteBoard::connect_as(address, Duration::from_secs(120), name).expect("connect");
    remote
        .call(&Request::Submit {
            defects: defects.to_vec(),
        })
        .expect("reply")
}

/// One connection's bytes from the server.
pub type Log = Arc<Mutex<Vec<u8>>>;

/// A proxy in front of `server`: every byte the server sends back to any
/// client through it is kept, in order per connection.
pub struct Proxy {
    /// `HOST:PORT` of the proxy.
    pub address: String,
    /// Bytes from the server, one entry per connection.
    pub received: Arc<Mutex<Vec<Log>>>,
}

impl Proxy {
    /// Starts a proxy to `server` (threads live as long as the process).
    pub fn start(server: &str) -> Proxy {
        let listener = TcpListener::bind("127.0.0.1:0").expect("bind proxy");
        let address = listener.local_addr().expect("address").to_string();
        let received: Arc<Mutex<Vec<Log>>> = Arc::default();
        let server = server.to_string();
        let keep = Arc::clone(&received);
        std::thread::spawn(move || {
            for client in listener.incoming() {
                let Ok(client) = client else { return };
                let Ok(upstream) = TcpStream::connect(&server) else {
                    return;
                };
                let log: Log = Arc::default();
                keep.lock().unwrap().push(Arc::clone(&log));
                let (mut c_read, mut u_write) =
                    (client.try_clone().unwrap(), upstream.try_clone().unwrap());
                std::thread::spawn(move || {
                    let _ = std::io::copy(&mut c_read, &mut u_write);
                    let _ = u_write.shutdown(std::net::Shutdown::Write);
                });
                let (mut u_read, mut c_write) = (upstream, client);
                std::thread::spawn(move || {
                    let mut buf = [0u8; 65536];
                    loop {
                        match u_read.read(&mut buf) {
                            Ok(0) | Err(_) => break,
                            Ok(n) => {
                                log.lock().unwrap().extend_from_slice(&buf[..n]);
                                if c_write.write_all(&buf[..n]).is_err() {
                                    break;
                                }
                            }
                        }
                    }
                    let _ = c_write.shutdown(std::net::Shutdown::Write);
                });
            }
        });
        Proxy { address, received }
    }

    /// Every byte received so far, connection after connection.
    pub fn bytes(&self) -> Vec<Vec<u8>> {
        self.received
            .lock()
            .unwrap()
            .iter()
            .map(|l| l.lock().unwrap().clone())
            .collect()
    }
}

/// Serves the trainees' page for a class on `defects` (the bundled
/// programs offered); its `HOST:PORT`. The server lives as long as the
/// test process.
pub fn page_server(
    design: &LoadedBoard,
    defects: Vec<DefectSpec>,
    bundled: &std::path::Path,
) -> String {
    let class = Arc::new(Class::new(design.clone(), &exercise(design, defects), None).unwrap());
    let web = Arc::new(Web::new(class, design.clone(), Some(bundled)));
    let runtime = tokio::runtime::Builder::new_multi_thread()
        .worker_threads(2)
        .enable_all()
        .build()
        .unwrap();
    let listener = runtime
        .block_on(tokio::net::TcpListener::bind("127.0.0.1:0"))
        .unwrap();
    let address = listener.local_addr().unwrap().to_string();
    std::thread::spawn(move || {
        runtime.block_on(serve_http(listener, web, std::future::pending::<()>()));
    });
    address
}
