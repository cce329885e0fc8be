//! Answer HTTP scrapes with the latest exposition text, using the standard
//! library and poll(2) only, from one thread that no client can stall:
//! - every connection is non-blocking and handled side by side, up to
//!   [`MAX_CONNECTIONS`]; past that the oldest is closed to make room, so a flood
//!   of idle clients cannot keep a fresh scrape out;
//! - each connection has one deadline for its whole request ([`REQUEST_DEADLINE`],
//!   however slowly its bytes come) and one for taking the answer;
//! - a request is at most [`request::MAX_REQUEST_BYTES`]; beyond, it is refused
//!   with 431, so memory stays bounded whatever a client sends;
//! - once the answer is out, what the client still sends is read and dropped
//!   (a little, within the deadline) so that closing does not reset the
//!   connection before the client has read its answer.
//!
//! The address defaults to loopback; anything else must be asked for.

use std::collections::VecDeque;
use std::io::{self, Read, Write};
use std::net::{IpAddr, Ipv4Addr, Shutdown, SocketAddr, TcpListener, TcpStream};
use std::os::fd::AsFd;
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::{Arc, Mutex};
use std::thread::JoinHandle;
use std::time::{Duration, Instant};

use nix::poll::{PollFd, PollFlags, PollTimeout, poll};

use super::request::{self, Parsed};

pub use super::request::CONTENT_TYPE;

/// Connections held at once; the oldest goes when one more arrives.
pub const MAX_CONNECTIONS: usize = 64;
/// Time from accepting a connection to having its whole request.
pub const REQUEST_DEADLINE: Duration = Duration::from_secs(2);
/// Time to take the whole answer once the request is in.
pub const ANSWER_DEADLINE: Duration = Duration::from_secs(5);
/// Longest sleep in poll, so a stop request is seen promptly.
const TICK: Duration = Duration::from_millis(100);
/// Bytes read per call.
const READ_BYTES: usize = 2048;
/// Most bytes read and dropped after a request before the connection is cut.
const MAX_DROPPED_BYTES: usize = 64 * 1024;

/// Read an address to listen on: `PORT` (on 127.0.0.1), `HOST:PORT` or `[V6]:PORT`.
pub fn parse_listen(text: &str) -> Result<SocketAddr, String> {
    if let Ok(port) = text.parse::<u16>() {
        return Ok(SocketAddr::new(IpAddr::V4(Ipv4Addr::LOCALHOST), port));
    }
    text.parse::<SocketAddr>().map_err(|_| {
        format!("'{text}' is not an address to listen on (try 9464 or 127.0.0.1:9464)")
    })
}

/// The text being served, replaced whole as the runs change; each answer
/// holds the version it started with (no copy per connection).
#[derive(Debug, Default)]
pub struct Published(Mutex<Arc<str>>);

impl Published {
    /// Serve `text` from now on.
    pub fn set(&self, text: String) {
        if let Ok(mut t) = self.0.lock() {
            *t = text.into();
        }
    }

    /// The text served now.
    pub fn get(&self) -> Arc<str> {
        self.0.lock().map(|t| Arc::clone(&t)).unwrap_or_default()
    }
}

/// The handle the publisher and the server share.
pub type Shared = Arc<Published>;

/// A running server; [`Server::stop`] ends it.
pub struct Server {
    addr: SocketAddr,
    stop: Arc<AtomicBool>,
    handle: Option<JoinHandle<()>>,
}

impl Server {
    /// Listen on `addr` and serve `text`.
    pub fn start(addr: SocketAddr, text: Shared) -> io::Result<Self> {
        let listener = TcpListener::bind(addr)
            .map_err(|e| io::Error::new(e.kind(), format!("cannot listen on {addr}: {e}")))?;
        listener.set_nonblocking(true)?;
        let addr = listener.local_addr()?;
        let stop = Arc::new(AtomicBool::new(false));
        let flag = Arc::clone(&stop);
        let handle = std::thread::spawn(move || {
            let mut conns = Conns::default();
            while !flag.load(Ordering::Relaxed) {
                conns.turn(&listener, &text);
            }
        });
        Ok(Self {
            addr,
            stop,
            handle: Some(handle),
        })
    }

    /// The address actually bound (port 0 picks a free one).
    pub fn addr(&self) -> SocketAddr {
        self.addr
    }

    /// End the server thread.
    pub fn stop(mut self) {
        self.stop.store(true, Ordering::Relaxed);
        if let Some(h) = self.handle.take() {
            let _ = h.join();
        }
    }
}

/// The answer being written on a connection.
struct Outgoing {
    head: Vec<u8>,
    body: Option<Arc<str>>,
    own: &'static str,
    sent: usize,
}

