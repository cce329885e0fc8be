//! Text encodings at the reader's door and names fit to print: the byte-order
//! mark that opens a file (UTF-8 dropped, UTF-16 decoded to UTF-8 as the bytes
//! arrive, UTF-32 refused), and column names with terminal control sequences,
//! control characters and bidirectional overrides removed before any text
//! output sees them.

/// What the first bytes of the input said about its encoding.
#[derive(Debug, Clone, PartialEq, Eq)]
pub(super) enum Encoding {
    /// Fewer bytes than a byte-order mark have arrived; they wait here.
    Sniffing(Vec<u8>),
    /// UTF-8 or any ASCII-compatible byte text: bytes pass through.
    Bytes,
    /// UTF-16 with this byte order, decoded as it arrives.
    Utf16(Utf16),
    /// UTF-32: refused, every byte is dropped.
    Refused,
}

/// A UTF-16 decoder that keeps an odd byte and a high surrogate across feeds.
#[derive(Debug, Clone, PartialEq, Eq)]
pub(super) struct Utf16 {
    big_endian: bool,
    odd: Option<u8>,
    high: Option<u16>,
}

/// What [`Encoding::sniff`] decided.
#[derive(Debug, Clone, PartialEq, Eq)]
pub(super) enum Sniffed {
    /// Still too few bytes.
    Wait,
    /// Decided; the bytes after the mark (if any) are returned for reading, and a
    /// note to report once, if any.
    Decided {
        rest: Vec<u8>,
        note: Option<&'static str>,
    },
}

/// Why a UTF-32 file is not read, and what to do.
pub(super) const UTF32_REFUSED: &str =
    "the file is UTF-32 (byte-order mark): not read; convert it to UTF-8";

const UTF8_BOM: &[u8] = b"\xEF\xBB\xBF";
const UTF16LE_BOM: &[u8] = b"\xFF\xFE";
const UTF16BE_BOM: &[u8] = b"\xFE\xFF";
const UTF32LE_BOM: &[u8] = b"\xFF\xFE\x00\x00";
const UTF32BE_BOM: &[u8] = b"\x00\x00\xFE\xFF";

impl Encoding {
    /// The state of a reader that has seen no byte yet.
    pub(super) fn start() -> Self {
        Encoding::Sniffing(Vec::new())
    }

    /// Take the next bytes while sniffing. `end` is true at the end of input.
    pub(super) fn sniff(&mut self, bytes: &[u8], end: bool) -> Sniffed {
        let Encoding::Sniffing(seen) = self else {
            return Sniffed::Decided {
                rest: bytes.to_vec(),
                note: None,
            };
        };
        seen.extend_from_slice(bytes);
        let marks = [UTF32LE_BOM, UTF32BE_BOM, UTF8_BOM, UTF16LE_BOM, UTF16BE_BOM];
        let undecided = marks
            .iter()
            .any(|m| seen.len() < m.len() && m.starts_with(seen));
        if undecided && !end {
            return Sniffed::Wait;
        }
        let seen = std::mem::take(seen);
        let (next, skip, note) = if seen.starts_with(UTF32LE_BOM) || seen.starts_with(UTF32BE_BOM) {
            (Encoding::Refused, seen.len(), Some(UTF32_REFUSED))
        } else if seen.starts_with(UTF8_BOM) {
            (Encoding::Bytes, UTF8_BOM.len(), None)
        } else if seen.starts_with(UTF16LE_BOM) || seen.starts_with(UTF16BE_BOM) {
            let big_endian = seen.starts_with(UTF16BE_BOM);
            let utf16 = Utf16 {
                big_endian,
                odd: None,
                high: None,
            };
            (
                Encoding::Utf16(utf16),
                2,
                Some("the file is UTF-16 (byte-order mark): decoded to UTF-8"),
            )
        } else {
            (Encoding::Bytes, 0, None)
        };
        *self = next;
        let mut rest = Vec::new();
        self.decode(&seen[skip..], &mut rest);
        Sniffed::Decided { rest, note }
    }

    /// Decode `bytes` (after the mark) into `out` (appended): a copy for byte
    /// text, UTF-8 for UTF-16, nothing when refused.
    pub(super) fn decode(&mut self, bytes: &[u8], out: &mut Vec<u8>) {
        match self {
            Encoding::Sniffing(_) | Encoding::Bytes => out.extend_from_slice(bytes),
            Encoding::Refused => {}
            Encoding::Utf16(d) => d.decode(bytes, out),
        }
    }
}

impl Utf16 {
    fn decode(&mut self, bytes: &[u8], out: &mut Vec<u8>) {
        let mut rest = bytes;
        let mut buf = [0u8; 4];
        loop {
            let pair = match (self.odd.take(), rest) {
                (Some(a), [b, tail @ ..]) => {
                    rest = tail;
                    [a, *b]
                }
                (None, [a, b, tail @ ..]) => {
                    rest = tail;
                    [*a, *b]
                }
                (odd, tail) => {
                    self.odd = odd.or(tail.first().copied());
                    return;
                }
            };
            let unit = if self.big_endian {
                u16::from_be_bytes(pair)
            } else {
                u16::from_le_bytes(pair)
            };
            let ch = match (self.high.take(), unit) {
                (None, 0xD800..=0xDBFF) => {
                    self.high = Some(unit);
                    continue;
                }
                (Some(h), 0xDC00..=0xDFFF) => {
                    let c = 0x10000 + ((u32::from(h) - 0xD800) << 10) + (u32::from(unit) - 0xDC00);
                    char::from_u32(c).unwrap_or(char::REPLACEMENT_CHARACTER)
                }
                (Some(_), _) | (None, 0xDC00..=0xDFFF) => char::REPLACEMENT_CHARACTER,
                (None, u) => char::from_u32(u32::from(u)).unwrap_or(char::REPLACEMENT_CHARACTER),
            };
            out.extend_from_slice(ch.encode_utf8(&mut buf).as_bytes());
        }
    }
}

