//! The `oxbind` command line computes from exactly what the user wrote, or
//! says why not in one line naming what they typed (issue 18, findings 2, 3,
//! 4 and 6), against a real in-process server.

mod common;

use std::io::Read;

use common::{closed_address, failure_of, json_of, oxbind, Server};

fn input_used<'a>(json: &'a serde_json::Value, name: &str) -> &'a serde_json::Value {
    json["provenance"]["inputsUsed"]
        .as_array()
        .unwrap()
        .iter()
        .find(|i| i["name"] == name)
        .unwrap_or_else(|| panic!("no input {name}: {json}"))
}

#[test]
fn a_bare_number_in_a_fraction_flag_is_the_fraction() {
    let server = Server::start();
    let bare =
        json_of(
            server
                .oxbind()
                .args(["--json", "saturation", "--po2", "80", "--cohb", "0.12"]),
        );
    let cohb = &input_used(&bare, "conditions.cohb")["value"];
    assert_eq!(cohb["unit"], "1");
    assert!(
        (cohb["value"].as_f64().unwrap() - 0.12).abs() < 1e-12,
        "{cohb}"
    );
    let percent =
        json_of(
            server
                .oxbind()
                .args(["--json", "saturation", "--po2", "80", "--cohb", "12%"]),
        );
    assert_eq!(bare["saturationFraction"], percent["saturationFraction"]);
    // A bare value past the fraction's range is refused before sending, with
    // the per cent spelling, for every fraction flag.
    for (args, hint) in [
        (&["saturation", "--po2", "80", "--cohb", "12"][..], "12%"),
        (&["tension", "--saturation", "90"], "90%"),
        (&["gas-exchange", "--fio2", "21"], "21%"),
        (
            &["content", "--hb", "15", "--pao2", "95", "--sao2", "97"],
            "97%",
        ),
        (&["p50", "--pair", "30:57"], "57%"),
    ] {
        let (code, stderr) = failure_of(oxbind().args(["--server", &closed_address()]).args(args));
        assert_eq!(code, Some(2), "{args:?}: {stderr}");
        assert!(stderr.contains(hint), "{args:?}: {stderr}");
    }
}

#[test]
fn the_shunt_fraction_can_be_asked_for() {
    let server = Server::start();
    let gas = json_of(server.oxbind().args([
        "--json",
        "gas-exchange",
        "--fio2",
        "0.5",
        "--pao2",
        "80",
        "--paco2",
        "40",
        "--hb",
        "14",
        "--sao2",
        "0.95",
        "--svo2",
        "0.7",
        "--pvo2",
        "38",
    ]));
    let shunt = gas["shuntFraction"].as_f64().expect("a shunt fraction");
    // Qs/Qt = (CcO2 - CaO2) / (CcO2 - CvO2) lies between 0 and 1 (the Fick
    // shunt equation); with SaO2 0.95 on FiO2 0.5 it is a sizeable shunt.
    assert!(shunt > 0.05 && shunt < 0.6, "{shunt}");
}

#[test]
fn no_warning_the_user_did_not_cause() {
    let server = Server::start();
    for args in [
        &["content", "--hb", "15", "--sao2", "0.97", "--pao2", "95"][..],
        &["saturation", "--po2", "80"],
        &["tension", "--saturation", "0.9"],
        &["shift"],
    ] {
        let json = json_of(server.oxbind().arg("--json").args(args));
        assert!(json["warnings"].is_null(), "{args:?}: {}", json["warnings"]);
    }
}

#[test]
fn a_refusal_is_one_line_naming_the_flag() {
    let server = Server::start();
    let (code, stderr) = failure_of(server.oxbind().args(["saturation", "--po2", "-5"]));
    assert_eq!(code, Some(3));
    assert_eq!(stderr.lines().count(), 1, "{stderr}");
    assert!(
        stderr.starts_with("oxbind: --po2 must lie in [0.001, 7600] mm[Hg]"),
        "{stderr}"
    );
    let (code, stderr) = failure_of(server.oxbind().args([
        "saturation",
        "--po2",
        "80",
        "--temp",
        "50",
        "--ph",
        "9",
    ]));
    assert_eq!(code, Some(3));
    assert_eq!(
        stderr.lines().count(),
        2,
        "one line per refused field: {stderr}"
    );
    assert!(stderr.contains("--temp must lie in"), "{stderr}");
    assert!(stderr.contains("--ph must lie in"), "{stderr}");
    // The JSON form keeps the contract's field path.
    let (code, stderr) = failure_of(
        server
            .oxbind()
            .args(["--json", "saturation", "--po2", "-5"]),
    );
    assert_eq!(code, Some(3));
    let error: serde_json::Value = serde_json::from_str(&stderr).expect("a JSON error");
    assert_eq!(error["error"]["code"], "INVALID_ARGUMENT");
    assert_eq!(error["error"]["fieldViolations"][0]["field"], "po2.value");
    assert_eq!(error["error"]["fieldViolations"][0]["flag"], "--po2");
}

