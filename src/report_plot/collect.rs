//! Gathers what a report image shows while a history streams through the
//! pipeline: one [`Envelope`] per plotted column, the detectors' estimates
//! sampled between chunks, and markers for alarms, onset, restarts and the
//! first non-finite value. Bounded memory whatever the history's length.

use crate::alarm::Alarm;
use crate::finding::Evidence;
use crate::finding::Level;
use crate::parse::roles::{EnergyTerm, Role, RoleMap};
use crate::parse::{Schema, SegmentReason, SkipReason};
use crate::pipeline::sink::{Flow, Note, Progress, Sink};

use super::{Marker, MarkerKind, PlotData, Series, TitleBlock};
use crate::envelope::Envelope;

/// Forwards everything to a report sink and to a [`PlotCollector`].
pub struct Tee<'a> {
    /// The sink that builds the report.
    pub report: &'a mut dyn Sink,
    /// The plot data being gathered.
    pub plot: &'a mut PlotCollector,
}

impl Sink for Tee<'_> {
    fn alarm(&mut self, alarm: &Alarm) {
        self.report.alarm(alarm);
        self.plot.alarm(alarm);
    }
    fn schema(&mut self, line: u64, schema: &Schema, roles: &RoleMap) {
        self.report.schema(line, schema, roles);
        self.plot.schema(line, schema, roles);
    }
    fn row(&mut self, line: u64, values: &[f64]) {
        self.report.row(line, values);
        self.plot.row(line, values);
    }
    fn segment(&mut self, line: u64, reason: SegmentReason) {
        self.report.segment(line, reason);
        self.plot.segment(line, reason);
    }
    fn skipped(&mut self, line: u64, reason: &SkipReason) {
        self.report.skipped(line, reason);
        self.plot.skipped(line, reason);
    }
    fn note(&mut self, note: &Note) {
        self.report.note(note);
    }
    /// The detectors' estimates are sampled for the growth and balance panels.
    fn checkpoint(&mut self, arrival_s: Option<f64>, progress: &mut dyn Progress) -> Flow {
        self.plot.sample_status(&progress.status().evidence);
        self.report.checkpoint(arrival_s, progress)
    }
}

/// Probe columns drawn, at most (the first ones in the header).
pub const MAX_PROBES: usize = 4;

/// A plotted column: its name, unit and envelope; keyed by name so a restart
/// with the same header continues the same line.
#[derive(Debug, Clone)]
struct Track {
    name: String,
    unit: Option<String>,
    env: Envelope,
}

fn track(tracks: &mut Vec<Track>, name: &str, unit: &Option<String>) -> usize {
    match tracks.iter().position(|t| t.name == name) {
        Some(i) => i,
        None => {
            tracks.push(Track {
                name: name.to_string(),
                unit: unit.clone(),
                env: Envelope::default(),
            });
            tracks.len() - 1
        }
    }
}

/// Where each plotted quantity sits in the current schema.
#[derive(Debug, Clone, Default)]
struct Layout {
    time: Option<usize>,
    step_size: Option<usize>,
    step_number: Option<usize>,
    /// (column, track index) of energy columns.
    energies: Vec<(usize, usize)>,
    /// (column, track index) of probe columns.
    probes: Vec<(usize, usize)>,
}

/// A [`Sink`] that keeps what the report image needs.
#[derive(Debug, Default)]
pub struct PlotCollector {
    layout: Layout,
    x_name: Option<(String, Option<String>)>,
    energies: Vec<Track>,
    probes: Vec<Track>,
    step: Envelope,
    step_is_interval: bool,
    balance: Envelope,
    growth: Envelope,
    /// x against line number, to place markers given by line only.
    line_x: Envelope,
    prev: Option<(f64, Option<f64>)>,
    last: Option<(u64, f64)>,
    markers: Vec<Marker>,
    crash_seen: bool,
    alarm_count: (u32, u32),
    /// Priority of the onset marker kept: 3 critical alarm, 2 warning, 1 status.
    onset_rank: u8,
    figures: KeyFigures,
}

