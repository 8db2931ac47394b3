//! `oxbind check` against a real in-process server (issue 14): one sample
//! from flags (table and JSON), its refusals named by flag, the CSV mode by
//! the rules of `oxbind batch` (documented columns in any case, units
//! declared in headers, `--carry`, unknown column exit 2, refused rows exit
//! 5), and the demo's two samples. The samples are invented cases of the
//! fictional Larchmere Valley Infirmary.

mod common;

use std::path::Path;

use common::{closed_address, failure_of, json_of, oxbind, stdout_of, Csv, Server};

/// Case LV-4102 as flags: a normal arterial sample with every result.
const NORMAL: [&str; 36] = [
    "--po2",
    "94",
    "--pco2",
    "39",
    "--ph",
    "7.41",
    "--temp",
    "36.8",
    "--sample-type",
    "arterial",
    "--so2",
    "96.8%",
    "--cohb",
    "1.2%",
    "--methb",
    "0.6%",
    "--hb",
    "13.9",
    "--spo2",
    "97%",
    "--fio2",
    "21%",
    "--barometric",
    "752",
    "--bicarbonate",
    "25.4",
    "--bicarbonate-source",
    "measured-total-co2",
    "--wbc",
    "7.8",
    "--ph-37",
    "7.41",
    "--pco2-37",
    "39",
    "--po2-37",
    "94",
];

/// Case LV-4117 as flags: air in the syringe.
const AIR: [&str; 12] = [
    "--po2",
    "121",
    "--pco2",
    "31",
    "--ph",
    "7.47",
    "--sample-type",
    "arterial",
    "--spo2",
    "0.91",
    "--fio2",
    "0.21",
];

#[test]
fn a_normal_sample_prints_every_check_and_no_discordant_one() {
    let server = Server::start();
    let out = stdout_of(server.oxbind().arg("check").args(NORMAL));
    for check in [
        "measured against calculated saturation",
        "pulse oximeter against co-oximeter",
        "carbon monoxide saturation gap",
        "PO2 above alveolar PO2",
        "room-air exposure",
        "venous pattern, labelled arterial",
        "pH, PCO2 and bicarbonate",
        "temperature correction of pH",
        "temperature correction of PCO2",
        "temperature correction of PO2",
        "white-cell oxygen consumption",
    ] {
        let line = out
            .lines()
            .find(|l| l.starts_with(check))
            .unwrap_or_else(|| panic!("no line for {check}: {out}"));
        assert!(line.contains("consistent: "), "{line}");
    }
    assert!(out.contains("0 of 11 checks discordant"), "{out}");
    assert!(out.contains("do not reject results"), "{out}");
    assert!(!out.contains(" Cel"), "temperatures in plain words: {out}");
}

#[test]
fn a_discordant_sample_is_a_success_with_its_causes_and_json_carries_the_findings() {
    let server = Server::start();
    let out = stdout_of(server.oxbind().arg("check").args(AIR));
    assert!(out.contains("Discordant: room-air exposure"), "{out}");
    assert!(out.contains("causes to consider"), "{out}");
    assert!(out.contains("Baird G"), "{out}");
    let json = json_of(server.oxbind().args(["--json", "check"]).args(AIR));
    let findings = json["findings"].as_array().unwrap();
    assert_eq!(findings.len(), 11);
    let room_air = &findings[4];
    assert_eq!(room_air["check"], "CONSISTENCY_CHECK_ROOM_AIR_EXPOSURE");
    assert_eq!(room_air["verdict"], "CONSISTENCY_VERDICT_DISCORDANT");
    assert_eq!(json["discordantCount"], 1);
}

