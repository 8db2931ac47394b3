//! One function per RPC subcommand: build the request, call, print.

use std::path::PathBuf;

use clap::{Args, ValueEnum};
use oxbind_client::{
    health::health_check_response::ServingStatus,
    service_names,
    v1::{
        BloodConditions, BloodSample, CorrectForTemperatureRequest, CurveSpacing,
        EstimateP50Request, FactorContribution, GasExchangeRequest, ListModelsRequest,
        MeasuredPair, OxygenContentRequest, Quantity, SampleCurveRequest, SampleCurveResponse,
        SaturationFromTensionRequest, ShiftDirection, ShiftFactor, ShiftFactorsRequest,
        TensionFromSaturationRequest,
    },
};

use crate::{
    args::{self, ConditionArgs, HillArgs},
    failure::Failure,
    output::{self, print_json, Table},
    plot::{self, Series},
    Context,
};

fn json_or<M: prost::Message>(
    ctx: &Context,
    message: &M,
    name: &str,
    table: impl FnOnce(&M) -> Table,
) -> Result<(), Failure> {
    if ctx.json {
        print_json(message, name).map_err(Failure::Other)
    } else {
        table(message).print();
        Ok(())
    }
}

/// `oxbind saturation`.
pub(crate) async fn saturation(
    ctx: &Context,
    po2: Quantity,
    conditions: &ConditionArgs,
    hill: &HillArgs,
) -> Result<(), Failure> {
    let response = ctx
        .client
        .saturation_from_tension(SaturationFromTensionRequest {
            po2: Some(po2),
            conditions: Some(conditions.to_conditions()),
            model: ctx.model,
            hill: hill.to_hill(),
            unit_system: ctx.unit_system,
        })
        .await?;
    json_or(
        ctx,
        &response,
        "oxbind.v1.SaturationFromTensionResponse",
        |r| {
            let mut t = Table::new();
            t.row(
                "oxygen saturation",
                output::saturation(r.saturation_fraction),
            )
            .quantity("P50 at conditions", r.p50_at_conditions.as_ref())
            .number("Hill slope at this point", Some(r.hill_slope), 3)
            .provenance(r.provenance.as_ref(), &r.warnings);
            t
        },
    )
}

/// `oxbind tension`.
pub(crate) async fn tension(
    ctx: &Context,
    saturation: f64,
    conditions: &ConditionArgs,
    hill: &HillArgs,
) -> Result<(), Failure> {
    let response = ctx
        .client
        .tension_from_saturation(TensionFromSaturationRequest {
            saturation_fraction: saturation,
            conditions: Some(conditions.to_conditions()),
            model: ctx.model,
            hill: hill.to_hill(),
            unit_system: ctx.unit_system,
        })
        .await?;
    json_or(
        ctx,
        &response,
        "oxbind.v1.TensionFromSaturationResponse",
        |r| {
            let mut t = Table::new();
            t.quantity("oxygen tension", r.po2.as_ref())
                .quantity(
                    "PO2 change per saturation point",
                    r.po2_change_per_percent.as_ref(),
                )
                .quantity("P50 at conditions", r.p50_at_conditions.as_ref())
                .provenance(r.provenance.as_ref(), &r.warnings);
            t
        },
    )
}

/// How the curve's PO2 points are spaced.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub(crate) enum SpacingArg {
    /// Evenly in PO2.
    Linear,
    /// Evenly in log PO2.
    Logarithmic,
}

/// Flags of `oxbind curve`.
#[derive(Debug, Clone, Args)]
pub(crate) struct CurveArgs {
    #[command(flatten)]
    pub(crate) conditions: ConditionArgs,
    #[command(flatten)]
    pub(crate) hill: HillArgs,
    /// Lowest PO2; a bare number is mm[Hg] (server default when absent).
    #[arg(long, value_parser = args::pressure, value_name = "PRESSURE")]
    pub(crate) po2_min: Option<Quantity>,
    /// Highest PO2; a bare number is mm[Hg] (server default when absent).
    #[arg(long, value_parser = args::pressure, value_name = "PRESSURE")]
    pub(crate) po2_max: Option<Quantity>,
    /// Points per curve (server default when absent).
    #[arg(long)]
    pub(crate) points: Option<i32>,
    /// Spacing of the points.
    #[arg(long, value_enum)]
    pub(crate) spacing: Option<SpacingArg>,
    /// Leave out the standard curve when conditions are given.
    #[arg(long)]
    pub(crate) no_standard: bool,
    /// Write an SVG plot of the curves to this file.
    #[arg(long, value_name = "FILE")]
    pub(crate) svg: Option<PathBuf>,
}

