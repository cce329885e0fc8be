//! Dashboard rendering (ratatui TestBackend + insta snapshots) and key handling
//! on the state machine, without a terminal.

use ratatui::Terminal;
use ratatui::backend::TestBackend;
use ratatui::style::Color;

use crate::ui_support::{self, Kind, config, state, state_with};
use rhoscope::app::{AppState, Dialog, Effect, Key, Msg, StopState};
use rhoscope::finding::Level;

fn draw(s: &AppState, w: u16, h: u16) -> Terminal<TestBackend> {
    let mut term = Terminal::new(TestBackend::new(w, h)).unwrap();
    term.draw(|f| rhoscope::ui::render(s, f)).unwrap();
    term
}

fn screen(s: &AppState, w: u16, h: u16) -> String {
    draw(s, w, h).backend().to_string()
}

#[test]
fn healthy_80x24() {
    insta::assert_snapshot!(screen(&state(Kind::Healthy), 80, 24));
}

#[test]
fn healthy_200x60() {
    insta::assert_snapshot!(screen(&state(Kind::Healthy), 200, 60));
}

#[test]
fn warning_80x24() {
    insta::assert_snapshot!(screen(&state(Kind::Warning), 80, 24));
}

#[test]
fn warning_200x60() {
    insta::assert_snapshot!(screen(&state(Kind::Warning), 200, 60));
}

#[test]
fn critical_80x24() {
    insta::assert_snapshot!(screen(&state(Kind::Critical), 80, 24));
}

#[test]
fn critical_200x60() {
    insta::assert_snapshot!(screen(&state(Kind::Critical), 200, 60));
}

#[test]
fn stop_dialog_80x24() {
    let mut s = state(Kind::Critical);
    s.update(Msg::Key(Key::Char('X')));
    insta::assert_snapshot!(screen(&s, 80, 24));
}

#[test]
fn help_200x60() {
    let mut s = state(Kind::Healthy);
    s.update(Msg::Key(Key::Char('?')));
    insta::assert_snapshot!(screen(&s, 200, 60));
}

#[test]
fn tiny_sizes_do_not_panic() {
    for kind in [Kind::Healthy, Kind::Warning, Kind::Critical] {
        let mut s = state(kind);
        for (w, h) in [
            (0, 0),
            (1, 1),
            (10, 5),
            (23, 7),
            (24, 8),
            (40, 12),
            (69, 20),
            (70, 15),
        ] {
            draw(&s, w, h);
        }
        s.update(Msg::Key(Key::Char('?')));
        draw(&s, 10, 5);
        s.update(Msg::Key(Key::Esc));
        s.update(Msg::Key(Key::Char('X')));
        draw(&s, 10, 5);
        draw(&s, 30, 9);
    }
    let empty = AppState::new(config());
    for (w, h) in [(0, 0), (1, 1), (10, 5), (80, 24), (200, 60)] {
        draw(&empty, w, h);
    }
}

#[test]
fn tiny_size_still_says_the_state_in_words() {
    let s = state(Kind::Critical);
    let text = screen(&s, 22, 5);
    assert!(text.contains("CRITICAL"), "{text}");
}

#[test]
fn state_is_told_in_words_at_every_size() {
    for (kind, word) in [
        (Kind::Healthy, "✔ OK"),
        (Kind::Warning, "▲ WARNING"),
        (Kind::Critical, "✖ CRITICAL"),
    ] {
        for (w, h) in [(80, 24), (200, 60)] {
            let text = screen(&state(kind), w, h);
            assert!(text.contains(word), "{word} missing at {w}x{h}");
        }
    }
}

#[test]
fn no_color_draws_without_colours() {
    let mut cfg = config();
    cfg.color = false;
    let s = state_with(Kind::Critical, cfg);
    let term = draw(&s, 200, 60);
    let buf = term.backend().buffer();
    for cell in buf.content() {
        assert_eq!(cell.fg, Color::Reset, "coloured cell {:?}", cell.symbol());
        assert_eq!(cell.bg, Color::Reset, "coloured cell {:?}", cell.symbol());
    }
    let text = term.backend().to_string();
    assert!(text.contains("CRITICAL") && text.contains('✖'));
}

