//! The dashboard at the worst moment: every panel drawn (ratatui TestBackend)
//! over the values a blow-up writes — ±1e308, ±f64::MAX, subnormals, NaN and
//! inf mixed in, a single row, all-equal values — in the single-run view and
//! the many-run view, each frame on a thread that must finish in time; and a
//! property test of the chart data path over arbitrary f64 bit patterns.

use std::path::PathBuf;
use std::sync::mpsc;
use std::time::Duration;

use proptest::prelude::*;
use ratatui::Terminal;
use ratatui::backend::TestBackend;
use ratatui::text::Line;

use rhoscope::app::fleet::FleetView;
use rhoscope::app::{AppState, Batch, Config, Item, Key, Msg};
use rhoscope::detect::Status;
use rhoscope::finding::Evidence;
use rhoscope::fleet::RunRow;
use rhoscope::parse::roles::{EnergyTerm, Role, RoleMap};
use rhoscope::parse::{Column, Schema};
use rhoscope::pipeline::sink::Sink;
use rhoscope::ui::chart::{Series, Spec, fitted};

/// A frame that takes longer than this is taken for a hang (a normal frame
/// takes milliseconds; the margin covers a loaded test machine).
const FRAME_LIMIT: Duration = Duration::from_secs(20);

const SIZES: [(u16, u16); 4] = [(80, 24), (200, 60), (40, 12), (120, 40)];

/// Draw `s` at every size on a thread; fail instead of hanging.
fn draw_all_in_time(s: AppState, what: &str) {
    let (tx, rx) = mpsc::channel();
    std::thread::spawn(move || {
        let mut s = s;
        for (w, h) in SIZES {
            let mut term = Terminal::new(TestBackend::new(w, h)).unwrap();
            term.draw(|f| rhoscope::ui::render(&s, f)).unwrap();
            // With the help and stop overlays as well.
            s.update(Msg::Key(Key::Char('?')));
            term.draw(|f| rhoscope::ui::render(&s, f)).unwrap();
            s.update(Msg::Key(Key::Esc));
        }
        let _ = tx.send(());
    });
    assert!(
        rx.recv_timeout(FRAME_LIMIT).is_ok(),
        "drawing did not finish on {what}"
    );
}

fn schema() -> Item {
    let names = ["time", "dt", "ke", "ie", "wext", "disp", "vel"];
    Item::Schema {
        line: 1,
        schema: Schema {
            columns: names
                .iter()
                .map(|n| Column {
                    name: (*n).into(),
                    unit: Some("J".into()),
                })
                .collect(),
            ..Schema::default()
        },
        roles: RoleMap {
            roles: vec![
                Role::Time,
                Role::StepSize,
                Role::Energy(EnergyTerm::Kinetic),
                Role::Energy(EnergyTerm::Internal),
                Role::Energy(EnergyTerm::ExternalWork),
                Role::Probe,
                Role::Probe,
            ],
            reasons: vec![String::new(); 7],
            signs: vec![1.0; 7],
        },
    }
}