/// Ask for curves under each of `condition_sets`.
pub(crate) async fn sample_curves(
    ctx: &Context,
    condition_sets: Vec<BloodConditions>,
    args: &CurveArgs,
) -> Result<SampleCurveResponse, Failure> {
    let spacing = match args.spacing {
        None => CurveSpacing::Unspecified,
        Some(SpacingArg::Linear) => CurveSpacing::Linear,
        Some(SpacingArg::Logarithmic) => CurveSpacing::Logarithmic,
    };
    Ok(ctx
        .client
        .sample_curve(SampleCurveRequest {
            condition_sets,
            model: ctx.model,
            hill: args.hill.to_hill(),
            po2_min: args.po2_min.clone(),
            po2_max: args.po2_max.clone(),
            point_count: args.points.unwrap_or(0),
            unit_system: ctx.unit_system,
            spacing: spacing as i32,
        })
        .await?)
}

/// `oxbind curve`.
pub(crate) async fn curve(ctx: &Context, args: &CurveArgs) -> Result<(), Failure> {
    let patient = args.conditions.to_conditions();
    let mut sets = Vec::new();
    let mut labels = Vec::new();
    if patient.is_standard() || !args.no_standard {
        sets.push(BloodConditions::standard());
        labels.push("standard conditions".to_owned());
    }
    if !patient.is_standard() {
        labels.push(format!("given conditions ({})", describe(&patient)));
        sets.push(patient);
    }
    let response = sample_curves(ctx, sets, args).await?;
    if let Some(path) = &args.svg {
        let series: Vec<Series> = response
            .curves
            .iter()
            .zip(&labels)
            .map(|(c, l)| Series::from_curve(l, c))
            .collect();
        plot::write_svg(path, "Oxygen dissociation curves", &series).map_err(Failure::Other)?;
        eprintln!(
            "oxbind: wrote {} curve(s) to {}",
            series.len(),
            path.display()
        );
    }
    if ctx.json {
        return print_json(&response, "oxbind.v1.SampleCurveResponse").map_err(Failure::Other);
    }
    for (curve, label) in response.curves.iter().zip(&labels) {
        let mut t = Table::new();
        t.row("curve", label.clone())
            .quantity("P50", curve.p50.as_ref())
            .provenance(curve.provenance.as_ref(), &curve.warnings);
        t.print();
    }
    // One PO2 column, one saturation column per curve.
    let unit = response
        .curves
        .first()
        .map(|c| c.po2_unit.clone())
        .unwrap_or_default();
    print!("\n{:>10}", format!("PO2 {unit}"));
    for i in 0..response.curves.len() {
        print!("  {:>12}", format!("SO2 curve {}", i + 1));
    }
    println!();
    let n = response
        .curves
        .iter()
        .map(|c| c.points.len())
        .max()
        .unwrap_or(0);
    for row in 0..n {
        let po2 = response
            .curves
            .iter()
            .find_map(|c| c.points.get(row))
            .map(|p| p.po2);
        print!("{:>10.2}", po2.unwrap_or(f64::NAN));
        for c in &response.curves {
            match c.points.get(row) {
                Some(p) => print!("  {:>12.4}", p.saturation_fraction),
                None => print!("  {:>12}", ""),
            }
        }
        println!();
    }
    Ok(())
}

/// A short description of conditions, e.g. `pH 7.31, PCO2 48 mm[Hg]`.
pub(crate) fn describe(c: &BloodConditions) -> String {
    let mut parts = Vec::new();
    if let Some(ph) = c.ph {
        parts.push(format!("pH {ph}"));
    }
    let named = [
        ("PCO2", &c.pco2),
        ("T", &c.temperature),
        ("DPG", &c.dpg),
        ("BE", &c.base_excess),
        ("COHb", &c.cohb),
        ("MetHb", &c.methb),
        ("HbF", &c.hbf),
    ];
    for (name, q) in named {
        if let Some(q) = q {
            parts.push(format!("{name} {q}"));
        }
    }
    if parts.is_empty() {
        "standard".to_owned()
    } else {
        parts.join(", ")
    }
}

fn direction(raw: i32) -> &'static str {
    match ShiftDirection::try_from(raw) {
        Ok(ShiftDirection::Right) => "right (lower affinity)",
        Ok(ShiftDirection::Left) => "left (higher affinity)",
        Ok(ShiftDirection::None) => "none",
        _ => "unspecified",
    }
}

