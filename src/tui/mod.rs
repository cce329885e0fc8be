//! The terminal's lifecycle for the dashboard, in one place: a panic hook that
//! restores the terminal (installed before the terminal is touched), entering
//! raw mode and the alternate screen, restoring on drop (normal end and error),
//! and SIGINT, SIGTERM and SIGHUP (an SSH connection that drops) turned into a
//! message so the loop ends and restores; SIGWINCH into a resize. The thread
//! that reads keys is in [`input`]; a closed terminal ends every view, like
//! SIGHUP. Headless commands never call anything here.

pub mod input;

pub use input::Input;

use std::io::{self, Stdout};
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::mpsc::SyncSender;

use ratatui::Terminal;
use ratatui::backend::CrosstermBackend;
use ratatui::crossterm::terminal::{
    EnterAlternateScreen, LeaveAlternateScreen, disable_raw_mode, enable_raw_mode,
};
use ratatui::crossterm::{cursor, execute};
use signal_hook::consts::{SIGHUP, SIGINT, SIGTERM, SIGWINCH};
use signal_hook::iterator::Signals;

use crate::app::Msg;

/// Set once a termination signal arrived or the terminal closed: every view
/// leaves, and a view opened from another (the fleet's drill-down) takes its
/// parent with it.
static LEAVING: AtomicBool = AtomicBool::new(false);

/// True once the program should leave every view.
pub fn leaving() -> bool {
    LEAVING.load(Ordering::SeqCst)
}

/// Mark that every view should leave.
pub fn set_leaving() {
    LEAVING.store(true, Ordering::SeqCst);
}

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

/// Turn SIGINT, SIGTERM and SIGHUP into [`Msg::Signal`] (and mark
/// [`leaving`]), SIGWINCH into [`Msg::Resize`]. Returns a handle that stops
/// the listening thread when closed.
pub fn spawn_signals(tx: SyncSender<Msg>) -> io::Result<signal_hook::iterator::Handle> {
    let mut signals = Signals::new([SIGINT, SIGTERM, SIGHUP, SIGWINCH])?;
    let handle = signals.handle();
    std::thread::spawn(move || {
        for sig in signals.forever() {
            if sig == SIGWINCH {
                // A resize is only a hint to redraw: never wait for room.
                let _ = tx.try_send(Msg::Resize);
                continue;
            }
            set_leaving();
            if tx.send(Msg::Signal(signal_name(sig))).is_err() {
                break;
            }
        }
    });
    Ok(handle)
}
