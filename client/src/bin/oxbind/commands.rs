//! One function per RPC subcommand: build the request from exactly the
//! flags given (nothing empty is sent), call, print; and for each, how its
//! flags name the request's fields.

use std::path::PathBuf;

use clap::{Args, ValueEnum};
use oxbind_client::{
    health::health_check_response::ServingStatus,
    service_names,
    v1::{
        AlveolarEquation, BloodConditions, CorrectForTemperatureRequest, CurveSpacing,
        EstimateP50Request, GasExchangeRequest, ListModelsRequest, MeasuredPair,
        OxygenContentRequest, Quantity, SampleCurveRequest, SampleCurveResponse,
        SaturationFromTensionRequest, ShiftDirection, ShiftFactorsRequest,
        TensionFromSaturationRequest,
    },
};

use crate::{
    args::{self, ArterialArgs, ConditionArgs, HillArgs, VenousArgs},
    failure::Failure,
    fields::FieldNames,
    output::{self, print_json, Table},
    plot::{self, Series},
    uncertainty::UncertaintyArgs,
    Context,
};

fn json_or<M: prost::Message>(
    ctx: &Context,
    message: &M,
    name: &str,
    table: impl FnOnce(&M) -> Table,
) -> Result<(), Failure> {
    if ctx.json {
        print_json(message, name)
    } else {
        table(message).print()
    }
}

/// Flags of `oxbind saturation`.
#[derive(Debug, Clone, Args)]
pub(crate) struct SaturationArgs {
    /// PO2; a bare number is mm[Hg].
    #[arg(long, value_parser = args::pressure, value_name = "PRESSURE")]
    po2: Quantity,
    #[command(flatten)]
    conditions: ConditionArgs,
    #[command(flatten)]
    pub(crate) hill: HillArgs,
    #[command(flatten)]
    pub(crate) uncertainty: UncertaintyArgs,
}

/// How `saturation`, `tension` and `shift` name their fields.
pub(crate) fn curve_point_names() -> FieldNames {
    FieldNames::new()
        .with("po2", "--po2")
        .with("saturation_fraction", "--saturation")
        .with_conditions("conditions", "")
        .with_hill("hill")
}

/// `oxbind saturation`.
pub(crate) async fn saturation(ctx: &Context, a: &SaturationArgs) -> Result<(), Failure> {
    let names = a.uncertainty.names(curve_point_names());
    let response = ctx
        .client
        .saturation_from_tension(SaturationFromTensionRequest {
            po2: Some(a.po2.clone()),
            conditions: a.conditions.to_conditions(),
            model: ctx.model,
            hill: a.hill.to_hill(),
            unit_system: ctx.unit_system,
            uncertainty: a.uncertainty.to_request(&names)?,
        })
        .await?;
    json_or(
        ctx,
        &response,
        "oxbind.v1.SaturationFromTensionResponse",
        |r| {
            let mut t = Table::new();
            t.hill_preset(a.hill.hill_preset.map(|p| p.name()))
                .row(
                    "oxygen saturation (functional)",
                    output::saturation(r.saturation_fraction),
                )
                .quantity("P50 at these conditions", r.p50_at_conditions.as_ref())
                .number("Hill slope at this point", Some(r.hill_slope), 3)
                .provenance(r.provenance.as_ref(), &r.warnings, &names)
                .uncertainties(&r.uncertainties, &names);
            t
        },
    )
}

/// Flags of `oxbind tension`.
#[derive(Debug, Clone, Args)]
pub(crate) struct TensionArgs {
    /// Functional saturation: a fraction (`0.93`) or per cent (`93%`).
    #[arg(long, value_parser = args::saturation, value_name = "FRACTION")]
    saturation: f64,
    #[command(flatten)]
    conditions: ConditionArgs,
    #[command(flatten)]
    pub(crate) hill: HillArgs,
    #[command(flatten)]
    pub(crate) uncertainty: UncertaintyArgs,
}