fn factor_name(c: &FactorContribution) -> String {
    ShiftFactor::try_from(c.factor)
        .map(|f| {
            f.as_str_name()
                .trim_start_matches("SHIFT_FACTOR_")
                .to_lowercase()
        })
        .unwrap_or_else(|_| c.factor.to_string())
}

/// `oxbind shift`.
pub(crate) async fn shift(ctx: &Context, conditions: &ConditionArgs) -> Result<(), Failure> {
    let response = ctx
        .client
        .shift_factors(ShiftFactorsRequest {
            conditions: Some(conditions.to_conditions()),
            model: ctx.model,
            unit_system: ctx.unit_system,
        })
        .await?;
    json_or(ctx, &response, "oxbind.v1.ShiftFactorsResponse", |r| {
        let mut t = Table::new();
        t.quantity("P50 at standard conditions", r.p50_standard.as_ref())
            .quantity("P50 at conditions", r.p50_at_conditions.as_ref())
            .number("log10 P50 shift", Some(r.log10_p50_shift), 4)
            .row("shift", direction(r.direction));
        for c in &r.contributions {
            t.row(
                format!("  from {}", factor_name(c)),
                format!(
                    "{:+.4} log10, {}",
                    c.log10_p50_shift,
                    direction(c.direction)
                ),
            );
        }
        t.number(
            "PO2 factor to standard conditions",
            Some(r.po2_correction_factor),
            4,
        )
        .provenance(r.provenance.as_ref(), &r.warnings);
        t
    })
}

/// `oxbind p50`.
pub(crate) async fn p50(
    ctx: &Context,
    pairs: Vec<(Quantity, f64)>,
    conditions: &ConditionArgs,
) -> Result<(), Failure> {
    let conditions = conditions.to_conditions();
    let response = ctx
        .client
        .estimate_p50(EstimateP50Request {
            pairs: pairs
                .into_iter()
                .map(|(po2, so2)| MeasuredPair {
                    po2: Some(po2),
                    saturation_fraction: so2,
                    conditions: Some(conditions.clone()),
                })
                .collect(),
            unit_system: ctx.unit_system,
            model: ctx.model,
        })
        .await?;
    json_or(ctx, &response, "oxbind.v1.EstimateP50Response", |r| {
        let mut t = Table::new();
        t.quantity("P50 at conditions", r.p50_at_conditions.as_ref())
            .quantity("P50 at standard conditions", r.p50_standard.as_ref())
            .quantity(
                "P50 at conditions (curve shift)",
                r.p50_at_conditions_curve_shift.as_ref(),
            )
            .quantity(
                "P50 at standard (curve shift)",
                r.p50_standard_curve_shift.as_ref(),
            )
            .number("fitted Hill n", r.fitted_hill_n, 3)
            .number("fit RMS (logit)", Some(r.fit_rms_logit), 4)
            .provenance(r.provenance.as_ref(), &r.warnings);
        t
    })
}

/// Flags of `oxbind temperature`.
#[derive(Debug, Clone, Args)]
pub(crate) struct TemperatureArgs {
    /// pH measured at the analyser temperature.
    #[arg(long)]
    ph: Option<f64>,
    /// PCO2 measured; a bare number is mm[Hg].
    #[arg(long, value_parser = args::pressure, value_name = "PRESSURE")]
    pco2: Option<Quantity>,
    /// PO2 measured; a bare number is mm[Hg].
    #[arg(long, value_parser = args::pressure, value_name = "PRESSURE")]
    po2: Option<Quantity>,
    /// Temperature of measurement; a bare number is Cel (default 37 Cel).
    #[arg(long, value_parser = args::temperature, value_name = "TEMPERATURE")]
    measured_temp: Option<Quantity>,
    /// Temperature to correct to (the patient's); a bare number is Cel.
    #[arg(long, value_parser = args::temperature, value_name = "TEMPERATURE")]
    target_temp: Quantity,
}

/// `oxbind temperature`.
pub(crate) async fn temperature(ctx: &Context, a: &TemperatureArgs) -> Result<(), Failure> {
    let response = ctx
        .client
        .correct_for_temperature(CorrectForTemperatureRequest {
            ph: a.ph,
            pco2: a.pco2.clone(),
            po2: a.po2.clone(),
            measured_temperature: a.measured_temp.clone(),
            target_temperature: Some(a.target_temp.clone()),
            unit_system: ctx.unit_system,
        })
        .await?;
    json_or(
        ctx,
        &response,
        "oxbind.v1.CorrectForTemperatureResponse",
        |r| {
            let mut t = Table::new();
            t.row("corrected to", output::quantity(&a.target_temp))
                .number("pH", r.ph, 3)
                .quantity("PCO2", r.pco2.as_ref())
                .quantity("PO2", r.po2.as_ref())
                .provenance(r.provenance.as_ref(), &r.warnings);
            t
        },
    )
}

