//! Answer HTTP scrapes with the latest exposition text, using the standard
//! library only: one thread accepts connections and answers each in turn
//! (`GET /metrics` → 200 with the text, any other path → 404, any other
//! method → 405), with short read and write timeouts so a stuck client cannot
//! hold it. The address defaults to loopback; anything else must be asked for.

use std::io::{self, BufRead, BufReader, Write};
use std::net::{IpAddr, Ipv4Addr, SocketAddr, TcpListener, TcpStream};
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::{Arc, Mutex};
use std::thread::JoinHandle;
use std::time::Duration;

/// Content type of the text exposition format.
pub const CONTENT_TYPE: &str = "text/plain; version=0.0.4; charset=utf-8";

/// Read an address to listen on: `PORT` (on 127.0.0.1), `HOST:PORT` or `[V6]:PORT`.
pub fn parse_listen(text: &str) -> Result<SocketAddr, String> {
    if let Ok(port) = text.parse::<u16>() {
        return Ok(SocketAddr::new(IpAddr::V4(Ipv4Addr::LOCALHOST), port));
    }
    text.parse::<SocketAddr>().map_err(|_| {
        format!("'{text}' is not an address to listen on (try 9464 or 127.0.0.1:9464)")
    })
}

/// The text being served, replaced as the fleet changes.
pub type Shared = Arc<Mutex<String>>;

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
            while !flag.load(Ordering::Relaxed) {
                match listener.accept() {
                    Ok((stream, _)) => {
                        let _ = answer(stream, &text);
                    }
                    Err(e) if e.kind() == io::ErrorKind::WouldBlock => {
                        std::thread::sleep(Duration::from_millis(100));
                    }
                    Err(_) => std::thread::sleep(Duration::from_millis(100)),
                }
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

fn answer(stream: TcpStream, text: &Shared) -> io::Result<()> {
    stream.set_nonblocking(false)?;
    stream.set_read_timeout(Some(Duration::from_secs(2)))?;
    stream.set_write_timeout(Some(Duration::from_secs(5)))?;
    let mut reader = BufReader::new(stream.try_clone()?);
    let mut request = String::new();
    reader.read_line(&mut request)?;
    // Read (and ignore) the headers up to the blank line, bounded.
    let mut line = String::new();
    for _ in 0..100 {
        line.clear();
        if reader.read_line(&mut line)? == 0 || line.trim().is_empty() {
            break;
        }
    }
    let mut parts = request.split_whitespace();
    let (method, path) = (parts.next().unwrap_or(""), parts.next().unwrap_or(""));
    let path = path.split('?').next().unwrap_or("");
    let (status, ctype, body) = match (method, path) {
        ("GET" | "HEAD", "/metrics") => {
            let body = text.lock().map(|t| t.clone()).unwrap_or_default();
            ("200 OK", CONTENT_TYPE, body)
        }
        ("GET" | "HEAD", _) => (
            "404 Not Found",
            "text/plain",
            "rhoscope serves /metrics only\n".into(),
        ),
        _ => ("405 Method Not Allowed", "text/plain", "only GET\n".into()),
    };
    let mut w = stream;
    write!(
        w,
        "HTTP/1.1 {status}\r\nContent-Type: {ctype}\r\nContent-Length: {}\r\nConnection: close\r\n\r\n",
        body.len()
    )?;
    if method != "HEAD" {
        w.write_all(body.as_bytes())?;
    }
    w.flush()
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;
    use std::io::Read;

    fn get(addr: SocketAddr, req: &str) -> String {
        let mut s = TcpStream::connect(addr).unwrap();
        s.write_all(req.as_bytes()).unwrap();
        let mut out = String::new();
        s.read_to_string(&mut out).unwrap();
        out
    }

    #[test]
    fn serves_the_latest_text_on_loopback() {
        let text: Shared = Arc::new(Mutex::new("a 1\n".into()));
        let addr = parse_listen("0").unwrap();
        assert!(addr.ip().is_loopback(), "a bare port listens on loopback");
        let server = Server::start(addr, Arc::clone(&text)).unwrap();
        let at = server.addr();
        let r = get(at, "GET /metrics HTTP/1.1\r\nHost: x\r\n\r\n");
        assert!(r.starts_with("HTTP/1.1 200 OK\r\n"), "{r}");
        assert!(r.contains(CONTENT_TYPE));
        assert!(r.ends_with("\r\n\r\na 1\n"));
        *text.lock().unwrap() = "a 2\n".into();
        assert!(get(at, "GET /metrics HTTP/1.0\r\n\r\n").ends_with("a 2\n"));
        assert!(get(at, "GET / HTTP/1.0\r\n\r\n").starts_with("HTTP/1.1 404"));
        assert!(get(at, "POST /metrics HTTP/1.0\r\n\r\n").starts_with("HTTP/1.1 405"));
        server.stop();
        assert!(parse_listen("nowhere").is_err());
        assert_eq!(
            parse_listen("[::1]:9").unwrap(),
            "[::1]:9".parse::<SocketAddr>().unwrap()
        );
    }
}