/// `oxbind tension`.
pub(crate) async fn tension(ctx: &Context, a: &TensionArgs) -> Result<(), Failure> {
    let names = a.uncertainty.names(curve_point_names());
    let response = ctx
        .client
        .tension_from_saturation(TensionFromSaturationRequest {
            saturation_fraction: a.saturation,
            conditions: a.conditions.to_conditions(),
            model: ctx.model,
            hill: a.hill.to_hill(),
            unit_system: ctx.unit_system,
            uncertainty: a.uncertainty.to_request(&names)?,
        })
        .await?;
    json_or(
        ctx,
        &response,
        "oxbind.v1.TensionFromSaturationResponse",
        |r| {
            let mut t = Table::new();
            t.hill_preset(a.hill.hill_preset.map(|p| p.name()))
                .quantity("oxygen tension", r.po2.as_ref())
                .quantity(
                    "PO2 change per saturation point",
                    r.po2_change_per_percent.as_ref(),
                )
                .quantity("P50 at these conditions", r.p50_at_conditions.as_ref())
                .provenance(r.provenance.as_ref(), &r.warnings, &names)
                .uncertainties(&r.uncertainties, &names);
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
    /// Lowest PO2; a bare number is mm[Hg] (server default when absent).
    #[arg(long, value_parser = args::pressure, value_name = "PRESSURE")]
    pub(crate) po2_min: Option<Quantity>,
    /// Highest PO2; a bare number is mm[Hg] (server default when absent).
    #[arg(long, value_parser = args::pressure, value_name = "PRESSURE")]
    pub(crate) po2_max: Option<Quantity>,
    /// Points per curve (server default when absent).
    #[arg(long)]
    pub(crate) points: Option<i32>,
    /// Spacing of the points (server default linear).
    #[arg(long, value_enum)]
    pub(crate) spacing: Option<SpacingArg>,
    /// Leave out the standard curve when conditions are given.
    #[arg(long)]
    pub(crate) no_standard: bool,
    /// Write an SVG plot of the curves to this file (with the uncertainty
    /// flags, each curve's coverage band shaded).
    #[arg(long, value_name = "FILE")]
    pub(crate) svg: Option<PathBuf>,
    #[command(flatten)]
    pub(crate) conditions: ConditionArgs,
    #[command(flatten)]
    pub(crate) hill: HillArgs,
    /// With any uncertainty flag, each point's saturation gets its coverage
    /// interval (a band): `--u 'po2=3mm[Hg]'` is the uncertainty of every
    /// point's PO2.
    #[command(flatten)]
    pub(crate) uncertainty: UncertaintyArgs,
}

/// How `curve` names its fields. The curve of the given conditions is the
/// last condition set (the first is the standard one, unless
/// `--no-standard`). A band's calls (SaturationFromTension at each point)
/// name the point's PO2 and the curve's conditions.
pub(crate) fn curve_names(given_index: usize) -> FieldNames {
    FieldNames::new()
        .with_conditions(&format!("condition_sets[{given_index}]"), "")
        .with("condition_sets", "the condition flags")
        .with_hill("hill")
        .with("po2_min", "--po2-min")
        .with("po2_max", "--po2-max")
        .with("point_count", "--points")
        .with("spacing", "--spacing")
        .with("po2", "--po2")
        .with_conditions("conditions", "")
}

/// One point of a band: PO2, and the saturation's interval.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct BandPoint {
    pub(crate) po2: f64,
    pub(crate) saturation: f64,
    pub(crate) low: f64,
    pub(crate) high: f64,
    pub(crate) standard_uncertainty: f64,
}

/// The coverage band of each curve: the saturation's interval at each
/// point, from SaturationFromTension with the uncertainty flags (first
/// order: one batch call per curve; Monte Carlo, which batches refuse: one
/// call per point).
async fn bands(
    ctx: &Context,
    args: &CurveArgs,
    sets: &[BloodConditions],
    response: &SampleCurveResponse,
) -> Result<Vec<Vec<BandPoint>>, Failure> {
    let names = args.uncertainty.names(curve_point_names());
    let uncertainty = args.uncertainty.to_request(&names)?;
    let mut out = Vec::with_capacity(response.curves.len());
    for (curve, conditions) in response.curves.iter().zip(sets) {
        let requests: Vec<SaturationFromTensionRequest> = curve
            .points
            .iter()
            .map(|p| SaturationFromTensionRequest {
                po2: Some(Quantity::new(p.po2, &curve.po2_unit)),
                conditions: Some(conditions.clone()),
                model: ctx.model,
                hill: args.hill.to_hill(),
                unit_system: ctx.unit_system,
                uncertainty: uncertainty.clone(),
            })
            .collect();
        let answers = if args.uncertainty.monte_carlo() {
            let mut answers = Vec::with_capacity(requests.len());
            for request in requests {
                answers.push(ctx.client.saturation_from_tension(request).await?);
            }
            answers
        } else {
            ctx.client
                .batch_saturation_from_tension(requests)
                .await?
                .into_iter()
                .collect::<Result<Vec<_>, _>>()?
        };
        out.push(
            curve
                .points
                .iter()
                .zip(answers)
                .filter_map(|(p, a)| {
                    let u = a.uncertainties.first()?;
                    let interval = u.interval.as_ref()?;
                    Some(BandPoint {
                        po2: p.po2,
                        saturation: a.saturation_fraction,
                        low: interval.low.as_ref()?.value,
                        high: interval.high.as_ref()?.value,
                        standard_uncertainty: u.standard_uncertainty.as_ref()?.value,
                    })
                })
                .collect(),
        );
    }
    Ok(out)
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

/// The curves `oxbind curve` asks for, with their labels.
pub(crate) fn curve_sets(args: &CurveArgs) -> (Vec<BloodConditions>, Vec<String>) {
    let patient = args.conditions.to_conditions();
    let mut sets = Vec::new();
    let mut labels = Vec::new();
    if patient.is_none() || !args.no_standard {
        sets.push(BloodConditions::standard());
        labels.push("standard conditions".to_owned());
    }
    if let Some(patient) = patient {
        labels.push(describe(&patient));
        sets.push(patient);
    }
    (sets, labels)
}

/// `oxbind curve`.
pub(crate) async fn curve(ctx: &Context, args: &CurveArgs) -> Result<(), Failure> {
    let (sets, labels) = curve_sets(args);
    let given_index = sets.len() - 1;
    let response = sample_curves(ctx, sets.clone(), args).await?;
    let bands = if args.uncertainty.is_given() {
        Some(bands(ctx, args, &sets, &response).await?)
    } else {
        None
    };
    if let Some(path) = &args.svg {
        let series: Vec<Series> = response
            .curves
            .iter()
            .zip(&labels)
            .enumerate()
            .map(|(i, (c, l))| {
                let band = bands.as_ref().map(|b| {
                    b[i].iter()
                        .map(|p| (p.po2, p.low, p.high))
                        .collect::<Vec<_>>()
                });
                Series::from_curve(l, c).with_band(band)
            })
            .collect();
        plot::write_svg(path, "Oxygen dissociation curves", &series).map_err(Failure::Other)?;
        output::note(format!(
            "oxbind: wrote {} curve(s) to {}",
            series.len(),
            path.display()
        ));
    }
    if ctx.json {
        let Some(bands) = &bands else {
            return print_json(&response, "oxbind.v1.SampleCurveResponse");
        };
        return print_curves_with_bands(&response, &labels, bands);
    }
    let names = curve_names(given_index);
    for (curve, label) in response.curves.iter().zip(&labels) {
        let mut t = Table::new();
        t.hill_preset(args.hill.hill_preset.map(|p| p.name()))
            .row("curve", label.clone())
            .quantity("P50", curve.p50.as_ref())
            .provenance(curve.provenance.as_ref(), &curve.warnings, &names);
        t.print()?;
        output::line("")?;
    }
    // One PO2 column, one saturation column per curve, headed by its label.
    let unit = response
        .curves
        .first()
        .map(|c| c.po2_unit.clone())
        .unwrap_or_default();
    let po2_heading = format!("PO2 ({unit})");
    let headings: Vec<String> = labels.iter().map(|l| format!("SO2 {l}")).collect();
    let mut header = format!("{po2_heading:>12}");
    for h in &headings {
        header.push_str(&format!("  {h:>12}"));
        if bands.is_some() {
            header.push_str(&format!("  {:>8}  {:>8}", "low", "high"));
        }
    }
    if bands.is_some() {
        let coverage = output::trim(args.uncertainty.coverage.unwrap_or(0.95) * 100.0);
        let method = if args.uncertainty.monte_carlo() {
            "Monte Carlo"
        } else {
            "first order"
        };
        output::line(format!(
            "low, high: the {coverage} % coverage interval of each saturation ({method}); the uncertainty rows of one point come with `oxbind saturation`"
        ))?;
    }
    output::line(header)?;
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
        let mut text = format!("{:>12.2}", po2.unwrap_or(f64::NAN));
        for (i, (c, h)) in response.curves.iter().zip(&headings).enumerate() {
            let width = h.chars().count().max(12);
            match c.points.get(row) {
                Some(p) => text.push_str(&format!("  {:>width$.4}", p.saturation_fraction)),
                None => text.push_str(&format!("  {:>width$}", "")),
            }
            if let Some(bands) = &bands {
                match bands[i]
                    .iter()
                    .find(|b| Some(b.po2) == c.points.get(row).map(|p| p.po2))
                {
                    Some(b) => text.push_str(&format!("  {:>8.4}  {:>8.4}", b.low, b.high)),
                    None => text.push_str(&format!("  {:>8}  {:>8}", "", "")),
                }
            }
        }
        output::line(text)?;
    }
    Ok(())
}

/// `--json` for curves with bands: the SampleCurve response, and each
/// curve's band as `{"curve", "points": [{"po2", "saturationFraction",
/// "standardUncertainty", "low", "high"}]}`.
fn print_curves_with_bands(
    response: &SampleCurveResponse,
    labels: &[String],
    bands: &[Vec<BandPoint>],
) -> Result<(), Failure> {
    let curves = oxbind_client::json::to_json(response, "oxbind.v1.SampleCurveResponse")
        .map_err(|e| Failure::Other(e.to_string()))?;
    let bands: Vec<serde_json::Value> = labels
        .iter()
        .zip(bands)
        .map(|(label, points)| {
            serde_json::json!({
                "curve": label,
                "points": points.iter().map(|p| serde_json::json!({
                    "po2": p.po2,
                    "saturationFraction": p.saturation,
                    "standardUncertainty": p.standard_uncertainty,
                    "low": p.low,
                    "high": p.high,
                })).collect::<Vec<_>>(),
            })
        })
        .collect();
    let value = serde_json::json!({"sampleCurve": curves, "bands": bands});
    let text = serde_json::to_string_pretty(&value).map_err(|e| Failure::Other(e.to_string()))?;
    output::line(text)
}

/// Conditions in plain words, e.g. `pH 7.35, temperature 33.2 °C, base
/// excess -2 mmol/L`.
pub(crate) fn describe(c: &BloodConditions) -> String {
    let mut parts = Vec::new();
    if let Some(ph) = c.ph {
        parts.push(format!("pH {ph}"));
    }
    let named = [
        ("PCO2", &c.pco2),
        ("temperature", &c.temperature),
        ("2,3-DPG", &c.dpg),
        ("base excess", &c.base_excess),
        ("COHb", &c.cohb),
        ("MetHb", &c.methb),
        ("HbF", &c.hbf),
    ];
    for (name, q) in named {
        if let Some(q) = q {
            parts.push(format!("{name} {}", output::given(q)));
        }
    }
    if parts.is_empty() {
        "standard conditions".to_owned()
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

/// Flags of `oxbind shift`.
#[derive(Debug, Clone, Args)]
pub(crate) struct ShiftArgs {
    #[command(flatten)]
    conditions: ConditionArgs,
    #[command(flatten)]
    pub(crate) uncertainty: UncertaintyArgs,
}

/// `oxbind shift`.
pub(crate) async fn shift(ctx: &Context, a: &ShiftArgs) -> Result<(), Failure> {
    let names = a.uncertainty.names(curve_point_names());
    let response = ctx
        .client
        .shift_factors(ShiftFactorsRequest {
            conditions: a.conditions.to_conditions(),
            model: ctx.model,
            unit_system: ctx.unit_system,
            uncertainty: a.uncertainty.to_request(&names)?,
        })
        .await?;
    json_or(ctx, &response, "oxbind.v1.ShiftFactorsResponse", |r| {
        let mut t = Table::new();
        t.quantity("P50 at standard conditions", r.p50_standard.as_ref())
            .quantity("P50 at these conditions", r.p50_at_conditions.as_ref())
            .number("log10 P50 shift", Some(r.log10_p50_shift), 4)
            .row("shift", direction(r.direction));
        for c in &r.contributions {
            t.row(
                format!("  from {}", output::factor_name(c.factor)),
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
        .provenance(r.provenance.as_ref(), &r.warnings, &names)
        .uncertainties(&r.uncertainties, &names);
        t
    })
}

/// Flags of `oxbind p50`.
#[derive(Debug, Clone, Args)]
pub(crate) struct P50Args {
    /// A measured pair PO2:SO2, e.g. `30mm[Hg]:0.57` or `4kPa:57%`; repeat
    /// for more (each gets the condition flags).
    #[arg(long = "pair", value_parser = args::pair, required = true, value_name = "PO2:SO2")]
    pairs: Vec<(Quantity, f64)>,
    #[command(flatten)]
    conditions: ConditionArgs,
}

impl P50Args {
    /// How many pairs were given.
    pub(crate) fn pairs_len(&self) -> usize {
        self.pairs.len()
    }
}

/// How `p50` names its fields (pairs counted from 1, as typed).
pub(crate) fn p50_names(pairs: usize) -> FieldNames {
    let mut names = FieldNames::new().with("pairs", "--pair");
    for i in 0..pairs {
        names = names
            .with(
                &format!("pairs[{i}].po2"),
                format!("the PO2 of --pair {}", i + 1),
            )
            .with(
                &format!("pairs[{i}].saturation_fraction"),
                format!("the SO2 of --pair {}", i + 1),
            )
            .with_conditions(&format!("pairs[{i}].conditions"), "");
    }
    names
}

/// `oxbind p50`.
pub(crate) async fn p50(ctx: &Context, a: &P50Args) -> Result<(), Failure> {
    let conditions = a.conditions.to_conditions();
    let response = ctx
        .client
        .estimate_p50(EstimateP50Request {
            pairs: a
                .pairs
                .iter()
                .map(|(po2, so2)| MeasuredPair {
                    po2: Some(po2.clone()),
                    saturation_fraction: *so2,
                    conditions: conditions.clone(),
                })
                .collect(),
            unit_system: ctx.unit_system,
            model: ctx.model,
        })
        .await?;
    let names = p50_names(a.pairs.len());
    json_or(ctx, &response, "oxbind.v1.EstimateP50Response", |r| {
        let model = r
            .provenance
            .as_ref()
            .map(|p| p.model_id.clone())
            .unwrap_or_default();
        // One pair: the single-point Hill result (n 2.7) and the curve-shift
        // result of the model; two or more: the Hill fit.
        let hill = match r.fitted_hill_n {
            Some(_) => "Hill equation fitted to the pairs".to_owned(),
            None => "Hill equation, n 2.7".to_owned(),
        };
        let shift = format!("curve shift of {model}");
        let mut t = Table::new();
        t.quantity(
            &format!("P50 at the measured conditions ({hill})"),
            r.p50_at_conditions.as_ref(),
        )
        .quantity(
            &format!("P50 at standard conditions ({hill})"),
            r.p50_standard.as_ref(),
        )
        .quantity(
            &format!("P50 at the measured conditions ({shift})"),
            r.p50_at_conditions_curve_shift.as_ref(),
        )
        .quantity(
            &format!("P50 at standard conditions ({shift})"),
            r.p50_standard_curve_shift.as_ref(),
        )
        .number("fitted Hill n", r.fitted_hill_n, 3)
        .number("fit RMS (logit)", Some(r.fit_rms_logit), 4)
        .provenance(r.provenance.as_ref(), &r.warnings, &names);
        t
    })
}

/// Flags of `oxbind temperature`: at least one of --ph, --pco2 and --po2.
#[derive(Debug, Clone, Args)]
#[command(group = clap::ArgGroup::new("values").required(true).multiple(true).args(["ph", "pco2", "po2"]))]
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

/// How `temperature` names its fields.
pub(crate) fn temperature_names() -> FieldNames {
    FieldNames::new()
        .with("ph", "--ph")
        .with("pco2", "--pco2")
        .with("po2", "--po2")
        .with("measured_temperature", "--measured-temp")
        .with("target_temperature", "--target-temp")
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
                .provenance(r.provenance.as_ref(), &r.warnings, &temperature_names());
            t
        },
    )
}

/// How `content` and `gas-exchange` name their samples' fields.
fn sample_names(names: FieldNames) -> FieldNames {
    names
        .with("arterial.saturation_fraction", "--sao2")
        .with("arterial.saturation_kind", "--saturation-kind")
        .with("arterial.cohb", "--cohb")
        .with("arterial.methb", "--methb")
        .with("arterial.model", "--model")
        .with("arterial.conditions", "the condition flags")
        .with_conditions("arterial.conditions", "")
        .with_hill("arterial.hill")
        .with("venous", "--pvo2")
        .with("venous.po2", "--pvo2")
        .with("venous.saturation_fraction", "--svo2")
        .with("venous.saturation_kind", "--venous-saturation-kind")
        .with("venous.cohb", "--venous-cohb")
        .with("venous.methb", "--venous-methb")
        .with("venous.model", "--model")
        .with_conditions("venous.conditions", "venous-")
        .with_hill("venous.hill")
}

/// Flags of `oxbind content`.
#[derive(Debug, Clone, Args)]
pub(crate) struct ContentArgs {
    /// Haemoglobin; a bare number is g/dL.
    #[arg(long, value_parser = args::hemoglobin, value_name = "CONCENTRATION")]
    hb: Quantity,
    /// Arterial PO2; a bare number is mm[Hg].
    #[arg(long, value_parser = args::pressure, value_name = "PRESSURE")]
    pao2: Quantity,
    /// Cardiac output; a bare number is L/min.
    #[arg(long, value_parser = args::blood_flow, value_name = "FLOW")]
    cardiac_output: Option<Quantity>,
    /// Oxygen bound per gram of haemoglobin, mL/g (server default when absent).
    #[arg(long)]
    hufner: Option<f64>,
    #[command(flatten)]
    arterial: ArterialArgs,
    #[command(flatten)]
    venous: VenousArgs,
    #[command(flatten)]
    pub(crate) hill: HillArgs,
    #[command(flatten)]
    pub(crate) uncertainty: UncertaintyArgs,
}

/// How `content` names its fields.
pub(crate) fn content_names() -> FieldNames {
    sample_names(FieldNames::new())
        .with("hemoglobin", "--hb")
        .with("arterial", "--pao2")
        .with("arterial.po2", "--pao2")
        .with("cardiac_output", "--cardiac-output")
        .with("hufner_factor_ml_per_g", "--hufner")
}

/// `oxbind content`.
pub(crate) async fn content(ctx: &Context, a: &ContentArgs) -> Result<(), Failure> {
    let hill = a.hill.to_hill();
    let names = a.uncertainty.names(content_names());
    let response = ctx
        .client
        .oxygen_content(OxygenContentRequest {
            hemoglobin: Some(a.hb.clone()),
            arterial: Some(a.arterial.to_sample(Some(&a.pao2), ctx.model, hill.clone())),
            venous: a.venous.to_sample(ctx.model, hill),
            cardiac_output: a.cardiac_output.clone(),
            hufner_factor_ml_per_g: a.hufner,
            unit_system: ctx.unit_system,
            uncertainty: a.uncertainty.to_request(&names)?,
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
            .provenance(r.provenance.as_ref(), &r.warnings, &names)
            .uncertainties(&r.uncertainties, &names);
        t
    })
}

/// Forms of the alveolar gas equation.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub(crate) enum AlveolarEquationArg {
    /// PAO2 = FiO2 (PB - PH2O) - PaCO2 (FiO2 + (1 - FiO2)/R).
    Full,
    /// PAO2 = FiO2 (PB - PH2O) - PaCO2/R.
    Simplified,
}

/// Flags of `oxbind gas-exchange`.
#[derive(Debug, Clone, Args)]
pub(crate) struct GasExchangeArgs {
    /// Inspired oxygen fraction FiO2 (`0.5`, or `50%`).
    #[arg(long, value_parser = args::fraction, value_name = "FRACTION")]
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
    /// Pulse-oximetry saturation SpO2 (`0.94`, or `94%`).
    #[arg(long, value_parser = args::saturation, value_name = "FRACTION")]
    spo2: Option<f64>,
    /// Mean airway pressure; a bare number is cm[H2O].
    #[arg(long, value_parser = args::airway_pressure, value_name = "PRESSURE")]
    mean_airway_pressure: Option<Quantity>,
    /// Body temperature, for the water vapour pressure; a bare number is Cel.
    #[arg(long, value_parser = args::temperature, value_name = "TEMPERATURE")]
    body_temp: Option<Quantity>,
    /// Form of the alveolar gas equation (server default full).
    #[arg(long, value_enum)]
    alveolar_equation: Option<AlveolarEquationArg>,
    /// Haemoglobin, for the shunt fraction; a bare number is g/dL. The shunt
    /// needs --hb, --pao2, --paco2 and the venous sample (--pvo2 and --svo2
    /// or the --venous-* conditions).
    #[arg(long, value_parser = args::hemoglobin, value_name = "CONCENTRATION")]
    hb: Option<Quantity>,
    #[command(flatten)]
    arterial: ArterialArgs,
    #[command(flatten)]
    venous: VenousArgs,
    #[command(flatten)]
    pub(crate) hill: HillArgs,
    #[command(flatten)]
    pub(crate) uncertainty: UncertaintyArgs,
}

/// How `gas-exchange` names its fields.
pub(crate) fn gas_exchange_names() -> FieldNames {
    sample_names(FieldNames::new())
        .with("fio2", "--fio2")
        .with("pao2", "--pao2")
        .with("arterial.po2", "--pao2")
        .with("arterial", "--sao2")
        .with("paco2", "--paco2")
        .with("barometric_pressure", "--barometric")
        .with("respiratory_quotient", "--rq")
        .with("spo2_fraction", "--spo2")
        .with("mean_airway_pressure", "--mean-airway-pressure")
        .with("body_temperature", "--body-temp")
        .with("alveolar_equation", "--alveolar-equation")
        .with("hemoglobin", "--hb")
}

/// `oxbind gas-exchange`.
pub(crate) async fn gas_exchange(ctx: &Context, a: &GasExchangeArgs) -> Result<(), Failure> {
    let hill = a.hill.to_hill();
    let names = a.uncertainty.names(gas_exchange_names());
    let equation = match a.alveolar_equation {
        None => AlveolarEquation::Unspecified,
        Some(AlveolarEquationArg::Full) => AlveolarEquation::Full,
        Some(AlveolarEquationArg::Simplified) => AlveolarEquation::Simplified,
    };
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
            venous: a.venous.to_sample(ctx.model, hill.clone()),
            // The arterial PO2 is pao2 (the server's rule when the sample
            // has none).
            arterial: a
                .arterial
                .is_given()
                .then(|| a.arterial.to_sample(None, ctx.model, hill)),
            body_temperature: a.body_temp.clone(),
            unit_system: ctx.unit_system,
            alveolar_equation: equation as i32,
            uncertainty: a.uncertainty.to_request(&names)?,
        })
        .await?;
    // The ratios of PaO2 to FiO2 are pressures (per unit fraction), in the
    // response's pressure unit.
    let pressure_unit = response
        .alveolar_po2
        .as_ref()
        .or(response.imputed_pao2.as_ref())
        .map(|q| q.unit.clone())
        .unwrap_or_else(|| ctx.pressure_unit().to_owned());
    json_or(ctx, &response, "oxbind.v1.GasExchangeResponse", |r| {
        let ratio = |v: Option<f64>| {
            v.map(|v| {
                let decimals = if pressure_unit == "kPa" { 1 } else { 0 };
                format!("{v:.decimals$} {pressure_unit}")
            })
        };
        let mut t = Table::new();
        t.quantity("alveolar PO2", r.alveolar_po2.as_ref())
            .quantity(
                "alveolar-arterial gradient",
                r.alveolar_arterial_gradient.as_ref(),
            );
        if let Some(v) = ratio(r.pao2_fio2_ratio) {
            t.row("PaO2/FiO2 ratio", v);
        }
        t.number("SpO2/FiO2 ratio", r.spo2_fio2_ratio, 0)
            .quantity("PaO2 imputed from SpO2", r.imputed_pao2.as_ref());
        if let Some(v) = ratio(r.imputed_pao2_fio2_ratio) {
            t.row("imputed PaO2/FiO2 ratio", v);
        }
        t.number("oxygenation index", r.oxygenation_index, 1)
            .number("oxygen saturation index", r.oxygen_saturation_index, 1)
            .number("shunt fraction", r.shunt_fraction, 3)
            .provenance(r.provenance.as_ref(), &r.warnings, &names)
            .uncertainties(&r.uncertainties, &names);
        t
    })
}

