//! `oxbind-load` against a real in-process server, for about a second in
//! all: the JSON report's shape and counts, the baseline ratio, batch mode's
//! item counts and sizes, the `--max-calls` bound, and the usage errors.
//! No timing is asserted: speed figures live in BENCHMARKS.md.

mod common;

use assert_cmd::Command;
use common::Server;
use serde_json::Value;

/// The report of `oxbind-load --json ARGS` against `server`.
fn load(server: &Server, args: &[&str]) -> Value {
    let output = server
        .oxbind_load()
        .arg("--json")
        .args(args)
        .output()
        .unwrap();
    assert!(
        output.status.success(),
        "exit {:?}: {}",
        output.status.code(),
        String::from_utf8_lossy(&output.stderr)
    );
    serde_json::from_slice(&output.stdout).expect("stdout is JSON")
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