#[test]
fn quit_keys_quit() {
    for k in [Key::Char('q'), Key::Interrupt] {
        let mut s = state(Kind::Healthy);
        assert_eq!(s.update(Msg::Key(k)), vec![Effect::Quit]);
        assert!(s.quit);
    }
}

#[test]
fn pause_freezes_the_window_while_rows_still_arrive() {
    let mut s = state(Kind::Healthy);
    let before = s.x_window().unwrap();
    s.update(Msg::Key(Key::Char(' ')));
    assert!(s.view.paused_at.is_some());
    let more = ui_support::state(Kind::Healthy);
    // Feed the rows of another run on top: x goes on, the window must not.
    let _ = more;
    let mut b = rhoscope::app::Batch::default();
    let mut row = [0.0; 8];
    row[0] = 1.0;
    b.push_row(9_999, &row);
    s.update(Msg::Data(Box::new(b)));
    assert_eq!(s.x_window().unwrap(), before);
    assert_eq!(s.rows, 2_001);
    s.update(Msg::Key(Key::Char('p')));
    assert!(s.x_window().unwrap().1 > before.1);
}

#[test]
fn zoom_narrows_and_widens_the_window() {
    let mut s = state(Kind::Healthy);
    let (lo0, hi0) = s.x_window().unwrap();
    s.update(Msg::Key(Key::Char('+')));
    let (lo1, hi1) = s.x_window().unwrap();
    // Tolerance: one rounding of the span division.
    assert!(((hi1 - lo1) - (hi0 - lo0) / 4.0).abs() < 1e-12);
    assert!((hi1 - hi0).abs() < 1e-12);
    for _ in 0..20 {
        s.update(Msg::Key(Key::Char('+')));
    }
    assert_eq!(s.view.zoom, rhoscope::app::state::MAX_ZOOM);
    s.update(Msg::Key(Key::Char('-')));
    assert_eq!(s.view.zoom, rhoscope::app::state::MAX_ZOOM - 1);
    s.update(Msg::Key(Key::Char('0')));
    assert_eq!(s.x_window().unwrap(), (lo0, hi0));
}

#[test]
fn tab_cycles_the_probe_signals() {
    let mut s = state(Kind::Healthy);
    let first = s.shown_probe();
    s.update(Msg::Key(Key::Tab));
    let second = s.shown_probe();
    assert_ne!(first, second);
    s.update(Msg::Key(Key::Tab));
    assert_eq!(s.shown_probe(), first);
    s.update(Msg::Key(Key::BackTab));
    assert_eq!(s.shown_probe(), second);
}

#[test]
fn acknowledge_clears_the_banner_and_logs_it() {
    let mut s = state(Kind::Critical);
    assert!(s.banner.is_some());
    let n = s.events.len();
    s.update(Msg::Key(Key::Char('a')));
    assert!(s.banner.is_none());
    assert_eq!(s.events.len(), n + 1);
    assert!(s.events.back().unwrap().text.starts_with("acknowledged"));
    // The run's state is still told after acknowledging.
    assert!(screen(&s, 80, 24).contains("CRITICAL"));
}

#[test]
fn help_opens_and_any_key_closes_it() {
    let mut s = state(Kind::Healthy);
    s.update(Msg::Key(Key::Char('?')));
    assert_eq!(s.dialog, Some(Dialog::Help));
    let text = screen(&s, 200, 60);
    for (k, _) in rhoscope::app::update::KEYS {
        assert!(text.contains(k), "help does not list {k}");
    }
    assert!(s.update(Msg::Key(Key::Char('z'))).is_empty());
    assert_eq!(s.dialog, None);
}

#[test]
fn stop_needs_an_explicit_yes() {
    for k in [
        Key::Char('n'),
        Key::Char('N'),
        Key::Enter,
        Key::Esc,
        Key::Char('q'),
    ] {
        let mut s = state(Kind::Critical);
        s.update(Msg::Key(Key::Char('X')));
        assert_eq!(s.dialog, Some(Dialog::ConfirmStop));
        let fx = s.update(Msg::Key(k));
        assert!(fx.is_empty(), "{k:?} must not stop the run");
        assert_eq!(s.stop, StopState::Idle);
        assert!(!s.quit);
    }
}