/// The detectors' key figures over the run, for the title block.
#[derive(Debug, Default, Clone, Copy)]
struct KeyFigures {
    /// Highest growth per step seen, with the x where it was seen.
    peak_growth: Option<(f64, f64)>,
    /// Latest forecast (steps to overflow, simulated time of overflow).
    forecast: Option<(Option<f64>, Option<f64>)>,
    /// Latest balance error and the worst |balance error|.
    balance: Option<(f64, f64)>,
}

impl KeyFigures {
    fn note(&mut self, ev: &Evidence, x: f64) {
        if let Some(g) = ev.growth_per_step.filter(|g| g.is_finite())
            && self.peak_growth.is_none_or(|(p, _)| g > p)
        {
            self.peak_growth = Some((g, x));
        }
        if ev.forecast_steps.is_some() || ev.forecast_time.is_some() {
            self.forecast = Some((ev.forecast_steps, ev.forecast_time));
        }
        if let Some(b) = ev.balance_error.filter(|b| b.is_finite()) {
            let worst = self.balance.map_or(b.abs(), |(_, w)| w.max(b.abs()));
            self.balance = Some((b, worst));
        }
    }
}

/// Number with 4 significant digits for the title block.
fn fig(v: f64) -> String {
    let a = v.abs();
    if v != 0.0 && !(1e-3..1e6).contains(&a) {
        format!("{v:.3e}")
    } else {
        let digits = if v == 0.0 {
            0
        } else {
            (3 - a.log10().floor() as i32).max(0)
        };
        format!("{v:.prec$}", prec = digits as usize)
    }
}

impl PlotCollector {
    /// An empty collector.
    pub fn new() -> PlotCollector {
        PlotCollector::default()
    }

    /// The x of the current row: time when a time column exists, else the line.
    fn x_of(&self, line: u64, values: &[f64]) -> f64 {
        match self.layout.time {
            Some(i) => values.get(i).copied().unwrap_or(f64::NAN),
            None => line as f64,
        }
    }

    /// x at `line`, interpolated from the rows seen so far.
    fn x_at_line(&self, line: u64) -> Option<f64> {
        let pts = self.line_x.points();
        let l = line as f64;
        let i = pts.partition_point(|p| p.0 < l);
        match (i.checked_sub(1).and_then(|j| pts.get(j)), pts.get(i)) {
            (_, Some(b)) if b.0 == l => Some(b.1),
            (Some(a), Some(b)) => Some(a.1 + (b.1 - a.1) * (l - a.0) / (b.0 - a.0)),
            (Some(a), None) => Some(a.1),
            (None, Some(b)) => Some(b.1),
            (None, None) => None,
        }
    }

    /// Record the detectors' latest estimates at the last row read (call
    /// between chunks with `Pipeline::status().evidence`).
    pub fn sample_status(&mut self, evidence: &Evidence) {
        let Some((line, x)) = self.last else {
            return;
        };
        self.figures.note(evidence, x);
        if let Some(b) = evidence.balance_error {
            self.balance.push(x, b);
        }
        if let Some(g) = evidence.growth_per_step {
            self.growth.push(x, g);
        }
        self.note_onset(evidence, line, 1);
    }

    /// Keep the onset estimated when the first alarm of the highest level was
    /// decided (later estimates slide with the fit window into the blow-up);
    /// the detectors' running estimate only when no alarm carried one.
    fn note_onset(&mut self, ev: &Evidence, fallback_line: u64, rank: u8) {
        if rank <= self.onset_rank {
            return;
        }
        let Some(line) = ev.onset_line.or(ev.onset_time.map(|_| fallback_line)) else {
            return;
        };
        let x = ev.onset_time.or_else(|| self.x_at_line(line));
        if let Some(x) = x {
            self.markers.retain(|m| m.kind != MarkerKind::Onset);
            self.markers.push(Marker {
                kind: MarkerKind::Onset,
                x,
                line,
                label: "onset".into(),
            });
            self.onset_rank = rank;
        }
    }

