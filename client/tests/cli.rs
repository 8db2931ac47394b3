//! The `oxbind` command line against a real in-process server: every
//! subcommand once, `--json` output, the CSV batch, the SVG plot, and the
//! exit codes 2 (usage), 3 (refused input), 4 (unavailable) and 5 (a batch
//! with refused rows).

mod common;

use std::path::Path;

use assert_cmd::Command;
use common::{stdout_of, Server};
use serde_json::Value;

fn json_of(output: &std::process::Output) -> Value {
    assert!(
        output.status.success(),
        "{}",
        String::from_utf8_lossy(&output.stderr)
    );
    serde_json::from_slice(&output.stdout).expect("stdout is JSON")
}

#[test]
fn saturation_and_tension_agree_at_p50() {
    // Derived from the definition of P50: tension at SO2 0.5 equals the P50
    // at the same conditions, and saturation at that tension is 0.5.
    let server = Server::start();
    let args = [
        "--ph", "7.31", "--pco2", "48mm[Hg]", "--temp", "38.5Cel", "--json",
    ];
    let tension = json_of(
        &server
            .oxbind()
            .args(["tension", "--saturation", "50%"])
            .args(args)
            .output()
            .unwrap(),
    );
    let po2 = tension["po2"]["value"].as_f64().unwrap();
    let p50 = tension["p50AtConditions"]["value"].as_f64().unwrap();
    assert_eq!(tension["po2"]["unit"], "mm[Hg]");
    assert!((po2 - p50).abs() < 0.05, "{po2} vs {p50}");
    let saturation = json_of(
        &server
            .oxbind()
            .args(["saturation", "--po2", &format!("{po2}mm[Hg]")])
            .args(args)
            .output()
            .unwrap(),
    );
    let so2 = saturation["saturationFraction"].as_f64().unwrap();
    assert!((so2 - 0.5).abs() < 1e-3, "{so2}");
    // protobuf JSON mapping: lowerCamelCase names, enums as names.
    assert!(saturation["provenance"]["modelId"].is_string());
    assert!(saturation["warnings"][0]["code"]
        .as_str()
        .unwrap()
        .starts_with("WARNING_CODE_"));
    // The table form names the same quantity.
    let table = stdout_of(server.oxbind().args(["saturation", "--po2", "10.7kPa"]));
    assert!(table.contains("oxygen saturation"), "{table}");
}

#[test]
fn si_units_are_honoured() {
    let server = Server::start();
    let json = json_of(
        &server
            .oxbind()
            .args([
                "--unit-system",
                "si",
                "tension",
                "--saturation",
                "0.5",
                "--json",
            ])
            .output()
            .unwrap(),
    );
    assert_eq!(json["po2"]["unit"], "kPa");
    // 26.8 mm[Hg] is about 3.57 kPa (1 mm[Hg] = 0.133322 kPa, UCUM); any
    // model's standard P50 lies within 3 to 4.2 kPa (common practice).
    let kpa = json["po2"]["value"].as_f64().unwrap();
    assert!((3.0..4.2).contains(&kpa), "{kpa}");
}