impl Outgoing {
    fn remaining(&self) -> &[u8] {
        let body: &[u8] = match &self.body {
            Some(b) => b.as_bytes(),
            None => self.own.as_bytes(),
        };
        if self.sent < self.head.len() {
            &self.head[self.sent..]
        } else {
            body.get(self.sent - self.head.len()..).unwrap_or_default()
        }
    }
}

/// One client: the request so far, or the answer being written, or — the
/// answer sent — the last bytes it sends being read and dropped, so that
/// closing does not reset the connection before it has read the answer.
struct Conn {
    stream: TcpStream,
    received: Vec<u8>,
    out: Option<Outgoing>,
    /// Bytes read and dropped after the request.
    dropped: usize,
    /// The answer is out and our side of the connection is shut.
    done: bool,
    deadline: Instant,
}

/// What became of a connection after it was ready.
enum Next {
    Keep,
    Close,
}

impl Conn {
    fn new(stream: TcpStream, now: Instant) -> Self {
        Self {
            stream,
            received: Vec::new(),
            out: None,
            dropped: 0,
            done: false,
            deadline: now + REQUEST_DEADLINE,
        }
    }

    fn interest(&self) -> PollFlags {
        if self.out.is_some() && !self.done {
            PollFlags::POLLOUT | PollFlags::POLLIN
        } else {
            PollFlags::POLLIN
        }
    }

    fn ready(&mut self, flags: PollFlags, text: &Published, now: Instant) -> Next {
        if self.out.is_none() {
            return self.read(text, now);
        }
        if flags.intersects(PollFlags::POLLIN | PollFlags::POLLHUP | PollFlags::POLLERR)
            && matches!(self.drop_input(), Next::Close)
        {
            return Next::Close;
        }
        if self.done { Next::Keep } else { self.write() }
    }

    /// Read what is there; once the request is complete (or too large),
    /// prepare the answer.
    fn read(&mut self, text: &Published, now: Instant) -> Next {
        let mut buf = [0u8; READ_BYTES];
        loop {
            let room = request::MAX_REQUEST_BYTES - self.received.len();
            match self.stream.read(&mut buf[..room.min(READ_BYTES)]) {
                Ok(0) => return Next::Close,
                Ok(n) => self.received.extend_from_slice(&buf[..n]),
                Err(e) if e.kind() == io::ErrorKind::WouldBlock => return Next::Keep,
                Err(e) if e.kind() == io::ErrorKind::Interrupted => continue,
                Err(_) => return Next::Close,
            }
            let parsed = request::parse(&self.received);
            if parsed == Parsed::Incomplete {
                continue;
            }
            let body = matches!(&parsed, Parsed::Request { .. }).then(|| text.get());
            let a = request::answer(&parsed, body.as_ref().map_or(0, |b| b.len()));
            self.out = Some(Outgoing {
                head: a.head.into_bytes(),
                body: if a.with_body && a.own_body.is_none() {
                    body
                } else {
                    None
                },
                own: if a.with_body {
                    a.own_body.unwrap_or("")
                } else {
                    ""
                },
                sent: 0,
            });
            self.received = Vec::new();
            self.deadline = now + ANSWER_DEADLINE;
            return self.write();
        }
    }

    /// Read and drop what the client sends after its request, up to
    /// [`MAX_DROPPED_BYTES`]; its end of stream closes the connection.
    fn drop_input(&mut self) -> Next {
        let mut buf = [0u8; READ_BYTES];
        loop {
            match self.stream.read(&mut buf) {
                Ok(0) => return Next::Close,
                Ok(n) => {
                    self.dropped += n;
                    if self.dropped > MAX_DROPPED_BYTES {
                        return Next::Close;
                    }
                }
                Err(e) if e.kind() == io::ErrorKind::WouldBlock => return Next::Keep,
                Err(e) if e.kind() == io::ErrorKind::Interrupted => {}
                Err(_) => return Next::Close,
            }
        }
    }

    /// Write as much of the answer as the socket takes; once all is out, shut
    /// our side and wait (within the deadline) for the client to close.
    fn write(&mut self) -> Next {
        let Some(out) = self.out.as_mut() else {
            return Next::Keep;
        };
        loop {
            let rest = out.remaining();
            if rest.is_empty() {
                self.done = true;
                if self.stream.shutdown(Shutdown::Write).is_err() {
                    return Next::Close;
                }
                return self.drop_input();
            }
            match self.stream.write(rest) {
                Ok(0) => return Next::Close,
                Ok(n) => out.sent += n,
                Err(e) if e.kind() == io::ErrorKind::WouldBlock => return Next::Keep,
                Err(e) if e.kind() == io::ErrorKind::Interrupted => continue,
                Err(_) => return Next::Close,
            }
        }
    }
}