#[test]
fn stop_dialog_names_the_actions_and_the_cautions() {
    let mut s = state(Kind::Critical);
    s.update(Msg::Key(Key::Char('X')));
    let text = screen(&s, 200, 60);
    for a in &s.config.actions {
        assert!(text.contains(a.as_str()), "action not named: {a}");
    }
    assert!(text.contains("An alarm is advice"));
    assert!(text.contains("last checkpoint"));
    assert!(text.contains("licensed"));
}

#[test]
fn stop_fires_once() {
    let mut s = state(Kind::Critical);
    s.update(Msg::Key(Key::Char('X')));
    let fx = s.update(Msg::Key(Key::Char('y')));
    assert!(matches!(fx.as_slice(), [Effect::Stop(a)] if a.level == Level::Critical));
    assert!(matches!(s.stop, StopState::Requested { .. }));
    s.update(Msg::Key(Key::Char('X')));
    assert!(s.update(Msg::Key(Key::Char('y'))).is_empty());
    s.update(Msg::StopReport {
        ok: true,
        report: vec!["stop file created".into()],
    });
    s.update(Msg::Key(Key::Char('X')));
    assert!(s.update(Msg::Key(Key::Char('y'))).is_empty());
}

#[test]
fn nothing_armed_means_nothing_fired() {
    let mut cfg = config();
    cfg.actions.clear();
    let mut s = state_with(Kind::Critical, cfg);
    s.update(Msg::Key(Key::Char('X')));
    assert!(screen(&s, 80, 24).contains("No stop action is armed"));
    assert!(s.update(Msg::Key(Key::Char('y'))).is_empty());
    assert_eq!(s.stop, StopState::Idle);
    assert_eq!(s.dialog, None);
}

#[test]
fn an_alarm_only_shows_the_actions_get_it_from_the_data_thread() {
    // Armed for alarms or not, the state hands nothing to the actions: the
    // data thread does, so a slow frame cannot hold an alarm back.
    for auto_stop in [true, false] {
        let mut cfg = config();
        cfg.auto_stop = auto_stop;
        let mut s = AppState::new(cfg);
        let fx = s.update(Msg::Data(Box::new(ui_support::alarm_batch(
            Level::Critical,
        ))));
        assert!(fx.is_empty(), "{fx:?}");
        assert_eq!(s.level, Level::Critical);
        assert!(s.banner.is_some());
    }
}

#[test]
fn reports_of_an_escalation_accumulate() {
    let mut s = state(Kind::Critical);
    s.update(Msg::StopReport {
        ok: true,
        report: vec!["created STOP".into()],
    });
    s.update(Msg::StopReport {
        ok: false,
        report: vec!["signal refused".into()],
    });
    match &s.stop {
        StopState::Done { ok, report } => {
            assert!(!ok);
            assert_eq!(report.len(), 2);
        }
        other => panic!("{other:?}"),
    }
}

#[test]
fn a_signal_ends_the_loop() {
    let mut s = state(Kind::Healthy);
    assert_eq!(s.update(Msg::Signal("SIGHUP")), vec![Effect::Quit]);
    assert!(s.quit);
}

#[test]
fn unknown_keys_do_not_mark_the_screen_dirty() {
    let mut s = state(Kind::Healthy);
    s.dirty = false;
    s.update(Msg::Key(Key::Other));
    assert!(!s.dirty);
    s.update(Msg::Resize);
    assert!(s.dirty);
}

#[test]
fn a_run_that_stopped_writing_is_called_out() {
    let mut s = state(Kind::Healthy);
    assert!(!screen(&s, 80, 24).contains("no new rows"));
    let last = s.last_row_s.unwrap();
    s.update(Msg::Tick {
        now_s: last + 125.0,
    });
    assert!(screen(&s, 200, 60).contains("no new rows for 2m 05s"));
}