#[test]
fn figures_and_the_rule_come_from_flags_and_refusals_name_the_flags() {
    let server = Server::start();
    // The figures are spelt as on every other command: --u names an input by
    // its own flag, --uncertainty a profile set.
    let json = json_of(
        server
            .oxbind()
            .args(["--json", "check"])
            .args(AIR)
            .args(["--threshold-rule", "uncertainty-based"])
            .args(["--u", "spo2=2%", "--u", "po2=clia-2024-po2"])
            .args(["--u", "fio2=2%@rect"])
            .args(["--uncertainty", "analytical-goal-harding-fraser-1987"])
            .args(["--no-built-in-figures"]),
    );
    let components = json["findings"][4]["uncertainty"]["components"]
        .as_array()
        .unwrap();
    let spo2 = components
        .iter()
        .find(|c| c["name"] == "sample.spo2_fraction")
        .unwrap();
    assert_eq!(spo2["source"], "stated in the request");
    assert_eq!(spo2["origin"], "FIGURE_ORIGIN_STATED");
    assert_eq!(spo2["inputStandardUncertainty"]["value"], 0.02);
    let alveolar = json["findings"][3]["uncertainty"]["components"]
        .as_array()
        .unwrap();
    let named = |name: &str| {
        alveolar
            .iter()
            .find(|c| c["name"] == name)
            .unwrap_or_else(|| panic!("{name} in {alveolar:?}"))
    };
    assert_eq!(named("sample.po2")["profileId"], "clia-2024-po2");
    assert_eq!(
        named("sample.pco2")["profileId"],
        "analytical-goal-harding-fraser-1987-pco2"
    );
    // ±2 percentage points, rectangular: u = 0.02/√3 (JCGM 100:2008 4.3.7).
    let u = named("sample.fio2")["inputStandardUncertainty"]["value"]
        .as_f64()
        .unwrap();
    assert!((u - 0.02 / 3f64.sqrt()).abs() < 1e-12, "{u}");
    let (code, stderr) = failure_of(server.oxbind().arg("check").args(AIR).args([
        "--u",
        "ph=clia-2024-po2",
        "--coverage",
        "0.999",
    ]));
    assert_eq!(code, Some(3), "{stderr}");
    assert!(stderr.contains("--u ph=clia-2024-po2"), "{stderr}");
    assert!(stderr.contains("--coverage"), "{stderr}");
    // A figure's unit is never guessed.
    let (code, stderr) = failure_of(
        server
            .oxbind()
            .arg("check")
            .args(AIR)
            .args(["--u", "po2=3"]),
    );
    assert_eq!(code, Some(2), "{stderr}");
    assert!(stderr.contains("never guessed"), "{stderr}");
    let (code, stderr) = failure_of(
        server
            .oxbind()
            .args(["check", "--po2", "80", "--ph", "9.1"]),
    );
    assert_eq!(code, Some(3), "{stderr}");
    assert!(stderr.contains("--ph must lie in [6, 8.5]"), "{stderr}");
    // A bicarbonate needs its source, on the command line already.
    let (code, _) =
        failure_of(
            server
                .oxbind()
                .args(["check", "--po2", "80", "--bicarbonate", "24"]),
        );
    assert_eq!(code, Some(2));
}

fn run_csv(server: &Server, dir: &Path, input: &str, extra: &[&str]) -> (Option<i32>, Csv, String) {
    let path = dir.join("samples.csv");
    std::fs::write(&path, input).unwrap();
    let output = server
        .oxbind()
        .current_dir(dir)
        .args(["check", "--input", "samples.csv", "--output", "-"])
        .args(extra)
        .output()
        .unwrap();
    let stderr = String::from_utf8_lossy(&output.stderr).into_owned();
    let stdout = String::from_utf8(output.stdout).unwrap();
    assert!(!stdout.is_empty(), "no CSV on standard output: {stderr}");
    (output.status.code(), Csv::parse(&stdout), stderr)
}

