//! Unit tests of the file follower: appearance, appends, partial lines,
//! truncation, replacement, deletion, NUL runs, backlog, inode moves.

#![allow(clippy::unwrap_used)]

use std::fs::{self, OpenOptions};
use std::io::Write;
use std::path::Path;
use std::time::Duration;

use super::{Event, FollowConfig, Follower, RestartReason, Source};

fn cfg() -> FollowConfig {
    FollowConfig {
        poll_interval: Duration::ZERO,
        notify: false,
        chunk_bytes: 1 << 16,
    }
}

/// Poll until nothing is new; data events are merged for easy comparison.
fn drain(f: &mut Follower) -> Vec<Event> {
    let mut out: Vec<Event> = Vec::new();
    for _ in 0..100_000 {
        match f.poll().unwrap() {
            None => return out,
            Some(Event::Data(d)) => match out.last_mut() {
                Some(Event::Data(prev)) => prev.extend_from_slice(&d),
                _ => out.push(Event::Data(d)),
            },
            Some(e) => out.push(e),
        }
    }
    panic!("follower never went quiet");
}

fn append(path: &Path, bytes: &[u8]) {
    let mut f = OpenOptions::new()
        .create(true)
        .append(true)
        .open(path)
        .unwrap();
    f.write_all(bytes).unwrap();
}

/// Cut the file to nothing in place (same inode), as `> file` does.
fn truncate(path: &Path) {
    OpenOptions::new()
        .write(true)
        .open(path)
        .unwrap()
        .set_len(0)
        .unwrap();
}

fn data(b: &[u8]) -> Event {
    Event::Data(b.to_vec())
}

#[test]
fn waits_for_the_file_then_follows_appends_with_partial_lines() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("run.csv");
    let mut f = Follower::new(&p, cfg());
    assert!(drain(&mut f).is_empty());
    append(&p, b"t,e\n0,1");
    assert_eq!(drain(&mut f), vec![Event::Appeared, data(b"t,e\n0,1")]);
    append(&p, b".5\n1,2\n");
    assert_eq!(drain(&mut f), vec![data(b".5\n1,2\n")]);
    assert!(drain(&mut f).is_empty());
}

#[test]
fn truncation_in_place_restarts_from_the_start() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("run.csv");
    append(&p, b"t,e\n0,1\n1,2\n2,3\n");
    let mut f = Follower::new(&p, cfg());
    drain(&mut f);
    truncate(&p);
    append(&p, b"t,e\n");
    assert_eq!(
        drain(&mut f),
        vec![Event::Restart(RestartReason::Truncated), data(b"t,e\n")]
    );
}

#[test]
fn rewrite_from_the_start_with_a_longer_file_is_noticed_by_its_first_bytes() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("run.csv");
    append(&p, b"a,b\n1,2\n");
    let mut f = Follower::new(&p, cfg());
    drain(&mut f);
    // Same inode, rewritten and already longer than what was read.
    fs::write(&p, b"x,y\n5,6\n7,8\n").unwrap();
    assert_eq!(
        drain(&mut f),
        vec![
            Event::Restart(RestartReason::Rewritten),
            data(b"x,y\n5,6\n7,8\n")
        ]
    );
}

#[test]
fn replacement_by_rename_reads_the_new_file_from_its_start() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("run.csv");
    append(&p, b"t,e\n0,1\n1,2\n");
    let mut f = Follower::new(&p, cfg());
    drain(&mut f);
    let tmp = dir.path().join("run.csv.new");
    fs::write(&tmp, b"t,e\n0,9\n1,9\n2,9\n").unwrap();
    fs::rename(&tmp, &p).unwrap();
    assert_eq!(
        drain(&mut f),
        vec![
            Event::Restart(RestartReason::Replaced),
            data(b"t,e\n0,9\n1,9\n2,9\n")
        ]
    );
}

#[test]
fn same_content_under_a_new_inode_continues_at_the_offset() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("run.csv");
    append(&p, b"t,e\n0,1\n1,2\n");
    let mut f = Follower::new(&p, cfg());
    drain(&mut f);
    // Whole history rewritten to a temporary file and renamed over (some codes do so).
    let tmp = dir.path().join("run.csv.tmp");
    fs::write(&tmp, b"t,e\n0,1\n1,2\n2,3\n").unwrap();
    fs::rename(&tmp, &p).unwrap();
    assert_eq!(drain(&mut f), vec![data(b"2,3\n")]);
}

