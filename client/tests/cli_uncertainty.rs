//! The uncertainty flags of the `oxbind` command line against a real
//! in-process server: a figure per input named by its flag, profile sets,
//! Monte Carlo with a seed, the curve's band, and refusals naming the flag
//! the user typed.

mod common;

use common::Server;
use serde_json::Value;

fn json_of(output: &std::process::Output) -> Value {
    assert!(
        output.status.success(),
        "{}",
        String::from_utf8_lossy(&output.stderr)
    );
    serde_json::from_slice(&output.stdout).expect("stdout is JSON")
}

/// dS/dP of Severinghaus 1979 Eq. 1 (J Appl Physiol 1979;46:599-602),
/// S = q/(q + 23400), q = P³ + 150P: 23400 (3P² + 150)/(q + 23400)².
fn severinghaus_slope(p: f64) -> f64 {
    let q = p * p * p + 150.0 * p;
    23_400.0 * (3.0 * p * p + 150.0) / ((q + 23_400.0) * (q + 23_400.0))
}

#[test]
fn a_figure_per_input_reaches_the_server_as_written() {
    let server = Server::start();
    let out = json_of(
        &server
            .oxbind()
            .args([
                "saturation",
                "--po2",
                "7.5kPa",
                "--u",
                "po2=0.4kPa",
                "--json",
            ])
            .output()
            .unwrap(),
    );
    let result = &out["uncertainties"][0];
    assert_eq!(result["value"], "saturation_fraction");
    assert_eq!(result["method"], "UNCERTAINTY_METHOD_FIRST_ORDER");
    assert_eq!(result["budget"][0]["field"], "po2");
    // 7.5 kPa and 0.4 kPa in mm[Hg] (133.322387415 Pa each, methods.md
    // section 13).
    let mmhg = 0.133_322_387_415;
    let expected = severinghaus_slope(7.5 / mmhg) * 0.4 / mmhg;
    let u = result["standardUncertainty"]["value"].as_f64().unwrap();
    assert!((u - expected).abs() < 1e-9 * expected, "{u} vs {expected}");

    // A fraction: `3%` is three percentage points, the same as 0.03.
    let gas = |figure: &str| {
        json_of(
            &server
                .oxbind()
                .args(["gas-exchange", "--fio2", "0.4", "--spo2", "0.92"])
                .args(["--u", figure, "--json"])
                .output()
                .unwrap(),
        )
    };
    let points = gas("spo2=3%");
    let fraction = gas("spo2=0.03");
    assert_eq!(
        points["uncertainties"][0]["standardUncertainty"],
        fraction["uncertainties"][0]["standardUncertainty"]
    );
    assert_eq!(
        points["uncertainties"][0]["budget"][0]["field"],
        "spo2_fraction"
    );
}

#[test]
fn monte_carlo_with_a_seed_is_repeatable_and_shown_in_the_table() {
    let server = Server::start();
    let args = [
        "gas-exchange",
        "--fio2",
        "21%",
        "--spo2",
        "94%",
        "--u",
        "spo2=3%",
        "--uncertainty-method",
        "monte-carlo",
        "--draws",
        "20000",
        "--seed",
        "-7",
    ];
    let run = || json_of(&server.oxbind().args(args).arg("--json").output().unwrap());
    let (first, again) = (run(), run());
    assert_eq!(first["uncertainties"], again["uncertainties"]);
    assert_eq!(first["uncertainties"][0]["monteCarlo"]["seed"], "-7");
    let table = common::stdout_of(server.oxbind().args(args));
    assert!(
        table.contains("uncertainty of PaO2 imputed from SpO2"),
        "{table}"
    );
    assert!(table.contains("Monte Carlo"), "{table}");
    assert!(table.contains("20000 draws, seed -7"), "{table}");
    assert!(table.contains("from --spo2"), "{table}");
    assert!(table.contains("strongly asymmetric"), "{table}");
}