/// `oxbind models`.
pub(crate) async fn models(ctx: &Context) -> Result<(), Failure> {
    let response = ctx.client.list_models(ListModelsRequest {}).await?;
    if ctx.json {
        return print_json(&response, "oxbind.v1.ListModelsResponse");
    }
    for model in &response.models {
        let marker = if model.is_default { " (default)" } else { "" };
        output::line(format!("{:<24} {}{marker}", model.model_id, model.title))?;
        let honoured: Vec<String> = model
            .honoured_conditions
            .iter()
            .map(|f| output::factor_name(*f))
            .collect();
        output::line(format!(
            "{:<24} takes into account: {}",
            "",
            if honoured.is_empty() {
                "no blood condition".to_owned()
            } else {
                honoured.join(", ")
            }
        ))?;
    }
    if !response.uncertainty_profiles.is_empty() {
        output::line(
            "\nuncertainty profiles (a set: --uncertainty SET; one: --u NAME=ID; --json gives each figure and source):",
        )?;
        for p in &response.uncertainty_profiles {
            let verification = oxbind_client::v1::ProfileVerification::try_from(p.verification)
                .map(|v| {
                    v.as_str_name()
                        .trim_start_matches("PROFILE_VERIFICATION_")
                        .to_lowercase()
                        .replace('_', " ")
                })
                .unwrap_or_default();
            output::line(format!(
                "{:<44} {verification}: {}",
                p.profile_id, p.description
            ))?;
        }
    }
    if !response.cautions.is_empty() {
        output::line(format!("\n{}", response.cautions))?;
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
        output::line(serde_json::Value::Object(map))?;
    } else {
        for (name, status) in rows {
            let label = if name.is_empty() { "(server)" } else { name };
            output::line(format!("{label:<36} {}", status.as_str_name()))?;
        }
    }
    if all_serving {
        Ok(())
    } else {
        Err(Failure::Other("not every service is SERVING".into()))
    }
}
