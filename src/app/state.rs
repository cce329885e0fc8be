//! The dashboard's state: what has been read from the run, what the detectors
//! estimate, the alarm events, the view (pause, zoom, probe shown, overlays) and
//! the stop-the-run dialog. Changed only through [`AppState::update`]; the
//! renderer reads it.

use std::collections::VecDeque;
use std::time::Duration;

use crate::finding::Level;
use crate::history::Table;
use crate::parse::Schema;
use crate::parse::roles::{EnergyTerm, Role, RoleMap};
use crate::readout::Readouts;

use super::speed::Speed;

/// Fixed settings of a dashboard session.
#[derive(Debug, Clone)]
pub struct Config {
    /// The followed file, as given.
    pub file: String,
    /// Draw with colours (off when `NO_COLOR` is set).
    pub color: bool,
    /// Simulated end time of the run, for progress and time to finish.
    pub end_time_s: Option<f64>,
    /// Wall-clock time the job had left when watching began.
    pub wall_left_at_start: Option<Duration>,
    /// Monotonic seconds when watching began.
    pub started_s: f64,
    /// What the stop key and a critical alarm do, one line per action, in order.
    /// Empty: no action armed.
    pub actions: Vec<String>,
    /// Hand every alarm to the armed actions, which fire by themselves on a
    /// critical one (as `guard` does); otherwise they fire only by hand.
    pub auto_stop: bool,
    /// Rows kept at full resolution.
    pub retention_rows: usize,
    /// Relative energy balance error at which the energy detector warns
    /// (fraction, from the settings), shown beside the balance reading.
    pub balance_warning: f64,
}

impl Default for Config {
    fn default() -> Self {
        Self {
            file: String::new(),
            color: false,
            end_time_s: None,
            wall_left_at_start: None,
            started_s: 0.0,
            actions: Vec::new(),
            auto_stop: false,
            retention_rows: 0,
            balance_warning: crate::detect::DetectSettings::default().balance_warning,
        }
    }
}

/// One line of the events list.
#[derive(Debug, Clone, PartialEq)]
pub struct Event {
    pub level: Level,
    /// Where it came from: a detector name, `file`, `stop`, `you`.
    pub source: String,
    pub line: Option<u64>,
    pub time: Option<f64>,
    pub text: String,
}

/// Which overlay, if any, is open.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Dialog {
    Help,
    /// The stop-the-run confirmation (y/N).
    ConfirmStop,
}

/// The stop-the-run actions: armed once, fired at most once.
#[derive(Debug, Clone, PartialEq)]
pub enum StopState {
    /// Not fired.
    Idle,
    /// Sent to the action runner; waiting for its report.
    Requested { reason: String },
    /// The runner reported back.
    Done { ok: bool, report: Vec<String> },
}

/// What the user sees of the run.
#[derive(Debug, Clone, PartialEq)]
pub struct View {
    /// Frozen right edge of the time window while paused.
    pub paused_at: Option<f64>,
    /// 0 shows the whole run; each step in shows a quarter of the previous span.
    pub zoom: u8,
    /// Index into the probe columns of the chart of probe signals.
    pub probe: usize,
}

/// Deepest zoom: 4⁻⁶ of the run.
pub const MAX_ZOOM: u8 = 6;
/// Seconds without new rows before the header says so.
pub const QUIET_S: f64 = 5.0;
/// Events kept in the list.
pub const MAX_EVENTS: usize = 500;

/// Columns of the derived (per-batch) series.
pub const D_GROWTH: usize = 0;
pub const D_GROWTH_APPROX: usize = 1;
pub const D_BALANCE: usize = 2;

/// The whole dashboard state.
#[derive(Debug, Clone)]
pub struct AppState {
    pub config: Config,
    pub schema: Schema,
    pub roles: RoleMap,
    /// The file's columns against x (time, or line number without a time column).
    pub table: Table,
    /// Readings against x: the growth per step of a confirmed mode, that of
    /// an approximate fit, the balance error.
    pub derived: Table,
    /// What the readouts show, decided from the detectors' status and alarms.
    pub readouts: Readouts,
    /// The integration scheme the detectors use and where it came from, in
    /// words (`--scheme`, the configuration or the file's `# scheme:` line).
    pub scheme: Option<String>,
    pub rows: u64,
    pub skipped: u64,
    pub segments: u32,
    pub last_line: u64,
    /// Monotonic seconds when the last data row arrived.
    pub last_row_s: Option<f64>,
    pub events: VecDeque<Event>,
    /// Worst level raised in the current segment.
    pub level: Level,
    /// The unacknowledged alarm shown in the banner.
    pub banner: Option<Event>,
    pub view: View,
    pub dialog: Option<Dialog>,
    pub stop: StopState,
    pub speed: Speed,
    /// Monotonic seconds of the latest tick or data.
    pub now_s: f64,
    /// A note from the file follower (waiting for the file, read error).
    pub note: Option<String>,
    /// Something changed since the last frame.
    pub dirty: bool,
    /// The loop should end.
    pub quit: bool,
    /// It ends for a signal or a closed terminal: every view leaves, not only
    /// this one.
    pub leave_all: bool,
    /// Why a thread the dashboard needs failed, when one did.
    pub fatal: Option<String>,
    /// Esc with no dialog open leaves the dashboard (opened from the fleet view).
    pub esc_quits: bool,
}

