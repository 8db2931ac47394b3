//! `oxbind check`: the consistency findings of one blood-gas sample
//! (`CheckBloodGas`), or, with `--input`, of every row of a CSV file
//! ([`crate::check_batch`]).
//!
//! Findings support the laboratory's review and do not reject results: a
//! discordant sample is still a success (exit 0); local laboratory policy
//! decides what happens to it.

use std::path::PathBuf;

use clap::{Args, ValueEnum};
use oxbind_client::v1::{
    BicarbonateSource, BloodGasResults, BloodGasSampleType, CheckBloodGasRequest,
    CheckBloodGasResponse, ConsistencyCheck, ConsistencyFinding, ConsistencyThresholdRule,
    ConsistencyUncertainty, ConsistencyVerdict, Quantity, ReportedTemperature, ResultsAt37Cel,
    SaturationKind, ThresholdBasis,
};

use crate::{
    args::{self, SaturationKindArg},
    failure::Failure,
    fields::FieldNames,
    output::{self, print_json, Table},
    uncertainty::FigureFlags,
    Context,
};

/// The temperature the results refer to.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub(crate) enum ReportedAtArg {
    /// 37 Cel, as the analyser measured them (the default).
    #[value(name = "37-cel")]
    At37Cel,
    /// Corrected to the patient's temperature (--temp).
    PatientTemperature,
}

impl From<ReportedAtArg> for ReportedTemperature {
    fn from(arg: ReportedAtArg) -> Self {
        match arg {
            ReportedAtArg::At37Cel => ReportedTemperature::At37Cel,
            ReportedAtArg::PatientTemperature => ReportedTemperature::AtPatientTemperature,
        }
    }
}

/// The sample type as labelled.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub(crate) enum SampleTypeArg {
    /// Labelled arterial.
    Arterial,
    /// Labelled venous.
    Venous,
    /// Labelled mixed venous.
    MixedVenous,
    /// Labelled capillary (arterialised).
    Capillary,
    /// The label does not say (the default).
    Unknown,
}

impl From<SampleTypeArg> for BloodGasSampleType {
    fn from(arg: SampleTypeArg) -> Self {
        match arg {
            SampleTypeArg::Arterial => BloodGasSampleType::Arterial,
            SampleTypeArg::Venous => BloodGasSampleType::Venous,
            SampleTypeArg::MixedVenous => BloodGasSampleType::MixedVenous,
            SampleTypeArg::Capillary => BloodGasSampleType::Capillary,
            SampleTypeArg::Unknown => BloodGasSampleType::Unknown,
        }
    }
}

/// How the bicarbonate was obtained.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub(crate) enum BicarbonateSourceArg {
    /// Bicarbonate measured.
    Measured,
    /// Total CO2 measured (a chemistry analyser's).
    MeasuredTotalCo2,
    /// Calculated by the analyser from pH and PCO2 (the acid-base check is
    /// then not evaluable).
    Calculated,
}

impl From<BicarbonateSourceArg> for BicarbonateSource {
    fn from(arg: BicarbonateSourceArg) -> Self {
        match arg {
            BicarbonateSourceArg::Measured => BicarbonateSource::Measured,
            BicarbonateSourceArg::MeasuredTotalCo2 => BicarbonateSource::MeasuredTotalCo2,
            BicarbonateSourceArg::Calculated => BicarbonateSource::Calculated,
        }
    }
}

/// Which threshold decides a check that has a published one.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub(crate) enum ThresholdRuleArg {
    /// The published threshold where one exists (the default).
    PublishedWhereAvailable,
    /// The uncertainty-based rule for every check that has one.
    UncertaintyBased,
}

impl From<ThresholdRuleArg> for ConsistencyThresholdRule {
    fn from(arg: ThresholdRuleArg) -> Self {
        match arg {
            ThresholdRuleArg::PublishedWhereAvailable => {
                ConsistencyThresholdRule::PublishedWhereAvailable
            }
            ThresholdRuleArg::UncertaintyBased => ConsistencyThresholdRule::UncertaintyBased,
        }
    }
}