/// A column name fit to print: terminal escape sequences (CSI, OSC and
/// two-character ones) removed whole, other control characters and
/// bidirectional overrides removed, blanks collapsed and trimmed.
pub fn clean_name(raw: &str) -> String {
    let mut out = String::with_capacity(raw.len());
    let mut chars = raw.chars().peekable();
    while let Some(c) = chars.next() {
        if c == '\u{1b}' {
            match chars.next() {
                // CSI: parameters and intermediates up to a final byte @..~.
                Some('[') => {
                    for d in chars.by_ref() {
                        if ('@'..='~').contains(&d) {
                            break;
                        }
                    }
                }
                // OSC, DCS, PM, APC: up to BEL or ESC \.
                Some(']' | 'P' | '^' | '_') => {
                    while let Some(d) = chars.next() {
                        if d == '\u{7}' {
                            break;
                        }
                        if d == '\u{1b}' {
                            chars.next_if_eq(&'\\');
                            break;
                        }
                    }
                }
                _ => {}
            }
            continue;
        }
        let bidi = matches!(c, '\u{200e}' | '\u{200f}' | '\u{202a}'..='\u{202e}' | '\u{2066}'..='\u{2069}');
        if c == '\t' {
            out.push(' ');
        } else if !c.is_control() && !bidi {
            out.push(c);
        }
    }
    let mut s = String::with_capacity(out.len());
    for w in out.split(' ').filter(|w| !w.is_empty()) {
        if !s.is_empty() {
            s.push(' ');
        }
        s.push_str(w);
    }
    s
}

#[cfg(test)]
mod tests {
    use super::*;

    fn sniff_all(bytes: &[u8], piece: usize) -> (Vec<u8>, Vec<&'static str>) {
        let mut enc = Encoding::start();
        let mut out = Vec::new();
        let mut notes = Vec::new();
        for c in bytes.chunks(piece) {
            if matches!(enc, Encoding::Sniffing(_)) {
                if let Sniffed::Decided { rest, note } = enc.sniff(c, false) {
                    out.extend(rest);
                    notes.extend(note);
                }
            } else {
                enc.decode(c, &mut out);
            }
        }
        if let Sniffed::Decided { rest, note } = enc.sniff(&[], true) {
            out.extend(rest);
            notes.extend(note);
        }
        (out, notes)
    }

    fn utf16(text: &str, big: bool) -> Vec<u8> {
        let mut v = if big {
            vec![0xFE, 0xFF]
        } else {
            vec![0xFF, 0xFE]
        };
        for u in text.encode_utf16() {
            v.extend(if big {
                u.to_be_bytes()
            } else {
                u.to_le_bytes()
            });
        }
        v
    }

    #[test]
    fn utf8_mark_is_dropped_and_utf16_decoded_however_cut() {
        for piece in [1, 2, 3, 5, 64] {
            let (out, notes) = sniff_all(b"\xEF\xBB\xBFtime,ke\n0,1\n", piece);
            assert_eq!(out, b"time,ke\n0,1\n");
            assert!(notes.is_empty());
            for big in [false, true] {
                // U+1D70F (mathematical italic small tau) takes a surrogate pair.
                let text = "time [\u{b5}s]\t\u{1d70f}\n0\t1\n";
                let (out, notes) = sniff_all(&utf16(text, big), piece);
                assert_eq!(String::from_utf8_lossy(&out), text, "piece {piece}");
                assert_eq!(notes.len(), 1);
            }
        }
    }

    #[test]
    fn plain_text_and_short_inputs_pass_through() {
        assert_eq!(sniff_all(b"t x\n", 1).0, b"t x\n");
        assert_eq!(sniff_all(b"\xEF", 1).0, b"\xEF");
        assert_eq!(sniff_all(b"", 1).0, b"");
        let (out, notes) = sniff_all(b"\xFF\xFE\x00\x00t\x00\x00\x00", 3);
        assert!(out.is_empty());
        assert_eq!(notes.len(), 1);
    }

    #[test]
    fn names_lose_escapes_and_controls() {
        assert_eq!(clean_name("\u{1b}]0;owned\u{7}ke"), "ke");
        assert_eq!(clean_name("\u{1b}[31mred\u{1b}[0m energy"), "red energy");
        assert_eq!(clean_name("a\u{202e}b\u{0}c\rd"), "abcd");
        assert_eq!(clean_name(" kinetic\tenergy "), "kinetic energy");
        assert_eq!(clean_name("\u{1b}]2;t\u{1b}\\x"), "x");
    }
}
