//! What the built `oxbind-server` writes when its standard error is not a
//! terminal (a file, a pipe, a log collector): plain log lines without ANSI
//! colour codes; and a bad setting from the environment named by its
//! environment variable, not by the flag nobody typed.

use std::{
    io::{BufRead, BufReader},
    process::{Command, Stdio},
};

/// The escape byte that starts every ANSI colour sequence.
const ESCAPE: char = '\u{1b}';

#[test]
fn plain_logs_to_a_pipe_carry_no_colour_codes() {
    let mut child = Command::new(env!("CARGO_BIN_EXE_oxbind-server"))
        .args(["--listen", "127.0.0.1:0", "--log-format", "plain"])
        .env_remove("OXBIND_LISTEN")
        .env_remove("OXBIND_LOG_FORMAT")
        .env("OTEL_SDK_DISABLED", "true")
        .stderr(Stdio::piped())
        .stdout(Stdio::null())
        .spawn()
        .expect("start oxbind-server");
    let stderr = child.stderr.take().expect("stderr is piped");
    let mut seen = Vec::new();
    for line in BufReader::new(stderr).lines() {
        let line = line.expect("readable log line");
        let serving = line.contains("serving");
        seen.push(line);
        if serving {
            break;
        }
    }
    child.kill().expect("stop the server");
    let _ = child.wait();
    assert!(
        seen.iter().any(|l| l.contains("serving")),
        "the server logs that it is serving: {seen:?}"
    );
    for line in &seen {
        assert!(!line.contains(ESCAPE), "ANSI escape in {line:?}");
    }
}

#[test]
fn a_bad_listen_address_from_the_environment_is_named_as_such() {
    let output = Command::new(env!("CARGO_BIN_EXE_oxbind-server"))
        .env("OXBIND_LISTEN", "nowhere")
        .stdout(Stdio::null())
        .output()
        .expect("run oxbind-server");
    assert_eq!(output.status.code(), Some(64));
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert!(stderr.contains("OXBIND_LISTEN"), "{stderr}");
    assert!(!stderr.contains("--listen <ADDR>"), "{stderr}");
    // The flag itself is still named when it was the flag that was wrong.
    let output = Command::new(env!("CARGO_BIN_EXE_oxbind-server"))
        .args(["--listen", "nowhere"])
        .env_remove("OXBIND_LISTEN")
        .stdout(Stdio::null())
        .output()
        .expect("run oxbind-server");
    assert_eq!(output.status.code(), Some(64));
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert!(stderr.contains("--listen"), "{stderr}");
}