/// The sample's results as flags (one sample; not with --input).
#[derive(Debug, Clone, Default, Args)]
#[command(next_help_heading = "The sample (one sample; each absent flag: not given)")]
pub(crate) struct SampleArgs {
    /// PO2; a bare number is mm[Hg]. Required for one sample.
    #[arg(long, value_parser = args::pressure, value_name = "PRESSURE", required_unless_present = "input")]
    pub(crate) po2: Option<Quantity>,
    /// PCO2; a bare number is mm[Hg].
    #[arg(long, value_parser = args::pressure, value_name = "PRESSURE")]
    pub(crate) pco2: Option<Quantity>,
    /// pH (no unit).
    #[arg(long)]
    pub(crate) ph: Option<f64>,
    /// The patient's temperature; a bare number is Cel.
    #[arg(long = "temp", visible_alias = "temperature", value_parser = args::temperature, value_name = "TEMPERATURE")]
    pub(crate) temperature: Option<Quantity>,
    /// The temperature --po2, --pco2 and --ph refer to (default 37-cel).
    #[arg(long, value_enum)]
    pub(crate) reported_at: Option<ReportedAtArg>,
    /// The sample type as labelled (default unknown).
    #[arg(long, value_enum)]
    pub(crate) sample_type: Option<SampleTypeArg>,
    /// Saturation measured by co-oximetry (`0.96`, or `96%`).
    #[arg(long, value_parser = args::saturation, value_name = "FRACTION")]
    pub(crate) so2: Option<f64>,
    /// What --so2 measures (default functional).
    #[arg(long, value_enum, requires = "so2")]
    pub(crate) so2_kind: Option<SaturationKindArg>,
    /// Carboxyhaemoglobin (`1.2%`, or the fraction `0.012`).
    #[arg(long, value_parser = args::fraction, value_name = "FRACTION")]
    pub(crate) cohb: Option<Quantity>,
    /// Methaemoglobin (`0.6%`, or the fraction `0.006`).
    #[arg(long, value_parser = args::fraction, value_name = "FRACTION")]
    pub(crate) methb: Option<Quantity>,
    /// Total haemoglobin; a bare number is g/dL.
    #[arg(long, value_parser = args::hemoglobin, value_name = "CONCENTRATION")]
    pub(crate) hb: Option<Quantity>,
    /// Fetal haemoglobin (`60%`, or the fraction `0.6`).
    #[arg(long, value_parser = args::fraction, value_name = "FRACTION")]
    pub(crate) hbf: Option<Quantity>,
    /// Pulse-oximeter saturation at sampling (`0.97`, or `97%`).
    #[arg(long, value_parser = args::saturation, value_name = "FRACTION")]
    pub(crate) spo2: Option<f64>,
    /// Inspired oxygen fraction (`0.21`, or `21%`).
    #[arg(long, value_parser = args::fraction, value_name = "FRACTION")]
    pub(crate) fio2: Option<Quantity>,
    /// Barometric pressure; a bare number is mm[Hg] (the server assumes 760).
    #[arg(long, value_parser = args::pressure, value_name = "PRESSURE")]
    pub(crate) barometric: Option<Quantity>,
    /// Bicarbonate (or total CO2); a bare number is mmol/L. Needs
    /// --bicarbonate-source.
    #[arg(long, value_parser = args::concentration, value_name = "CONCENTRATION", requires = "bicarbonate_source")]
    pub(crate) bicarbonate: Option<Quantity>,
    /// How --bicarbonate was obtained.
    #[arg(long, value_enum, requires = "bicarbonate")]
    pub(crate) bicarbonate_source: Option<BicarbonateSourceArg>,
    /// White-cell count; a bare number is 10^9/L (`10*9/L`).
    #[arg(long, value_parser = cell_count, value_name = "COUNT")]
    pub(crate) wbc: Option<Quantity>,
    /// The pH at 37 Cel, when the results are reported at the patient's
    /// temperature.
    #[arg(long)]
    pub(crate) ph_37: Option<f64>,
    /// The PCO2 at 37 Cel; a bare number is mm[Hg].
    #[arg(long, value_parser = args::pressure, value_name = "PRESSURE")]
    pub(crate) pco2_37: Option<Quantity>,
    /// The PO2 at 37 Cel; a bare number is mm[Hg].
    #[arg(long, value_parser = args::pressure, value_name = "PRESSURE")]
    pub(crate) po2_37: Option<Quantity>,
}