#[test]
fn deletion_keeps_what_was_read_and_a_new_file_is_read_from_its_start() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("run.csv");
    append(&p, b"t,e\n0,1\n");
    let mut f = Follower::new(&p, cfg());
    assert_eq!(drain(&mut f), vec![Event::Appeared, data(b"t,e\n0,1\n")]);
    fs::remove_file(&p).unwrap();
    assert_eq!(drain(&mut f), vec![Event::Missing]);
    assert!(drain(&mut f).is_empty(), "missing is reported once");
    // Same bytes again: still a new file after a deletion, read from its start.
    append(&p, b"t,e\n0,1\n");
    assert_eq!(
        drain(&mut f),
        vec![Event::Restart(RestartReason::Replaced), data(b"t,e\n0,1\n")]
    );
}

#[test]
fn nul_runs_from_a_writer_that_kept_its_offset_are_skipped() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("run.csv");
    append(&p, b"t,e\n0,1\n1,2\n");
    let mut f = Follower::new(&p, cfg());
    drain(&mut f);
    // Truncated by someone else, then the writer continues at its old offset.
    let w = OpenOptions::new().write(true).open(&p).unwrap();
    w.set_len(0).unwrap();
    std::os::unix::fs::FileExt::write_at(&w, b"2,3\n", 12).unwrap();
    assert_eq!(
        drain(&mut f),
        vec![Event::Restart(RestartReason::Rewritten), data(b"2,3\n")]
    );
}

#[test]
fn a_backlog_comes_out_whole_in_chunks() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("big.csv");
    let mut all = Vec::new();
    for i in 0..50_000 {
        all.extend_from_slice(format!("{i},{}\n", i * 2).as_bytes());
    }
    fs::write(&p, &all).unwrap();
    let mut f = Follower::new(&p, cfg());
    let mut chunks = 0;
    let mut got = Vec::new();
    while let Some(e) = f.poll().unwrap() {
        if let Event::Data(d) = e {
            chunks += 1;
            got.extend_from_slice(&d);
        }
    }
    assert!(
        chunks > 1,
        "a backlog larger than a chunk takes several reads"
    );
    assert_eq!(got, all);
    assert_eq!(f.offset(), all.len() as u64);
}

#[test]
fn a_read_only_file_is_followed_and_left_unchanged() {
    use std::os::unix::fs::PermissionsExt;
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("ro.csv");
    fs::write(&p, b"t,e\n0,1\n").unwrap();
    fs::set_permissions(&p, fs::Permissions::from_mode(0o444)).unwrap();
    let before = fs::metadata(&p).unwrap();
    let mut f = Follower::new(&p, cfg());
    assert_eq!(drain(&mut f), vec![Event::Appeared, data(b"t,e\n0,1\n")]);
    let after = fs::metadata(&p).unwrap();
    assert_eq!(before.len(), after.len());
    assert_eq!(before.modified().unwrap(), after.modified().unwrap());
    assert_eq!(after.permissions().mode() & 0o777, 0o444);
}

#[test]
fn a_writer_thread_is_followed_to_the_last_byte_with_notifications() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("live.csv");
    let cfg = FollowConfig {
        poll_interval: Duration::from_millis(50),
        notify: true,
        chunk_bytes: 4096,
    };
    let mut f = Follower::new(&p, cfg);
    let wp = p.clone();
    let writer = std::thread::spawn(move || {
        let mut expect = Vec::new();
        for i in 0..2000 {
            let line = format!("{i},{}\n", i % 7);
            append(&wp, line.as_bytes());
            expect.extend_from_slice(line.as_bytes());
        }
        expect
    });
    let mut got = Vec::new();
    let deadline = std::time::Instant::now() + Duration::from_secs(60);
    while !writer.is_finished() {
        match f.poll().unwrap() {
            Some(Event::Data(d)) => got.extend_from_slice(&d),
            Some(_) => {}
            None => f.wait(Duration::from_millis(50)),
        }
        assert!(std::time::Instant::now() < deadline, "writer stalled");
    }
    for e in drain(&mut f) {
        if let Event::Data(d) = e {
            got.extend_from_slice(&d);
        }
    }
    assert_eq!(got, writer.join().unwrap());
}