#[test]
fn shift_p50_temperature_content_gas_exchange_models_health() {
    let server = Server::start();
    let shift = json_of(
        &server
            .oxbind()
            .args(["shift", "--ph", "7.2", "--json"])
            .output()
            .unwrap(),
    );
    // Acidosis moves the curve right (Bohr effect, common practice).
    assert_eq!(shift["direction"], "SHIFT_DIRECTION_RIGHT");
    assert!(shift["log10P50Shift"].as_f64().unwrap() > 0.0);
    let table = stdout_of(server.oxbind().args(["shift", "--ph", "7.2"]));
    assert!(table.contains("right"), "{table}");

    let p50 = json_of(
        &server
            .oxbind()
            .args(["p50", "--pair", "26.8:0.5", "--json"])
            .output()
            .unwrap(),
    );
    // One pair at SO2 0.5 under standard conditions: its PO2 is the P50.
    let value = p50["p50AtConditions"]["value"].as_f64().unwrap();
    assert!((value - 26.8).abs() < 0.1, "{value}");

    let corrected = json_of(
        &server
            .oxbind()
            .args([
                "temperature",
                "--ph",
                "7.40",
                "--pco2",
                "40",
                "--po2",
                "90",
                "--target-temp",
                "33Cel",
                "--json",
            ])
            .output()
            .unwrap(),
    );
    // Cooling raises pH and lowers PCO2 and PO2 (common practice).
    assert!(corrected["ph"].as_f64().unwrap() > 7.40);
    assert!(corrected["pco2"]["value"].as_f64().unwrap() < 40.0);
    assert!(corrected["po2"]["value"].as_f64().unwrap() < 90.0);

    let content = json_of(
        &server
            .oxbind()
            .args([
                "content", "--hb", "15g/dL", "--sao2", "1", "--pao2", "100", "--json",
            ])
            .output()
            .unwrap(),
    );
    let cao2 = content["arterialContent"]["value"].as_f64().unwrap();
    // Derived from CaO2 = Hufner x Hb x SaO2 + 0.003 x PaO2 with a Hufner
    // factor between 1.31 and 1.39 mL/g: 19.65 + 0.3 to 20.85 + 0.3 mL/dL.
    assert!((19.9..21.2).contains(&cao2), "{cao2}");
    assert!(stdout_of(
        server
            .oxbind()
            .args(["content", "--hb", "15", "--sao2", "97%", "--pao2", "95"])
    )
    .contains("arterial oxygen content"));

    let gas = json_of(
        &server
            .oxbind()
            .args([
                "gas-exchange",
                "--fio2",
                "0.21",
                "--pao2",
                "90",
                "--paco2",
                "40",
                "--json",
            ])
            .output()
            .unwrap(),
    );
    // Derived from the alveolar gas equation, PAO2 = FiO2 (PB - PH2O) - PaCO2/R
    // = 0.21 x (760 - 47) - 40/0.8 = 99.7 mm[Hg] (a full form adds a small term).
    let pao2_alv = gas["alveolarPo2"]["value"].as_f64().unwrap();
    assert!((pao2_alv - 99.7).abs() < 3.0, "{pao2_alv}");
    let ratio = gas["pao2Fio2Ratio"].as_f64().unwrap();
    assert!((ratio - 90.0 / 0.21).abs() < 0.5, "{ratio}");

    let models = json_of(&server.oxbind().args(["models", "--json"]).output().unwrap());
    // Every model of the contract's `Model` enum (seven since issue 11).
    assert_eq!(models["models"].as_array().unwrap().len(), 7);
    assert!(stdout_of(server.oxbind().arg("models")).contains("severinghaus-1979"));

    let health = stdout_of(server.oxbind().arg("health"));
    // The server and its four v1 services.
    assert_eq!(health.matches("SERVING").count(), 5, "{health}");
}

fn series_in(svg: &Path) -> usize {
    let text = std::fs::read_to_string(svg).unwrap();
    let doc = roxmltree::Document::parse(&text).expect("the SVG is well-formed XML");
    // Each curve is one polyline drawn 2 px wide; axes and ticks are 1 px.
    doc.descendants()
        .filter(|n| n.has_tag_name("polyline") && n.attribute("stroke-width") == Some("2"))
        .count()
}

#[test]
fn curve_svg_has_one_series_per_curve() {
    let server = Server::start();
    let dir = tempfile::tempdir().unwrap();
    let both = dir.path().join("both.svg");
    let table = stdout_of(server.oxbind().args([
        "curve",
        "--ph",
        "7.2",
        "--points",
        "41",
        "--svg",
        both.to_str().unwrap(),
    ]));
    assert!(table.contains("standard conditions"), "{table}");
    assert_eq!(series_in(&both), 2, "standard + given conditions");
    let text = std::fs::read_to_string(&both).unwrap();
    assert!(
        text.contains("PO2 (mm[Hg])") && text.contains("SO2 (%)"),
        "axes name units"
    );
    assert_eq!(text.matches("P50 ").count(), 2, "each P50 marked");

    let one = dir.path().join("one.svg");
    stdout_of(server.oxbind().args([
        "curve",
        "--ph",
        "7.2",
        "--no-standard",
        "--svg",
        one.to_str().unwrap(),
    ]));
    assert_eq!(series_in(&one), 1);

    let json = json_of(
        &server
            .oxbind()
            .args(["curve", "--points", "11", "--json"])
            .output()
            .unwrap(),
    );
    let points = json["curves"][0]["points"].as_array().unwrap();
    assert_eq!(points.len(), 11);
}