/// A white-cell count; a bare number is 10^9/L.
pub(crate) fn cell_count(text: &str) -> Result<Quantity, String> {
    args::parse_quantity(text, crate::columns::CELLS_PER_NL)
}

/// The threshold rule and the uncertainty figures, for one sample and for
/// --input (every row).
#[derive(Debug, Clone, Default, Args)]
#[command(next_help_heading = "Thresholds and uncertainty figures")]
pub(crate) struct FigureArgs {
    /// Which threshold decides a check that has a published one (default
    /// published-where-available).
    #[arg(long, value_enum)]
    pub(crate) threshold_rule: Option<ThresholdRuleArg>,
    /// The figures of the uncertainty-based rules, spelt as on every other
    /// command: `--u NAME=FIGURE` names an input by its own flag (`po2`,
    /// `pco2`, `ph`, `so2`, `spo2`, `cohb`, `methb`, `fio2`, `barometric`,
    /// `bicarbonate`), `--uncertainty SET` a built-in profile set.
    #[command(flatten)]
    pub(crate) figures: FigureFlags,
    /// Use only the --u and --uncertainty figures; inputs without one add
    /// nothing (without it the built-in published figures fill in).
    #[arg(long)]
    pub(crate) no_built_in_figures: bool,
    /// Coverage probability of the uncertainty-based limits (`0.95`, or
    /// `95%`; server default 0.95).
    #[arg(long, value_parser = args::saturation, value_name = "FRACTION")]
    pub(crate) coverage: Option<f64>,
}

impl FigureArgs {
    /// The request's `uncertainty`, when any flag was given: each `--u`
    /// tied to the sample field its flag sets.
    pub(crate) fn to_uncertainty(&self) -> Result<Option<ConsistencyUncertainty>, Failure> {
        if !self.figures.is_given() && !self.no_built_in_figures && self.coverage.is_none() {
            return Ok(None);
        }
        Ok(Some(ConsistencyUncertainty {
            inputs: self.figures.inputs(&sample_names())?,
            profile_sets: self.figures.profile_sets.clone(),
            no_built_in_figures: self.no_built_in_figures,
            coverage_probability: self.coverage.unwrap_or(0.0),
        }))
    }

    /// The request's `threshold_rule`.
    pub(crate) fn rule(&self) -> i32 {
        self.threshold_rule
            .map_or(0, |r| ConsistencyThresholdRule::from(r) as i32)
    }

    /// `names` with the rule and the uncertainty fields named as the flags
    /// that set them (shared by both modes).
    pub(crate) fn names(&self, names: FieldNames) -> FieldNames {
        self.figures
            .names(names)
            .with("threshold_rule", "--threshold-rule")
            .with("uncertainty.no_built_in_figures", "--no-built-in-figures")
            .with("uncertainty.coverage_probability", "--coverage")
    }
}

/// Flags of `oxbind check`.
#[derive(Debug, Clone, Args)]
#[command(after_help = crate::check_batch::columns_help())]
pub(crate) struct CheckArgs {
    #[command(flatten)]
    pub(crate) sample: SampleArgs,
    #[command(flatten)]
    pub(crate) figures: FigureArgs,
    /// CSV file of samples with a header row (`-` for standard input): one
    /// result row per sample, through BatchCheckBloodGas. Not with the
    /// sample flags.
    #[arg(long, value_name = "FILE", requires = "output", conflicts_with_all = SAMPLE_FLAGS)]
    pub(crate) input: Option<PathBuf>,
    /// CSV file to write with --input (`-` for standard output).
    #[arg(long, value_name = "FILE", requires = "input")]
    pub(crate) output: Option<PathBuf>,
    /// With --input: columns of your own to copy to the output unchanged;
    /// they are never sent. Comma-separated, any case.
    #[arg(
        long,
        value_delimiter = ',',
        value_name = "COLUMN,...",
        requires = "input"
    )]
    pub(crate) carry: Vec<String>,
    /// With --input: rows per batch call (default 200, at most 1000).
    #[arg(long, value_parser = clap::value_parser!(u32).range(1..=1000), requires = "input")]
    pub(crate) chunk_size: Option<u32>,
}