/// A state fed `rows` (each the 6 values after time, at times 0, 1, 2, …) with
/// every estimate set to `est`.
fn state_of(rows: &[[f64; 6]], est: f64, time: impl Fn(usize) -> f64) -> AppState {
    let mut s = AppState::new(Config {
        file: "h.csv".into(),
        color: true,
        end_time_s: Some(10.0),
        actions: vec!["create the stop file STOP".into()],
        ..Config::default()
    });
    let mut b = Batch::default();
    b.items.push(schema());
    for (i, r) in rows.iter().enumerate() {
        let mut v = vec![time(i)];
        v.extend_from_slice(r);
        b.push_row(i as u64 + 2, &v);
    }
    b.items.push(Item::Alarm(rhoscope::alarm::Alarm {
        level: rhoscope::finding::Level::Critical,
        // A blow-up hides the forecast: only the run of NaN estimates has one,
        // so the others draw every readout at its extreme.
        detector: if est.is_nan() { "nonfinite" } else { "growth" },
        line: rows.len() as u64 + 1,
        time: Some(est),
        message: format!("value {est:e} then not finite"),
        evidence: Evidence::default(),
    }));
    b.status = Some(Status {
        evidence: Evidence {
            growth_per_output: Some(est),
            growth_per_step: Some(est),
            growth_rate_per_s: Some(est),
            frequency_hz: Some(est),
            balance_error: Some(est),
            forecast_steps: Some(est),
            forecast_time: Some(est),
            forecast_wall_s: Some(est),
            onset_line: Some(u64::MAX),
            onset_time: Some(est),
            stability_margin: Some(est),
            suggested_dt: Some(rhoscope::finding::SuggestedDt {
                seconds: est,
                basis: format!("{est:e}"),
            }),
        },
        growth_confirmed: true,
        levels: vec![
            ("growth", rhoscope::finding::Level::Critical),
            ("energy", rhoscope::finding::Level::Critical),
        ],
    });
    b.arrival_s = Some(1.0);
    s.update(Msg::Data(Box::new(b)));
    s
}

fn extremes() -> Vec<f64> {
    vec![
        1e308,
        -1e308,
        f64::MAX,
        -f64::MAX,
        f64::MIN_POSITIVE,
        5e-324,
        -5e-324,
        0.0,
        -0.0,
        f64::NAN,
        f64::INFINITY,
        f64::NEG_INFINITY,
        1.0,
    ]
}

#[test]
fn every_panel_draws_over_the_values_of_a_blow_up() {
    let ex = extremes();
    // A run climbing to each extreme from zero, one column at a time and all
    // at once, with every estimate at that extreme.
    for &v in &ex {
        let mut rows = vec![[0.0; 6], [1.0; 6]];
        rows.push([v; 6]);
        for c in 0..6 {
            let mut r = [1.0; 6];
            r[c] = v;
            rows.push(r);
        }
        draw_all_in_time(state_of(&rows, v, |i| i as f64), &format!("{v:e}"));
        // Time itself at the extreme.
        draw_all_in_time(
            state_of(&rows, v, |i| if i == 0 { 0.0 } else { v }),
            &format!("time {v:e}"),
        );
    }
    // Every pair mixed in one run, alternating row by row.
    let mut rows = Vec::new();
    for &a in &ex {
        for &b in &ex {
            rows.push([a, b, a, b, a, b]);
        }
    }
    draw_all_in_time(state_of(&rows, f64::NAN, |i| i as f64), "mixed pairs");
    // One row; all-equal values; equal and enormous.
    draw_all_in_time(state_of(&[[1e308; 6]], 1e308, |_| 0.0), "one row");
    draw_all_in_time(
        state_of(&[[3.0; 6]; 50], 1.0, |i| i as f64),
        "all-equal values",
    );
    draw_all_in_time(
        state_of(&[[-f64::MAX; 6]; 50], -f64::MAX, |i| i as f64 * 1e300),
        "equal, huge, at huge times",
    );
}

#[test]
fn the_reported_reproduction_shows_its_row() {
    // `t,x` with rows (0, 0) and (1, 1e308): the probe chart once hung here.
    let mut s = AppState::new(Config::default());
    let mut b = Batch::default();
    b.items.push(Item::Schema {
        line: 1,
        schema: Schema {
            columns: vec![
                Column {
                    name: "t".into(),
                    unit: None,
                },
                Column {
                    name: "x".into(),
                    unit: None,
                },
            ],
            ..Schema::default()
        },
        roles: RoleMap {
            roles: vec![Role::Time, Role::Probe],
            reasons: vec![String::new(); 2],
            signs: vec![1.0; 2],
        },
    });
    b.push_row(2, &[0.0, 0.0]);
    b.push_row(3, &[1.0, 1e308]);
    s.update(Msg::Data(Box::new(b)));
    let (tx, rx) = mpsc::channel();
    std::thread::spawn(move || {
        let mut term = Terminal::new(TestBackend::new(200, 60)).unwrap();
        term.draw(|f| rhoscope::ui::render(&s, f)).unwrap();
        let _ = tx.send(term.backend().to_string());
    });
    let text = rx.recv_timeout(FRAME_LIMIT).expect("the frame hung");
    assert!(text.contains("rows 2"), "{text}");
    assert!(
        text.contains("1.00e308"),
        "the top of the probe axis: {text}"
    );
    assert!(!text.contains("inf"), "{text}");
}

