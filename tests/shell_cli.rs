//! `rhoscope completions` and `rhoscope man`: what a user installs. The bash
//! script must parse (`bash -n`), and the manual page must be roff that man
//! reads, beginning with the `.TH` title macro (groff_man(7): the title line
//! comes first).

use std::io::Write;
use std::process::Stdio;

use assert_cmd::Command;

fn output(args: &[&str]) -> String {
    let out = Command::cargo_bin("rhoscope")
        .unwrap()
        .args(args)
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(0), "{args:?}");
    String::from_utf8(out.stdout).unwrap()
}

#[test]
fn bash_completions_parse_and_know_every_command() {
    let script = output(&["completions", "bash"]);
    let mut bash = std::process::Command::new("bash")
        .arg("-n")
        .stdin(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("bash is needed to check the completion script");
    bash.stdin
        .take()
        .unwrap()
        .write_all(script.as_bytes())
        .unwrap();
    let done = bash.wait_with_output().unwrap();
    assert!(
        done.status.success(),
        "bash -n: {}",
        String::from_utf8_lossy(&done.stderr)
    );
    for cmd in [
        "scan", "watch", "guard", "fleet", "limits", "evaluate", "man",
    ] {
        assert!(script.contains(cmd), "no '{cmd}' in the bash completions");
    }
}

#[test]
fn every_shell_gets_a_script() {
    assert!(output(&["completions", "zsh"]).starts_with("#compdef rhoscope"));
    for shell in ["fish", "elvish", "powershell"] {
        let s = output(&["completions", shell]);
        assert!(s.contains("end-time"), "{shell}: no option of watch");
    }
}

#[test]
fn unknown_shell_is_a_usage_error() {
    Command::cargo_bin("rhoscope")
        .unwrap()
        .args(["completions", "tcsh"])
        .assert()
        .code(3);
}

#[test]
fn man_page_starts_with_its_title() {
    let page = output(&["man"]);
    assert!(page.starts_with(".TH rhoscope 1"), "{}", &page[..60]);
    assert!(page.contains(".SH \"RHOSCOPE GUARD\""));
    assert!(page.contains("\\-\\-touch"), "guard's options are listed");
}
