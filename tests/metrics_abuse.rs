//! The metrics server under abuse: idle connections, a client that sends a
//! byte a second, a request line that never ends. In each case a normal scrape
//! still gets its answer, and the abusive clients are cut off. Bounds on time
//! are generous limits for a loaded machine, not performance targets.

use std::io::{ErrorKind, Read, Write};
use std::net::{SocketAddr, TcpStream};
use std::sync::Arc;
use std::time::{Duration, Instant};

use rhoscope::metrics::serve::{Server, Shared, parse_listen};

/// Longest any single wait in these tests may take before it counts as stalled.
const GENEROUS: Duration = Duration::from_secs(20);

fn start() -> Server {
    let text: Shared = Arc::default();
    text.set("rhoscope_runs 3\n".into());
    Server::start(parse_listen("0").unwrap(), text).unwrap()
}

fn scrape(addr: SocketAddr) -> String {
    let mut s = TcpStream::connect(addr).unwrap();
    s.set_read_timeout(Some(GENEROUS)).unwrap();
    s.write_all(b"GET /metrics HTTP/1.1\r\nHost: x\r\n\r\n")
        .unwrap();
    let mut out = String::new();
    s.read_to_string(&mut out).unwrap();
    out
}

/// True when the server has closed `s` (end of stream or reset), false when
/// nothing came within `wait`.
fn closed_by_server(s: &mut TcpStream, wait: Duration) -> bool {
    s.set_read_timeout(Some(wait)).unwrap();
    let mut buf = [0u8; 256];
    loop {
        match s.read(&mut buf) {
            Ok(0) => return true,
            Ok(_) => {}
            Err(e) if matches!(e.kind(), ErrorKind::WouldBlock | ErrorKind::TimedOut) => {
                return false;
            }
            Err(_) => return true,
        }
    }
}

#[test]
fn two_hundred_idle_connections_do_not_keep_a_scrape_out() {
    let server = start();
    let mut idle: Vec<TcpStream> = (0..200)
        .map(|_| TcpStream::connect(server.addr()).unwrap())
        .collect();
    let answer = scrape(server.addr());
    assert!(answer.starts_with("HTTP/1.1 200 OK"), "{answer}");
    assert!(answer.ends_with("rhoscope_runs 3\n"));
    // Every idle client is closed: made room for others, or past its deadline.
    for s in &mut idle {
        assert!(closed_by_server(s, GENEROUS), "an idle client was held");
    }
    server.stop();
}

#[test]
fn a_byte_a_second_client_is_cut_off_and_does_not_delay_a_scrape() {
    let server = start();
    let addr = server.addr();
    let slow = std::thread::spawn(move || {
        let request = b"GET /metrics HTTP/1.1\r\nHost: slowly\r\n\r\n";
        let mut s = TcpStream::connect(addr).unwrap();
        for (sent, b) in request.iter().enumerate() {
            if s.write_all(&[*b]).is_err() || closed_by_server(&mut s, Duration::from_secs(1)) {
                return sent;
            }
        }
        request.len()
    });
    std::thread::sleep(Duration::from_millis(300));
    let t = Instant::now();
    let answer = scrape(addr);
    assert!(answer.starts_with("HTTP/1.1 200 OK"), "{answer}");
    assert!(t.elapsed() < GENEROUS);
    let sent = slow.join().unwrap();
    assert!(
        sent < 20,
        "the slow client was cut off after {sent} bytes, before its request ended"
    );
    server.stop();
}

#[test]
fn an_endless_request_line_is_refused_after_a_few_kilobytes() {
    let server = start();
    let mut s = TcpStream::connect(server.addr()).unwrap();
    s.set_write_timeout(Some(GENEROUS)).unwrap();
    let chunk = vec![b'A'; 64 * 1024];
    let limit = 256usize << 20;
    let mut sent = 0usize;
    let mut refused = false;
    s.write_all(b"GET /").unwrap();
    while sent < limit {
        match s.write(&chunk) {
            Ok(n) => sent += n,
            Err(_) => {
                refused = true;
                break;
            }
        }
    }
    assert!(
        refused,
        "the server took all {sent} bytes of one request line"
    );
    // What the kernel buffers on both sides is the most that went out.
    assert!(sent < 64 << 20, "{sent} bytes accepted before the refusal");
    let answer = scrape(server.addr());
    assert!(answer.starts_with("HTTP/1.1 200 OK"), "{answer}");
    server.stop();
}

#[test]
fn an_oversized_request_gets_431() {
    let server = start();
    let mut s = TcpStream::connect(server.addr()).unwrap();
    s.set_read_timeout(Some(GENEROUS)).unwrap();
    let mut req = b"GET /metrics HTTP/1.1\r\nX-Padding: ".to_vec();
    req.extend(vec![b'a'; 9000]);
    // The server stops reading at its limit; the rest may be refused.
    let _ = s.write_all(&req);
    let mut out = Vec::new();
    let _ = s.read_to_end(&mut out);
    let text = String::from_utf8_lossy(&out);
    assert!(text.starts_with("HTTP/1.1 431"), "{text}");
    server.stop();
}
