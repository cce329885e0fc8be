//! Scoring of one labelled history: the level expected and the level raised,
//! the first alarm line and the lead (crash line − first critical line) /
//! (crash line − onset line); over a set of cases, blow-ups detected before
//! their crash line, blow-ups called critical before their onset, false
//! critical alarms, healthy cases warned, drift cases warned, and the median
//! lead, against the targets: every blow-up caught before its crash and none
//! before its onset, no healthy run critical or warned, every drift warned
//! and none critical, and a median lead of at least the set's target. Pure:
//! it is given labels and alarms, and runs nothing.

use crate::alarm::Alarm;
use crate::finding::Level;

/// The label of one case.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Label {
    /// Ok (healthy), warning (energy drift) or critical (numerical blow-up).
    pub level: Level,
    /// Line where the trouble starts.
    pub onset_line: Option<u64>,
    /// Line of the first non-finite or overflowed field.
    pub crash_line: Option<u64>,
}

/// The score of one case.
#[derive(Debug, Clone, PartialEq)]
pub struct CaseScore {
    pub name: String,
    pub expected: Label,
    /// Highest level raised.
    pub got: Level,
    /// First alarm at the expected level (any alarm for a healthy case).
    pub first_alarm_line: Option<u64>,
    /// Detector of that alarm.
    pub first_alarm_detector: Option<&'static str>,
    /// (crash − first critical) / (crash − onset), blow-ups only.
    pub lead: Option<f64>,
    /// Blow-up with a critical alarm before its crash line.
    pub detected: bool,
    /// Blow-up whose first critical alarm comes before its onset line.
    pub early: bool,
    /// A critical alarm on a case not labelled critical.
    pub false_critical: bool,
}

/// Score one case from its label and the alarms raised on it.
pub fn score(name: &str, expected: Label, alarms: &[Alarm]) -> CaseScore {
    let got = alarms.iter().map(|a| a.level).max().unwrap_or(Level::Ok);
    let wanted = expected.level.max(Level::Warning);
    let first = alarms.iter().find(|a| a.level >= wanted);
    let first_crit = alarms.iter().find(|a| a.level == Level::Critical);
    let (mut lead, mut detected, mut early) = (None, false, false);
    if expected.level == Level::Critical {
        // Before the crash line; when nothing announces the crash (onset on the
        // crash line itself, as a NaN out of nowhere), on that line.
        let unannounced =
            expected.onset_line.is_some() && expected.onset_line == expected.crash_line;
        let before_crash = |l: u64| {
            expected
                .crash_line
                .is_none_or(|c| l < c || (unannounced && l == c))
        };
        detected = first_crit.is_some_and(|a| before_crash(a.line));
        early = first_crit
            .zip(expected.onset_line)
            .is_some_and(|(a, o)| a.line < o);
        if let (Some(c), Some(o), Some(a)) = (expected.crash_line, expected.onset_line, first_crit)
            && c > o
        {
            lead = Some((c as f64 - a.line as f64) / (c as f64 - o as f64));
        } else if let (Some(c), Some(o)) = (expected.crash_line, expected.onset_line)
            && c > o
        {
            lead = Some(0.0);
        }
    }
    CaseScore {
        name: name.to_string(),
        expected,
        got,
        first_alarm_line: first.map(|a| a.line),
        first_alarm_detector: first.map(|a| a.detector),
        lead,
        detected,
        early,
        false_critical: expected.level < Level::Critical && got == Level::Critical,
    }
}

/// Totals over a set of cases.
#[derive(Debug, Clone, PartialEq)]
pub struct Totals {
    pub blowups: usize,
    pub detected: usize,
    /// Blow-ups called critical before their onset.
    pub early: usize,
    pub false_critical: usize,
    pub healthy: usize,
    pub healthy_warned: usize,
    pub drifts: usize,
    pub drifts_warned: usize,
    /// Median lead over blow-ups with a lead (undetected count as 0).
    pub median_lead: Option<f64>,
}

