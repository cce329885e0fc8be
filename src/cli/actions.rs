//! Arguments that arm the stopping actions; flattened into `guard` (and into
//! `watch`, which arms the same actions while the dashboard runs).

use std::path::PathBuf;
use std::time::Duration;

use clap::Args;

/// Actions taken on the first critical alarm, in this order as an escalation:
/// stop file, then signal, then command.
#[derive(Debug, Clone, Default, Args)]
pub struct ActionArgs {
    /// Create this stop file (atomically) on the alarm; many solvers poll for one,
    /// write a restart and end cleanly. First step of the escalation.
    #[arg(long, value_name = "PATH")]
    pub touch: Option<PathBuf>,
    /// Send this signal to --pid (TERM, SIGTERM or 15; INT, USR1, ...), after
    /// checking it is still the same process (start time). Second step.
    #[arg(long, value_name = "SIG", requires = "pid")]
    pub signal: Option<String>,
    /// The solver's (or launcher's) process: signalled by --signal, and watched —
    /// guard ends when it ends, and a live process counts as a run still going.
    #[arg(long, value_name = "PID", allow_negative_numbers = true)]
    pub pid: Option<i64>,
    /// Run this shell command (`sh -c`), e.g. to cancel the job through the
    /// scheduler; the alarm is in RHOSCOPE_LEVEL, RHOSCOPE_DETECTOR, RHOSCOPE_LINE,
    /// RHOSCOPE_TIME, RHOSCOPE_MESSAGE, RHOSCOPE_FILE. Last step.
    #[arg(long, value_name = "CMD")]
    pub run: Option<String>,
    /// Time limit of the --run command; it is killed after it [default: 2m].
    #[arg(long, value_name = "DURATION", value_parser = parse_duration)]
    pub run_limit: Option<Duration>,
    /// Wait between steps: the next step is taken only if the run still writes
    /// (the file grows, or --pid is alive) after this long [default: 5m].
    #[arg(long, value_name = "DURATION", value_parser = parse_duration)]
    pub grace: Option<Duration>,
    /// Act on warnings too, not only on critical alarms.
    #[arg(long)]
    pub on_warning: bool,
    /// Only log what would be done; touch, signal and run nothing.
    #[arg(long)]
    pub dry_run: bool,
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
}