#[test]
fn profile_sets_and_bounds_are_spelt_as_documented() {
    let server = Server::start();
    let out = json_of(
        &server
            .oxbind()
            .args([
                "gas-exchange",
                "--fio2",
                "0.5",
                "--pao2",
                "110",
                "--paco2",
                "40",
            ])
            .args([
                "--uncertainty",
                "clia-2024",
                "--u",
                "fio2=2%@rect",
                "--json",
            ])
            .output()
            .unwrap(),
    );
    let alveolar = &out["uncertainties"][0];
    assert_eq!(alveolar["value"], "alveolar_po2");
    let line = |field: &str| {
        alveolar["budget"]
            .as_array()
            .unwrap()
            .iter()
            .find(|l| l["field"] == field)
            .cloned()
            .unwrap()
    };
    assert_eq!(line("paco2")["profileId"], "clia-2024-pco2");
    assert_eq!(
        line("fio2")["distribution"],
        "INPUT_DISTRIBUTION_RECTANGULAR"
    );
    // ± 2 points, rectangular: u = 0.02/√3 (GUM 4.3.7).
    let u = line("fio2")["standardUncertainty"]["value"]
        .as_f64()
        .unwrap();
    assert!((u - 0.02 / 3f64.sqrt()).abs() < 1e-12);
}

#[test]
fn the_curve_draws_a_band() {
    let server = Server::start();
    let dir = tempfile::tempdir().unwrap();
    let svg = dir.path().join("band.svg");
    let output = server
        .oxbind()
        .args([
            "curve",
            "--points",
            "5",
            "--po2-min",
            "20",
            "--po2-max",
            "100",
        ])
        .args(["--u", "po2=3mm[Hg]", "--svg"])
        .arg(&svg)
        .output()
        .unwrap();
    assert!(
        output.status.success(),
        "{}",
        String::from_utf8_lossy(&output.stderr)
    );
    let table = String::from_utf8(output.stdout).unwrap();
    assert!(table.contains("low"), "{table}");
    // At 60 mm[Hg] the first-order band is S ± 1.96 u(S), u(S) = dS/dP × 3.
    let row = table
        .lines()
        .find(|l| l.trim_start().starts_with("60.00"))
        .expect("a row at 60 mm[Hg]");
    let cells: Vec<f64> = row.split_whitespace().map(|c| c.parse().unwrap()).collect();
    let half = 1.959_964 * severinghaus_slope(60.0) * 3.0;
    assert!((cells[1] - cells[2] - half).abs() < 1e-4, "{row}");
    assert!((cells[3] - cells[1] - half).abs() < 1e-4, "{row}");
    let drawing = std::fs::read_to_string(&svg).unwrap();
    assert!(drawing.contains("<polygon"), "the band is shaded");

    let json = json_of(
        &server
            .oxbind()
            .args(["curve", "--points", "3", "--u", "po2=3mm[Hg]", "--json"])
            .output()
            .unwrap(),
    );
    assert_eq!(json["bands"][0]["points"].as_array().unwrap().len(), 3);
    assert!(json["sampleCurve"]["curves"][0]["p50"].is_object());
}

#[test]
fn bad_figures_are_refused_naming_the_flag() {
    let server = Server::start();
    let refused = |args: &[&str], code: i32, needle: &str| {
        let output = server.oxbind().args(args).output().unwrap();
        assert_eq!(output.status.code(), Some(code), "{args:?}");
        let stderr = String::from_utf8_lossy(&output.stderr);
        assert!(stderr.contains(needle), "{args:?}: {stderr}");
    };
    // A figure's unit is never guessed.
    refused(
        &["saturation", "--po2", "60", "--u", "po2=3"],
        2,
        "never guessed",
    );
    // A bare fraction above 1 is refused with the per cent spelling.
    refused(
        &[
            "gas-exchange",
            "--fio2",
            "0.4",
            "--spo2",
            "0.9",
            "--u",
            "spo2=3",
        ],
        2,
        "`3%`",
    );
    refused(
        &["saturation", "--po2", "60", "--u", "pao2=3mm[Hg]"],
        2,
        "no input --pao2",
    );
    // Refused by the server: named as typed.
    refused(
        &["saturation", "--po2", "60", "--u", "po2=-3mm[Hg]"],
        3,
        "--u po2=-3mm[Hg] must lie in",
    );
    refused(
        &[
            "saturation",
            "--po2",
            "60",
            "--u",
            "po2=3mm[Hg]",
            "--seed",
            "4",
        ],
        3,
        "--seed: applies to --uncertainty-method monte-carlo only",
    );
    refused(
        &["saturation", "--po2", "60", "--uncertainty", "nonesuch"],
        3,
        "--uncertainty nonesuch",
    );
    refused(
        &[
            "saturation",
            "--po2",
            "60",
            "--u",
            "po2=3mm[Hg]",
            "--uncertainty-method",
            "monte-carlo",
            "--draws",
            "5000000",
        ],
        3,
        "--draws must lie in [10000, 1000000]",
    );
}