/// The connections held, oldest first.
#[derive(Default)]
struct Conns {
    list: VecDeque<Conn>,
}

impl Conns {
    /// Accept what waits, make room by closing the oldest, close what is past
    /// its deadline, then wait (at most one tick) and serve what is ready.
    fn turn(&mut self, listener: &TcpListener, text: &Published) {
        let now = Instant::now();
        loop {
            match listener.accept() {
                Ok((stream, _)) => {
                    if stream.set_nonblocking(true).is_err() {
                        continue;
                    }
                    if self.list.len() >= MAX_CONNECTIONS {
                        self.list.pop_front();
                    }
                    self.list.push_back(Conn::new(stream, now));
                }
                Err(e) if e.kind() == io::ErrorKind::Interrupted => {}
                // WouldBlock: nothing waits. Other errors (out of file
                // descriptors): try again next turn, after the poll below.
                Err(_) => break,
            }
        }
        self.list.retain(|c| c.deadline > now);
        let wait = self
            .list
            .iter()
            .map(|c| c.deadline.saturating_duration_since(now))
            .min()
            .unwrap_or(TICK)
            .min(TICK);
        let ready: Vec<PollFlags> = {
            let mut fds: Vec<PollFd<'_>> = Vec::with_capacity(self.list.len() + 1);
            fds.push(PollFd::new(listener.as_fd(), PollFlags::POLLIN));
            for c in &self.list {
                fds.push(PollFd::new(c.stream.as_fd(), c.interest()));
            }
            let ms = u16::try_from(wait.as_millis()).unwrap_or(u16::MAX).max(1);
            if poll(&mut fds, PollTimeout::from(ms)).is_err() {
                return;
            }
            fds.iter()
                .skip(1)
                .map(|f| f.revents().unwrap_or(PollFlags::empty()))
                .collect()
        };
        let now = Instant::now();
        let keep: Vec<bool> = self
            .list
            .iter_mut()
            .zip(ready)
            .map(|(c, r)| r.is_empty() || matches!(c.ready(r, text, now), Next::Keep))
            .collect();
        let mut k = keep.into_iter();
        self.list.retain(|_| k.next().unwrap_or(false));
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    fn get(addr: SocketAddr, req: &str) -> String {
        let mut s = TcpStream::connect(addr).unwrap();
        s.write_all(req.as_bytes()).unwrap();
        let mut out = String::new();
        s.read_to_string(&mut out).unwrap();
        out
    }

    #[test]
    fn serves_the_latest_text_on_loopback() {
        let text: Shared = Arc::default();
        text.set("a 1\n".into());
        let addr = parse_listen("0").unwrap();
        assert!(addr.ip().is_loopback(), "a bare port listens on loopback");
        let server = Server::start(addr, Arc::clone(&text)).unwrap();
        let at = server.addr();
        let r = get(at, "GET /metrics HTTP/1.1\r\nHost: x\r\n\r\n");
        assert!(r.starts_with("HTTP/1.1 200 OK\r\n"), "{r}");
        assert!(r.contains(CONTENT_TYPE));
        assert!(r.ends_with("\r\n\r\na 1\n"));
        text.set("a 2\n".into());
        assert!(get(at, "GET /metrics HTTP/1.0\r\n\r\n").ends_with("a 2\n"));
        assert!(get(at, "GET / HTTP/1.0\r\n\r\n").starts_with("HTTP/1.1 404"));
        assert!(get(at, "POST /metrics HTTP/1.0\r\n\r\n").starts_with("HTTP/1.1 405"));
        let head = get(at, "HEAD /metrics HTTP/1.0\r\n\r\n");
        assert!(head.ends_with("\r\n\r\n") && head.contains("Content-Length: 4"));
        server.stop();
        assert!(parse_listen("nowhere").is_err());
        assert_eq!(
            parse_listen("[::1]:9").unwrap(),
            "[::1]:9".parse::<SocketAddr>().unwrap()
        );
    }

    #[test]
    fn a_large_text_is_written_whole_to_a_slow_reader() {
        // 4 MB is more than a socket buffer takes at once: the answer goes
        // out over several turns of the loop.
        let body: String = "x 1\n".repeat(1 << 20);
        let text: Shared = Arc::default();
        text.set(body.clone());
        let server = Server::start(parse_listen("0").unwrap(), Arc::clone(&text)).unwrap();
        let mut s = TcpStream::connect(server.addr()).unwrap();
        s.write_all(b"GET /metrics HTTP/1.1\r\n\r\n").unwrap();
        std::thread::sleep(Duration::from_millis(200));
        let mut out = Vec::new();
        s.read_to_end(&mut out).unwrap();
        server.stop();
        assert!(out.ends_with(body.as_bytes()));
    }
}
