//! The built `oxbind-server` binary: it starts, answers health, drains on
//! SIGTERM and exits 0; invalid configuration exits 64 before binding.

use std::{
    io::{BufRead, BufReader},
    process::{Child, Command, Stdio},
    time::{Duration, Instant},
};

use nix::{
    sys::signal::{kill, Signal},
    unistd::Pid,
};
use oxbind_client::health::{
    health_check_response::ServingStatus, health_client::HealthClient, HealthCheckRequest,
};

/// Grace period given to the server under test.
const GRACE: Duration = Duration::from_secs(5);

/// Start the binary on an ephemeral port with JSON logs and return it with the
/// address it reports once it is serving.
fn start_server() -> (Child, String) {
    let mut child = Command::new(env!("CARGO_BIN_EXE_oxbind-server"))
        .args(["--listen", "127.0.0.1:0", "--log-format", "json"])
        .arg("--shutdown-grace")
        .arg(format!("{}s", GRACE.as_secs()))
        .env_remove("OXBIND_LISTEN")
        .stderr(Stdio::piped())
        .stdout(Stdio::null())
        .spawn()
        .expect("start oxbind-server");
    let stderr = child.stderr.take().expect("stderr is piped");
    let mut lines = BufReader::new(stderr).lines();
    let address = loop {
        let line = lines
            .next()
            .expect("the server logs that it is serving before it exits")
            .expect("readable log line");
        let Ok(event) = serde_json::from_str::<serde_json::Value>(&line) else {
            continue;
        };
        if event["message"] == "serving" {
            break event["address"]
                .as_str()
                .expect("the serving line carries the address")
                .to_owned();
        }
    };
    // Keep draining stderr so the child never blocks on a full pipe.
    std::thread::spawn(move || for _ in lines {});
    (child, format!("http://{address}"))
}

#[tokio::test]
async fn sigterm_turns_health_not_serving_and_exits_zero_within_the_grace_period() {
    let (mut child, uri) = start_server();
    let channel = oxbind_client::connect(uri).await.expect("connect");
    let mut health = HealthClient::new(channel);

    let serving = health
        .check(HealthCheckRequest::default())
        .await
        .expect("health answers");
    assert_eq!(serving.into_inner().status(), ServingStatus::Serving);

    // A call in flight across the signal: a Watch stream opened before it.
    let mut watch = health
        .watch(HealthCheckRequest::default())
        .await
        .expect("watch starts")
        .into_inner();
    let first = watch.message().await.expect("ok").expect("a first status");
    assert_eq!(first.status(), ServingStatus::Serving);

    let signalled_at = Instant::now();
    kill(Pid::from_raw(child.id() as i32), Signal::SIGTERM).expect("send SIGTERM");

    // The call in flight is still served and sees the change.
    let changed = watch
        .message()
        .await
        .expect("the in-flight stream survives the signal")
        .expect("a status change");
    assert_eq!(changed.status(), ServingStatus::NotServing);
    drop(watch);
    drop(health);

    let status = tokio::task::spawn_blocking(move || child.wait())
        .await
        .expect("wait task")
        .expect("wait for the server");
    let elapsed = signalled_at.elapsed();
    assert_eq!(status.code(), Some(0), "exit status {status:?}");
    assert!(
        elapsed < GRACE,
        "the server took {elapsed:?}, longer than its grace period {GRACE:?}"
    );
}

#[test]
fn an_unparsable_listen_address_exits_64_naming_the_setting() {
    let output = Command::new(env!("CARGO_BIN_EXE_oxbind-server"))
        .env("OXBIND_LISTEN", "not-an-address")
        .output()
        .expect("run oxbind-server");
    // 64 = EX_USAGE (sysexits.h), the project's exit status for bad config.
    assert_eq!(output.status.code(), Some(64), "{output:?}");
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert!(stderr.contains("--listen"), "stderr: {stderr}");
}

#[test]
fn an_unparsable_grace_period_exits_64_naming_the_setting() {
    let output = Command::new(env!("CARGO_BIN_EXE_oxbind-server"))
        .args(["--shutdown-grace", "soon"])
        .output()
        .expect("run oxbind-server");
    assert_eq!(output.status.code(), Some(64), "{output:?}");
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert!(stderr.contains("--shutdown-grace"), "stderr: {stderr}");
}
