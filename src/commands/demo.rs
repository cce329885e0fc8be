//! `rhoscope demo`: wiring only — list, write or live-write the invented cases.

use std::fs::File;
use std::io::{BufWriter, Write};
use std::path::Path;

use anyhow::{Context, bail};

use crate::cli::demo::DemoArgs;
use crate::demo::live::{LiveEnd, LiveOptions, write_live};
use crate::demo::{DEMO_SCENARIO, Scenario, catalogue, find};
use crate::outfile::same_file;

/// Run `rhoscope demo`; returns the exit code.
pub fn run(args: DemoArgs) -> anyhow::Result<i32> {
    if args.list {
        return list();
    }
    if let Some(w) = &args.write {
        let (name, file) = match w.as_slice() {
            [n, f] => (n.as_str(), Path::new(f)),
            _ => bail!("--write takes SCENARIO FILE"),
        };
        return write_one(&scenario(name)?, file).map(|_| 0);
    }
    if let Some(dir) = &args.write_all {
        return write_all(dir).map(|_| 0);
    }
    if let Some(file) = &args.live {
        if let Some(stop) = &args.stop_file
            && same_file(file, stop)
        {
            bail!(
                "--live '{}' and --stop-file '{}' are the same file: the run would stop at its \
                 first checkpoint",
                file.display(),
                stop.display()
            );
        }
        let name = args.scenario.as_deref().unwrap_or(DEMO_SCENARIO);
        let case = scenario(name)?;
        let opts = LiveOptions {
            file: file.clone(),
            rate_lines_per_s: args.rate,
            stop_file: args.stop_file.clone(),
            checkpoint_every_lines: args.checkpoint_every,
        };
        let end = write_live(case.run(), &opts, None)
            .with_context(|| format!("writing '{}'", file.display()))?;
        match end {
            LiveEnd::Stopped { lines, step, .. } => {
                eprintln!("rhoscope demo: stop file seen at step {step}; {lines} lines written");
            }
            LiveEnd::Finished { lines } | LiveEnd::Cancelled { lines } => {
                eprintln!("rhoscope demo: run ended; {lines} lines written");
            }
        }
        return Ok(0);
    }
    super::demo_dashboard::run(args.headless, args.checkpoint_every)
}

fn scenario(name: &str) -> anyhow::Result<Scenario> {
    find(name).with_context(|| format!("no case named '{name}' (see 'rhoscope demo --list')"))
}

fn list() -> anyhow::Result<i32> {
    // Declared levels only: listing runs no simulation (onset and crash lines,
    // which need the runs, are in the labels.csv written by --write-all).
    let stdout = std::io::stdout();
    let mut out = stdout.lock();
    let cases = crate::demo::cases::specs();
    let w = cases.iter().map(|c| c.name.len()).max().unwrap_or(4);
    let mut print = || -> std::io::Result<()> {
        writeln!(out, "{:w$}  {:8}  description", "case", "expected")?;
        for c in &cases {
            writeln!(
                out,
                "{:w$}  {:8}  {}",
                c.name,
                c.level.code(),
                c.description
            )?;
        }
        Ok(())
    };
    match print() {
        // A closed pipe (`| head`) is not an error for a listing.
        Err(e) if e.kind() == std::io::ErrorKind::BrokenPipe => Ok(0),
        r => r.map(|_| 0).context("writing the list"),
    }
}

fn write_one(case: &Scenario, file: &Path) -> anyhow::Result<()> {
    let f = File::create(file).with_context(|| format!("creating '{}'", file.display()))?;
    let mut out = BufWriter::new(f);
    case.write(&mut out)
        .and_then(|_| out.flush())
        .with_context(|| format!("writing '{}'", file.display()))
}

/// File extension that suits a case's layout.
fn extension(case: &Scenario) -> &'static str {
    use crate::demo::layout::Layout;
    match case.setup().layout {
        Layout::Csv => "csv",
        Layout::JsonLines => "jsonl",
        Layout::Spaced | Layout::Headerless | Layout::Fixed { .. } => "txt",
    }
}

fn write_all(dir: &Path) -> anyhow::Result<()> {
    std::fs::create_dir_all(dir).with_context(|| format!("creating '{}'", dir.display()))?;
    let cases = catalogue();
    let labels = dir.join("labels.csv");
    let mut l = BufWriter::new(
        File::create(&labels).with_context(|| format!("creating '{}'", labels.display()))?,
    );
    writeln!(l, "case,file,expected,onset_line,crash_line")?;
    for c in &cases {
        let name = format!("{}.{}", c.name, extension(c));
        write_one(c, &dir.join(&name))?;
        let e = c.expected;
        writeln!(
            l,
            "{},{},{},{},{}",
            c.name,
            name,
            e.level.code(),
            e.onset_line.map_or(String::new(), |v| v.to_string()),
            e.crash_line.map_or(String::new(), |v| v.to_string())
        )?;
    }
    l.flush()?;
    Ok(())
}