#[test]
fn batch_csv_gives_one_row_per_input_with_errors() {
    let server = Server::start();
    let dir = tempfile::tempdir().unwrap();
    let input = dir.path().join("rows.csv");
    let output = dir.path().join("results.csv");
    // Invented rows. Row 2 cannot be read, row 4 has an impossible pH.
    std::fs::write(
        &input,
        "id,po2,ph,pco2,temperature\n\
         A-1,80,7.40,40,37\n\
         A-2,abc,7.40,,\n\
         A-3,10.7kPa,7.31,48mm[Hg],38.5Cel\n\
         A-4,90,9.9,,\n\
         A-5,26.8,,,\n",
    )
    .unwrap();
    let run = server
        .oxbind()
        .args(["batch", "--chunk-size", "2", "--input"])
        .arg(&input)
        .arg("--output")
        .arg(&output)
        .output()
        .unwrap();
    // Two rows refused: every row is written, and the run says so.
    assert_eq!(
        run.status.code(),
        Some(5),
        "{}",
        String::from_utf8_lossy(&run.stderr)
    );
    let summary = String::from_utf8_lossy(&run.stderr);
    assert!(
        summary.contains("5 rows: 3 computed, 2 refused"),
        "{summary}"
    );

    let mut reader = csv::Reader::from_path(&output).unwrap();
    let headers = reader.headers().unwrap().clone();
    let col = |name: &str| headers.iter().position(|h| h == name).unwrap();
    let rows: Vec<csv::StringRecord> = reader.records().map(Result::unwrap).collect();
    assert_eq!(rows.len(), 5);
    let ids: Vec<&str> = rows.iter().map(|r| &r[col("id")]).collect();
    assert_eq!(ids, ["A-1", "A-2", "A-3", "A-4", "A-5"]);
    for i in [0, 2, 4] {
        assert_eq!(&rows[i][col("error")], "", "row {}", i + 1);
        let so2: f64 = rows[i][col("saturation_fraction")].parse().unwrap();
        assert!(so2 > 0.0 && so2 < 1.0);
    }
    // Row 5 is at the standard P50: saturation 0.5 within the model's
    // difference from 26.8 mm[Hg] (derived from the definition of P50).
    let so2: f64 = rows[4][col("saturation_fraction")].parse().unwrap();
    assert!((so2 - 0.5).abs() < 0.01, "{so2}");
    assert!(rows[1][col("error")].contains("po2"), "{:?}", &rows[1]);
    assert_eq!(&rows[3][col("error_reasons")], "PH_OUT_OF_RANGE");
    assert!(rows[3][col("error")].starts_with("ph "), "{:?}", &rows[3]);
}

#[test]
fn demo_prints_the_cases_and_writes_their_curves() {
    let server = Server::start();
    let dir = tempfile::tempdir().unwrap();
    let svg = dir.path().join("demo.svg");
    let out = stdout_of(
        server
            .oxbind()
            .args(["demo", "--svg", svg.to_str().unwrap()]),
    );
    for case in [
        "hypothermic",
        "ketoacidosis",
        "2,3-DPG",
        "COHb",
        "decision support",
    ] {
        assert!(out.contains(case), "demo output lacks {case}");
    }
    assert_eq!(series_in(&svg), 5, "four cases beside the standard curve");
}

#[test]
fn completions_are_printed_for_each_shell() {
    for shell in ["bash", "zsh", "fish"] {
        let out = stdout_of(
            Command::cargo_bin("oxbind")
                .unwrap()
                .args(["completions", shell]),
        );
        assert!(out.contains("gas-exchange"), "{shell}");
    }
}

#[test]
fn exit_codes_say_what_went_wrong() {
    let server = Server::start();
    // 2: usage error (missing required flag; unknown model).
    server.oxbind().arg("saturation").assert().code(2);
    server
        .oxbind()
        .args(["--model", "nonesuch", "saturation", "--po2", "80"])
        .assert()
        .code(2);
    // 3: refused by the server, field named on standard error.
    let refused = server
        .oxbind()
        .args(["saturation", "--po2", "-5"])
        .output()
        .unwrap();
    assert_eq!(refused.status.code(), Some(3));
    let stderr = String::from_utf8_lossy(&refused.stderr);
    assert!(stderr.starts_with("oxbind: --po2 "), "{stderr}");
    // 4: nothing listening.
    let port = {
        let l = std::net::TcpListener::bind("127.0.0.1:0").unwrap();
        l.local_addr().unwrap().port()
    };
    Command::cargo_bin("oxbind")
        .unwrap()
        .args(["--server", &format!("http://127.0.0.1:{port}"), "health"])
        .assert()
        .code(4);
}
