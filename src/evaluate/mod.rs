//! Scoring the detectors against labelled histories, for `rhoscope evaluate`
//! and the detection tests. A labelled [`Case`] is a history (bytes in memory
//! or a file) with its [`Label`]; a [`Set`] is a named list of cases read with
//! one [`Settings`]. [`score_set`] reads every case through the same
//! [`Pipeline`] as `scan` and scores its alarms ([`score`]); [`registry`]
//! lists the sets `rhoscope evaluate --set` knows (the demo catalogue and its
//! variants, in [`demo`]; the blind catalogue, in [`blind`]). A new set plugs
//! in by adding a [`SetSpec`] there; a labelled directory (`labels.csv`
//! beside its histories) is read by [`labelled`], and any set is written as
//! one by [`export`].

pub mod blind;
pub mod demo;
pub mod export;
pub mod labelled;
pub mod score;

use std::path::PathBuf;

use anyhow::Context;

use crate::alarm::Alarm;
use crate::pipeline::Pipeline;
use crate::pipeline::drive::{FILE_SLICE_BYTES, drive_bytes, drive_file};
use crate::settings::Settings;

pub use score::{CaseScore, Label, Totals};

/// Where a case's history comes from.
#[derive(Debug, Clone)]
pub enum Input {
    /// The whole history, in memory.
    Bytes(Vec<u8>),
    /// A history file, read when the case is scored.
    Path(PathBuf),
}

/// One labelled history.
#[derive(Debug, Clone)]
pub struct Case {
    /// Name shown in the table.
    pub name: String,
    pub input: Input,
    pub label: Label,
}

/// A named set of labelled cases, read with one set of settings.
#[derive(Debug, Clone)]
pub struct Set {
    /// Short name (`--set NAME`).
    pub name: String,
    /// One line shown above the set's table.
    pub title: String,
    /// How the histories are read (roles, thresholds, a declared scheme).
    pub settings: Settings,
    pub cases: Vec<Case>,
    /// The median lead this set is held to (`score::MIN_LEAD` unless said).
    pub min_lead: f64,
}

/// Which cases to build: `None` for all, else the names asked for (a name
/// also selects the cases derived from it, e.g. its variants).
pub type Filter<'a> = Option<&'a [String]>;

/// Does `filter` select the case `name`? A case derived from another is
/// named after it, then a space (`chain-cd every×2`).
pub fn selected(filter: Filter, name: &str) -> bool {
    filter.is_none_or(|names| {
        names.iter().any(|n| {
            name == n
                || name
                    .strip_prefix(n.as_str())
                    .is_some_and(|rest| rest.starts_with(' '))
        })
    })
}

/// A set `rhoscope evaluate` can build by name.
pub struct SetSpec {
    /// Short name (`--set NAME`).
    pub name: &'static str,
    /// One line for `--help` and errors.
    pub about: &'static str,
    /// Build the set's cases (those `filter` selects).
    pub build: fn(Filter) -> anyhow::Result<Set>,
    /// The names `--case` can select in this set, without building it.
    pub names: fn() -> Vec<String>,
}

/// Every set `rhoscope evaluate --set` knows, in the order they print.
pub fn registry() -> Vec<SetSpec> {
    vec![
        SetSpec {
            name: demo::CATALOGUE,
            about: "the labelled demo catalogue (the cases the thresholds were argued on)",
            build: demo::catalogue,
            names: demo::names,
        },
        SetSpec {
            name: demo::VARIANTS,
            about: "the catalogue written with twice and three times the output interval, and other noise seeds",
            build: demo::variants,
            names: demo::names,
        },
        SetSpec {
            name: blind::BLIND,
            about: "the blind catalogue, written from docs/blind-catalogue.md alone and frozen before tuning",
            build: blind::set,
            names: blind::names,
        },
    ]
}

/// The scores of one set.
#[derive(Debug, Clone)]
pub struct SetScore {
    pub name: String,
    pub title: String,
    pub cases: Vec<CaseScore>,
    /// The median lead the set is held to.
    pub min_lead: f64,
}

