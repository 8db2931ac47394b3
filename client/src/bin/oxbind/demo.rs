//! `oxbind demo`: an invented scenario at a fictional hospital.
//!
//! Every patient, value and place here is invented for demonstration; none
//! is a real person or a real record.

use std::path::PathBuf;

use clap::Args;
use oxbind_client::v1::{
    BloodConditions, BloodGasResults, BloodGasSampleType, CheckBloodGasRequest, ListModelsRequest,
    Model, Quantity, SampleCurveRequest, SaturationFromTensionRequest, ShiftFactorsRequest,
};

use crate::{
    check::{print_findings, sample_names},
    commands::{curve_point_names, describe},
    failure::Failure,
    output::{self, Table},
    plot::{self, Series},
    Context,
};

/// The fictional hospital of the scenario.
pub(crate) const HOSPITAL: &str = "Larchmere Valley Infirmary";

/// The cautions the demo prints before and after its cases.
pub(crate) const CAUTION: &str = "Caution: invented patients at a fictional hospital. \
Oxbind's results are decision support only: they support, and never replace, measured \
co-oximetry and the judgement of licensed clinicians, and local laboratory policy decides \
which values are reported.";

/// Flags of `oxbind demo`.
#[derive(Debug, Clone, Args)]
pub(crate) struct DemoArgs {
    /// Also draw the cases' curves beside the standard one into this SVG file
    /// (nothing is written without it).
    #[arg(long, value_name = "FILE")]
    pub(crate) svg: Option<PathBuf>,
}

/// One invented case.
struct Case {
    label: &'static str,
    /// The legend of its curve in the plot.
    curve_label: &'static str,
    story: &'static str,
    po2: Quantity,
    conditions: BloodConditions,
}

fn cases() -> Vec<Case> {
    vec![
        Case {
            label: "hypothermic after surgery",
            curve_label: "hypothermic after surgery",
            story: "Recovery bay 3: 71-year-old after a long open abdominal operation, core temperature 33.2 °C.",
            po2: Quantity::mm_hg(92.0),
            conditions: BloodConditions::standard()
                .with_ph(7.35)
                .with_base_excess(Quantity::mmol_per_l(-2.0))
                .with_temperature(Quantity::celsius(33.2)),
        },
        Case {
            label: "diabetic ketoacidosis",
            curve_label: "diabetic ketoacidosis",
            story: "Emergency department: 19-year-old in diabetic ketoacidosis, deep rapid breathing.",
            po2: Quantity::mm_hg(104.0),
            conditions: BloodConditions::standard()
                .with_ph(7.08)
                .with_base_excess(Quantity::mmol_per_l(-21.0)),
        },
        Case {
            label: "stored red-cell unit, low 2,3-DPG",
            curve_label: "stored red-cell unit, low 2,3-DPG",
            story: "Blood bank: a red-cell unit late in storage, 2,3-DPG depleted, warmed to 37 °C.",
            po2: Quantity::mm_hg(60.0),
            conditions: BloodConditions::standard()
                .with_ph(7.25)
                .with_base_excess(Quantity::mmol_per_l(-4.0))
                .with_dpg(Quantity::mmol_per_l(1.2)),
        },
        Case {
            label: "smoke inhalation, raised COHb",
            curve_label: "smoke inhalation, COHb 24 % (functional saturation: COHb carries no oxygen)",
            story: "Emergency department: 46-year-old rescued from a house fire, carboxyhaemoglobin 24 %. \
The saturation below is functional, O2Hb / (O2Hb + HHb): the 24 % bound to carbon monoxide \
carries no oxygen, so at most 76 % of the haemoglobin does.",
            po2: Quantity::mm_hg(88.0),
            conditions: BloodConditions::standard()
                .with_ph(7.29)
                .with_base_excess(Quantity::mmol_per_l(-6.0))
                .with_cohb(Quantity::percent(24.0)),
        },
    ]
}

/// One invented sample for the consistency checks.
struct Sample {
    label: &'static str,
    story: &'static str,
    results: BloodGasResults,
}

/// The samples the laboratory checks before release: one with air in the
/// syringe, one venous sample labelled arterial.
fn samples() -> Vec<Sample> {
    vec![
        Sample {
            label: "air in the syringe",
            story: "Ward 6: an arterial sample on room air that waited with an air bubble \
before it reached the analyser. The pulse oximeter read 91 % when it was drawn.",
            results: BloodGasResults {
                po2: Some(Quantity::mm_hg(121.0)),
                pco2: Some(Quantity::mm_hg(31.0)),
                ph: Some(7.47),
                sample_type: BloodGasSampleType::Arterial as i32,
                spo2_fraction: Some(0.91),
                fio2: Some(Quantity::percent(21.0)),
                ..Default::default()
            },
        },
        Sample {
            label: "venous sample labelled arterial",
            story: "Emergency department: labelled arterial, but the needle found a vein. \
SpO2 96 % on 28 % oxygen; the co-oximeter measured 71 %.",
            results: BloodGasResults {
                po2: Some(Quantity::mm_hg(38.0)),
                pco2: Some(Quantity::mm_hg(47.0)),
                ph: Some(7.36),
                sample_type: BloodGasSampleType::Arterial as i32,
                so2_fraction: Some(0.71),
                spo2_fraction: Some(0.96),
                fio2: Some(Quantity::percent(28.0)),
                ..Default::default()
            },
        },
    ]
}