    /// The title block: `file`, `verdict`, then `figures` given by the caller
    /// followed by the detectors' key figures gathered here.
    fn title(&self, file: &str, verdict: &str, mut figures: Vec<(String, String)>) -> TitleBlock {
        let k = &self.figures;
        let mut add = |label: &str, value: String| figures.push((label.to_string(), value));
        match k.peak_growth {
            Some((g, x)) => add(
                "peak growth per step",
                format!("{} (at {})", fig(g), fig(x)),
            ),
            None => add("peak growth per step", "no estimate".into()),
        }
        match k.forecast {
            Some((Some(n), _)) => add("forecast", format!("overflow in {:.0} steps", n.ceil())),
            Some((None, Some(t))) => add("forecast", format!("overflow at {}", fig(t))),
            _ => add("forecast", "none".into()),
        }
        match k.balance {
            Some((b, w)) => add(
                "balance error",
                format!("{} % at end, worst {} %", fig(100.0 * b), fig(100.0 * w)),
            ),
            None => add("balance error", "no estimate".into()),
        }
        for m in &self.markers {
            match m.kind {
                MarkerKind::Onset => {
                    add("estimated onset", format!("line {} ({})", m.line, fig(m.x)))
                }
                MarkerKind::Crash => {
                    add("first NaN/Inf", format!("line {} ({})", m.line, fig(m.x)))
                }
                _ => {}
            }
        }
        TitleBlock {
            file: file.to_string(),
            verdict: verdict.to_string(),
            figures,
        }
    }

    /// The collected page, titled with `file` and `verdict`; `figures` (label,
    /// value) come first in the title block, the detectors' key figures after.
    pub fn finish(self, file: &str, verdict: &str, figures: Vec<(String, String)>) -> PlotData {
        let title = self.title(file, verdict, figures);
        let series = |t: Track| Series {
            name: t.name,
            unit: t.unit,
            points: t.env.points(),
        };
        let opt = |name: &str, unit: Option<String>, env: Envelope| {
            (!env.is_empty()).then(|| Series {
                name: name.into(),
                unit,
                points: env.points(),
            })
        };
        let (x_label, time_unit) = match &self.x_name {
            Some((name, unit)) => (
                match unit {
                    Some(u) => format!("{name} [{u}]"),
                    None => name.clone(),
                },
                unit.clone(),
            ),
            None => ("line".to_string(), None),
        };
        let step_name = if self.step_is_interval {
            "output interval Δt"
        } else {
            "time step Δt"
        };
        PlotData {
            title,
            x_label,
            energies: self.energies.into_iter().map(series).collect(),
            balance: opt("balance error", None, self.balance),
            step: opt(step_name, time_unit, self.step),
            growth: opt("growth per step", None, self.growth),
            probes: self.probes.into_iter().map(series).collect(),
            markers: self.markers,
        }
    }
}

impl Sink for PlotCollector {
    fn alarm(&mut self, alarm: &Alarm) {
        let (kind, label) = match alarm.level {
            Level::Ok => return,
            Level::Warning => {
                self.alarm_count.0 += 1;
                (MarkerKind::Warning, format!("W{}", self.alarm_count.0))
            }
            Level::Critical => {
                self.alarm_count.1 += 1;
                (MarkerKind::Critical, format!("C{}", self.alarm_count.1))
            }
        };
        let x = alarm.time.or_else(|| self.x_at_line(alarm.line));
        if let Some(x) = x {
            self.markers.push(Marker {
                kind,
                x,
                line: alarm.line,
                label: format!("{label} {}", alarm.detector),
            });
        }
        if let Some(x) = x {
            self.figures.note(&alarm.evidence, x);
            if let Some(g) = alarm.evidence.growth_per_step {
                self.growth.push(x, g);
            }
        }
        let rank = if alarm.level == Level::Critical { 3 } else { 2 };
        self.note_onset(&alarm.evidence, alarm.line, rank);
    }

