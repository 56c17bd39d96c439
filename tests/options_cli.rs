//! The command line as a whole: help for every command, refusals as sentences,
//! inputs refused before reading, exit codes, and a closed pipe as a normal end.

use std::process::{Command, Stdio};

fn ddlens(args: &[&str]) -> std::process::Output {
    Command::new(env!("CARGO_BIN_EXE_ddlens"))
        .args(args)
        .output()
        .unwrap()
}

fn stderr(out: &std::process::Output) -> String {
    String::from_utf8_lossy(&out.stderr).into_owned()
}

const COMMANDS: [&str; 6] = [
    "levels",
    "diagram",
    "fit",
    "import",
    "deconvolve",
    "analyze",
];

#[test]
fn every_command_accepts_dash_h_and_double_dash_help_and_help_cmd() {
    for command in COMMANDS {
        let short = ddlens(&[command, "-h"]);
        let long = ddlens(&[command, "--help"]);
        let via_help = ddlens(&["help", command]);
        assert!(short.status.success(), "{command} -h: {}", stderr(&short));
        let text = String::from_utf8(short.stdout.clone()).unwrap();
        assert!(text.starts_with(&format!("ddlens {command}")), "{text}");
        assert!(text.contains("-h, --help"), "{text}");
        assert_eq!(short.stdout, long.stdout, "{command}");
        assert_eq!(short.stdout, via_help.stdout, "{command}");
    }
}

#[test]
fn an_unknown_option_is_named_with_a_pointer_to_help() {
    let out = ddlens(&["levels", "--dqq", "5"]);
    assert_eq!(out.status.code(), Some(2));
    let err = stderr(&out);
    assert!(err.contains("'--dqq'"), "{err}");
    assert!(err.contains("ddlens levels --help"), "{err}");
}

#[test]
fn a_long_argument_is_echoed_shortened() {
    let long = format!("{}:1", "9".repeat(5000));
    let out = ddlens(&["deconvolve", "--range", &long, "x.csv"]);
    assert_eq!(out.status.code(), Some(2));
    let err = stderr(&out);
    assert!(err.len() < 200, "{} characters: {err}", err.len());
    assert!(err.contains('…'), "{err}");
}

#[test]
fn a_directory_or_a_device_is_refused_before_reading() {
    for path in ["/dev/zero", env!("CARGO_MANIFEST_DIR")] {
        for command in ["import", "deconvolve", "analyze"] {
            let out = match command {
                "analyze" => ddlens(&[command, path, "--config", "d3"]),
                _ => ddlens(&[command, path]),
            };
            assert_eq!(out.status.code(), Some(1), "{command} {path}");
            assert!(
                stderr(&out).contains("is not a regular file"),
                "{}",
                stderr(&out)
            );
        }
    }
}

#[cfg(unix)]
#[test]
fn a_fifo_is_refused_without_blocking() {
    let dir = std::env::temp_dir().join(format!("ddlens-fifo-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let fifo = dir.join("pipe");
    let made = Command::new("mkfifo").arg(&fifo).status();
    if !made.is_ok_and(|s| s.success()) {
        eprintln!("mkfifo is not available; skipped");
        return;
    }
    let out = ddlens(&["import", fifo.to_str().unwrap()]);
    std::fs::remove_dir_all(&dir).unwrap();
    assert_eq!(out.status.code(), Some(1));
    assert!(stderr(&out).contains("is not a regular file"));
}

#[test]
fn a_file_above_the_size_cap_is_refused_before_reading() {
    let path = std::env::temp_dir().join(format!("ddlens-huge-{}.csv", std::process::id()));
    // A sparse file: the length is 256 MiB + 1 byte without writing it.
    let file = std::fs::File::create(&path).unwrap();
    file.set_len(256 * 1024 * 1024 + 1).unwrap();
    drop(file);
    let out = ddlens(&["import", path.to_str().unwrap()]);
    std::fs::remove_file(&path).unwrap();
    assert_eq!(out.status.code(), Some(1));
    assert!(stderr(&out).contains("256 MiB"), "{}", stderr(&out));
}

#[test]
fn the_import_help_states_the_size_cap() {
    let out = ddlens(&["import", "--help"]);
    assert!(String::from_utf8_lossy(&out.stdout).contains("256 MiB"));
}

#[test]
fn analyze_with_an_unknown_ion_exits_non_zero_and_says_why() {
    let file = "fixtures/demo/demo-crx7.csv";
    let text = ddlens(&["analyze", file, "--ion", "Xx", "--bands", "2"]);
    assert_eq!(text.status.code(), Some(1), "{}", stderr(&text));
    assert!(
        stderr(&text).contains("unknown ion 'Xx'"),
        "{}",
        stderr(&text)
    );
    // The bands are still reported, and --json still prints the whole analysis.
    assert!(String::from_utf8_lossy(&text.stdout).contains("bands (2)"));
    let json = ddlens(&["analyze", file, "--ion", "Xx", "--bands", "2", "--json"]);
    assert_eq!(json.status.code(), Some(1));
    let doc: serde_json::Value = serde_json::from_slice(&json.stdout).unwrap();
    assert!(doc["results"]["fit_error"].as_str().unwrap().contains("Xx"));
    assert!(doc["results"]["fit"].is_null());
}

#[test]
fn analyze_help_says_a_failed_fit_exits_non_zero() {
    let out = ddlens(&["analyze", "--help"]);
    assert!(String::from_utf8_lossy(&out.stdout).contains("exit code is 1"));
}

#[test]
fn a_numeric_option_beyond_its_bound_is_refused_with_a_sentence() {
    let out = ddlens(&["diagram", "--config", "d3", "--points", "1000000000"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(stderr(&out).contains("--points"), "{}", stderr(&out));
    let out = ddlens(&["deconvolve", "x.csv", "--max-iterations", "0"]);
    assert_eq!(out.status.code(), Some(2));
    let out = ddlens(&["import", "--savgol-coeffs", "99999999,2,0"]);
    assert_eq!(out.status.code(), Some(2));
}

#[test]
fn a_huge_parameter_is_printed_in_exponent_form() {
    let out = ddlens(&[
        "levels", "--config", "d3", "--dq", "1740", "--b", "1e-300", "--c", "3263",
    ]);
    let text = String::from_utf8_lossy(&out.stdout);
    let first = text.lines().next().unwrap_or_default();
    assert!(first.contains("B = 1e-300 cm⁻¹"), "{first}");
    assert!(first.len() < 120, "{first}");
}

#[test]
fn a_closed_pipe_ends_the_output_quietly_with_exit_zero() {
    // More than a pipe buffer (64 KiB) of JSON, so the write meets the closed end.
    let mut child = Command::new(env!("CARGO_BIN_EXE_ddlens"))
        .args(["diagram", "--config", "d6", "--points", "20000", "--json"])
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    drop(child.stdout.take());
    let out = child.wait_with_output().unwrap();
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    assert_eq!(stderr(&out), "");
}

#[test]
fn json_may_come_before_the_command() {
    let before = ddlens(&["--json", "levels", "--dump-ck"]);
    let after = ddlens(&["levels", "--dump-ck", "--json"]);
    assert!(before.status.success(), "{}", stderr(&before));
    assert_eq!(before.stdout, after.stdout);
}