impl Totals {
    /// Sum up case scores.
    pub fn of(cases: &[CaseScore]) -> Totals {
        let by = |l: Level| cases.iter().filter(move |c| c.expected.level == l);
        let mut leads: Vec<f64> = by(Level::Critical).filter_map(|c| c.lead).collect();
        leads.sort_by(|a, b| a.total_cmp(b));
        let median_lead = match leads.len() {
            0 => None,
            n if n % 2 == 1 => Some(leads[n / 2]),
            n => Some(0.5 * (leads[n / 2 - 1] + leads[n / 2])),
        };
        Totals {
            blowups: by(Level::Critical).count(),
            detected: by(Level::Critical).filter(|c| c.detected).count(),
            early: by(Level::Critical).filter(|c| c.early).count(),
            false_critical: cases.iter().filter(|c| c.false_critical).count(),
            healthy: by(Level::Ok).count(),
            healthy_warned: by(Level::Ok).filter(|c| c.got >= Level::Warning).count(),
            drifts: by(Level::Warning).count(),
            drifts_warned: by(Level::Warning)
                .filter(|c| c.got == Level::Warning)
                .count(),
            median_lead,
        }
    }

    /// The targets: every blow-up detected before its crash and none called
    /// critical before its onset, no false critical, no healthy case warned,
    /// every drift case warned, median lead ≥ `min_lead`.
    pub fn targets_met(&self, min_lead: f64) -> bool {
        self.detected == self.blowups
            && self.early == 0
            && self.false_critical == 0
            && self.healthy_warned == 0
            && self.drifts_warned == self.drifts
            && self.median_lead.is_none_or(|m| m >= min_lead)
    }
}

/// The median lead a set is held to unless it says otherwise.
pub const MIN_LEAD: f64 = 0.95;

/// The table and totals as plain text, against a median lead of `min_lead`.
pub fn table(cases: &[CaseScore], min_lead: f64) -> String {
    let opt = |v: Option<u64>| v.map_or("-".to_string(), |v| v.to_string());
    // The case column fits the longest name (files of a labelled directory
    // are often longer than the catalogue's names).
    let w = cases
        .iter()
        .map(|c| c.name.chars().count())
        .fold(30, usize::max);
    let mut s = format!(
        "{:<w$} {:<9} {:<9} {:>7} {:>7} {:>9} {:<9} {:>6}\n",
        "case", "expected", "got", "onset", "crash", "1st alarm", "by", "lead"
    );
    for c in cases {
        s += &format!(
            "{:<w$} {:<9} {:<9} {:>7} {:>7} {:>9} {:<9} {:>6}\n",
            c.name,
            c.expected.level.code(),
            c.got.code(),
            opt(c.expected.onset_line),
            opt(c.expected.crash_line),
            opt(c.first_alarm_line),
            c.first_alarm_detector.unwrap_or("-"),
            c.lead.map_or("-".to_string(), |l| format!("{l:.3}")),
        );
    }
    let t = Totals::of(cases);
    s += &format!(
        "\nblow-ups detected before crash: {}/{}\nblow-ups called before onset: {}\nfalse critical alarms: {}\nhealthy cases warned: {}/{}\ndrift cases warned: {}/{}\nmedian lead: {} (target {min_lead:.2})\ntargets met: {}\n",
        t.detected,
        t.blowups,
        t.early,
        t.false_critical,
        t.healthy_warned,
        t.healthy,
        t.drifts_warned,
        t.drifts,
        t.median_lead.map_or("-".to_string(), |m| format!("{m:.3}")),
        if t.targets_met(min_lead) { "yes" } else { "no" }
    );
    s
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::finding::Evidence;

    fn alarm(level: Level, line: u64) -> Alarm {
        Alarm {
            level,
            detector: "growth",
            line,
            time: None,
            message: String::new(),
            evidence: Evidence::default(),
        }
    }

    #[test]
    fn lead_and_totals() {
        let blow = Label {
            level: Level::Critical,
            onset_line: Some(100),
            crash_line: Some(1100),
        };
        let c = score(
            "a",
            blow,
            &[alarm(Level::Warning, 90), alarm(Level::Critical, 150)],
        );
        assert!(c.detected && !c.false_critical);
        assert_eq!(c.lead, Some(0.95));
        let ok = Label {
            level: Level::Ok,
            onset_line: None,
            crash_line: None,
        };
        let h = score("b", ok, &[alarm(Level::Warning, 5)]);
        let t = Totals::of(&[c.clone(), h]);
        assert_eq!((t.detected, t.healthy_warned, t.false_critical), (1, 1, 0));
        // A healthy run warned misses the targets.
        assert!(!t.targets_met(MIN_LEAD));
        assert!(Totals::of(std::slice::from_ref(&c)).targets_met(MIN_LEAD));
        // A critical before the onset line is counted, and misses them.
        let e = score("e", blow, &[alarm(Level::Critical, 99)]);
        assert!(e.early && e.detected);
        let t = Totals::of(&[e]);
        assert_eq!(t.early, 1);
        assert!(!t.targets_met(MIN_LEAD));
    }
}
