//! The stop actions a user configured, typed: [`ActionSettings`] from the
//! `[actions]` table of a configuration named with `--config` (unknown keys
//! and wrong types are errors naming the key) and from the command line,
//! with [`ActionSettings::over`] deciding which wins; and [`parse_duration`],
//! the one reading of a duration (`500ms`, `3s`, `2m`, `1.5h`).

use std::path::PathBuf;
use std::time::Duration;

use serde::{Deserialize, Deserializer};

/// What to do on an alarm, as configured; validated into an escalation by
/// `act::plan`.
#[derive(Debug, Clone, Default, PartialEq, Eq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ActionSettings {
    /// Create this stop file.
    pub touch: Option<PathBuf>,
    /// Send this signal to the watched process.
    pub signal: Option<String>,
    /// Run this shell command.
    pub run: Option<String>,
    /// Time limit of the command.
    #[serde(default, deserialize_with = "duration")]
    pub run_limit: Option<Duration>,
    /// Wait between steps.
    #[serde(default, deserialize_with = "duration")]
    pub grace: Option<Duration>,
    /// Act on warnings too.
    #[serde(default)]
    pub on_warning: bool,
    /// Only log what would be done.
    #[serde(default)]
    pub dry_run: bool,
}

impl ActionSettings {
    /// These settings (the command line's) over `table` (a named
    /// configuration's): a value given here wins, a switch is on if either
    /// turns it on.
    pub fn over(&self, table: Option<&ActionSettings>) -> ActionSettings {
        let Some(t) = table else {
            return self.clone();
        };
        ActionSettings {
            touch: self.touch.clone().or_else(|| t.touch.clone()),
            signal: self.signal.clone().or_else(|| t.signal.clone()),
            run: self.run.clone().or_else(|| t.run.clone()),
            run_limit: self.run_limit.or(t.run_limit),
            grace: self.grace.or(t.grace),
            on_warning: self.on_warning || t.on_warning,
            dry_run: self.dry_run || t.dry_run,
        }
    }

    /// Read the `[actions]` table of a configuration file's whole `text`
    /// (other tables are not looked at); a mistake is named with its line.
    pub fn from_config_text(text: &str) -> anyhow::Result<Option<ActionSettings>> {
        #[derive(Deserialize)]
        struct Only {
            actions: Option<ActionSettings>,
        }
        let only: Only = toml::from_str(text).map_err(|e| anyhow::anyhow!("{e}"))?;
        Ok(only.actions)
    }
}

fn duration<'de, D: Deserializer<'de>>(d: D) -> Result<Option<Duration>, D::Error> {
    let text = String::deserialize(d)?;
    parse_duration(&text)
        .map(Some)
        .map_err(serde::de::Error::custom)
}

/// Read a duration: a number with a unit `ms`, `s`, `m` or `h` (`500ms`, `3s`,
/// `2m`, `1.5h`); a bare number is seconds.
pub fn parse_duration(text: &str) -> Result<Duration, String> {
    let t = text.trim();
    let split = t
        .find(|c: char| !(c.is_ascii_digit() || c == '.'))
        .unwrap_or(t.len());
    let (num, unit) = t.split_at(split);
    let value: f64 = num
        .parse()
        .map_err(|_| format!("'{text}' is not a duration (try 500ms, 3s, 2m, 1h)"))?;
    let scale_s = match unit.trim() {
        "ms" => 1e-3,
        "" | "s" => 1.0,
        "m" | "min" => 60.0,
        "h" => 3600.0,
        other => {
            return Err(format!(
                "unknown unit '{other}' in '{text}' (use ms, s, m or h)"
            ));
        }
    };
    Duration::try_from_secs_f64(value * scale_s)
        .map_err(|_| format!("'{text}' is not a usable duration"))
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    #[test]
    fn durations_in_the_usual_units() {
        assert_eq!(parse_duration("500ms").unwrap(), Duration::from_millis(500));
        assert_eq!(parse_duration("3s").unwrap(), Duration::from_secs(3));
        assert_eq!(parse_duration("3").unwrap(), Duration::from_secs(3));
        assert_eq!(parse_duration("2m").unwrap(), Duration::from_secs(120));
        assert_eq!(parse_duration("1.5h").unwrap(), Duration::from_secs(5400));
        assert!(parse_duration("3 weeks").is_err());
        assert!(parse_duration("fast").is_err());
        assert!(parse_duration("").is_err());
    }

    fn table(text: &str) -> anyhow::Result<ActionSettings> {
        Ok(ActionSettings::from_config_text(&format!("[actions]\n{text}"))?.unwrap())
    }

    #[test]
    fn a_table_is_read_into_types_and_its_mistakes_are_named() {
        let a = table("touch = \"STOP\"\ngrace = \"90s\"\non_warning = true\n").unwrap();
        assert_eq!(a.touch, Some(PathBuf::from("STOP")));
        assert_eq!(a.grace, Some(Duration::from_secs(90)));
        assert!(a.on_warning && !a.dry_run);
        for (text, named) in [
            ("tuoch = \"STOP\"\n", "tuoch"),
            ("grace = 5\n", "grace"),
            ("grace = \"5 fortnights\"\n", "fortnights"),
            ("dry_run = \"yes\"\n", "dry_run"),
        ] {
            let e = format!("{:#}", table(text).unwrap_err());
            assert!(e.contains("line 2") && e.contains(named), "{text}: {e}");
        }
    }

    #[test]
    fn flags_win_over_the_table_and_either_turns_a_switch_on() {
        let flags = ActionSettings {
            touch: Some("flag-stop".into()),
            dry_run: true,
            ..ActionSettings::default()
        };
        let t = table("touch = \"table-stop\"\nrun = \"scancel 1\"\non_warning = true\n").unwrap();
        let a = flags.over(Some(&t));
        assert_eq!(a.touch, Some(PathBuf::from("flag-stop")));
        assert_eq!(a.run.as_deref(), Some("scancel 1"));
        assert!(a.on_warning && a.dry_run);
        assert_eq!(flags.over(None), flags);
    }
}
