//! A real terminal for the dashboard tests: a private tmux server (its own
//! socket, `tmux -L`) running one command, with keys sent by `send-keys` and
//! the screen read by `capture-pane`; and an invented healthy history to feed
//! it. Shared by `ui_tmux` (one run) and `ui_tmux_fleet` (the fleet view).

use std::path::Path;
use std::process::Command;
use std::time::{Duration, Instant};

/// A private tmux server (its own socket) running one command in one pane.
pub struct Tmux {
    pub socket: String,
}

impl Tmux {
    pub fn start(tag: &str, cols: u16, rows: u16, cmd: &str) -> Tmux {
        let t = Tmux {
            socket: format!("rhoscope-test-{}-{tag}", std::process::id()),
        };
        let ok = Command::new("tmux")
            .args([
                "-L",
                &t.socket,
                "-f",
                "/dev/null",
                "new-session",
                "-d",
                "-s",
                "w",
            ])
            .args(["-x", &cols.to_string(), "-y", &rows.to_string()])
            .arg(cmd)
            .env_remove("NO_COLOR")
            .status()
            .expect("tmux must be installed (.ci/run installs it)");
        assert!(ok.success());
        t
    }

    pub fn screen(&self) -> String {
        let out = Command::new("tmux")
            .args(["-L", &self.socket, "capture-pane", "-p", "-t", "w"])
            .output()
            .expect("tmux capture-pane");
        String::from_utf8_lossy(&out.stdout).into_owned()
    }

    pub fn keys(&self, keys: &[&str]) {
        let ok = Command::new("tmux")
            .args(["-L", &self.socket, "send-keys", "-t", "w"])
            .args(keys)
            .status()
            .expect("tmux send-keys");
        assert!(ok.success());
    }

    pub fn alive(&self) -> bool {
        Command::new("tmux")
            .args(["-L", &self.socket, "has-session", "-t", "w"])
            .status()
            .map(|s| s.success())
            .unwrap_or(false)
    }

    /// Wait until the screen satisfies `want`; panics with the screen otherwise.
    pub fn wait_for(&self, what: &str, want: impl Fn(&str) -> bool) -> String {
        self.wait_for_within(what, Duration::from_secs(20), want)
    }

    /// As [`Tmux::wait_for`], with a deadline of `within`.
    pub fn wait_for_within(
        &self,
        what: &str,
        within: Duration,
        want: impl Fn(&str) -> bool,
    ) -> String {
        let deadline = Instant::now() + within;
        loop {
            let s = self.screen();
            if want(&s) {
                return s;
            }
            if Instant::now() > deadline {
                panic!("timed out waiting for {what}; screen:\n{s}");
            }
            std::thread::sleep(Duration::from_millis(100));
        }
    }
}

impl Drop for Tmux {
    fn drop(&mut self) {
        let _ = Command::new("tmux")
            .args(["-L", &self.socket, "kill-server"])
            .status();
    }
}

/// True (with a line saying why) when the tmux tests cannot run here:
/// RHOSCOPE_SKIP_TMUX=1, or no tmux installed (a failure under CI).
pub fn skip() -> bool {
    if std::env::var_os("RHOSCOPE_SKIP_TMUX").is_some_and(|v| v == "1") {
        return crate::external::missing("tmux tests turned off with RHOSCOPE_SKIP_TMUX=1");
    }
    if Command::new("tmux").arg("-V").output().is_err() {
        return crate::external::missing(
            "tmux is not installed (.ci/run installs it: apt-get install tmux)",
        );
    }
    false
}

/// An invented history: a two-mass oscillator, healthy, `rows` rows from `from`.
pub fn rows_text(from: u32, rows: u32) -> String {
    let mut s = String::new();
    for i in from..from + rows {
        let t = f64::from(i) * 1e-4;
        let c = (2.0 * std::f64::consts::PI * 40.0 * t).cos();
        s.push_str(&format!(
            "{t:.6e},1.0e-4,{i},{:.6e},{:.6e},1.0,{:.6e}\n",
            0.5 * (1.0 + c),
            0.5 * (1.0 - c),
            1e-3 * c
        ));
    }
    s
}

/// Write an invented healthy history of `rows` rows (header included) to `p`.
pub fn write_history(p: &Path, rows: u32) {
    let mut text =
        String::from("time,dt,step,kinetic_energy,internal_energy,external_work,disp_tip\n");
    text.push_str(&rows_text(0, rows));
    std::fs::write(p, text).unwrap();
}
