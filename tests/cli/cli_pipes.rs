//! The command line in a pipe: a reader that stops early (`sayso classes | head -1`) ends sayso quietly with
//! success, tables stay aligned, and nothing carries terminal colour codes when not on a terminal.
//!
//! Owns: checks on the binary's behaviour at its standard streams.
//! Must not: check what the commands compute.

use std::io::{BufRead, BufReader};
use std::process::{Command, Stdio};

fn sayso() -> Command {
    Command::new(env!("CARGO_BIN_EXE_sayso"))
}

#[test]
fn a_reader_that_stops_early_ends_sayso_quietly() {
    for _ in 0..3 {
        let mut child = sayso()
            .arg("classes")
            .stdout(Stdio::piped())
            .stderr(Stdio::piped())
            .spawn()
            .unwrap();
        // Read one line, as `head -1` does, then close the pipe.
        let mut first = String::new();
        BufReader::new(child.stdout.take().unwrap())
            .read_line(&mut first)
            .unwrap();
        assert!(first.contains("name"), "{first}");
        let output = child.wait_with_output().unwrap();
        let stderr = String::from_utf8_lossy(&output.stderr);
        assert!(output.status.success(), "{:?}: {stderr}", output.status);
        assert!(!stderr.contains("panicked"), "{stderr}");
    }
    // Closed before sayso writes anything at all.
    let mut child = sayso()
        .args(["parse", "that's a towel, not a cat"])
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    drop(child.stdout.take());
    let output = child.wait_with_output().unwrap();
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert!(output.status.success(), "{:?}: {stderr}", output.status);
    assert!(!stderr.contains("panicked"), "{stderr}");
}

#[test]
fn the_class_table_is_aligned_and_plain() {
    let output = sayso().arg("classes").output().unwrap();
    assert!(output.status.success());
    let text = String::from_utf8(output.stdout).unwrap();
    assert!(!text.contains('\u{1b}'), "no escape codes off a terminal");
    let lines: Vec<&str> = text.lines().collect();
    assert_eq!(lines.len(), 42, "a header and 41 classes");
    // Every row's colour starts in the same column as the header's "colour".
    let column = lines[0].find("colour").unwrap();
    for line in &lines[1..] {
        assert_eq!(line.find('#'), Some(column), "{line}");
    }
}

#[test]
fn verbose_shows_sayso_stages_without_colour_codes_and_usage_errors_exit_2() {
    let out = tempfile::tempdir().unwrap();
    let output = sayso()
        .args([
            "-v",
            "fix",
            "kitchen_breakfast",
            "--say",
            "there are two mugs",
            "--out",
        ])
        .arg(out.path())
        .env_remove("SAYSO_LOG")
        .output()
        .unwrap();
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert!(output.status.success(), "{stderr}");
    assert!(!stderr.contains('\u{1b}'), "{stderr}");
    assert!(
        stderr.contains("superpixels built") && stderr.contains("note worked out"),
        "{stderr}"
    );
    // Every debug line is sayso's own, none the inference library's.
    for line in stderr.lines().filter(|line| line.contains("DEBUG")) {
        assert!(line.contains("sayso"), "{line}");
    }
    let usage = sayso().arg("no-such-command").output().unwrap();
    assert_eq!(usage.status.code(), Some(2));
    let failed = sayso()
        .args(["fix", "/nonexistent/scene", "--say", "hello"])
        .output()
        .unwrap();
    assert_eq!(failed.status.code(), Some(1));
    assert!(String::from_utf8_lossy(&failed.stderr).starts_with("sayso: error:"));
}
