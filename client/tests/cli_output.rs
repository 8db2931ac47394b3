//! What `oxbind` prints and draws (issue 18, findings 9 and 10): units on
//! every number that has one, labels in plain words, the demo's curves
//! labelled without overlap, and no file written unless asked for.

mod common;

use common::{stdout_of, Server};

#[test]
fn oxygenation_ratios_carry_their_unit_in_each_unit_system() {
    let server = Server::start();
    let args = [
        "gas-exchange",
        "--fio2",
        "0.4",
        "--pao2",
        "80",
        "--paco2",
        "40",
    ];
    let si = stdout_of(server.oxbind().args(["--unit-system", "si"]).args(args));
    let conventional = stdout_of(server.oxbind().args(args));
    let row = |table: &str| {
        table
            .lines()
            .find(|l| l.starts_with("PaO2/FiO2 ratio"))
            .unwrap_or_else(|| panic!("no PaO2/FiO2 row: {table}"))
            .to_owned()
    };
    // 80 mm[Hg] / 0.4 = 200 mm[Hg]; in kPa 200 x 0.133322 = 26.7 (UCUM).
    assert!(row(&conventional).ends_with("200 mm[Hg]"), "{conventional}");
    assert!(row(&si).ends_with("26.7 kPa"), "{si}");
    for table in [&si, &conventional] {
        assert!(!table.contains("FIO2"), "FiO2 is spelt FiO2: {table}");
    }
}

#[test]
fn curve_columns_and_p50_rows_say_what_they_are() {
    let server = Server::start();
    let curve = stdout_of(
        server
            .oxbind()
            .args(["curve", "--ph", "7.2", "--points", "3"]),
    );
    assert!(!curve.contains("curve 1"), "{curve}");
    assert!(curve.contains("SO2 standard conditions"), "{curve}");
    assert!(curve.contains("SO2 pH 7.2"), "{curve}");
    let p50 = stdout_of(
        server
            .oxbind()
            .args(["p50", "--pair", "30:0.57", "--ph", "7.3"]),
    );
    let labels: Vec<&str> = p50
        .lines()
        .filter(|l| l.starts_with("P50"))
        .map(|l| l.split("  ").next().unwrap())
        .collect();
    assert_eq!(labels.len(), 4, "{p50}");
    assert_eq!(
        labels
            .iter()
            .filter(|l| l.contains("Hill equation, n 2.7"))
            .count(),
        2,
        "{p50}"
    );
    assert_eq!(
        labels
            .iter()
            .filter(|l| l.contains("curve shift of severinghaus-1979"))
            .count(),
        2,
        "{p50}"
    );
}

#[test]
fn the_demo_speaks_plainly_in_one_unit_system_and_writes_only_what_it_is_asked_to() {
    let server = Server::start();
    let dir = tempfile::tempdir().unwrap();
    let si =
        stdout_of(
            server
                .oxbind()
                .current_dir(dir.path())
                .args(["--unit-system", "si", "demo"]),
        );
    assert_eq!(
        std::fs::read_dir(dir.path()).unwrap().count(),
        0,
        "no file without --svg"
    );
    assert!(!si.contains("mm[Hg]"), "{si}");
    assert!(
        si.contains("temperature 33.2 °C, base excess -2 mmol/L"),
        "{si}"
    );
    assert!(!si.contains(" Cel"), "{si}");
    assert!(!si.contains("BE "), "{si}");
    assert!(si.contains("Larchmere Valley Infirmary"), "{si}");
}

#[test]
fn the_demo_plot_labels_each_p50_with_its_unit_without_overlap() {
    let server = Server::start();
    let dir = tempfile::tempdir().unwrap();
    let svg = dir.path().join("demo.svg");
    stdout_of(
        server
            .oxbind()
            .args(["demo", "--svg", svg.to_str().unwrap()]),
    );
    let text = std::fs::read_to_string(&svg).unwrap();
    let doc = roxmltree::Document::parse(&text).expect("well-formed SVG");
    let labels: Vec<(f64, f64, String)> = doc
        .descendants()
        .filter(|n| n.has_tag_name("text"))
        .filter_map(|n| {
            let content: String = n.descendants().filter_map(|d| d.text()).collect();
            let x = n.attribute("x")?.parse().ok()?;
            let y = n.attribute("y")?.parse().ok()?;
            Some((x, y, content))
        })
        .collect();
    let p50: Vec<&(f64, f64, String)> = labels.iter().filter(|l| l.2.contains("P50")).collect();
    assert_eq!(p50.len(), 5, "one P50 label per curve: {labels:?}");
    for (_, _, label) in &p50 {
        assert!(label.contains("mm[Hg]"), "P50 with its unit: {label}");
    }
    // The labels stand in one column, each on its own line (13 px text).
    for pair in p50.windows(2) {
        assert!((pair[0].0 - pair[1].0).abs() < 1.0, "{p50:?}");
        assert!((pair[0].1 - pair[1].1).abs() >= 13.0, "{p50:?}");
    }
    assert!(
        labels.iter().any(|l| l.2.contains("functional saturation")),
        "the COHb curve is labelled as functional saturation: {labels:?}"
    );
}

#[test]
fn help_says_which_conditions_no_model_honours() {
    let help = stdout_of(common::oxbind().args(["saturation", "--help"]));
    for flag in ["--methb", "--hbf"] {
        let line = help
            .lines()
            .skip_while(|l| !l.contains(flag))
            .take(3)
            .collect::<Vec<_>>()
            .join(" ");
        assert!(line.contains("oxbind models"), "{flag}: {line}");
    }
    let server = Server::start();
    let models = stdout_of(server.oxbind().arg("models"));
    assert!(models.contains("takes into account"), "{models}");
}