/// Rows per batch call unless --chunk-size says otherwise.
pub(crate) const DEFAULT_CHUNK_SIZE: u32 = 200;

/// The flags of one sample (refused beside --input).
const SAMPLE_FLAGS: [&str; 21] = [
    "po2",
    "pco2",
    "ph",
    "temperature",
    "reported_at",
    "sample_type",
    "so2",
    "so2_kind",
    "cohb",
    "methb",
    "hb",
    "hbf",
    "spo2",
    "fio2",
    "barometric",
    "bicarbonate",
    "bicarbonate_source",
    "wbc",
    "ph_37",
    "pco2_37",
    "po2_37",
];

impl SampleArgs {
    /// The sample as the contract's message.
    fn to_results(&self) -> BloodGasResults {
        let at_37 =
            (self.ph_37.is_some() || self.pco2_37.is_some() || self.po2_37.is_some()).then(|| {
                ResultsAt37Cel {
                    ph: self.ph_37,
                    pco2: self.pco2_37.clone(),
                    po2: self.po2_37.clone(),
                }
            });
        BloodGasResults {
            po2: self.po2.clone(),
            pco2: self.pco2.clone(),
            ph: self.ph,
            temperature: self.temperature.clone(),
            reported_at: self
                .reported_at
                .map_or(0, |r| ReportedTemperature::from(r) as i32),
            sample_type: self
                .sample_type
                .map_or(0, |t| BloodGasSampleType::from(t) as i32),
            so2_fraction: self.so2,
            so2_kind: self.so2_kind.map_or(0, |k| SaturationKind::from(k) as i32),
            cohb: self.cohb.clone(),
            methb: self.methb.clone(),
            hemoglobin: self.hb.clone(),
            hbf: self.hbf.clone(),
            spo2_fraction: self.spo2,
            fio2: self.fio2.clone(),
            barometric_pressure: self.barometric.clone(),
            bicarbonate: self.bicarbonate.clone(),
            bicarbonate_source: self
                .bicarbonate_source
                .map_or(0, |s| BicarbonateSource::from(s) as i32),
            white_cell_count: self.wbc.clone(),
            results_at_37_cel: at_37,
        }
    }
}

/// How `check` names the sample's fields: by their flags.
pub(crate) fn sample_names() -> FieldNames {
    let mut names = FieldNames::new().with("sample", "the sample flags");
    for (path, flag) in [
        ("po2", "--po2"),
        ("pco2", "--pco2"),
        ("ph", "--ph"),
        ("temperature", "--temp"),
        ("reported_at", "--reported-at"),
        ("sample_type", "--sample-type"),
        ("so2_fraction", "--so2"),
        ("so2_kind", "--so2-kind"),
        ("cohb", "--cohb"),
        ("methb", "--methb"),
        ("hemoglobin", "--hb"),
        ("hbf", "--hbf"),
        ("spo2_fraction", "--spo2"),
        ("fio2", "--fio2"),
        ("barometric_pressure", "--barometric"),
        ("bicarbonate", "--bicarbonate"),
        ("bicarbonate_source", "--bicarbonate-source"),
        ("white_cell_count", "--wbc"),
        ("results_at_37_cel.ph", "--ph-37"),
        ("results_at_37_cel.pco2", "--pco2-37"),
        ("results_at_37_cel.po2", "--po2-37"),
    ] {
        names = names.with(&format!("sample.{path}"), flag);
    }
    names
}

/// How `check` for one sample names its fields: the sample flags, the rule
/// and the uncertainty flags (each --u and --uncertainty by what was typed).
pub(crate) fn check_names(figures: &FigureArgs) -> FieldNames {
    figures.names(sample_names())
}

/// `oxbind check` for one sample.
pub(crate) async fn check(ctx: &Context, a: &CheckArgs) -> Result<(), Failure> {
    let response = ctx
        .client
        .check_blood_gas(CheckBloodGasRequest {
            sample: Some(a.sample.to_results()),
            uncertainty: a.figures.to_uncertainty()?,
            threshold_rule: a.figures.rule(),
            model: ctx.model,
            unit_system: ctx.unit_system,
        })
        .await?;
    if ctx.json {
        return print_json(&response, "oxbind.v1.CheckBloodGasResponse");
    }
    print_findings(&response, &check_names(&a.figures), true)
}