/// Flags of `oxbind content`.
#[derive(Debug, Clone, Args)]
pub(crate) struct ContentArgs {
    /// Haemoglobin; a bare number is g/dL.
    #[arg(long, value_parser = args::hemoglobin, value_name = "CONCENTRATION")]
    hb: Quantity,
    /// Arterial saturation (`0.97` or `97%`).
    #[arg(long, value_parser = args::saturation, value_name = "FRACTION")]
    sao2: Option<f64>,
    /// Arterial PO2; a bare number is mm[Hg].
    #[arg(long, value_parser = args::pressure, value_name = "PRESSURE")]
    pao2: Option<Quantity>,
    /// Mixed-venous saturation (`0.75` or `75%`).
    #[arg(long, value_parser = args::saturation, value_name = "FRACTION")]
    svo2: Option<f64>,
    /// Mixed-venous PO2; a bare number is mm[Hg].
    #[arg(long, value_parser = args::pressure, value_name = "PRESSURE")]
    pvo2: Option<Quantity>,
    /// Cardiac output; a bare number is L/min.
    #[arg(long, value_parser = args::blood_flow, value_name = "FLOW")]
    cardiac_output: Option<Quantity>,
    /// Oxygen bound per gram of haemoglobin, mL/g (server default when absent).
    #[arg(long)]
    hufner: Option<f64>,
    #[command(flatten)]
    conditions: ConditionArgs,
}

fn sample(
    ctx: &Context,
    so2: Option<f64>,
    po2: Option<&Quantity>,
    conditions: &BloodConditions,
) -> Option<BloodSample> {
    if so2.is_none() && po2.is_none() {
        return None;
    }
    Some(BloodSample {
        saturation_fraction: so2,
        po2: po2.cloned(),
        conditions: Some(conditions.clone()),
        model: ctx.model,
        ..Default::default()
    })
}

/// `oxbind content`.
pub(crate) async fn content(ctx: &Context, a: &ContentArgs) -> Result<(), Failure> {
    let conditions = a.conditions.to_conditions();
    let response = ctx
        .client
        .oxygen_content(OxygenContentRequest {
            hemoglobin: Some(a.hb.clone()),
            arterial: sample(ctx, a.sao2, a.pao2.as_ref(), &conditions),
            venous: sample(ctx, a.svo2, a.pvo2.as_ref(), &conditions),
            cardiac_output: a.cardiac_output.clone(),
            hufner_factor_ml_per_g: a.hufner,
            unit_system: ctx.unit_system,
        })
        .await?;
    json_or(ctx, &response, "oxbind.v1.OxygenContentResponse", |r| {
        let mut t = Table::new();
        t.quantity("arterial oxygen content", r.arterial_content.as_ref())
            .quantity("venous oxygen content", r.venous_content.as_ref())
            .quantity(
                "arteriovenous difference",
                r.arteriovenous_difference.as_ref(),
            )
            .number("extraction fraction", r.extraction_fraction, 3)
            .quantity("oxygen capacity", r.oxygen_capacity.as_ref())
            .quantity("oxygen delivery", r.delivery.as_ref())
            .quantity("oxygen consumption", r.consumption.as_ref())
            .provenance(r.provenance.as_ref(), &r.warnings);
        t
    })
}

