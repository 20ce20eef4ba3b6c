//! `PipeSink`: standard output that a reader may close early.
//!
//! When stdout is a pipe and its reader stops (`boardtwin play … | head`),
//! writes fail with a broken pipe. The command still runs to its verdict,
//! and the verdict decides the exit code: output written after the reader
//! left is dropped, and a failing run still exits 1.

use std::io::{self, Write};

/// A writer that drops everything after its reader has gone.
pub struct PipeSink<W: Write> {
    inner: W,
    closed: bool,
}

impl<W: Write> PipeSink<W> {
    /// Wraps `inner`.
    pub fn new(inner: W) -> PipeSink<W> {
        PipeSink {
            inner,
            closed: false,
        }
    }

    fn absorb<T>(&mut self, result: io::Result<T>, done: T) -> io::Result<T> {
        match result {
            Err(e) if e.kind() == io::ErrorKind::BrokenPipe => {
                self.closed = true;
                Ok(done)
            }
            other => other,
        }
    }
}

impl<W: Write> Write for PipeSink<W> {
    fn write(&mut self, buf: &[u8]) -> io::Result<usize> {
        if self.closed {
            return Ok(buf.len());
        }
        let result = self.inner.write(buf);
        self.absorb(result, buf.len())
    }

    fn flush(&mut self) -> io::Result<()> {
        if self.closed {
            return Ok(());
        }
        let result = self.inner.flush();
        self.absorb(result, ())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A reader that leaves after `room` bytes.
    struct Closing {
        room: usize,
        got: Vec<u8>,
    }

    impl Write for Closing {
        fn write(&mut self, buf: &[u8]) -> io::Result<usize> {
            if self.got.len() >= self.room {
                return Err(io::ErrorKind::BrokenPipe.into());
            }
            let n = buf.len().min(self.room - self.got.len());
            self.got.extend_from_slice(&buf[..n]);
            Ok(n)
        }
        fn flush(&mut self) -> io::Result<()> {
            Ok(())
        }
    }

    #[test]
    fn writes_after_the_reader_left_are_dropped_not_errors() {
        let mut sink = PipeSink::new(Closing {
            room: 4,
            got: Vec::new(),
        });
        sink.write_all(b"abcdefgh").unwrap();
        writeln!(sink, "more").unwrap();
        sink.flush().unwrap();
        assert!(sink.closed);
        assert_eq!(sink.inner.got, b"abcd");
    }
}