/// One batch carrying only detector estimates (and a row, so time moves on).
fn estimates(line: u64, rho: f64, onset_line: u64, arrival_s: f64) -> rhoscope::app::Batch {
    let mut b = rhoscope::app::Batch::default();
    let mut row = [0.0; 8];
    row[0] = 100.0 + line as f64;
    b.push_row(line, &row);
    b.status = Some(rhoscope::detect::Status {
        evidence: rhoscope::finding::Evidence {
            growth_per_step: Some(rho),
            onset_line: Some(onset_line),
            onset_time: Some(onset_line as f64),
            forecast_steps: Some(4_000.0),
            forecast_wall_s: Some(25.0),
            ..Default::default()
        },
        growth_confirmed: rho > 1.0,
        levels: vec![],
    });
    b.arrival_s = Some(arrival_s);
    b
}

#[test]
fn the_alarms_onset_holds_while_the_growth_goes_on() {
    let mut s = state(Kind::Healthy);
    let t0 = s.now_s;
    // An early, mild fit guesses an onset long before the real one.
    s.update(Msg::Data(Box::new(estimates(
        2_995,
        1.0036,
        2_800,
        t0 + 0.1,
    ))));
    assert_eq!(s.readouts.evidence.onset_line, Some(2_800));
    let mut b = estimates(3_000, 1.18, 2_990, t0 + 0.2);
    b.items
        .push(rhoscope::app::Item::Alarm(rhoscope::alarm::Alarm {
            level: Level::Critical,
            detector: "growth",
            line: 3_000,
            time: None,
            message: "growth per step 1.18".into(),
            evidence: rhoscope::finding::Evidence {
                onset_line: Some(2_990),
                ..Default::default()
            },
        }));
    s.update(Msg::Data(Box::new(b)));
    assert_eq!(s.readouts.evidence.onset_line, Some(2_990));
    // A later fit places the onset inside its own window: the alarm's stays.
    s.update(Msg::Data(Box::new(estimates(3_050, 1.19, 3_040, t0 + 0.3))));
    assert_eq!(s.readouts.evidence.onset_line, Some(2_990));
    // Growth gone: the fit's own reading is shown again.
    s.update(Msg::Data(Box::new(estimates(3_060, 0.99, 3_040, t0 + 0.4))));
    assert_eq!(s.readouts.evidence.onset_line, Some(3_040));
}

#[test]
fn a_quiet_run_shows_its_forecast_without_a_wall_clock_countdown() {
    let mut s = state(Kind::Healthy);
    let t0 = s.now_s;
    s.update(Msg::Data(Box::new(estimates(3_000, 1.18, 2_990, t0 + 0.1))));
    let flowing = screen(&s, 200, 60);
    assert!(flowing.contains("4,000 steps · 25 s"), "{flowing}");
    s.update(Msg::Tick { now_s: t0 + 60.0 });
    let quiet = screen(&s, 200, 60);
    assert!(quiet.contains("4,000 steps at the last row"), "{quiet}");
    assert!(!quiet.contains("4,000 steps · 25 s"), "{quiet}");
}

#[test]
fn help_80x24() {
    let mut s = state(Kind::Healthy);
    s.update(Msg::Key(Key::Char('?')));
    insta::assert_snapshot!(screen(&s, 80, 24));
}

#[test]
fn stop_dialog_200x60() {
    let mut s = state(Kind::Critical);
    s.update(Msg::Key(Key::Char('X')));
    insta::assert_snapshot!(screen(&s, 200, 60));
}

/// Words separated by single spaces.
fn words(text: &str) -> String {
    text.split_whitespace().collect::<Vec<_>>().join(" ")
}

