//! A server on 127.0.0.1:0 (a port the OS picks, so tests never clash) in a
//! thread of its own, stopped through its shutdown future; raw-socket helpers.

use std::io::{Read, Write};
use std::net::TcpStream;
use std::sync::Arc;
use std::thread::JoinHandle;
use std::time::Duration;

use harness::remote::{
    parse_frame, run, BoardService, Reply, Request, ServerConfig, MAX_REPLY_FRAME, PROTOCOL_VERSION,
};
use virtual_board::{DefectSpec, LoadedBoard};

/// A running server.
pub struct TestServer {
    /// `HOST:PORT`.
    pub address: String,
    stop: Option<tokio::sync::oneshot::Sender<()>>,
    thread: Option<JoinHandle<()>>,
}

impl TestServer {
    /// Serves `design` (with `defects`) with `config`.
    pub fn start(
        design: &LoadedBoard,
        defects: &[DefectSpec],
        shared: bool,
        token: Option<&str>,
        config: ServerConfig,
    ) -> TestServer {
        let faulty = if defects.is_empty() {
            design.board.clone()
        } else {
            let mut source = virtual_board::bsdl_files_beside(&design.path);
            design
                .with_defects(defects, &mut source)
                .expect("defects fit")
                .board
        };
        let service = Arc::new(BoardService::new(
            design.clone(),
            faulty,
            defects.to_vec(),
            shared,
            token.map(str::to_string),
        ));
        TestServer::serve(service, config)
    }

    /// Serves `service` with `config`.
    pub fn serve(service: Arc<BoardService>, config: ServerConfig) -> TestServer {
        let runtime = tokio::runtime::Builder::new_multi_thread()
            .worker_threads(2)
            .enable_all()
            .build()
            .expect("runtime");
        let listener = runtime
            .block_on(tokio::net::TcpListener::bind("127.0.0.1:0"))
            .expect("bind");
        let address = listener.local_addr().expect("address").to_string();
        let (stop, stopped) = tokio::sync::oneshot::channel::<()>();
        let thread = std::thread::spawn(move || {
            runtime.block_on(run(listener, service, config, async {
                let _ = stopped.await;
            }));
        });
        TestServer {
            address,
            stop: Some(stop),
            thread: Some(thread),
        }
    }

    /// The demo board, no defects, a board per connection, default limits.
    pub fn demo(design: &LoadedBoard, token: Option<&str>) -> TestServer {
        TestServer::start(design, &[], false, token, ServerConfig::default())
    }

    /// `tcp://HOST:PORT`.
    pub fn target(&self) -> String {
        format!("tcp://{}", self.address)
    }

    /// Signals shutdown and waits for `run` to return.
    pub fn stop(mut self) {
        self.halt();
    }

    fn halt(&mut self) {
        if let Some(s) = self.stop.take() {
            let _ = s.send(());
        }
        if let Some(t) = self.thread.take() {
            t.join().expect("server thread");
        }
    }
}

impl Drop for TestServer {
    fn drop(&mut self) {
        self.halt();
    }
}

/// A raw connection: frames in and out by hand.
pub struct Raw {
    /// The socket.
    pub stream: TcpStream,
    inbox: Vec<u8>,
}

impl Raw {
    /// Connects (no hello yet).
    pub fn connect(address: &str) -> Raw {
        let stream = TcpStream::connect(address).expect("connect");
        stream
            .set_read_timeout(Some(Duration::from_secs(20)))
            .expect("timeout");
        Raw {
            stream,
            inbox: Vec::new(),
        }
    }

    /// Connects and says hello.
    pub fn greeted(address: &str) -> Raw {
        let mut raw = Raw::connect(address);
        raw.send(&Request::Hello {
            version: PROTOCOL_VERSION,
            client: "test".into(),
        });
        assert!(matches!(raw.reply(), Some(Reply::Hello { .. })));
        raw
    }

    /// Sends bytes as they are.
    pub fn bytes(&mut self, bytes: &[u8]) {
        self.stream.write_all(bytes).expect("write");
    }

    /// Sends one request.
    pub fn send(&mut self, request: &Request) {
        let mut out = Vec::new();
        request.encode(&mut out);
        self.bytes(&out);
    }

    /// The next reply; `None` when the server closed the connection.
    pub fn reply(&mut self) -> Option<Reply> {
        let mut chunk = [0u8; 65536];
        loop {
            if let Ok((f, used)) = parse_frame(&self.inbox, MAX_REPLY_FRAME) {
                let r = Reply::decode(f).expect("a reply the client can read");
                self.inbox.drain(..used);
                return Some(r);
            }
            match self.stream.read(&mut chunk) {
                Ok(0) | Err(_) => return None,
                Ok(n) => self.inbox.extend_from_slice(&chunk[..n]),
            }
        }
    }
}
