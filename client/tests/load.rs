//! `oxbind-load` against a real in-process server, for a few seconds in
//! all: the JSON report's shape and counts, the baseline ratio, batch mode's
//! item counts and sizes, the `--max-calls` bound, the Connect protocol in
//! JSON and protobuf, refusals counted as errors, and the usage errors.
//! No timing is asserted: speed figures live in BENCHMARKS.md.

mod common;

use assert_cmd::Command;
use common::Server;
use serde_json::Value;

/// The report of `oxbind-load --json ARGS` against `server`.
fn load(server: &Server, args: &[&str]) -> Value {
    let (code, report) = load_with_status(server, args);
    assert_eq!(code, Some(0), "{report}");
    report
}

/// The exit status and report of `oxbind-load --json ARGS` against `server`.
fn load_with_status(server: &Server, args: &[&str]) -> (Option<i32>, Value) {
    let output = server
        .oxbind_load()
        .arg("--json")
        .args(args)
        .output()
        .unwrap();
    let report = serde_json::from_slice(&output.stdout).unwrap_or_else(|e| {
        panic!(
            "exit {:?}, stdout is not JSON ({e}): {}",
            output.status.code(),
            String::from_utf8_lossy(&output.stderr)
        )
    });
    (output.status.code(), report)
}

fn f(value: &Value) -> f64 {
    value
        .as_f64()
        .unwrap_or_else(|| panic!("{value} is not a number"))
}

/// The rate is the count over the window, and the quantiles are ordered.
fn check_consistent(result: &Value) {
    let calls = f(&result["callsOk"]);
    let window = f(&result["windowSeconds"]);
    assert!(calls > 0.0, "{result}");
    let rate = f(&result["callsPerSecond"]);
    assert!(
        (rate - calls / window).abs() <= 1e-9 * rate.max(1.0),
        "{result}"
    );
    let items = f(&result["itemsPerCall"]);
    assert!(
        (f(&result["itemsPerSecond"]) - rate * items).abs() <= 1e-9 * rate.max(1.0) * items,
        "{result}"
    );
    let latency = &result["latencyMs"];
    let order = ["p50", "p90", "p99", "p999", "max"].map(|q| f(&latency[q]));
    assert!(order[0] > 0.0, "{result}");
    for pair in order.windows(2) {
        // hdrhistogram reports the bucket's highest equivalent value for a
        // quantile, which may exceed the exact max by its 3-digit resolution.
        assert!(pair[0] <= pair[1] * 1.001 + 1e-3, "{result}");
    }
    assert_eq!(result["errors"], serde_json::json!({}), "{result}");
}

#[test]
fn saturation_with_baseline_reports_both_and_their_ratio() {
    let server = Server::start();
    // The in-process server is this test process.
    let pid = std::process::id().to_string();
    let report = load(
        &server,
        &[
            "--rpc",
            "saturation",
            "--in-flight",
            "4",
            "--connections",
            "2",
            "--warm-up",
            "0.1",
            "--duration",
            "0.3",
            "--baseline",
            "--server-pid",
            &pid,
        ],
    );
    let result = &report["result"];
    let baseline = &report["baseline"];
    assert_eq!(
        result["rpc"],
        "oxbind.v1.DissociationService/SaturationFromTension"
    );
    assert_eq!(baseline["rpc"], "grpc.health.v1.Health/Check");
    for phase in [result, baseline] {
        assert_eq!(phase["protocol"], "grpc", "{report}");
        assert_eq!(phase["encoding"], "proto", "{report}");
    }
    assert_eq!(result["inFlight"], 4);
    assert_eq!(baseline["connections"], 2);
    check_consistent(result);
    check_consistent(baseline);
    for phase in [result, baseline] {
        let usage = &phase["server"];
        assert!(f(&usage["cpuSeconds"]) > 0.0, "{report}");
        let per_call = f(&usage["cpuMicrosPerCall"]);
        let expected = f(&usage["cpuSeconds"]) * 1e6 / f(&phase["callsOk"]);
        assert!((per_call - expected).abs() <= 1e-9 * expected, "{report}");
        assert!(f(&usage["vmRssKiB"]) > 0.0, "{report}");
        assert!(f(&usage["vmHwmKiB"]) >= f(&usage["vmRssKiB"]), "{report}");
    }
    let ratio = f(&report["ratioToBaseline"]);
    let expected = f(&result["callsPerSecond"]) / f(&baseline["callsPerSecond"]);
    assert!((ratio - expected).abs() <= 1e-9 * expected, "{report}");
}