/// The text inside the box whose top border holds `title`, row by row,
/// joined into words: what a reader sees of it, wrapping undone.
fn boxed_text(screen: &str, title: &str) -> String {
    let rows: Vec<Vec<char>> = screen
        .lines()
        .map(|l| l.trim_matches('"').chars().collect())
        .collect();
    let title: Vec<char> = title.chars().collect();
    let (top, at) = rows
        .iter()
        .enumerate()
        .find_map(|(y, r)| {
            r.windows(title.len())
                .position(|w| w == title.as_slice())
                .map(|x| (y, x))
        })
        .unwrap_or_else(|| panic!("no box titled {title:?}:\n{screen}"));
    let left = (0..=at)
        .rev()
        .find(|&x| rows[top][x] == '┌')
        .expect("the box's corner");
    let right = (at..rows[top].len())
        .find(|&x| rows[top][x] == '┐')
        .expect("the box's other corner");
    let mut inside = Vec::new();
    for r in &rows[top + 1..] {
        if r[left] == '└' {
            return words(&inside.join(" "));
        }
        inside.push(r[left + 1..right].iter().collect::<String>());
    }
    panic!("the box titled {title:?} has no bottom border:\n{screen}");
}

#[test]
fn the_help_and_the_stop_dialog_show_every_caution_whole() {
    for (w, h) in [(80, 24), (200, 60)] {
        let mut s = state(Kind::Critical);
        s.update(Msg::Key(Key::Char('?')));
        let help = boxed_text(&screen(&s, w, h), "┌ help — any key closes ");
        s.update(Msg::Key(Key::Char('z')));
        s.update(Msg::Key(Key::Char('X')));
        let stop = boxed_text(&screen(&s, w, h), "┌ stop the run ");
        for c in rhoscope::ui::overlay::CAUTIONS {
            assert!(
                help.contains(&words(c)),
                "help at {w}x{h} lacks {c:?}:\n{help}"
            );
            assert!(
                stop.contains(&words(c)),
                "stop dialog at {w}x{h} lacks {c:?}:\n{stop}"
            );
        }
        for (k, what) in rhoscope::app::update::KEYS {
            assert!(
                help.contains(k) && help.contains(&words(what)),
                "{k} at {w}x{h}"
            );
        }
        for a in &s.config.actions {
            assert!(stop.contains(&words(a)), "{a} at {w}x{h}:\n{stop}");
        }
    }
}

#[test]
fn the_banner_keeps_its_keys_and_the_whole_alarm_when_it_fits() {
    for (w, h) in [(80, 24), (200, 60)] {
        let text = screen(&state(Kind::Critical), w, h);
        let rows: Vec<&str> = text.lines().map(|l| l.trim_matches('"')).collect();
        // The banner starts on the third row and takes what it needs.
        let banner = words(&rows[2..5].join(" "));
        assert!(banner.contains("a acknowledge, X stop the run"), "{banner}");
        assert!(
            banner.contains("growth per step 1.0100 for 700 steps; overflow in 51,000 steps"),
            "{w}x{h}: {banner}"
        );
    }
    // An alarm longer than the banner's rows still shows its keys and level.
    let mut s = state(Kind::Critical);
    let mut b = rhoscope::app::Batch::default();
    b.items
        .push(rhoscope::app::Item::Alarm(rhoscope::alarm::Alarm {
            level: Level::Critical,
            detector: "growth",
            line: 2_001,
            time: None,
            message: "a very long explanation ".repeat(40),
            evidence: Default::default(),
        }));
    s.update(Msg::Data(Box::new(b)));
    let text = screen(&s, 80, 24);
    let rows: Vec<&str> = text.lines().map(|l| l.trim_matches('"')).collect();
    assert!(
        rows[2].contains("CRITICAL") && rows[2].contains("a acknowledge"),
        "{text}"
    );
    assert!(
        rows[5].starts_with('┌'),
        "three banner rows at most:\n{text}"
    );
}

#[test]
fn a_run_that_went_quiet_after_the_stop_action_is_said_to_have_stopped() {
    let mut s = state(Kind::Critical);
    s.update(Msg::StopReport {
        ok: true,
        report: vec!["created the stop file runs/plate-7/STOP".into()],
    });
    let last = s.last_row_s.unwrap();
    s.update(Msg::Tick { now_s: last + 23.0 });
    let text = screen(&s, 200, 60);
    assert!(
        text.contains("the run stopped after the stop action (last row line 2,001, 23 s ago)"),
        "{text}"
    );
    assert!(!text.contains("no new rows"), "{text}");
}