#[test]
fn connection_failures_say_so_once() {
    let (code, stderr) = failure_of(oxbind().args(["--server", "127.0.0.1:50051", "health"]));
    assert_eq!(code, Some(2), "{stderr}");
    assert_eq!(stderr.lines().count(), 1, "{stderr}");
    assert!(stderr.contains("--server"), "{stderr}");
    assert!(stderr.contains("http://"), "{stderr}");
    let (code, stderr) = failure_of(
        oxbind()
            .env("OXBIND_SERVER", "127.0.0.1:50051")
            .arg("health"),
    );
    assert_eq!(code, Some(2), "{stderr}");
    assert!(stderr.contains("OXBIND_SERVER"), "{stderr}");
    let (code, stderr) = failure_of(oxbind().args(["--server", &closed_address(), "health"]));
    assert_eq!(code, Some(4), "{stderr}");
    assert_eq!(stderr.lines().count(), 1, "{stderr}");
    let parts: Vec<&str> = stderr.trim_end().split(": ").collect();
    for pair in parts.windows(2) {
        assert_ne!(pair[0], pair[1], "repeated: {stderr}");
    }
}

#[test]
fn hill_flags_say_which_parameters_are_used() {
    let server = Server::start();
    let (code, stderr) = failure_of(server.oxbind().args([
        "--model",
        "hill",
        "saturation",
        "--po2",
        "80",
        "--hill-p50",
        "20",
        "--hill-preset",
        "fetal",
    ]));
    assert_eq!(code, Some(2), "{stderr}");
    let (code, stderr) = failure_of(server.oxbind().args([
        "saturation",
        "--po2",
        "80",
        "--hill-p50",
        "20",
        "--hill-n",
        "2.5",
    ]));
    assert_eq!(code, Some(2), "{stderr}");
    assert!(stderr.contains("--model hill"), "{stderr}");
    assert!(!stderr.contains("MODEL_HILL"), "{stderr}");
    let table = common::stdout_of(server.oxbind().args([
        "--model",
        "hill",
        "saturation",
        "--po2",
        "80",
        "--hill-preset",
        "fetal",
    ]));
    assert!(table.contains("fetal"), "{table}");
}

#[test]
fn temperature_correction_needs_any_one_value() {
    let server = Server::start();
    let (code, stderr) = failure_of(server.oxbind().args(["temperature", "--target-temp", "32"]));
    assert_eq!(code, Some(2), "{stderr}");
    for flag in ["--ph", "--pco2", "--po2"] {
        assert!(stderr.contains(flag), "{stderr}");
    }
    assert!(!stderr.contains("po2 is required"), "{stderr}");
    let json = json_of(server.oxbind().args([
        "--json",
        "temperature",
        "--target-temp",
        "32",
        "--ph",
        "7.30",
    ]));
    // Cooling raises pH (common practice; Rosenthal's coefficient).
    assert!(json["ph"].as_f64().unwrap() > 7.30, "{json}");
}

#[test]
fn durations_take_units_and_a_client_timeout_says_so() {
    let server = Server::start();
    common::stdout_of(server.oxbind().args(["--timeout", "5s", "health"]));
    common::stdout_of(server.oxbind().args(["--timeout", "1500ms", "health"]));
    let (code, stderr) =
        failure_of(
            server
                .oxbind()
                .args(["--timeout", "1ns", "curve", "--points", "10000"]),
        );
    assert_ne!(code, Some(0));
    assert!(stderr.contains("--timeout"), "{stderr}");
    assert!(!stderr.contains("CANCELLED"), "{stderr}");
    assert_eq!(stderr.lines().count(), 1, "{stderr}");
}

#[test]
fn a_closed_pipe_ends_the_command_quietly() {
    let server = Server::start();
    let mut child = std::process::Command::new(env!("CARGO_BIN_EXE_oxbind"))
        .env("OXBIND_SERVER", &server.uri)
        .args(["curve", "--points", "10000"])
        .stdout(std::process::Stdio::piped())
        .stderr(std::process::Stdio::piped())
        .spawn()
        .unwrap();
    // Read the first bytes, as `head -c` would, then close the pipe.
    let mut stdout = child.stdout.take().unwrap();
    let mut first = [0u8; 16];
    stdout.read_exact(&mut first).unwrap();
    drop(stdout);
    let mut stderr = String::new();
    child
        .stderr
        .take()
        .unwrap()
        .read_to_string(&mut stderr)
        .unwrap();
    let status = child.wait().unwrap();
    assert!(!stderr.contains("panicked"), "{stderr}");
    assert_eq!(status.code(), Some(0), "{stderr}");
}