#[test]
fn batch_counts_items_and_sizes_and_every_item_is_computed() {
    let server = Server::start();
    let report = load(
        &server,
        &[
            "--rpc",
            "batch-saturation",
            "--items",
            "50",
            "--in-flight",
            "2",
            "--connections",
            "1",
            "--warm-up",
            "0.1",
            "--duration",
            "0.3",
            "--model",
            "dash-2016",
        ],
    );
    let result = &report["result"];
    assert_eq!(result["itemsPerCall"], 50);
    check_consistent(result);
    // The generated inputs are all within the hard ranges: no item refused.
    assert_eq!(result["itemErrors"], serde_json::json!({}), "{report}");
    // Each item is at least its PO2 and conditions on the wire, and each
    // answer at least a saturation and a P50.
    assert!(f(&result["requestBytesPerItem"]) > 20.0, "{report}");
    assert!(f(&result["responseBytesPerItem"]) > 20.0, "{report}");
    assert!(report["baseline"].is_null());
}

/// Shared provenance makes each answered item smaller than per-item
/// provenance for the same inputs (same seed), and PO2-only items are smaller
/// requests; every item still computes.
#[test]
fn shared_provenance_and_po2_only_shrink_the_messages() {
    let server = Server::start();
    let run = |extra: &[&str]| {
        let mut args = vec![
            "--rpc",
            "batch-saturation",
            "--items",
            "20",
            "--in-flight",
            "1",
            "--connections",
            "1",
            "--warm-up",
            "0",
            "--duration",
            "0.3",
            "--seed",
            "7",
        ];
        args.extend_from_slice(extra);
        let report = load(&server, &args);
        let result = report["result"].clone();
        check_consistent(&result);
        assert_eq!(result["itemErrors"], serde_json::json!({}), "{report}");
        result
    };
    let each = run(&[]);
    let shared = run(&["--shared-provenance"]);
    let po2_only = run(&["--shared-provenance", "--po2-only"]);
    let bytes = |r: &Value, key: &str| f(&r[key]);
    // Full provenance is hundreds of bytes an item; shared, none.
    assert!(
        bytes(&shared, "responseBytesPerItem") * 3.0 < bytes(&each, "responseBytesPerItem"),
        "{each} {shared}"
    );
    assert_eq!(
        bytes(&shared, "requestBytesPerItem"),
        bytes(&each, "requestBytesPerItem")
    );
    // A PO2 alone (value and unit) is well under the blood gas with conditions.
    assert!(
        bytes(&po2_only, "requestBytesPerItem") * 2.0 < bytes(&shared, "requestBytesPerItem"),
        "{shared} {po2_only}"
    );
}

/// The same RPC through the Connect protocol, in JSON and in binary
/// protobuf: calls made, none failed, and the report names the protocol and
/// encoding. The baseline stays gRPC's Health/Check.
#[test]
fn connect_drives_saturation_in_json_and_proto() {
    let server = Server::start();
    for encoding in ["json", "proto"] {
        let report = load(
            &server,
            &[
                "--protocol",
                "connect",
                "--encoding",
                encoding,
                "--rpc",
                "saturation",
                "--in-flight",
                "4",
                "--connections",
                "2",
                "--warm-up",
                "0.1",
                "--duration",
                "0.3",
                "--baseline",
            ],
        );
        let result = &report["result"];
        assert_eq!(result["protocol"], "connect", "{report}");
        assert_eq!(result["encoding"], encoding, "{report}");
        assert_eq!(
            result["rpc"],
            "oxbind.v1.DissociationService/SaturationFromTension"
        );
        assert_eq!(result["connections"], 2);
        check_consistent(result);
        let baseline = &report["baseline"];
        assert_eq!(baseline["rpc"], "grpc.health.v1.Health/Check");
        assert_eq!(baseline["protocol"], "grpc", "{report}");
        check_consistent(baseline);
    }
}

