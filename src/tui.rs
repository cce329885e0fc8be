//! The terminal's lifecycle for the dashboard, in one place: a panic hook that
//! restores the terminal (installed before the terminal is touched), entering
//! raw mode and the alternate screen, restoring on drop (normal end and error),
//! and SIGINT, SIGTERM and SIGHUP (an SSH connection that drops) turned into a
//! message so the loop ends and restores. Also the thread that reads keys and
//! resizes. Headless commands never call anything here.

use std::io::{self, Stdout};
use std::sync::atomic::Ordering;
use std::sync::mpsc::SyncSender;
use std::time::Duration;

use ratatui::Terminal;
use ratatui::backend::CrosstermBackend;
use ratatui::crossterm::event::{self, Event, KeyCode, KeyEventKind, KeyModifiers};
use ratatui::crossterm::terminal::{
    EnterAlternateScreen, LeaveAlternateScreen, disable_raw_mode, enable_raw_mode,
};
use ratatui::crossterm::{cursor, execute};
use signal_hook::consts::{SIGHUP, SIGINT, SIGTERM};
use signal_hook::iterator::Signals;

use crate::app::worker::Worker;
use crate::app::{Key, Msg};

/// The dashboard's terminal.
pub type Term = Terminal<CrosstermBackend<Stdout>>;

/// Put the terminal back as it was: leave the alternate screen, show the
/// cursor, leave raw mode. Safe to call more than once; errors are ignored
/// because the terminal may be gone (a dropped SSH connection).
pub fn restore() {
    let _ = execute!(io::stdout(), LeaveAlternateScreen, cursor::Show);
    let _ = disable_raw_mode();
}

/// Install a panic hook that restores the terminal before the panic message is
/// printed. Call it first, before [`enter`].
pub fn install_panic_hook() {
    let previous = std::panic::take_hook();
    std::panic::set_hook(Box::new(move |info| {
        restore();
        previous(info);
    }));
}

/// Restores the terminal when dropped (normal end, `?` errors, unwinding).
pub struct Session {
    pub terminal: Term,
}

impl Drop for Session {
    fn drop(&mut self) {
        restore();
    }
}

/// Enter raw mode and the alternate screen.
pub fn enter() -> io::Result<Session> {
    enable_raw_mode()?;
    let mut out = io::stdout();
    if let Err(e) = execute!(out, EnterAlternateScreen, cursor::Hide) {
        restore();
        return Err(e);
    }
    match Terminal::new(CrosstermBackend::new(out)) {
        Ok(terminal) => Ok(Session { terminal }),
        Err(e) => {
            restore();
            Err(e)
        }
    }
}

/// Name of a termination signal.
fn signal_name(sig: i32) -> &'static str {
    match sig {
        SIGINT => "SIGINT",
        SIGTERM => "SIGTERM",
        SIGHUP => "SIGHUP",
        _ => "signal",
    }
}

/// Turn SIGINT, SIGTERM and SIGHUP into [`Msg::Signal`]. Returns a handle that
/// stops the listening thread when closed.
pub fn spawn_signals(tx: SyncSender<Msg>) -> io::Result<signal_hook::iterator::Handle> {
    let mut signals = Signals::new([SIGINT, SIGTERM, SIGHUP])?;
    let handle = signals.handle();
    std::thread::spawn(move || {
        for sig in signals.forever() {
            if tx.send(Msg::Signal(signal_name(sig))).is_err() {
                break;
            }
        }
    });
    Ok(handle)
}

/// Map a terminal key event to the dashboard's keys.
pub fn map_key(code: KeyCode, modifiers: KeyModifiers) -> Key {
    match code {
        KeyCode::Char('c') if modifiers.contains(KeyModifiers::CONTROL) => Key::Interrupt,
        KeyCode::Char(c) => Key::Char(c),
        KeyCode::Enter => Key::Enter,
        KeyCode::Esc => Key::Esc,
        KeyCode::Tab => Key::Tab,
        KeyCode::BackTab => Key::BackTab,
        _ => Key::Other,
    }
}

/// Reads keys and resizes on its own thread until stopped.
pub struct Input(Worker);

impl Input {
    /// Start reading the terminal's events into `tx`.
    pub fn spawn(tx: SyncSender<Msg>) -> Self {
        Self(Worker::spawn(move |flag| {
            while !flag.load(Ordering::Relaxed) {
                match event::poll(Duration::from_millis(100)) {
                    Ok(false) => continue,
                    Ok(true) => {}
                    Err(_) => break,
                }
                let msg = match event::read() {
                    Ok(Event::Key(k)) if k.kind != KeyEventKind::Release => {
                        Msg::Key(map_key(k.code, k.modifiers))
                    }
                    Ok(Event::Resize(..)) => Msg::Resize,
                    Ok(_) => continue,
                    Err(_) => break,
                };
                if tx.send(msg).is_err() {
                    break;
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
mod tests {
    use super::*;

    #[test]
    fn ctrl_c_is_an_interrupt_and_plain_c_a_letter() {
        assert_eq!(
            map_key(KeyCode::Char('c'), KeyModifiers::CONTROL),
            Key::Interrupt
        );
        assert_eq!(
            map_key(KeyCode::Char('c'), KeyModifiers::NONE),
            Key::Char('c')
        );
        assert_eq!(map_key(KeyCode::BackTab, KeyModifiers::SHIFT), Key::BackTab);
        assert_eq!(map_key(KeyCode::F(1), KeyModifiers::NONE), Key::Other);
    }
}
