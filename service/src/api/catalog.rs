//! `oxbind.v1.ModelCatalogService`: every model, from the same table the
//! engine uses, the hard input limits, from the same table validation uses,
//! and the built-in uncertainty profiles, from the engine's profile table.

use oxbind_proto::v1::{
    HillPreset, HillPresetDescription, InputLimit, ListModelsRequest, ListModelsResponse,
    Model as WireModel, ModelDescription, Quantity, UnitSystem, ValidatedRange,
};

use super::{dissociation::shift_factor, limits, units};
use crate::physiology::{
    conditions::Condition,
    error::Input,
    hill::Hill,
    model::{catalog, ModelInfo},
};

/// The cautions every caller must pass on with results.
pub const CAUTIONS: &str = "Oxbind results are decision support only. They are computed from \
published equations and do not replace measured co-oximetry or the judgement of a licensed \
clinician. Local laboratory policy decides which values are reported, in which units and with \
which model. Pass every warning on with the value it concerns. An uncertainty interval describes \
the arithmetic from the figures stated for the inputs, not the patient; the built-in profiles are \
fallbacks, some not verified at their source (see uncertainty_profiles), and a laboratory's own \
imprecision and a device's own accuracy describe its results better. Pulse-oximetry bias by skin \
pigmentation (and by low perfusion or dyshaemoglobins) is not included in any uncertainty unless \
the caller gives it as a figure: the pulse-oximeter accuracy figures come from laboratory studies \
in healthy volunteers. Consistency findings (ConsistencyService) support the laboratory's review \
of a result and do not reject results: local laboratory policy decides what happens to a \
discordant sample.";

/// Source of the adult Hill preset.
const ADULT_PRESET_SOURCE: &str = "n 2.7: Severinghaus JW, J Appl Physiol 1979;46(3):599-602 \
(revised text: n usually 2.7); P50 26.8 mm[Hg]: the conventional standard P50";
/// Source of the fetal Hill preset.
const FETAL_PRESET_SOURCE: &str = "P50 19.5 mm[Hg], inside the 18-20 mm[Hg] given for fetal \
haemoglobin by educational sources; n 2.7 assumed (the adult value)";
/// Source of the myoglobin Hill preset.
const MYOGLOBIN_PRESET_SOURCE: &str = "n 1 (a single binding site: hyperbolic curve, common \
practice); P50 2.8 mm[Hg] at 37 Cel from memory (about 2 Torr per Wikibooks Structural Biochemistry)";

/// The wire enum value of a catalog model id.
pub fn wire_model(id: &str) -> WireModel {
    match id {
        "severinghaus-1979" => WireModel::Severinghaus1979,
        "kelman-1966" => WireModel::Kelman1966,
        "hill" => WireModel::Hill,
        "adair" => WireModel::Adair,
        "siggaard-andersen-1984" => WireModel::SiggaardAndersen1984,
        "dash-2016" => WireModel::Dash2016,
        "siggaard-andersen-1990" => WireModel::SiggaardAndersen1990,
        _ => WireModel::Unspecified,
    }
}

/// The request field name and unit of an engine input in a validated range.
fn range_input(input: Input) -> (String, &'static str, units::QuantityKind) {
    if let Some(condition) = Condition::ALL.iter().copied().find(|c| c.input() == input) {
        let name = format!("conditions.{}", super::warnings::condition_field(condition));
        let kind = match condition {
            Condition::Ph => return (name, "[pH]", units::QuantityKind::Fraction),
            Condition::Pco2 => units::QuantityKind::Pressure,
            Condition::Temperature => units::QuantityKind::Temperature,
            Condition::Dpg | Condition::BaseExcess => units::QuantityKind::Concentration,
            Condition::Cohb | Condition::Methb | Condition::Hbf => units::QuantityKind::Fraction,
        };
        return (name, units::engine_unit(kind), kind);
    }
    match input {
        Input::Po2 => ("po2".to_owned(), "mm[Hg]", units::QuantityKind::Pressure),
        Input::Saturation => (
            "saturation_fraction".to_owned(),
            "1",
            units::QuantityKind::Fraction,
        ),
        other => (other.name().to_owned(), "1", units::QuantityKind::Fraction),
    }
}