/// Flags of `oxbind gas-exchange`.
#[derive(Debug, Clone, Args)]
pub(crate) struct GasExchangeArgs {
    /// Inspired oxygen fraction (`0.5` or `50%`).
    #[arg(long, value_parser = args::fraction_quantity, value_name = "FRACTION")]
    fio2: Quantity,
    /// Arterial PO2; a bare number is mm[Hg].
    #[arg(long, value_parser = args::pressure, value_name = "PRESSURE")]
    pao2: Option<Quantity>,
    /// Arterial PCO2; a bare number is mm[Hg].
    #[arg(long, value_parser = args::pressure, value_name = "PRESSURE")]
    paco2: Option<Quantity>,
    /// Barometric pressure; a bare number is mm[Hg] (default 760).
    #[arg(long, value_parser = args::pressure, value_name = "PRESSURE")]
    barometric: Option<Quantity>,
    /// Respiratory quotient (default 0.8).
    #[arg(long)]
    rq: Option<f64>,
    /// Pulse-oximetry saturation (`0.94` or `94%`).
    #[arg(long, value_parser = args::saturation, value_name = "FRACTION")]
    spo2: Option<f64>,
    /// Mean airway pressure; a bare number is cm[H2O].
    #[arg(long, value_parser = args::airway_pressure, value_name = "PRESSURE")]
    mean_airway_pressure: Option<Quantity>,
    /// Haemoglobin (for shunt); a bare number is g/dL.
    #[arg(long, value_parser = args::hemoglobin, value_name = "CONCENTRATION")]
    hb: Option<Quantity>,
    /// Arterial saturation (for shunt).
    #[arg(long, value_parser = args::saturation, value_name = "FRACTION")]
    sao2: Option<f64>,
    /// Mixed-venous saturation (for shunt).
    #[arg(long, value_parser = args::saturation, value_name = "FRACTION")]
    svo2: Option<f64>,
    /// Body temperature; a bare number is Cel.
    #[arg(long, value_parser = args::temperature, value_name = "TEMPERATURE")]
    body_temp: Option<Quantity>,
}

/// `oxbind gas-exchange`.
pub(crate) async fn gas_exchange(ctx: &Context, a: &GasExchangeArgs) -> Result<(), Failure> {
    let none = BloodConditions::standard();
    let response = ctx
        .client
        .gas_exchange(GasExchangeRequest {
            fio2: Some(a.fio2.clone()),
            barometric_pressure: a.barometric.clone(),
            paco2: a.paco2.clone(),
            pao2: a.pao2.clone(),
            respiratory_quotient: a.rq,
            spo2_fraction: a.spo2,
            mean_airway_pressure: a.mean_airway_pressure.clone(),
            hemoglobin: a.hb.clone(),
            venous: sample(ctx, a.svo2, None, &none),
            arterial: sample(ctx, a.sao2, None, &none),
            body_temperature: a.body_temp.clone(),
            unit_system: ctx.unit_system,
            alveolar_equation: 0,
        })
        .await?;
    json_or(ctx, &response, "oxbind.v1.GasExchangeResponse", |r| {
        let mut t = Table::new();
        t.quantity("alveolar PO2", r.alveolar_po2.as_ref())
            .quantity(
                "alveolar-arterial gradient",
                r.alveolar_arterial_gradient.as_ref(),
            )
            .number("PaO2/FIO2 ratio", r.pao2_fio2_ratio, 0)
            .number("SpO2/FIO2 ratio", r.spo2_fio2_ratio, 0)
            .quantity("PaO2 imputed from SpO2", r.imputed_pao2.as_ref())
            .number("imputed PaO2/FIO2 ratio", r.imputed_pao2_fio2_ratio, 0)
            .number("oxygenation index", r.oxygenation_index, 1)
            .number("oxygen saturation index", r.oxygen_saturation_index, 1)
            .number("shunt fraction", r.shunt_fraction, 3)
            .provenance(r.provenance.as_ref(), &r.warnings);
        t
    })
}

/// `oxbind models`.
pub(crate) async fn models(ctx: &Context) -> Result<(), Failure> {
    let response = ctx.client.list_models(ListModelsRequest {}).await?;
    if ctx.json {
        return print_json(&response, "oxbind.v1.ListModelsResponse").map_err(Failure::Other);
    }
    for model in &response.models {
        let marker = if model.is_default { " (default)" } else { "" };
        println!("{:<24} {}{marker}", model.model_id, model.title);
    }
    if !response.cautions.is_empty() {
        println!("\n{}", response.cautions);
    }
    Ok(())
}

/// `oxbind health`.
pub(crate) async fn health(ctx: &Context) -> Result<(), Failure> {
    let mut all_serving = true;
    let mut rows = Vec::new();
    for name in std::iter::once("").chain(service_names::ALL) {
        let status = ctx.client.health(name).await?;
        all_serving &= status == ServingStatus::Serving;
        rows.push((name, status));
    }
    if ctx.json {
        let map: serde_json::Map<String, serde_json::Value> = rows
            .iter()
            .map(|(n, s)| (n.to_string(), serde_json::Value::from(s.as_str_name())))
            .collect();
        println!("{}", serde_json::Value::Object(map));
    } else {
        for (name, status) in rows {
            let label = if name.is_empty() { "(server)" } else { name };
            println!("{label:<36} {}", status.as_str_name());
        }
    }
    if all_serving {
        Ok(())
    } else {
        Err(Failure::Other("not every service is SERVING".into()))
    }
}
