//! What one scrape asked for and what it gets back, with no I/O: the bytes
//! received so far are either an incomplete request (wait for more), a request
//! too large to be a scrape (refused), or a complete request whose answer is
//! decided here (`GET /metrics` → 200, another path → 404, another method → 405).

/// Largest request accepted, request line and headers together. A scrape is a
/// few hundred bytes; anything past this is refused without reading further.
pub const MAX_REQUEST_BYTES: usize = 8 * 1024;

/// Content type of the text exposition format (version 0.0.4).
pub const CONTENT_TYPE: &str = "text/plain; version=0.0.4; charset=utf-8";

/// Where a request stands after the bytes received so far.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Parsed {
    /// No blank line yet: read more (within the size limit).
    Incomplete,
    /// The request is over [`MAX_REQUEST_BYTES`] without an end of headers.
    TooLarge,
    /// A complete request: method and path (query string removed).
    Request { method: String, path: String },
}

/// Decide what `received` holds.
pub fn parse(received: &[u8]) -> Parsed {
    let end = memchr::memmem::find(received, b"\r\n\r\n")
        .or_else(|| memchr::memmem::find(received, b"\n\n"));
    let Some(end) = end else {
        return if received.len() >= MAX_REQUEST_BYTES {
            Parsed::TooLarge
        } else {
            Parsed::Incomplete
        };
    };
    if end > MAX_REQUEST_BYTES {
        return Parsed::TooLarge;
    }
    let head = String::from_utf8_lossy(&received[..end]);
    let line = head.lines().next().unwrap_or("");
    let mut parts = line.split_whitespace();
    let method = parts.next().unwrap_or("").to_string();
    let target = parts.next().unwrap_or("");
    let path = target.split('?').next().unwrap_or("").to_string();
    Parsed::Request { method, path }
}

/// The status line, content type and body for a parsed request; `body` is
/// the current exposition text. HEAD gets the headers only.
pub struct Answer {
    /// Status line and headers, ending with the blank line.
    pub head: String,
    /// Whether the body follows the head.
    pub with_body: bool,
    /// The body when it is not the exposition text (errors).
    pub own_body: Option<&'static str>,
}

/// The answer to `parsed` (which must not be `Incomplete`); `body_len` is the
/// length of the exposition text that a 200 answer carries.
pub fn answer(parsed: &Parsed, body_len: usize) -> Answer {
    let (status, ctype, own): (&str, &str, Option<&'static str>) = match parsed {
        Parsed::Incomplete | Parsed::TooLarge => (
            "431 Request Header Fields Too Large",
            "text/plain",
            Some("request too large for a scrape\n"),
        ),
        Parsed::Request { method, path } => match (method.as_str(), path.as_str()) {
            ("GET" | "HEAD", "/metrics") => ("200 OK", CONTENT_TYPE, None),
            ("GET" | "HEAD", _) => (
                "404 Not Found",
                "text/plain",
                Some("rhoscope serves /metrics only\n"),
            ),
            _ => ("405 Method Not Allowed", "text/plain", Some("only GET\n")),
        },
    };
    let len = own.map_or(body_len, str::len);
    let head_only = matches!(parsed, Parsed::Request { method, .. } if method == "HEAD");
    Answer {
        head: format!(
            "HTTP/1.1 {status}\r\nContent-Type: {ctype}\r\nContent-Length: {len}\r\nConnection: close\r\n\r\n"
        ),
        with_body: !head_only,
        own_body: own,
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    // Request syntax: RFC 9112 (HTTP/1.1), section 2.1 (message format:
    // start line, header lines, an empty line) and 3 (request line).
    #[test]
    fn requests_complete_at_the_blank_line() {
        assert_eq!(
            parse(b"GET /metrics HTTP/1.1\r\nHost: x\r\n"),
            Parsed::Incomplete
        );
        assert_eq!(
            parse(b"GET /metrics?x=1 HTTP/1.1\r\nHost: x\r\n\r\n"),
            Parsed::Request {
                method: "GET".into(),
                path: "/metrics".into()
            }
        );
        assert_eq!(
            parse(b"HEAD /other HTTP/1.0\n\n"),
            Parsed::Request {
                method: "HEAD".into(),
                path: "/other".into()
            }
        );
    }

    #[test]
    fn a_request_past_the_limit_is_refused_without_its_end() {
        let long = vec![b'A'; MAX_REQUEST_BYTES];
        assert_eq!(parse(&long), Parsed::TooLarge);
        assert_eq!(parse(&long[..MAX_REQUEST_BYTES - 1]), Parsed::Incomplete);
        let mut big_header = b"GET /metrics HTTP/1.1\r\nX: ".to_vec();
        big_header.extend(vec![b'a'; MAX_REQUEST_BYTES]);
        big_header.extend(b"\r\n\r\n");
        assert_eq!(parse(&big_header), Parsed::TooLarge);
        assert!(
            answer(&Parsed::TooLarge, 0)
                .head
                .starts_with("HTTP/1.1 431")
        );
    }

    #[test]
    fn answers_carry_their_length_and_head_has_no_body() {
        let get = parse(b"GET /metrics HTTP/1.1\r\n\r\n");
        let a = answer(&get, 123);
        assert!(a.head.starts_with("HTTP/1.1 200 OK\r\n"));
        assert!(a.head.contains("Content-Length: 123\r\n"));
        assert!(a.head.contains(CONTENT_TYPE));
        assert!(a.with_body && a.own_body.is_none());
        let head = parse(b"HEAD /metrics HTTP/1.1\r\n\r\n");
        assert!(!answer(&head, 5).with_body);
        let post = parse(b"POST /metrics HTTP/1.1\r\n\r\n");
        assert!(answer(&post, 5).head.starts_with("HTTP/1.1 405"));
        let other = parse(b"GET / HTTP/1.1\r\n\r\n");
        let a = answer(&other, 5);
        assert!(a.head.starts_with("HTTP/1.1 404"));
        assert!(
            a.head
                .contains(&format!("Content-Length: {}", a.own_body.unwrap().len()))
        );
    }
}