/// `--encoding` defaults to JSON with Connect; a batch's items are counted
/// and every one computes in either encoding, and the same generated batch
/// (same seed) is larger in JSON than in protobuf.
#[test]
fn connect_batches_count_items_in_either_encoding() {
    let server = Server::start();
    let run = |extra: &[&str]| {
        let mut args = vec![
            "--protocol",
            "connect",
            "--rpc",
            "batch-saturation",
            "--items",
            "20",
            "--in-flight",
            "2",
            "--connections",
            "1",
            "--warm-up",
            "0",
            "--duration",
            "0.3",
            "--seed",
            "7",
        ];
        args.extend_from_slice(extra);
        let report = load(&server, &args);
        let result = report["result"].clone();
        check_consistent(&result);
        assert_eq!(result["itemsPerCall"], 20);
        assert_eq!(result["itemErrors"], serde_json::json!({}), "{report}");
        result
    };
    let json = run(&[]);
    assert_eq!(json["encoding"], "json", "{json}");
    let proto = run(&["--encoding", "proto"]);
    assert_eq!(proto["encoding"], "proto", "{proto}");
    assert!(
        f(&json["requestBytesPerItem"]) > f(&proto["requestBytesPerItem"]),
        "{json} {proto}"
    );
    assert!(
        f(&json["responseBytesPerItem"]) > f(&proto["responseBytesPerItem"]),
        "{json} {proto}"
    );
}

/// A server's refusal is an error counted by its code, over gRPC and over
/// Connect alike: a batch one item over the server's default limit of
/// 10,000 is refused as INVALID_ARGUMENT (reason BATCH_TOO_LARGE), no call
/// succeeds, the report says so, and the exit status is 1.
#[test]
fn a_refused_call_is_counted_as_an_error_in_every_protocol() {
    let server = Server::start();
    for protocol in [
        &["--protocol", "grpc"][..],
        &["--protocol", "connect", "--encoding", "json"],
        &["--protocol", "connect", "--encoding", "proto"],
    ] {
        let mut args = protocol.to_vec();
        args.extend_from_slice(&[
            "--rpc",
            "batch-saturation",
            "--items",
            "10001",
            "--in-flight",
            "1",
            "--connections",
            "1",
            "--warm-up",
            "0",
            "--duration",
            "10",
            "--max-calls",
            "2",
        ]);
        let (code, report) = load_with_status(&server, &args);
        assert_eq!(code, Some(1), "{args:?}: {report}");
        let result = &report["result"];
        assert_eq!(result["callsOk"], 0, "{report}");
        assert_eq!(
            result["errors"],
            serde_json::json!({"INVALID_ARGUMENT": 2}),
            "{args:?}: {report}"
        );
    }
}

#[test]
fn max_calls_bounds_the_count() {
    let server = Server::start();
    let report = load(
        &server,
        &[
            "--rpc",
            "health",
            "--in-flight",
            "3",
            "--connections",
            "1",
            "--warm-up",
            "0",
            "--duration",
            "30",
            "--max-calls",
            "25",
        ],
    );
    assert_eq!(report["result"]["callsOk"], 25, "{report}");
}

#[test]
fn bad_settings_are_usage_errors() {
    for args in [
        &["--duration", "0"][..],
        &["--duration", "601"],
        &["--warm-up", "-1"],
        &["--in-flight", "0"],
        &["--timeout", "0s"],
        &["--server", "https://127.0.0.1:1"],
        &["--protocol", "http"],
        &["--protocol", "grpc", "--encoding", "json"],
        &["--encoding", "json"],
        &["--protocol", "connect", "--rpc", "health"],
        &["--protocol", "connect", "--encoding", "text"],
    ] {
        Command::cargo_bin("oxbind-load")
            .unwrap()
            .args(args)
            .assert()
            .code(2);
    }
}

#[test]
fn the_integrators_command_has_no_load_subcommand() {
    let help = Command::cargo_bin("oxbind")
        .unwrap()
        .arg("--help")
        .output()
        .unwrap();
    let help = String::from_utf8(help.stdout).unwrap();
    assert!(!help.contains("\n  load "), "{help}");
    Command::cargo_bin("oxbind")
        .unwrap()
        .args(["load", "--duration", "1"])
        .assert()
        .code(2);
}
