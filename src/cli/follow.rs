//! Arguments shared by every command that follows growing files (`guard`,
//! `watch`, `fleet`): how often each file gets its full check, and whether
//! kernel notifications may wake the follower early. One struct, flattened
//! into each command, so the three speak of following in the same words.

use std::time::Duration;

use clap::Args;

use super::actions::parse_duration;

/// Poll period of `guard` and `watch` on one file when `--poll` is not given.
pub const POLL_DEFAULT: Duration = Duration::from_secs(1);
/// Poll period of each file of a fleet (`watch` on several files or a
/// pattern, and `rhoscope fleet`) when `--poll` is not given.
pub const POLL_FLEET_DEFAULT: Duration = Duration::from_secs(3);

/// How growing files are followed.
#[derive(Debug, Clone, Default, Args)]
pub struct FollowArgs {
    /// Period of each file's full check: size and identity, with a fresh open
    /// of the file. With many files the checks are spread evenly over it; on
    /// parallel filesystems keep it at a few seconds [default: 1s for one
    /// file; 3s for several, as in the fleet view and `rhoscope fleet`].
    #[arg(long, value_name = "DURATION", value_parser = parse_duration)]
    pub poll: Option<Duration>,
    /// Do not use kernel notifications as a wake-up hint (poll only).
    #[arg(long)]
    pub no_notify: bool,
}

impl FollowArgs {
    /// The poll period given on the command line, or `default`.
    pub fn poll_or(&self, default: Duration) -> Duration {
        self.poll.unwrap_or(default)
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;
    use crate::cli::{Cli, Command};
    use clap::{CommandFactory, Parser};

    fn follow_of(argv: &[&str]) -> FollowArgs {
        match Cli::try_parse_from(argv).unwrap().command {
            Command::Guard(a) => a.follow,
            Command::Watch(a) => a.follow,
            Command::Fleet(a) => a.follow,
            _ => panic!("not a following command"),
        }
    }

    #[test]
    fn guard_watch_and_fleet_take_the_same_flags() {
        for cmd in ["guard", "watch", "fleet"] {
            let f = follow_of(&["rhoscope", cmd, "h.csv", "--poll", "200ms", "--no-notify"]);
            assert_eq!(f.poll, Some(Duration::from_millis(200)), "{cmd}");
            assert!(f.no_notify, "{cmd}");
            let f = follow_of(&["rhoscope", cmd, "h.csv"]);
            assert_eq!((f.poll, f.no_notify), (None, false), "{cmd}");
        }
        let f = follow_of(&["rhoscope", "fleet", "h.csv"]);
        assert_eq!(f.poll_or(POLL_FLEET_DEFAULT), Duration::from_secs(3));
        assert!(Cli::try_parse_from(["rhoscope", "guard", "h.csv", "--poll", "soon"]).is_err());
    }

    #[test]
    fn help_shows_the_flags_in_the_same_words() {
        let mut cli = Cli::command();
        let mut helps: Vec<String> = Vec::new();
        for cmd in ["guard", "watch", "fleet"] {
            let sub = cli.find_subcommand_mut(cmd).unwrap();
            let text = sub.render_long_help().to_string();
            assert!(text.contains("--poll <DURATION>"), "{cmd}: {text}");
            assert!(text.contains("--no-notify"), "{cmd}: {text}");
            let start = text.find("--poll <DURATION>").unwrap();
            let end = text[start..].find("--no-notify").unwrap() + start;
            helps.push(text[start..end].to_string());
        }
        assert_eq!(helps[0], helps[1]);
        assert_eq!(helps[1], helps[2]);
    }
}