#[test]
fn a_nudge_reopens_the_name_before_the_periodic_check() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("run.csv");
    append(&p, b"t,e\n0,1\n");
    let slow = FollowConfig {
        poll_interval: Duration::from_secs(3600),
        ..cfg()
    };
    let mut f = Follower::new(&p, slow);
    drain(&mut f);
    let tmp = dir.path().join("run.tmp");
    fs::write(&tmp, b"t,e\n5,6\n").unwrap();
    fs::rename(&tmp, &p).unwrap();
    assert!(
        drain(&mut f).is_empty(),
        "without a hint the old file is held until the periodic check"
    );
    f.nudge();
    assert_eq!(
        drain(&mut f),
        vec![Event::Restart(RestartReason::Replaced), data(b"t,e\n5,6\n")]
    );
}

/// `rows` lines of a history whose values depend on `seed`, so that two
/// runs differ in every line after the header.
fn rows(rows: usize, seed: u32) -> Vec<u8> {
    let mut v = b"time,x\n".to_vec();
    for i in 0..rows {
        v.extend_from_slice(format!("{i},{}\n", i as u32 * 7 + seed).as_bytes());
    }
    v
}

/// A follower whose periodic check is far away (an hour), with or without
/// notifications: only the continuity check can catch a rewrite in time.
fn slow(notify: bool) -> FollowConfig {
    FollowConfig {
        poll_interval: Duration::from_secs(3600),
        notify,
        chunk_bytes: 1 << 16,
    }
}

/// Everything the follower hands out until quiet, with notifications waited for.
fn drain_waiting(f: &mut Follower) -> Vec<Event> {
    f.wait(Duration::from_millis(200));
    drain(f)
}

/// Events in a short form for assertions: `restart: WHY`, `LINES lines`.
fn summary(events: &[Event]) -> Vec<String> {
    events
        .iter()
        .map(|e| match e {
            Event::Data(d) => format!("{} lines", d.iter().filter(|&&b| b == b'\n').count()),
            Event::Restart(r) => format!("restart: {}", r.describe()),
            other => format!("{other:?}"),
        })
        .collect()
}

/// Rewritten in place (same inode) past the old offset, or truncated and
/// regrown past it: one restart, then the new file whole, never a splice.
fn rewrite_is_read_once(notify: bool, truncate_first: bool) {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("run.csv");
    fs::write(&p, rows(1000, 1)).unwrap();
    let mut f = Follower::new(&p, slow(notify));
    drain_waiting(&mut f);
    let new = rows(1500, 2);
    if truncate_first {
        truncate(&p);
        append(&p, &new);
    } else {
        fs::write(&p, &new).unwrap();
    }
    let got = drain_waiting(&mut f);
    let case = format!("notify {notify}, truncated first {truncate_first}");
    assert_eq!(
        summary(&got),
        vec!["restart: file rewritten from its start", "1501 lines"],
        "{case}: 1,500 rows and the header, once"
    );
    assert!(got[1] == Event::Data(new), "{case}: the new bytes exactly");
}

#[test]
fn a_rewrite_in_place_is_caught_before_its_bytes_are_read_without_notifications() {
    rewrite_is_read_once(false, false);
    rewrite_is_read_once(false, true);
}

#[test]
fn a_rewrite_in_place_is_caught_before_its_bytes_are_read_with_notifications() {
    rewrite_is_read_once(true, false);
    rewrite_is_read_once(true, true);
}

#[test]
fn a_rewrite_with_the_same_bytes_up_to_the_offset_continues() {
    // A deterministic rerun writes the same bytes again: what follows the
    // offset is then its true continuation, read once.
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("run.csv");
    let all = rows(1500, 1);
    fs::write(&p, &all[..4000]).unwrap();
    let mut f = Follower::new(&p, slow(false));
    drain(&mut f);
    fs::write(&p, &all).unwrap();
    let got = drain(&mut f);
    assert_eq!(
        summary(&got),
        vec![format!(
            "{} lines",
            all[4000..].iter().filter(|&&b| b == b'\n').count()
        )]
    );
    assert!(got[0] == data(&all[4000..]));
}

#[test]
fn a_rewrite_that_has_not_grown_yet_is_caught_by_the_periodic_check() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("run.csv");
    let old = rows(100, 1);
    fs::write(&p, &old).unwrap();
    let mut f = Follower::new(&p, cfg());
    drain(&mut f);
    // Same size, same first bytes, other rows at the end.
    let mut new = old.clone();
    let at = new.len() - 5;
    new[at] = b'9';
    fs::write(&p, &new).unwrap();
    let got = drain(&mut f);
    assert_eq!(
        summary(&got),
        vec!["restart: file rewritten from its start", "101 lines"]
    );
    assert!(got[1] == data(&new));
}
