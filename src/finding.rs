//! What a detector concludes at one line — a [`Finding`] with its [`Level`]
//! and quantitative [`Evidence`] — shared by the detectors (`detect/`), which
//! emit findings, and the alarm book (`alarm/`), which turns them into alarms.
//! It sits below both so that neither imports the other's types. Pure data.

use serde::{Deserialize, Serialize};

/// Severity, ordered: `Ok < Warning < Critical`. In JSON and CSV it is
/// written in lower case (`ok`, `warning`, `critical`, see [`Level::code`]);
/// people read it as [`Level::word`]; processes get [`Level::exit_code`].
#[derive(
    Debug, Clone, Copy, Default, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize, Deserialize,
)]
#[serde(rename_all = "lowercase")]
pub enum Level {
    #[default]
    Ok,
    Warning,
    Critical,
}

impl Level {
    /// The one display word of the level, on every screen and in every text
    /// report: `OK`, `WARNING`, `CRITICAL`, as monitoring plugins print them.
    pub fn word(self) -> &'static str {
        match self {
            Level::Ok => "OK",
            Level::Warning => "WARNING",
            Level::Critical => "CRITICAL",
        }
    }

    /// The level as written in JSON and CSV files (as serde writes it).
    pub fn code(self) -> &'static str {
        match self {
            Level::Ok => "ok",
            Level::Warning => "warning",
            Level::Critical => "critical",
        }
    }

    /// Exit code by the monitoring-plugin convention: 0 OK, 1 warning, 2 critical.
    pub fn exit_code(self) -> i32 {
        match self {
            Level::Ok => 0,
            Level::Warning => 1,
            Level::Critical => 2,
        }
    }
}

/// Quantitative evidence attached to a finding; every field optional (and
/// left out of JSON when absent).
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct Evidence {
    /// Spectral radius of the fitted map per output interval.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub growth_per_output: Option<f64>,
    /// Spectral radius per solver step (|μ|^(1/k) when output every k steps).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub growth_per_step: Option<f64>,
    /// Growth rate per unit simulated time (1/s).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub growth_rate_per_s: Option<f64>,
    /// Frequency of the dominant growing mode (Hz, simulated time).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub frequency_hz: Option<f64>,
    /// Energy balance error relative to the energy scale (fraction, signed; + = created).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub balance_error: Option<f64>,
    /// Solver steps until overflow.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub forecast_steps: Option<f64>,
    /// Simulated time at overflow.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub forecast_time: Option<f64>,
    /// Wall-clock seconds until overflow (live only).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub forecast_wall_s: Option<f64>,
    /// Line where the growing mode is estimated to have started.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub onset_line: Option<u64>,
    /// Simulated time of the onset.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub onset_time: Option<f64>,
    /// Stability margin at the observed frequency when the scheme is declared
    /// (Ω_crit/Ω − 1; negative means past the limit).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub stability_margin: Option<f64>,
    /// The largest step suggested for the growing mode, when the scheme is
    /// known and the step can be read from the file.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub suggested_dt: Option<SuggestedDt>,
}

/// A step suggested for a mode growing past the scheme's limit.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
pub struct SuggestedDt {
    /// The step (s): the safety factor times the mode's limit step.
    pub seconds: f64,
    /// How it was reached: scheme, limit, the mode's Ω and ω, the step the
    /// run used, the safety factor, and what the estimate assumes.
    pub basis: String,
}

impl Evidence {
    /// Fill the growth, forecast, onset and margin fields that are still
    /// empty from `other` (the balance error is left alone).
    pub fn fill_growth_from(&mut self, other: &Evidence) {
        let fill = |a: &mut Option<f64>, b: Option<f64>| *a = a.or(b);
        fill(&mut self.growth_per_output, other.growth_per_output);
        fill(&mut self.growth_per_step, other.growth_per_step);
        fill(&mut self.growth_rate_per_s, other.growth_rate_per_s);
        fill(&mut self.frequency_hz, other.frequency_hz);
        fill(&mut self.forecast_steps, other.forecast_steps);
        fill(&mut self.forecast_time, other.forecast_time);
        fill(&mut self.forecast_wall_s, other.forecast_wall_s);
        fill(&mut self.onset_time, other.onset_time);
        fill(&mut self.stability_margin, other.stability_margin);
        if self.suggested_dt.is_none() {
            self.suggested_dt.clone_from(&other.suggested_dt);
        }
        self.onset_line = self.onset_line.or(other.onset_line);
    }
}

/// What a detector concluded at one line.
#[derive(Debug, Clone, PartialEq)]
pub struct Finding {
    /// `Ok` clears a condition this detector raised before (for hysteresis).
    pub level: Level,
    pub line: u64,
    /// Simulated time at `line`, when a time column exists.
    pub time: Option<f64>,
    /// One sentence in the trade's words.
    pub message: String,
    pub evidence: Evidence,
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_code_is_what_serde_writes() {
        for l in [Level::Ok, Level::Warning, Level::Critical] {
            assert_eq!(
                serde_json::to_string(&l).ok(),
                Some(format!("\"{}\"", l.code()))
            );
        }
    }
}