    fn schema(&mut self, _line: u64, schema: &Schema, roles: &RoleMap) {
        let col = |i: usize| &schema.columns[i];
        let mut layout = Layout {
            time: roles.find(Role::Time),
            step_size: roles.find(Role::StepSize),
            step_number: roles.find(Role::StepNumber),
            ..Layout::default()
        };
        if let Some(t) = layout.time {
            self.x_name = Some((col(t).name.clone(), col(t).unit.clone()));
        }
        for (i, role) in roles.roles.iter().enumerate().take(schema.columns.len()) {
            match role {
                Role::Energy(_) => {
                    let c = col(i);
                    layout
                        .energies
                        .push((i, track(&mut self.energies, &c.name, &c.unit)));
                }
                Role::Probe if layout.probes.len() < MAX_PROBES => {
                    let c = col(i);
                    layout
                        .probes
                        .push((i, track(&mut self.probes, &c.name, &c.unit)));
                }
                _ => {}
            }
        }
        // Energy terms in balance order: kinetic, internal, ... total last.
        let rank = |i: usize| match roles.roles[i] {
            Role::Energy(EnergyTerm::Kinetic) => 0,
            Role::Energy(EnergyTerm::Internal) => 1,
            Role::Energy(EnergyTerm::ExternalWork) => 2,
            Role::Energy(EnergyTerm::Dissipated) => 3,
            Role::Energy(EnergyTerm::Artificial) => 4,
            _ => 5,
        };
        layout.energies.sort_by_key(|&(i, _)| rank(i));
        self.step_is_interval = layout.step_size.is_none() && layout.step_number.is_none();
        self.layout = layout;
        self.prev = None;
    }

    fn row(&mut self, line: u64, values: &[f64]) {
        let x = self.x_of(line, values);
        self.line_x.push(line as f64, x);
        if x.is_finite() {
            self.last = Some((line, x));
        }
        let get = |i: usize| values.get(i).copied().unwrap_or(f64::NAN);
        for &(c, t) in &self.layout.energies {
            self.energies[t].env.push(x, get(c));
        }
        for &(c, t) in &self.layout.probes {
            self.probes[t].env.push(x, get(c));
        }
        let step_no = self.layout.step_number.map(get);
        match self.layout.step_size {
            Some(c) => self.step.push(x, get(c)),
            None => {
                // Δt from the time column: per solver step when a step number
                // is written, else the output interval.
                if let (Some((px, pn)), Some(_)) = (self.prev, self.layout.time) {
                    let steps = match (step_no, pn) {
                        (Some(n), Some(p)) if n > p => n - p,
                        (Some(_), Some(_)) => f64::NAN,
                        _ => 1.0,
                    };
                    self.step.push(x, (x - px) / steps);
                }
            }
        }
        if x.is_finite() {
            self.prev = Some((x, step_no));
        }
        if !self.crash_seen && values.iter().any(|v| !v.is_finite()) {
            self.crash_seen = true;
            let x = if x.is_finite() {
                Some(x)
            } else {
                self.last.map(|l| l.1)
            };
            if let Some(x) = x {
                self.markers.push(Marker {
                    kind: MarkerKind::Crash,
                    x,
                    line,
                    label: "first NaN/Inf".into(),
                });
            }
        }
    }

    fn segment(&mut self, line: u64, reason: SegmentReason) {
        self.prev = None;
        if let Some((_, x)) = self.last {
            let why = match reason {
                SegmentReason::NewHeader => "new header",
                SegmentReason::TimeBackwards => "time rewound",
                SegmentReason::Truncated => "file replaced",
            };
            self.markers.push(Marker {
                kind: MarkerKind::Restart,
                x,
                line,
                label: format!("restart ({why})"),
            });
        }
    }
}

#[cfg(test)]
#[allow(clippy::unwrap_used)]
mod tests {
    use super::*;
    use crate::parse::Column;

    fn schema(names: &[(&str, Option<&str>)]) -> Schema {
        Schema {
            columns: names
                .iter()
                .map(|(n, u)| Column {
                    name: n.to_string(),
                    unit: u.map(str::to_string),
                })
                .collect(),
            ..Schema::default()
        }
    }

    fn roles(roles: Vec<Role>) -> RoleMap {
        let n = roles.len();
        RoleMap {
            roles,
            reasons: vec![String::new(); n],
            signs: vec![1.0; n],
        }
    }

    fn alarm(level: Level, line: u64, time: Option<f64>, onset_line: Option<u64>) -> Alarm {
        Alarm {
            level,
            detector: "growth",
            line,
            time,
            message: String::new(),
            evidence: Evidence {
                onset_line,
                growth_per_step: Some(1.2),
                ..Evidence::default()
            },
        }
    }

