//! Keys from the terminal, read on a thread of our own: the terminal's input
//! (standard input when it is the terminal, else the controlling terminal) is
//! polled with a short timeout so the thread sees its stop flag, and the bytes
//! are turned into [`Key`]s by [`keys`]. End of input, a read error or a
//! hang-up on the terminal is [`Msg::HangUp`], after which the thread ends:
//! it never spins on a closed terminal.

use std::fs::File;
use std::io::{self, IsTerminal, Read};
use std::os::fd::AsFd;
use std::sync::atomic::Ordering;
use std::sync::mpsc::SyncSender;

use nix::errno::Errno;
use nix::poll::{PollFd, PollFlags, PollTimeout, poll};

use crate::app::worker::Worker;
use crate::app::{Key, Msg};

/// Longest wait for input before the stop flag is looked at again (ms).
const POLL_MS: u16 = 100;

/// The keys in `bytes` as typed on a terminal in raw mode: Ctrl-C, Enter,
/// Tab, Shift-Tab (`ESC [ Z`), Esc, and characters; other control bytes and
/// escape sequences (arrows, function keys) are [`Key::Other`].
pub fn keys(bytes: &[u8]) -> Vec<Key> {
    let text = String::from_utf8_lossy(bytes);
    let mut it = text.chars().peekable();
    let mut out = Vec::new();
    while let Some(c) = it.next() {
        let k = match c {
            '\u{3}' => Key::Interrupt,
            '\r' | '\n' => Key::Enter,
            '\t' => Key::Tab,
            '\u{1b}' => match it.peek() {
                Some('[') => {
                    it.next();
                    // A control sequence: parameters, then one final byte.
                    let mut last = None;
                    for c in it.by_ref() {
                        if ('\u{40}'..='\u{7e}').contains(&c) {
                            last = Some(c);
                            break;
                        }
                    }
                    if last == Some('Z') {
                        Key::BackTab
                    } else {
                        Key::Other
                    }
                }
                Some('O') => {
                    it.next();
                    it.next();
                    Key::Other
                }
                _ => Key::Esc,
            },
            c if c.is_control() => Key::Other,
            c => Key::Char(c),
        };
        out.push(k);
    }
    out
}

/// The terminal's input: a copy of standard input when it is the terminal,
/// else the controlling terminal.
fn terminal_input() -> io::Result<File> {
    let stdin = io::stdin();
    if stdin.is_terminal() {
        Ok(File::from(stdin.as_fd().try_clone_to_owned()?))
    } else {
        File::open("/dev/tty")
    }
}

/// Reads keys on its own thread until stopped or the terminal closes.
pub struct Input(Worker);

impl Input {
    /// Start reading the terminal's keys into `tx`; without a terminal to read
    /// from, a [`Msg::HangUp`] at once.
    pub fn spawn(tx: SyncSender<Msg>) -> Self {
        match terminal_input() {
            Ok(f) => Self::spawn_on(f, tx),
            Err(_) => Self(Worker::spawn(move |_| {
                let _ = tx.send(Msg::HangUp);
            })),
        }
    }

    /// Start reading keys from `input` (a terminal, or a pipe in tests).
    pub fn spawn_on<R: Read + AsFd + Send + 'static>(mut input: R, tx: SyncSender<Msg>) -> Self {
        Self(Worker::spawn(move |flag| {
            let mut buf = [0u8; 256];
            while !flag.load(Ordering::Relaxed) {
                let ready = {
                    let mut fds = [PollFd::new(input.as_fd(), PollFlags::POLLIN)];
                    match poll(&mut fds, PollTimeout::from(POLL_MS)) {
                        Ok(0) => continue,
                        Ok(_) => fds[0].revents().unwrap_or(PollFlags::empty()),
                        Err(Errno::EINTR) => continue,
                        Err(_) => PollFlags::POLLERR,
                    }
                };
                let gone = if ready.contains(PollFlags::POLLIN) {
                    match input.read(&mut buf) {
                        Ok(0) => true,
                        Ok(n) => {
                            for k in keys(&buf[..n]) {
                                if tx.send(Msg::Key(k)).is_err() {
                                    return;
                                }
                            }
                            false
                        }
                        Err(e) => !matches!(
                            e.kind(),
                            io::ErrorKind::Interrupted | io::ErrorKind::WouldBlock
                        ),
                    }
                } else {
                    // POLLHUP, POLLERR or POLLNVAL without input to read.
                    true
                };
                if gone {
                    let _ = tx.send(Msg::HangUp);
                    return;
                }
            }
        }))
    }

    /// Stop reading and wait for the thread (at most one poll period).
    pub fn stop(self) {
        self.0.stop();
    }
}

#[cfg(test)]
#[allow(clippy::unwrap_used)]
mod tests {
    use super::*;
    use std::io::Write;
    use std::sync::mpsc::sync_channel;
    use std::time::{Duration, Instant};

    #[test]
    fn bytes_of_a_raw_terminal_are_keys() {
        assert_eq!(
            keys(b"q\x03\r\t\x1b[Z\x1b"),
            vec![
                Key::Char('q'),
                Key::Interrupt,
                Key::Enter,
                Key::Tab,
                Key::BackTab,
                Key::Esc
            ]
        );
        // Arrows and function keys are one key each, not their letters.
        assert_eq!(
            keys(b"\x1b[A\x1b[15~\x1bOPj"),
            vec![Key::Other, Key::Other, Key::Other, Key::Char('j')]
        );
        assert_eq!(keys("é+".as_bytes()), vec![Key::Char('é'), Key::Char('+')]);
        assert_eq!(keys(b"\x7f"), vec![Key::Other]);
    }

    #[test]
    fn keys_come_through_and_a_closed_input_is_a_hang_up() {
        let (reader, mut writer) = std::io::pipe().unwrap();
        let (tx, rx) = sync_channel(16);
        let input = Input::spawn_on(reader, tx);
        writer.write_all(b"q\x1b[Z").unwrap();
        let got: Vec<_> = (0..2)
            .map(|_| rx.recv_timeout(Duration::from_secs(5)).unwrap())
            .collect();
        assert!(matches!(got[0], Msg::Key(Key::Char('q'))), "{got:?}");
        assert!(matches!(got[1], Msg::Key(Key::BackTab)), "{got:?}");
        let t = Instant::now();
        drop(writer);
        let m = rx.recv_timeout(Duration::from_secs(5)).unwrap();
        assert!(matches!(m, Msg::HangUp), "{m:?}");
        // The thread ended by itself: nothing more, and stop returns at once.
        assert!(rx.recv_timeout(Duration::from_millis(300)).is_err());
        input.stop();
        assert!(t.elapsed() < Duration::from_secs(2), "{:?}", t.elapsed());
    }
}