fn quantity(value: f64, unit: &str) -> Option<Quantity> {
    value.is_finite().then(|| Quantity {
        value,
        unit: unit.to_owned(),
    })
}

fn describe(info: &ModelInfo) -> ModelDescription {
    let model = wire_model(info.id);
    ModelDescription {
        model: model as i32,
        model_id: info.id.to_owned(),
        title: info.title.to_owned(),
        reference: info.reference.to_owned(),
        doi: info.doi.to_owned(),
        honoured_conditions: info
            .honoured_conditions
            .iter()
            .map(|c| shift_factor(*c))
            .collect(),
        validated_ranges: info
            .validated_ranges
            .iter()
            .map(|range| {
                let (input, unit, _) = range_input(range.input);
                ValidatedRange {
                    input,
                    min: quantity(range.min, unit),
                    max: quantity(range.max, unit),
                }
            })
            .collect(),
        is_default: info.is_default,
        model_version: info.version.to_owned(),
        source_notes: info.notes.to_owned(),
        hill_presets: if model == WireModel::Hill {
            [
                (HillPreset::Adult, Hill::ADULT, ADULT_PRESET_SOURCE),
                (HillPreset::Fetal, Hill::FETAL, FETAL_PRESET_SOURCE),
                (
                    HillPreset::Myoglobin,
                    Hill::MYOGLOBIN,
                    MYOGLOBIN_PRESET_SOURCE,
                ),
            ]
            .into_iter()
            .map(|(preset, parameters, source)| HillPresetDescription {
                preset: preset as i32,
                p50: Some(units::from_engine(
                    parameters.p50_mmhg,
                    units::QuantityKind::Pressure,
                    UnitSystem::Conventional,
                )),
                n: parameters.n,
                reference: source.to_owned(),
            })
            .collect()
        } else {
            Vec::new()
        },
    }
}

fn input_limit(limit: &limits::HardLimit) -> InputLimit {
    InputLimit {
        input: limit.input.to_owned(),
        fields: limit.fields.iter().map(|f| (*f).to_owned()).collect(),
        min: quantity(limit.min, limit.unit),
        min_inclusive: limit.min_inclusive,
        max: quantity(limit.max, limit.unit),
        max_inclusive: limit.max_inclusive,
        reason: limit.reason.to_owned(),
        error_reason: limit.error_reason.to_owned(),
    }
}

/// ListModels for one request (the request has no fields): the catalog with
/// `max_batch_items` as the batch limit.
pub fn compute_list_models(
    _request: &ListModelsRequest,
    max_batch_items: usize,
) -> ListModelsResponse {
    list_models(max_batch_items)
}

/// The catalog: every model and every hard input limit.
pub fn list_models(max_batch_items: usize) -> ListModelsResponse {
    let mut input_limits: Vec<InputLimit> = limits::ALL.iter().map(|l| input_limit(l)).collect();
    input_limits.push(InputLimit {
        input: "batch_items".to_owned(),
        fields: vec!["requests".to_owned()],
        min: quantity(1.0, "1"),
        min_inclusive: true,
        max: quantity(max_batch_items as f64, "1"),
        max_inclusive: true,
        reason: "a batch needs one item; the server's configured limit bounds one call's work and memory"
            .to_owned(),
        error_reason: super::status::REASON_BATCH_TOO_LARGE.to_owned(),
    });
    ListModelsResponse {
        models: catalog().iter().map(|info| describe(info)).collect(),
        cautions: CAUTIONS.to_owned(),
        input_limits,
        uncertainty_profiles: super::uncertainty::catalog_profiles(),
    }
}