#[test]
fn a_csv_of_samples_gives_one_row_of_findings_per_sample() {
    let server = Server::start();
    let dir = tempfile::tempdir().unwrap();
    let input = "\
ID,Bed,PO2 (kPa),PCO2,pH,Sample_Type,SpO2 (%),FiO2,so2,WBC (10*3/uL)
LV-4117,6,16.13,31,7.47,ARTERIAL,91,21%,,
LV-4130,ED2,5.07,47,7.36,arterial,96,28%,0.71,9.1
LV-4141,ED3,-2,40,7.4,arterial,95,21%,,
LV-4150,ED4,12,40,7.4,arteriol,95,21%,,
";
    let (code, csv, stderr) = run_csv(&server, dir.path(), input, &["--carry", "bed"]);
    assert_eq!(code, Some(5), "rows were refused: {stderr}");
    assert!(
        stderr.contains("4 rows: 2 checked (2 with a discordant finding), 2 refused"),
        "{stderr}"
    );
    assert_eq!(&csv.headers[..3], ["row", "ID", "Bed"]);
    assert!(csv
        .headers
        .contains(&"above_alveolar_statistic (mm[Hg])".to_owned()));
    assert_eq!(csv.cell(0, "ID"), "LV-4117");
    assert_eq!(csv.cell(0, "room_air_exposure"), "discordant");
    assert_eq!(csv.cell(0, "discordant"), "room_air_exposure");
    assert!(
        csv.number(0, "room_air_exposure_statistic (1)")
            > csv.number(0, "room_air_exposure_threshold (1)")
    );
    assert_eq!(csv.cell(1, "venous_pattern"), "discordant");
    assert_eq!(csv.cell(1, "white_cell_consumption"), "consistent");
    assert!(csv.cell(1, "not_evaluable").contains("acid_base"));
    // A refused row names the column as the header does.
    assert_eq!(csv.cell(2, "error_reasons"), "PRESSURE_OUT_OF_RANGE");
    assert!(
        csv.cell(2, "error").starts_with("PO2 (kPa) must lie in"),
        "{:?}",
        csv.rows[2]
    );
    // An unknown word is the row's own error, read before anything is sent.
    assert_eq!(csv.cell(3, "error_reasons"), "UNKNOWN_WORD");
    assert!(
        csv.cell(3, "error").contains("arterial, venous"),
        "{:?}",
        csv.rows[3]
    );
}

#[test]
fn an_unknown_column_stops_the_run_before_anything_is_sent() {
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(
        dir.path().join("samples.csv"),
        "id,po2,ph,spo3\nA,80,7.4,0.9\n",
    )
    .unwrap();
    let (code, stderr) = failure_of(
        oxbind()
            .current_dir(dir.path())
            .args(["--server", &closed_address()])
            .args(["check", "--input", "samples.csv", "--output", "out.csv"]),
    );
    assert_eq!(code, Some(2), "{stderr}");
    assert!(stderr.contains("`spo3`"), "{stderr}");
    assert!(stderr.contains("spo2 (or spo2_fraction)"), "{stderr}");
    assert!(stderr.contains("--carry"), "{stderr}");
    // The sample flags and --input do not mix.
    let (code, stderr) = failure_of(oxbind().args([
        "check",
        "--input",
        "samples.csv",
        "--output",
        "-",
        "--po2",
        "80",
    ]));
    assert_eq!(code, Some(2), "{stderr}");
}

#[test]
fn the_demo_shows_air_in_a_syringe_and_a_venous_sample_labelled_arterial() {
    let server = Server::start();
    let out = stdout_of(server.oxbind().arg("demo"));
    assert!(out.contains("Sample 1: air in the syringe"), "{out}");
    assert!(
        out.contains("Sample 2: venous sample labelled arterial"),
        "{out}"
    );
    let discordant: Vec<&str> = out
        .lines()
        .filter(|l| l.starts_with("Discordant: "))
        .collect();
    assert_eq!(
        discordant,
        [
            "Discordant: room-air exposure",
            "Discordant: pulse oximeter against co-oximeter",
            "Discordant: venous pattern, labelled arterial",
        ]
    );
    assert!(out.contains("Larchmere Valley Infirmary"));
}