/// The consistency part of the demo: each sample's findings. The saturation
/// calculated from PO2 uses Siggaard-Andersen's 1990 algorithm unless
/// --model names another: it takes the samples' PCO2 into account.
async fn consistency(ctx: &Context) -> Result<(), Failure> {
    let model = if ctx.model == 0 {
        Model::SiggaardAndersen1990 as i32
    } else {
        ctx.model
    };
    output::line(
        "Before release: the laboratory's consistency checks (ConsistencyService). The \
findings support its review; they do not reject results.\n",
    )?;
    for (n, sample) in samples().into_iter().enumerate() {
        output::line(format!(
            "Sample {}: {}\n  {}",
            n + 1,
            sample.label,
            sample.story
        ))?;
        let response = ctx
            .client
            .check_blood_gas(CheckBloodGasRequest {
                sample: Some(sample.results),
                model,
                unit_system: ctx.unit_system,
                ..Default::default()
            })
            .await?;
        print_findings(&response, &sample_names(), false)?;
        output::line("")?;
    }
    Ok(())
}

/// `oxbind demo`.
pub(crate) async fn run(ctx: &Context, a: &DemoArgs) -> Result<(), Failure> {
    // The cases' conditions (pH, base excess, temperature, 2,3-DPG, COHb) are
    // exactly the ones Siggaard-Andersen 1984 honours, so it is the demo's
    // model unless --model names another.
    let model = if ctx.model == 0 {
        Model::SiggaardAndersen1984 as i32
    } else {
        ctx.model
    };
    output::line(format!(
        "Oxbind demonstration: {HOSPITAL} (a fictional hospital)\n{CAUTION}\n"
    ))?;
    let catalog = ctx.client.list_models(ListModelsRequest {}).await?;
    let cases = cases();
    let names = curve_point_names();
    for (n, case) in cases.iter().enumerate() {
        let shift = ctx
            .client
            .shift_factors(ShiftFactorsRequest {
                conditions: Some(case.conditions.clone()),
                model,
                unit_system: ctx.unit_system,
                uncertainty: None,
            })
            .await?;
        let saturation = ctx
            .client
            .saturation_from_tension(SaturationFromTensionRequest {
                po2: Some(case.po2.clone()),
                conditions: Some(case.conditions.clone()),
                model,
                hill: None,
                unit_system: ctx.unit_system,
                uncertainty: None,
            })
            .await?;
        // The PO2 as the server used it, in the answer's unit system.
        let po2 = saturation
            .provenance
            .as_ref()
            .and_then(|p| p.inputs_used.iter().find(|i| i.name == "po2"))
            .and_then(|i| i.value.as_ref())
            .map(output::quantity)
            .unwrap_or_else(|| output::quantity(&case.po2));
        output::line(format!("Case {}: {}\n  {}", n + 1, case.label, case.story))?;
        let mut t = Table::new();
        t.row("conditions", describe(&case.conditions))
            .quantity("P50 at standard conditions", shift.p50_standard.as_ref())
            .quantity("P50 at these conditions", shift.p50_at_conditions.as_ref())
            .row(
                "curve shift",
                format!("{:+.3} log10 units", shift.log10_p50_shift),
            )
            .row(
                format!("functional saturation at PO2 {po2}"),
                output::saturation(saturation.saturation_fraction),
            )
            .provenance(saturation.provenance.as_ref(), &saturation.warnings, &names);
        for w in &shift.warnings {
            if !saturation.warnings.contains(w) {
                t.row(
                    format!("warning ({})", output::severity_name(w.severity)),
                    output::warning_text(w, &names),
                );
            }
        }
        t.print()?;
        output::line("")?;
    }

    consistency(ctx).await?;

    if let Some(path) = &a.svg {
        let mut sets = vec![BloodConditions::standard()];
        sets.extend(cases.iter().map(|c| c.conditions.clone()));
        let curves = ctx
            .client
            .sample_curve(SampleCurveRequest {
                condition_sets: sets,
                model,
                unit_system: ctx.unit_system,
                point_count: 121,
                ..Default::default()
            })
            .await?;
        let labels =
            std::iter::once("standard conditions").chain(cases.iter().map(|c| c.curve_label));
        let series: Vec<Series> = curves
            .curves
            .iter()
            .zip(labels)
            .map(|(c, l)| Series::from_curve(l, c))
            .collect();
        plot::write_svg(path, "Invented cases against the standard curve", &series)
            .map_err(Failure::Other)?;
        output::line(format!(
            "Curves of the {} cases and the standard curve: {}",
            cases.len(),
            path.display()
        ))?;
    } else {
        output::line("Add --svg FILE to draw the cases' curves beside the standard one.")?;
    }
    if !catalog.cautions.is_empty() {
        output::line(format!("\nServer cautions: {}", catalog.cautions))?;
    }
    output::line(format!("\n{CAUTION}"))
}
