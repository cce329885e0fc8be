//! A user command run through `sh -c` with a time limit, in its own process
//! group (so that a hung pipeline is ended whole), with the alarm passed in
//! `RHOSCOPE_*` environment variables. Started without blocking; polled.

use std::path::Path;
use std::process::{Child, Command, Stdio};
use std::time::{Duration, Instant};

use nix::sys::signal::{Signal, killpg};
use nix::unistd::Pid;

use crate::alarm::Alarm;

/// The environment given to the command: `RHOSCOPE_LEVEL`, `_DETECTOR`, `_LINE`,
/// `_TIME` (empty when the file has no time column), `_MESSAGE`, `_FILE`.
pub fn alarm_env(alarm: &Alarm, file: &Path) -> Vec<(&'static str, String)> {
    let level = serde_json::to_value(alarm.level)
        .ok()
        .and_then(|v| v.as_str().map(str::to_owned))
        .unwrap_or_default();
    vec![
        ("RHOSCOPE_LEVEL", level),
        ("RHOSCOPE_DETECTOR", alarm.detector.to_string()),
        ("RHOSCOPE_LINE", alarm.line.to_string()),
        (
            "RHOSCOPE_TIME",
            alarm.time.map(|t| t.to_string()).unwrap_or_default(),
        ),
        ("RHOSCOPE_MESSAGE", alarm.message.clone()),
        ("RHOSCOPE_FILE", file.display().to_string()),
    ]
}

/// How a command ended.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum CommandEnd {
    /// Exit status 0.
    Success,
    /// Non-zero status or ended by a signal (described).
    Failed(String),
    /// Still running at the limit: its process group was killed.
    TimedOut(Duration),
}

/// A started command.
pub struct RunningCommand {
    child: Child,
    started: Instant,
    limit: Duration,
}

impl RunningCommand {
    /// Start `sh -c command` with `env` added to the environment.
    pub fn start(
        command: &str,
        env: &[(&'static str, String)],
        limit: Duration,
    ) -> std::io::Result<Self> {
        use std::os::unix::process::CommandExt;
        let mut cmd = Command::new("sh");
        cmd.arg("-c")
            .arg(command)
            .stdin(Stdio::null())
            .process_group(0);
        for (k, v) in env {
            cmd.env(k, v);
        }
        let child = cmd.spawn()?;
        Ok(Self {
            child,
            started: Instant::now(),
            limit,
        })
    }

    /// `None` while running within its limit; the end otherwise.
    pub fn poll(&mut self, now: Instant) -> Option<CommandEnd> {
        match self.child.try_wait() {
            Ok(Some(status)) if status.success() => Some(CommandEnd::Success),
            Ok(Some(status)) => Some(CommandEnd::Failed(format!("ended with {status}"))),
            Ok(None) if now.duration_since(self.started) >= self.limit => {
                let _ = killpg(Pid::from_raw(self.child.id() as i32), Signal::SIGKILL);
                let _ = self.child.kill();
                let _ = self.child.wait();
                Some(CommandEnd::TimedOut(self.limit))
            }
            Ok(None) => None,
            Err(e) => Some(CommandEnd::Failed(format!("cannot wait for it: {e}"))),
        }
    }

    /// Wait (polling) until it ends or its limit passes.
    pub fn wait(mut self) -> CommandEnd {
        loop {
            if let Some(end) = self.poll(Instant::now()) {
                return end;
            }
            std::thread::sleep(Duration::from_millis(10));
        }
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;
    use crate::finding::Evidence;
    use crate::finding::Level;

    fn alarm() -> Alarm {
        Alarm {
            level: Level::Critical,
            detector: "nonfinite",
            line: 42,
            time: Some(0.5),
            message: "NaN in 'ke'".into(),
            evidence: Evidence::default(),
        }
    }

    #[test]
    fn the_alarm_reaches_the_command_environment() {
        let dir = tempfile::tempdir().unwrap();
        let out = dir.path().join("env.txt");
        let env = alarm_env(&alarm(), Path::new("/runs/a.csv"));
        let cmd = format!(
            "printf '%s|%s|%s|%s|%s|%s' \"$RHOSCOPE_LEVEL\" \"$RHOSCOPE_DETECTOR\" \
             \"$RHOSCOPE_LINE\" \"$RHOSCOPE_TIME\" \"$RHOSCOPE_MESSAGE\" \"$RHOSCOPE_FILE\" > '{}'",
            out.display()
        );
        let end = RunningCommand::start(&cmd, &env, Duration::from_secs(30))
            .unwrap()
            .wait();
        assert_eq!(end, CommandEnd::Success);
        assert_eq!(
            std::fs::read_to_string(&out).unwrap(),
            "critical|nonfinite|42|0.5|NaN in 'ke'|/runs/a.csv"
        );
    }

    #[test]
    fn failure_and_hang_are_reported() {
        let end = RunningCommand::start("exit 7", &[], Duration::from_secs(30))
            .unwrap()
            .wait();
        assert!(
            matches!(end, CommandEnd::Failed(ref m) if m.contains('7')),
            "{end:?}"
        );
        let end = RunningCommand::start("sleep 30; sleep 30", &[], Duration::from_millis(200))
            .unwrap()
            .wait();
        assert_eq!(end, CommandEnd::TimedOut(Duration::from_millis(200)));
    }
}