    #[test]
    fn step_per_solver_step_from_time_and_step_number() {
        let mut c = PlotCollector::new();
        let s = schema(&[
            ("step", None),
            ("time", Some("ms")),
            ("kinetic", Some("J")),
            ("tip", None),
        ]);
        let r = roles(vec![
            Role::StepNumber,
            Role::Time,
            Role::Energy(EnergyTerm::Kinetic),
            Role::Probe,
        ]);
        c.schema(1, &s, &r);
        // Written every 4 steps of 0.5 ms.
        for i in 0..5u64 {
            let t = 2.0 * i as f64;
            c.row(2 + i, &[(4 * i) as f64, t, 1.0, -t]);
        }
        let d = c.finish("f.csv", "ok", vec![]);
        assert_eq!(d.x_label, "time [ms]");
        let step = d.step.unwrap();
        assert_eq!(step.name, "time step Δt");
        assert_eq!(step.unit.as_deref(), Some("ms"));
        assert!(step.points.iter().all(|p| (p.1 - 0.5).abs() < 1e-12));
        assert_eq!(d.energies[0].unit.as_deref(), Some("J"));
        assert_eq!(d.probes[0].points.last(), Some(&(8.0, -8.0)));
    }

    #[test]
    fn markers_land_at_the_right_x() {
        let mut c = PlotCollector::new();
        let s = schema(&[("time", Some("s")), ("internal", None)]);
        c.schema(
            1,
            &s,
            &roles(vec![Role::Time, Role::Energy(EnergyTerm::Internal)]),
        );
        for line in 2..=101u64 {
            let t = 0.1 * (line - 2) as f64;
            let e = if line == 90 { f64::NAN } else { 1.0 };
            c.row(line, &[t, e]);
        }
        // An alarm without a time is placed by its line; its onset by line too.
        c.alarm(&alarm(Level::Warning, 52, None, Some(40)));
        c.alarm(&alarm(Level::Critical, 60, Some(5.8), Some(45)));
        c.alarm(&alarm(Level::Critical, 70, Some(6.8), Some(66)));
        c.segment(102, SegmentReason::TimeBackwards);
        let d = c.finish("f.csv", "critical", vec![("rows".into(), "100".into())]);
        let find = |k: MarkerKind| d.markers.iter().filter(|m| m.kind == k).collect::<Vec<_>>();
        let w = find(MarkerKind::Warning);
        assert!((w[0].x - 5.0).abs() < 1e-9, "warning at {}", w[0].x);
        // The first critical alarm's onset is kept, not a later estimate.
        let onset = find(MarkerKind::Onset);
        assert_eq!(onset.len(), 1);
        assert_eq!(onset[0].line, 45);
        assert!((onset[0].x - 4.3).abs() < 1e-9);
        let crash = find(MarkerKind::Crash);
        assert_eq!(crash[0].line, 90);
        assert!((crash[0].x - 8.8).abs() < 1e-9);
        assert_eq!(find(MarkerKind::Restart).len(), 1);
        assert_eq!(d.title.figures[0], ("rows".to_string(), "100".to_string()));
        assert!(d.title.figures.iter().any(|f| f.0 == "estimated onset"));
        assert_eq!(d.growth.unwrap().points.len(), 3);
    }

    #[test]
    fn status_samples_become_series_and_figures() {
        let mut c = PlotCollector::new();
        let s = schema(&[("time", None), ("total", None)]);
        c.schema(
            1,
            &s,
            &roles(vec![Role::Time, Role::Energy(EnergyTerm::Total)]),
        );
        for i in 0..10u64 {
            c.row(2 + i, &[i as f64, 1.0]);
            c.sample_status(&Evidence {
                balance_error: Some(-0.01 * i as f64),
                growth_per_step: Some(1.0 + 0.001 * i as f64),
                forecast_steps: Some(1000.0 - i as f64),
                ..Evidence::default()
            });
        }
        let d = c.finish("f.csv", "warning", vec![]);
        assert_eq!(d.balance.as_ref().unwrap().points.len(), 10);
        let fig = |k: &str| d.title.figures.iter().find(|f| f.0 == k).unwrap().1.clone();
        assert_eq!(fig("forecast"), "overflow in 991 steps");
        assert_eq!(fig("peak growth per step"), "1.009 (at 9.000)");
        assert_eq!(fig("balance error"), "-9.000 % at end, worst 9.000 %");
    }
}
