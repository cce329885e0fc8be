//! A process identified by PID *and* start time, so that a PID the system has
//! since given to another process is never signalled. Read from `/proc/PID/stat`
//! (field 22, start time in clock ticks since boot, proc(5)) and the owner of
//! `/proc/PID`. Refuses PID ≤ 1 and processes of other users.

use std::fs;
use std::os::unix::fs::MetadataExt;
use std::str::FromStr;

use nix::sys::signal::{Signal, kill};
use nix::unistd::{Pid, geteuid};

/// Why a process may not be signalled.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
pub enum Refusal {
    #[error("PID {0} is refused: never signal init or the whole process group")]
    ReservedPid(i64),
    #[error("process {0} does not exist")]
    Gone(i32),
    #[error("process {pid} belongs to user {owner}, not to user {me}")]
    OtherUser { pid: i32, owner: u32, me: u32 },
    #[error("PID {0} now belongs to another process (its start time changed): not signalled")]
    Reused(i32),
    #[error("cannot read the identity of process {pid}: {why}")]
    Unreadable { pid: i32, why: String },
}

/// A process as it was when first seen.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct ProcessId {
    pub pid: i32,
    /// Start time in clock ticks after boot (proc(5), `/proc/PID/stat` field 22).
    pub start_ticks: u64,
}

/// Start time (field 22) of a `/proc/PID/stat` line. The command name (field 2)
/// is in parentheses and may itself hold spaces and parentheses, so fields are
/// counted from the last `)`.
pub fn start_ticks_from_stat(stat: &str) -> Option<u64> {
    let rest = &stat[stat.rfind(')')? + 1..];
    // After the name come field 3 (state) onwards: field 22 is the 20th of them.
    rest.split_whitespace().nth(19)?.parse().ok()
}

fn read_identity(pid: i32) -> Result<(u64, u32), Refusal> {
    let dir = format!("/proc/{pid}");
    let owner = match fs::metadata(&dir) {
        Ok(m) => m.uid(),
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => return Err(Refusal::Gone(pid)),
        Err(e) => {
            return Err(Refusal::Unreadable {
                pid,
                why: e.to_string(),
            });
        }
    };
    let stat = match fs::read_to_string(format!("{dir}/stat")) {
        Ok(s) => s,
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => return Err(Refusal::Gone(pid)),
        Err(e) => {
            return Err(Refusal::Unreadable {
                pid,
                why: e.to_string(),
            });
        }
    };
    let ticks = start_ticks_from_stat(&stat).ok_or_else(|| Refusal::Unreadable {
        pid,
        why: "unexpected /proc stat format".into(),
    })?;
    Ok((ticks, owner))
}

impl ProcessId {
    /// Record the identity of a running process of the current user.
    pub fn capture(pid: i64) -> Result<Self, Refusal> {
        if pid <= 1 || pid > i64::from(i32::MAX) {
            return Err(Refusal::ReservedPid(pid));
        }
        let pid = pid as i32;
        let (start_ticks, owner) = read_identity(pid)?;
        let me = geteuid().as_raw();
        if owner != me {
            return Err(Refusal::OtherUser { pid, owner, me });
        }
        Ok(Self { pid, start_ticks })
    }

    /// Check that the PID still names the same process.
    pub fn verify(&self) -> Result<(), Refusal> {
        let (ticks, owner) = read_identity(self.pid)?;
        if ticks != self.start_ticks {
            return Err(Refusal::Reused(self.pid));
        }
        let me = geteuid().as_raw();
        if owner != me {
            return Err(Refusal::OtherUser {
                pid: self.pid,
                owner,
                me,
            });
        }
        Ok(())
    }

    /// True while the same process is running (a zombie counts as ended).
    pub fn alive(&self) -> bool {
        let stat = match fs::read_to_string(format!("/proc/{}/stat", self.pid)) {
            Ok(s) => s,
            Err(_) => return false,
        };
        let zombie = stat
            .rfind(')')
            .and_then(|i| stat[i + 1..].split_whitespace().next())
            .is_some_and(|s| s == "Z" || s == "X");
        !zombie && start_ticks_from_stat(&stat) == Some(self.start_ticks)
    }

    /// Verify, then send `signal`.
    pub fn signal(&self, signal: Signal) -> Result<(), String> {
        self.verify().map_err(|e| e.to_string())?;
        kill(Pid::from_raw(self.pid), signal)
            .map_err(|e| format!("cannot send {signal} to process {}: {e}", self.pid))
    }
}

/// Read a signal given as `TERM`, `SIGTERM`, `term` or `15`.
pub fn parse_signal(s: &str) -> Result<Signal, String> {
    let t = s.trim();
    if let Ok(n) = t.parse::<i32>() {
        return Signal::try_from(n).map_err(|_| format!("'{s}' is not a signal number"));
    }
    let upper = t.to_ascii_uppercase();
    let name = if upper.starts_with("SIG") {
        upper
    } else {
        format!("SIG{upper}")
    };
    Signal::from_str(&name).map_err(|_| format!("'{s}' is not a signal name (try TERM, INT, USR1)"))
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    #[test]
    fn start_time_is_field_22_even_with_odd_command_names() {
        // Layout of /proc/PID/stat from proc(5): pid (comm) state ppid ... field 22 starttime.
        let mut fields: Vec<String> = (3..=52).map(|i| i.to_string()).collect();
        fields[22 - 3] = "987654".into();
        let line = format!("4242 (a (weird) name) {}", fields.join(" "));
        assert_eq!(start_ticks_from_stat(&line), Some(987_654));
        assert_eq!(start_ticks_from_stat("garbage"), None);
    }

    #[test]
    fn signals_by_name_short_name_and_number() {
        assert_eq!(parse_signal("TERM").unwrap(), Signal::SIGTERM);
        assert_eq!(parse_signal("SIGTERM").unwrap(), Signal::SIGTERM);
        assert_eq!(parse_signal("15").unwrap(), Signal::SIGTERM);
        assert_eq!(parse_signal("usr1").unwrap(), Signal::SIGUSR1);
        assert!(parse_signal("BOGUS").is_err());
        assert!(parse_signal("999").is_err());
    }

    #[test]
    fn reserved_pids_are_refused() {
        assert_eq!(ProcessId::capture(1), Err(Refusal::ReservedPid(1)));
        assert_eq!(ProcessId::capture(0), Err(Refusal::ReservedPid(0)));
        assert_eq!(ProcessId::capture(-5), Err(Refusal::ReservedPid(-5)));
    }

    #[test]
    fn own_process_is_captured_and_a_changed_start_time_is_refused() {
        let me = ProcessId::capture(i64::from(std::process::id())).unwrap();
        assert!(me.verify().is_ok());
        assert!(me.alive());
        let stale = ProcessId {
            start_ticks: me.start_ticks + 1,
            ..me
        };
        assert_eq!(stale.verify(), Err(Refusal::Reused(me.pid)));
        assert!(!stale.alive());
    }
}