impl SetScore {
    /// Totals over the set's cases.
    pub fn totals(&self) -> Totals {
        Totals::of(&self.cases)
    }

    /// The title, the table and the totals as plain text.
    pub fn text(&self) -> String {
        format!(
            "{}:\n{}",
            self.title,
            score::table(&self.cases, self.min_lead)
        )
    }

    /// Whether the set meets its targets.
    pub fn targets_met(&self) -> bool {
        self.totals().targets_met(self.min_lead)
    }
}

/// Read every case of `set` through the pipeline and score its alarms.
pub fn score_set(set: &Set) -> anyhow::Result<SetScore> {
    let mut cases = Vec::with_capacity(set.cases.len());
    for c in &set.cases {
        let alarms = match &c.input {
            Input::Bytes(b) => alarms_of(b, &set.settings),
            Input::Path(p) => {
                let mut pipeline = Pipeline::new(&set.settings);
                let mut alarms: Vec<Alarm> = Vec::new();
                drive_file(
                    p,
                    &mut pipeline,
                    &mut alarms,
                    FILE_SLICE_BYTES,
                    &mut |_, _| {},
                )
                .with_context(|| format!("case '{}'", c.name))?;
                alarms
            }
        };
        cases.push(score::score(&c.name, c.label, &alarms));
    }
    Ok(SetScore {
        name: set.name.clone(),
        title: set.title.clone(),
        cases,
        min_lead: set.min_lead,
    })
}

/// Alarms raised by the pipeline on the bytes of one whole history.
pub fn alarms_of(bytes: &[u8], settings: &Settings) -> Vec<Alarm> {
    let mut pipeline = Pipeline::new(settings);
    let mut alarms: Vec<Alarm> = Vec::new();
    drive_bytes(bytes, &mut pipeline, &mut alarms);
    alarms
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::finding::Level;

    #[test]
    fn filter_selects_a_case_and_what_derives_from_it() {
        let names = ["chain-cd".to_string()];
        let f: Filter = Some(&names);
        assert!(selected(f, "chain-cd"));
        assert!(selected(f, "chain-cd every×2"));
        assert!(!selected(f, "chain-cd-long"));
        assert!(!selected(f, "truss"));
        assert!(selected(None, "anything"));
    }

    #[test]
    fn a_set_of_bytes_is_scored_through_the_pipeline() {
        let set = Set {
            name: "t".into(),
            title: "two hand-written histories".into(),
            settings: Settings::default(),
            min_lead: score::MIN_LEAD,
            cases: vec![
                Case {
                    name: "nan".into(),
                    input: Input::Bytes(b"t x\n0 1\n1 2\n2 nan\n".to_vec()),
                    label: Label {
                        level: Level::Critical,
                        onset_line: Some(4),
                        crash_line: Some(4),
                    },
                },
                Case {
                    name: "calm".into(),
                    input: Input::Bytes(b"t x\n0 1\n1 1\n2 1\n".to_vec()),
                    label: Label {
                        level: Level::Ok,
                        onset_line: None,
                        crash_line: None,
                    },
                },
            ],
        };
        let s = score_set(&set).expect("bytes in memory");
        let t = s.totals();
        assert_eq!((t.blowups, t.detected, t.healthy_warned), (1, 1, 0));
        assert!(s.text().starts_with("two hand-written histories:\n"));
    }

    #[test]
    fn a_missing_file_names_the_file_and_the_case() {
        let set = Set {
            name: "t".into(),
            title: String::new(),
            settings: Settings::default(),
            min_lead: score::MIN_LEAD,
            cases: vec![Case {
                name: "gone".into(),
                input: Input::Path("/nonexistent/rhoscope-case.csv".into()),
                label: Label {
                    level: Level::Ok,
                    onset_line: None,
                    crash_line: None,
                },
            }],
        };
        let e = format!("{:#}", score_set(&set).expect_err("no such file"));
        assert!(
            e.contains("/nonexistent/rhoscope-case.csv") && e.contains("'gone'"),
            "{e}"
        );
    }
}