/// A check in plain words.
pub(crate) fn check_name(raw: i32) -> &'static str {
    match ConsistencyCheck::try_from(raw) {
        Ok(ConsistencyCheck::MeasuredSaturation) => "measured against calculated saturation",
        Ok(ConsistencyCheck::PulseOximetryGap) => "pulse oximeter against co-oximeter",
        Ok(ConsistencyCheck::CarbonMonoxideGap) => "carbon monoxide saturation gap",
        Ok(ConsistencyCheck::AboveAlveolar) => "PO2 above alveolar PO2",
        Ok(ConsistencyCheck::RoomAirExposure) => "room-air exposure",
        Ok(ConsistencyCheck::VenousPattern) => "venous pattern, labelled arterial",
        Ok(ConsistencyCheck::AcidBase) => "pH, PCO2 and bicarbonate",
        Ok(ConsistencyCheck::TemperatureCorrectionPh) => "temperature correction of pH",
        Ok(ConsistencyCheck::TemperatureCorrectionPco2) => "temperature correction of PCO2",
        Ok(ConsistencyCheck::TemperatureCorrectionPo2) => "temperature correction of PO2",
        Ok(ConsistencyCheck::WhiteCellConsumption) => "white-cell oxygen consumption",
        _ => "unknown check",
    }
}

/// A verdict as one word: consistent, discordant, not_evaluable.
pub(crate) fn verdict_word(raw: i32) -> &'static str {
    match ConsistencyVerdict::try_from(raw) {
        Ok(ConsistencyVerdict::Consistent) => "consistent",
        Ok(ConsistencyVerdict::Discordant) => "discordant",
        Ok(ConsistencyVerdict::NotEvaluable) => "not_evaluable",
        _ => "unspecified",
    }
}

/// The statistic against its threshold, in plain words.
fn comparison(f: &ConsistencyFinding) -> String {
    let basis = match ThresholdBasis::try_from(f.threshold_basis) {
        Ok(ThresholdBasis::Published) => "published",
        Ok(ThresholdBasis::UncertaintyBased) => "uncertainty-based",
        _ => "",
    };
    match (&f.statistic, &f.threshold) {
        (Some(s), Some(t)) => format!(
            "{}, threshold {} ({basis})",
            output::quantity(s),
            output::quantity(t)
        ),
        _ => String::new(),
    }
}

/// The findings as a table, then what each discordant finding means (with
/// `detailed`, also its rule, source and causes), the provenance and the
/// cautions.
pub(crate) fn print_findings(
    r: &CheckBloodGasResponse,
    names: &FieldNames,
    detailed: bool,
) -> Result<(), Failure> {
    let mut t = Table::new();
    for f in &r.findings {
        let verdict = verdict_word(f.verdict);
        let value = match ConsistencyVerdict::try_from(f.verdict) {
            Ok(ConsistencyVerdict::NotEvaluable) => {
                format!("not evaluable: {}", f.not_evaluable_reason)
            }
            _ => format!("{verdict}: {}", comparison(f)),
        };
        t.row(check_name(f.check), output::plain_units(&value));
    }
    t.provenance(r.provenance.as_ref(), &r.warnings, names);
    t.print()?;
    for f in r
        .findings
        .iter()
        .filter(|f| f.verdict == ConsistencyVerdict::Discordant as i32)
    {
        output::line(format!("\nDiscordant: {}", check_name(f.check)))?;
        output::line(format!("  {}", output::plain_units(&f.note)))?;
        if detailed {
            output::line(format!(
                "  rule: {}; source: {}",
                output::plain_units(&f.rule),
                f.threshold_source
            ))?;
            output::line("  causes to consider:")?;
            for cause in &f.causes {
                output::line(format!("  - {} [{}]", cause.cause, cause.source))?;
            }
        }
    }
    if !detailed && r.discordant_count > 0 {
        output::line(
            "  (`oxbind check` gives each finding's rule, source and causes to consider)",
        )?;
    }
    output::line(format!(
        "\n{} of {} checks discordant. {}",
        r.discordant_count,
        r.findings.len(),
        r.cautions
    ))
}