#[test]
fn the_many_run_view_draws_runs_at_the_extremes() {
    let mut rows = Vec::new();
    for (i, v) in extremes().into_iter().enumerate() {
        let mut r = RunRow::new(format!("run-{i}"), PathBuf::from(format!("r{i}/h.csv")));
        r.arriving(v, 10);
        r.take_status(&Status {
            evidence: Evidence {
                growth_per_step: Some(v),
                forecast_wall_s: Some(v),
                ..Evidence::default()
            },
            growth_confirmed: true,
            levels: vec![("growth", rhoscope::finding::Level::Critical)],
        });
        r.alarm(&rhoscope::alarm::Alarm {
            level: rhoscope::finding::Level::Critical,
            detector: "growth",
            line: u64::MAX,
            time: Some(v),
            message: format!("{v:e}"),
            evidence: Evidence::default(),
        });
        rows.push(r);
    }
    let mut view = FleetView::new("r*/h.csv".into(), 600.0, Some(1.0), true);
    view.set_rows(rows, 1e308);
    let (tx, rx) = mpsc::channel();
    std::thread::spawn(move || {
        for (w, h) in SIZES {
            let mut term = Terminal::new(TestBackend::new(w, h)).unwrap();
            term.draw(|f| rhoscope::ui::fleet::render(&view, f))
                .unwrap();
        }
        let _ = tx.send(());
    });
    assert!(rx.recv_timeout(FRAME_LIMIT).is_ok(), "the fleet view hung");
}

fn spec_of(series: Vec<Vec<(f64, f64)>>, x: (f64, f64), reference: Option<f64>) -> Spec<'static> {
    Spec {
        title: Line::from(" t "),
        series: series
            .into_iter()
            .enumerate()
            .map(|(i, points)| Series {
                name: format!("s{i}"),
                points,
                style: Default::default(),
            })
            .collect(),
        x,
        x_time: true,
        x_labels: true,
        reference: reference.map(|r| (r, "ref")),
        empty: "empty",
    }
}

fn any_f64() -> impl Strategy<Value = f64> {
    prop_oneof![
        any::<u64>().prop_map(f64::from_bits),
        prop::sample::select(extremes()),
        -1e3..1e3f64,
    ]
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(256))]

    /// Whatever the bits, the chart data path puts every point inside the plot
    /// area (the unit square the chart is drawn on), the axis labels are
    /// finite, and the frame is drawn.
    #[test]
    fn chart_data_stays_in_the_plot_area(
        series in prop::collection::vec(
            prop::collection::vec((any_f64(), any_f64()), 0..40), 1..4),
        x in (any_f64(), any_f64()),
        reference in prop::option::of(any_f64()),
    ) {
        let spec = spec_of(series, x, reference);
        if let Some(f) = fitted(&spec) {
            for (px, py) in f.series.iter().flatten() {
                prop_assert!((0.0..=1.0).contains(px), "x {px}");
                prop_assert!((0.0..=1.0).contains(py), "y {py}");
            }
            if let Some(r) = f.reference {
                prop_assert!((0.0..=1.0).contains(&r));
            }
            prop_assert!(f.y_labels.iter().all(|v| v.is_finite()));
        }
        let mut term = Terminal::new(TestBackend::new(60, 14)).unwrap();
        term.draw(|fr| {
            let area = fr.area();
            rhoscope::ui::chart::draw(fr, area, spec, &rhoscope::ui::theme::Theme { color: false });
        }).unwrap();
    }
}