impl AppState {
    /// A fresh state before any data.
    pub fn new(config: Config) -> Self {
        let retention = if config.retention_rows == 0 {
            crate::history::DEFAULT_RETENTION_ROWS
        } else {
            config.retention_rows
        };
        let now_s = config.started_s;
        let config = Config {
            retention_rows: retention,
            ..config
        };
        Self {
            schema: Schema::default(),
            roles: RoleMap::default(),
            table: Table::with_sizes(vec![], retention, crate::history::DEFAULT_ENVELOPE_BUCKETS),
            derived: Table::with_sizes(
                vec![
                    "growth per step".into(),
                    "growth per step (latest fit)".into(),
                    "energy balance error".into(),
                ],
                retention,
                crate::history::DEFAULT_ENVELOPE_BUCKETS,
            ),
            config,
            readouts: Readouts::default(),
            scheme: None,
            rows: 0,
            skipped: 0,
            segments: 0,
            last_line: 0,
            last_row_s: None,
            events: VecDeque::new(),
            level: Level::Ok,
            banner: None,
            view: View {
                paused_at: None,
                zoom: 0,
                probe: 0,
            },
            dialog: None,
            stop: StopState::Idle,
            speed: Speed::default(),
            now_s,
            note: None,
            dirty: true,
            quit: false,
            leave_all: false,
            fatal: None,
            esc_quits: false,
        }
    }

    /// Column with this role in the current schema.
    pub fn col(&self, role: Role) -> Option<usize> {
        self.roles.find(role)
    }

    /// True when x is simulated time (the file has a time column).
    pub fn x_is_time(&self) -> bool {
        self.col(Role::Time).is_some()
    }

    /// Energy columns present, with their terms, in file order.
    pub fn energy_columns(&self) -> Vec<(usize, EnergyTerm)> {
        self.roles
            .roles
            .iter()
            .enumerate()
            .filter_map(|(i, r)| match r {
                Role::Energy(t) => Some((i, *t)),
                _ => None,
            })
            .collect()
    }

    /// Probe columns, in file order.
    pub fn probe_columns(&self) -> Vec<usize> {
        self.roles.all(Role::Probe)
    }

    /// The probe column currently shown.
    pub fn shown_probe(&self) -> Option<usize> {
        let p = self.probe_columns();
        if p.is_empty() {
            None
        } else {
            p.get(self.view.probe % p.len()).copied()
        }
    }

    /// Name of a column of the current schema.
    pub fn column_name(&self, col: usize) -> &str {
        self.schema
            .columns
            .get(col)
            .map(|c| c.name.as_str())
            .unwrap_or("?")
    }

    /// Unit of a column of the current schema, when the file gives one.
    pub fn column_unit(&self, col: usize) -> Option<&str> {
        self.schema
            .columns
            .get(col)
            .and_then(|c| c.unit.as_deref())
            .filter(|u| !u.is_empty())
    }

    /// The unit the columns share, when the file gives one and it is the same for all.
    pub fn shared_unit(&self, cols: &[usize]) -> Option<&str> {
        let first = self.column_unit(*cols.first()?)?;
        cols.iter()
            .all(|c| self.column_unit(*c) == Some(first))
            .then_some(first)
    }

    /// Latest simulated time.
    pub fn time_now(&self) -> Option<f64> {
        self.col(Role::Time).and_then(|c| self.table.last(c))
    }

    /// The x window drawn by the charts: the whole run, or the latest
    /// 4^-zoom of it, ending at the newest row (or where the view was paused).
    pub fn x_window(&self) -> Option<(f64, f64)> {
        let (first, last) = self.table.x_range()?;
        let hi = self.view.paused_at.unwrap_or(last).min(last);
        let span = (hi - first) / 4f64.powi(i32::from(self.view.zoom));
        let lo = (hi - span).max(first);
        if hi > lo {
            Some((lo, hi))
        } else {
            Some((lo, lo + 1.0))
        }
    }

    /// Fraction of the run done, from the end time.
    pub fn progress(&self) -> Option<f64> {
        let end = self.config.end_time_s?;
        let t = self.time_now()?;
        (end > 0.0).then(|| (t / end).clamp(0.0, 1.0))
    }

    /// Wall-clock seconds to reach the end time at the recent pace.
    pub fn time_to_finish_s(&self) -> Option<f64> {
        let end = self.config.end_time_s?;
        let t = self.time_now()?;
        let pace = self.speed.sim_per_wall_s()?;
        (pace > 0.0).then(|| ((end - t) / pace).max(0.0))
    }

    /// Wall-clock seconds the job has left now.
    pub fn wall_left_s(&self) -> Option<f64> {
        let left = self.config.wall_left_at_start?.as_secs_f64();
        Some(left - (self.now_s - self.config.started_s).max(0.0))
    }

    /// Whether the run will reach its end time before its wall limit.
    pub fn finishes_in_time(&self) -> Option<bool> {
        Some(self.time_to_finish_s()? <= self.wall_left_s()?)
    }

    /// Seconds since the last row arrived, when that is long enough to say.
    pub fn quiet_for_s(&self) -> Option<f64> {
        let q = self.now_s - self.last_row_s?;
        (q >= QUIET_S).then_some(q)
    }

    /// Record an event (bounded list, newest last).
    pub fn push_event(&mut self, event: Event) {
        if self.events.len() == MAX_EVENTS {
            self.events.pop_front();
        }
        self.events.push_back(event);
        self.dirty = true;
    }
}
