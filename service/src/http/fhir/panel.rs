//! Reading the operation's `Parameters` into a panel of inputs: which
//! Observation holds which input (by LOINC code), the options, and the
//! patient references to copy. Every element that cannot be read is an
//! issue naming it; nothing is dropped silently (an Observation the
//! operation does not use is listed as information).

use std::collections::BTreeMap;

use oxbind_proto::v1::{Model as WireModel, Quantity as WireQuantity, UnitSystem};
use serde::de::DeserializeOwned;
use serde_json::Value;

use super::{
    codes::{Input, MAPPING},
    outcome::{error, issue, issue_type, severity, Refusal},
    resources::{
        Issue, ObservationIn, ParameterIn, ParametersIn, Quantity, Reference, LOINC_SYSTEM,
        UCUM_SYSTEM,
    },
    time,
};
use crate::api::catalog::wire_model;

/// Most input Observations one call may carry (a full blood-gas,
/// co-oximetry and ventilation panel has about twenty).
pub const MAX_INPUT_OBSERVATIONS: usize = 100;

/// Statuses of a result the operation derives from (FHIR R4
/// ObservationStatus: the result is complete and verified, possibly after
/// a change).
pub const USABLE_STATUSES: [&str; 3] = ["final", "amended", "corrected"];

/// Input parameter names (the OperationDefinition's `in` parameters).
pub mod parameter {
    /// An input Observation.
    pub const OBSERVATION: &str = "observation";
    /// The model id.
    pub const MODEL: &str = "model";
    /// `conventional` or `si`.
    pub const UNIT_SYSTEM: &str = "unitSystem";
    /// Barometric pressure for the alveolar gas equation.
    pub const BAROMETRIC_PRESSURE: &str = "barometricPressure";
}

/// One input Observation the operation uses.
#[derive(Debug, Clone)]
pub struct InputObservation {
    /// What it measures.
    pub input: Input,
    /// Its FHIRPath in the request (`Parameters.parameter[2].resource`).
    pub expression: String,
    /// Its id (derived values point to `Observation/<id>`).
    pub id: String,
    /// The value, in `unit`.
    pub value: f64,
    /// The UCUM code of the value.
    pub unit: String,
    /// Its specimen, as given.
    pub specimen: Option<Reference>,
    /// Its effectiveDateTime, as given.
    pub effective: Option<String>,
}

impl InputObservation {
    /// The value as the contract's Quantity (unit conversion and limits are
    /// the API's, as for every door).
    pub fn quantity(&self) -> WireQuantity {
        WireQuantity {
            value: self.value,
            unit: self.unit.clone(),
        }
    }
}

/// The panel read from one request.
#[derive(Debug, Default)]
pub struct Panel {
    /// The Observations used, in request order.
    pub observations: Vec<InputObservation>,
    /// Which of them holds each input.
    pub by_input: BTreeMap<Input, usize>,
    /// The contract's Model value (0: the server's default).
    pub model: i32,
    /// FHIRPath of the model parameter, if given.
    pub model_expression: Option<String>,
    /// The contract's UnitSystem value.
    pub unit_system: i32,
    /// Barometric pressure, with its FHIRPath.
    pub barometric_pressure: Option<(WireQuantity, String)>,
    /// The subject every input shares (copied, never logged).
    pub subject: Option<Reference>,
    /// The encounter the inputs share (copied, never logged).
    pub encounter: Option<Reference>,
    /// Information about Observations not used, in request order.
    pub information: Vec<Issue>,
}

impl Panel {
    /// The Observation holding `input`, if any.
    pub fn get(&self, input: Input) -> Option<&InputObservation> {
        self.by_input.get(&input).map(|&i| &self.observations[i])
    }
}

/// Issues found while reading, split by the status they call for.
#[derive(Default)]
struct Found {
    malformed: Vec<Issue>,
    unprocessable: Vec<Issue>,
}

impl Found {
    fn into_refusal(self) -> Option<Refusal> {
        if !self.malformed.is_empty() {
            Some(Refusal::malformed(self.malformed))
        } else if !self.unprocessable.is_empty() {
            Some(Refusal::unprocessable(self.unprocessable))
        } else {
            None
        }
    }
}

/// Read the request body.
pub fn read(body: &[u8]) -> Result<Panel, Refusal> {
    let root = "Parameters";
    let value: Value = serde_json::from_slice(body).map_err(|_| {
        Refusal::malformed(vec![error(
            issue_type::INVALID,
            "the body is not JSON: send a FHIR R4 Parameters resource as application/fhir+json",
            root.to_owned(),
        )])
    })?;
    match value.get("resourceType").and_then(Value::as_str) {
        Some("Parameters") => {}
        Some("Bundle") => {
            return Err(Refusal::malformed(vec![error(
                issue_type::STRUCTURE,
                "the operation takes a Parameters resource with one `observation` parameter per \
input Observation, not a Bundle (`oxbind fhir` wraps a Bundle's Observations for you)",
                format!("{root}.resourceType"),
            )]))
        }
        _ => {
            return Err(Refusal::malformed(vec![error(
                issue_type::STRUCTURE,
                "the operation takes a FHIR R4 Parameters resource (resourceType Parameters)",
                format!("{root}.resourceType"),
            )]))
        }
    }
    let parameters: ParametersIn = typed(value, root)?;
    let mut panel = Panel::default();
    let mut found = Found::default();
    let observation_count = parameters
        .parameter
        .iter()
        .filter(|p| p.name == parameter::OBSERVATION)
        .count();
    if observation_count == 0 {
        found.unprocessable.push(error(
            issue_type::REQUIRED,
            "give at least one `observation` parameter holding an input Observation",
            format!("{root}.parameter"),
        ));
    }
    if observation_count > MAX_INPUT_OBSERVATIONS {
        return Err(Refusal::unprocessable(vec![error(
            issue_type::TOO_COSTLY,
            format!(
                "at most {MAX_INPUT_OBSERVATIONS} input Observations per call; split the request"
            ),
            format!("{root}.parameter"),
        )]));
    }
    let mut first_subject: Option<(Option<Reference>, String)> = None;
    let mut first_encounter: Option<(Reference, String)> = None;
    let mut seen_options: BTreeMap<&str, String> = BTreeMap::new();
    for (index, param) in parameters.parameter.into_iter().enumerate() {
        let at = format!("{root}.parameter[{index}]");
        let name = param.name.clone();
        match name.as_str() {
            parameter::OBSERVATION => {
                let Some(resource) = only_resource(&param, &at, &mut found) else {
                    continue;
                };
                let read = read_observation(resource, &format!("{at}.resource"), &mut found);
                let Some(observation) = read else { continue };
                agree_on_patient(
                    &observation,
                    &format!("{at}.resource"),
                    &mut first_subject,
                    &mut first_encounter,
                    &mut found,
                );
                use_observation(
                    observation,
                    format!("{at}.resource"),
                    &mut panel,
                    &mut found,
                );
            }
            parameter::MODEL | parameter::UNIT_SYSTEM | parameter::BAROMETRIC_PRESSURE => {
                let key = match name.as_str() {
                    parameter::MODEL => parameter::MODEL,
                    parameter::UNIT_SYSTEM => parameter::UNIT_SYSTEM,
                    _ => parameter::BAROMETRIC_PRESSURE,
                };
                if let Some(first) = seen_options.insert(key, at.clone()) {
                    found.malformed.push(issue(
                        severity::ERROR,
                        issue_type::STRUCTURE,
                        format!("`{key}` may be given once"),
                        vec![format!("{first}.name"), format!("{at}.name")],
                    ));
                    continue;
                }
                read_option(key, &param, &at, &mut panel, &mut found);
            }
            _ => found.malformed.push(error(
                issue_type::NOT_SUPPORTED,
                format!(
                    "{} is not a parameter of this operation; its inputs are `observation`, \
`model`, `unitSystem` and `barometricPressure`",
                    element_name(&name, "this parameter name")
                ),
                format!("{at}.name"),
            )),
        }
    }
    if let Some((subject, _)) = first_subject {
        panel.subject = subject;
    }
    panel.encounter = first_encounter.map(|(e, _)| e);
    match found.into_refusal() {
        Some(refusal) => Err(refusal),
        None => Ok(panel),
    }
}

/// `value` as `T`, or a 400 naming the element that did not fit, under the
/// FHIRPath `base`.
pub fn typed<T: DeserializeOwned>(value: Value, base: &str) -> Result<T, Refusal> {
    serde_path_to_error::deserialize(value).map_err(|e| {
        let path = e.path().to_string();
        let at = if path == "." || path.is_empty() {
            base.to_owned()
        } else {
            format!("{base}.{path}")
        };
        Refusal::malformed(vec![shape_issue(&e.inner().to_string(), at)])
    })
}

/// An issue for a serde error message at `at`, naming the element (never
/// echoing a value: serde's own "invalid type" texts quote the value).
fn shape_issue(message: &str, at: String) -> Issue {
    let quoted = |prefix: &str| {
        message
            .strip_prefix(prefix)
            .and_then(|rest| rest.split('`').next())
            .map(str::to_owned)
    };
    if let Some(field) = quoted("unknown field `") {
        let element = element_name(&field, "an element");
        let at = if at.ends_with(&format!(".{field}")) {
            at
        } else {
            format!("{at}.{field}")
        };
        let hint = match field.as_str() {
            "modifierExtension" | "implicitRules" => {
                " (a modifier changes the meaning of the resource, and the operation cannot \
honour one)"
            }
            "component" | "hasMember" => {
                " (send each measurement as its own Observation, coded in LOINC)"
            }
            "contained" => " (contained resources are not read; reference them instead)",
            f if f.starts_with("value") => " (inputs are read from valueQuantity only)",
            f if f.starts_with("effective") => {
                " (the effective time is read from effectiveDateTime only)"
            }
            f if f.starts_with('_') => " (primitive extensions are not read)",
            _ => "",
        };
        return error(
            issue_type::STRUCTURE,
            format!("{element} is not an element this operation accepts here{hint}"),
            at,
        );
    }
    if let Some(field) = quoted("missing field `") {
        return error(
            issue_type::REQUIRED,
            format!("{} is required", element_name(&field, "an element")),
            format!("{at}.{field}"),
        );
    }
    if let Some(field) = quoted("duplicate field `") {
        return error(
            issue_type::STRUCTURE,
            format!("{} appears twice", element_name(&field, "an element")),
            at,
        );
    }
    error(
        issue_type::STRUCTURE,
        "this element does not have the JSON type FHIR R4 defines for it",
        at,
    )
}

/// `name` in backticks when it looks like an element name, else `fallback`
/// (a caller's text is never echoed unless it is a plain name).
fn element_name(name: &str, fallback: &str) -> String {
    let plain = !name.is_empty()
        && name.len() <= 64
        && name
            .chars()
            .all(|c| c.is_ascii_alphanumeric() || c == '_' || c == '-');
    if plain {
        format!("`{name}`")
    } else {
        fallback.to_owned()
    }
}

/// The resource of an `observation` parameter, which must hold nothing else.
fn only_resource(param: &ParameterIn, at: &str, found: &mut Found) -> Option<Value> {
    if param.value_code.is_some() || param.value_quantity.is_some() {
        found.malformed.push(error(
            issue_type::STRUCTURE,
            "`observation` takes a resource, not a value",
            at.to_owned(),
        ));
        return None;
    }
    match &param.resource {
        Some(resource) => Some(resource.clone()),
        None => {
            found.malformed.push(error(
                issue_type::REQUIRED,
                "`observation` needs its Observation in `resource`",
                format!("{at}.resource"),
            ));
            None
        }
    }
}

/// Read one option parameter into the panel.
fn read_option(key: &str, param: &ParameterIn, at: &str, panel: &mut Panel, found: &mut Found) {
    let wants_code = key != parameter::BAROMETRIC_PRESSURE;
    let (value_element, has_value, has_other) = if wants_code {
        (
            "valueCode",
            param.value_code.is_some(),
            param.value_quantity.is_some() || param.resource.is_some(),
        )
    } else {
        (
            "valueQuantity",
            param.value_quantity.is_some(),
            param.value_code.is_some() || param.resource.is_some(),
        )
    };
    if has_other || !has_value {
        found.malformed.push(error(
            issue_type::STRUCTURE,
            format!("`{key}` takes its value in `{value_element}` only"),
            format!("{at}.{value_element}"),
        ));
        return;
    }
    let expression = format!("{at}.{value_element}");
    match key {
        parameter::MODEL => {
            let code = param.value_code.as_deref().unwrap_or_default();
            match model_of(code) {
                Some(model) => {
                    panel.model = model as i32;
                    panel.model_expression = Some(expression);
                }
                None => found.unprocessable.push(error(
                    issue_type::CODE_INVALID,
                    format!(
                        "not a model this service offers; use one of: {}",
                        model_ids().join(", ")
                    ),
                    expression,
                )),
            }
        }
        parameter::UNIT_SYSTEM => match param.value_code.as_deref() {
            Some("conventional") => panel.unit_system = UnitSystem::Conventional as i32,
            Some("si") => panel.unit_system = UnitSystem::Si as i32,
            _ => found.unprocessable.push(error(
                issue_type::CODE_INVALID,
                "unitSystem is `conventional` (mm[Hg], g/dL, mL/dL, mL/min) or `si` (kPa, g/L, \
mmol/L, mmol/min)",
                expression,
            )),
        },
        _ => {
            let quantity = param.value_quantity.as_ref().expect("checked above");
            if let Some((value, unit)) = ucum_value(quantity, &expression, found) {
                panel.barometric_pressure = Some((WireQuantity { value, unit }, expression));
            }
        }
    }
}

/// The contract's Model for a catalog id.
fn model_of(id: &str) -> Option<WireModel> {
    crate::physiology::model::Model::from_id(id)?;
    Some(wire_model(id)).filter(|m| *m != WireModel::Unspecified)
}

fn model_ids() -> Vec<&'static str> {
    crate::physiology::model::catalog()
        .iter()
        .map(|info| info.id)
        .collect()
}

/// A valueQuantity's number and UCUM code, or the issues that prevent
/// reading it.
fn ucum_value(quantity: &Quantity, at: &str, found: &mut Found) -> Option<(f64, String)> {
    let mut ok = true;
    if quantity.comparator.is_some() {
        found.unprocessable.push(error(
            issue_type::NOT_SUPPORTED,
            "a value with a comparator is a bound, not a measurement, and cannot be computed from",
            format!("{at}.comparator"),
        ));
        ok = false;
    }
    if quantity.value.is_none() {
        found.unprocessable.push(error(
            issue_type::REQUIRED,
            "the quantity needs a value",
            format!("{at}.value"),
        ));
        ok = false;
    }
    if quantity.system.as_deref() != Some(UCUM_SYSTEM) {
        found.unprocessable.push(error(
            issue_type::CODE_INVALID,
            format!("the unit must be a UCUM code: system {UCUM_SYSTEM} with the code in `code`"),
            format!("{at}.system"),
        ));
        ok = false;
    }
    if quantity.code.is_none() {
        found.unprocessable.push(error(
            issue_type::REQUIRED,
            "the quantity needs its UCUM unit in `code`",
            format!("{at}.code"),
        ));
        ok = false;
    }
    if !ok {
        return None;
    }
    Some((quantity.value?, quantity.code.clone()?))
}

/// Read one Observation's shape; `None` when it cannot be used (the issues
/// are in `found`, or it is not an input and is listed as information).
fn read_observation(resource: Value, at: &str, found: &mut Found) -> Option<ObservationIn> {
    if resource.get("resourceType").and_then(Value::as_str) != Some("Observation") {
        found.malformed.push(error(
            issue_type::STRUCTURE,
            "`observation` takes an Observation resource",
            format!("{at}.resourceType"),
        ));
        return None;
    }
    let observation: ObservationIn = match typed(resource, at) {
        Ok(o) => o,
        Err(refusal) => {
            found.malformed.extend(refusal.issues);
            return None;
        }
    };
    let mut ok = true;
    if observation.status.is_none() {
        found.malformed.push(error(
            issue_type::REQUIRED,
            "`status` is required (FHIR R4 Observation.status 1..1)",
            format!("{at}.status"),
        ));
        ok = false;
    }
    if observation.code.is_none() {
        found.malformed.push(error(
            issue_type::REQUIRED,
            "`code` is required (FHIR R4 Observation.code 1..1)",
            format!("{at}.code"),
        ));
        ok = false;
    }
    if observation.value_quantity.is_some() && observation.data_absent_reason.is_some() {
        found.malformed.push(error(
            issue_type::INVARIANT,
            "obs-6: dataAbsentReason SHALL only be present if value[x] is not present",
            format!("{at}.dataAbsentReason"),
        ));
        ok = false;
    }
    if let Some(id) = &observation.id {
        if !is_fhir_id(id) {
            found.malformed.push(error(
                issue_type::VALUE,
                "an id is 1 to 64 letters, digits, `-` and `.` (FHIR R4 id)",
                format!("{at}.id"),
            ));
            ok = false;
        }
    }
    if let Some(effective) = &observation.effective_date_time {
        if !time::is_fhir_date_time(effective) {
            found.malformed.push(error(
                issue_type::VALUE,
                "not a FHIR dateTime (YYYY, YYYY-MM, YYYY-MM-DD, or a date and time with seconds \
and a time zone)",
                format!("{at}.effectiveDateTime"),
            ));
            ok = false;
        }
    }
    for (reference, element) in [
        (&observation.subject, "subject"),
        (&observation.encounter, "encounter"),
        (&observation.specimen, "specimen"),
    ] {
        if let Some(r) = reference {
            if r.reference.is_none() && r.identifier.is_none() && r.display.is_none() {
                found.malformed.push(error(
                    issue_type::INVARIANT,
                    "ref-1: a Reference needs a reference, an identifier or a display",
                    format!("{at}.{element}"),
                ));
                ok = false;
            }
        }
    }
    ok.then_some(observation)
}

/// FHIR R4 `id`: `[A-Za-z0-9\-\.]{1,64}`.
pub fn is_fhir_id(id: &str) -> bool {
    (1..=64).contains(&id.len())
        && id
            .chars()
            .all(|c| c.is_ascii_alphanumeric() || c == '-' || c == '.')
}

/// Every input Observation has the same subject, and those that name an
/// encounter name the same one.
fn agree_on_patient(
    observation: &ObservationIn,
    at: &str,
    first_subject: &mut Option<(Option<Reference>, String)>,
    first_encounter: &mut Option<(Reference, String)>,
    found: &mut Found,
) {
    match first_subject {
        None => *first_subject = Some((observation.subject.clone(), at.to_owned())),
        Some((subject, first_at)) => {
            if *subject != observation.subject {
                found.unprocessable.push(issue(
                    severity::ERROR,
                    issue_type::CONFLICT,
                    "the input Observations' subjects disagree (or one has none): every input \
must be about the same subject",
                    vec![format!("{first_at}.subject"), format!("{at}.subject")],
                ));
            }
        }
    }
    if let Some(encounter) = &observation.encounter {
        match first_encounter {
            None => *first_encounter = Some((encounter.clone(), at.to_owned())),
            Some((first, first_at)) => {
                if first != encounter {
                    found.unprocessable.push(issue(
                        severity::ERROR,
                        issue_type::CONFLICT,
                        "the input Observations name different encounters",
                        vec![format!("{first_at}.encounter"), format!("{at}.encounter")],
                    ));
                }
            }
        }
    }
}

/// The inputs an Observation's LOINC codings name.
fn inputs_named(observation: &ObservationIn) -> Vec<Input> {
    let mut inputs: Vec<Input> = observation
        .code
        .iter()
        .flat_map(|c| c.coding.iter().flatten())
        .filter(|c| c.system.as_deref() == Some(LOINC_SYSTEM))
        .filter_map(|c| c.code.as_deref().and_then(|code| MAPPING.input_for(code)))
        .collect();
    inputs.sort();
    inputs.dedup();
    // The vital-signs oxygen saturation profile requires 2708-6 beside the
    // pulse-oximetry code 59408-5 (https://hl7.org/fhir/R4/oxygensat.html,
    // US Core Pulse Oximetry): together they mean SpO2.
    if inputs == [Input::ArterialSo2, Input::Spo2] {
        inputs = vec![Input::Spo2];
    }
    inputs
}

/// Place a read Observation in the panel, or list it as not used.
fn use_observation(observation: ObservationIn, at: String, panel: &mut Panel, found: &mut Found) {
    let inputs = inputs_named(&observation);
    let input = match inputs.as_slice() {
        [] => {
            panel.information.push(issue(
                severity::INFORMATION,
                issue_type::INFORMATIONAL,
                "not used: no LOINC code in code.coding is one this operation reads (see the \
OperationDefinition)",
                vec![format!("{at}.code")],
            ));
            return;
        }
        [one] => *one,
        several => {
            let names: Vec<&str> = several.iter().map(|i| i.label()).collect();
            found.unprocessable.push(error(
                issue_type::CONFLICT,
                format!(
                    "code.coding names more than one input ({}); give one LOINC code",
                    names.join(", ")
                ),
                format!("{at}.code"),
            ));
            return;
        }
    };
    let status = observation.status.as_deref().unwrap_or_default();
    if !USABLE_STATUSES.contains(&status) {
        found.unprocessable.push(error(
            issue_type::BUSINESS_RULE,
            format!(
                "only results with status final, amended or corrected are derived from ({})",
                input.label()
            ),
            format!("{at}.status"),
        ));
        return;
    }
    let Some(quantity) = &observation.value_quantity else {
        if observation.data_absent_reason.is_some() {
            panel.information.push(issue(
                severity::INFORMATION,
                issue_type::INFORMATIONAL,
                format!(
                    "not used: the {} has no value (dataAbsentReason)",
                    input.label()
                ),
                vec![format!("{at}.dataAbsentReason")],
            ));
        } else {
            found.unprocessable.push(error(
                issue_type::REQUIRED,
                format!("the {} needs its value in valueQuantity", input.label()),
                format!("{at}.valueQuantity"),
            ));
        }
        return;
    };
    let Some(id) = observation.id.clone() else {
        found.unprocessable.push(error(
            issue_type::REQUIRED,
            format!(
                "the {} needs an id, so that derived values can point to it (derivedFrom)",
                input.label()
            ),
            format!("{at}.id"),
        ));
        return;
    };
    let Some((value, unit)) = ucum_value(quantity, &format!("{at}.valueQuantity"), found) else {
        return;
    };
    if let Some(&first) = panel.by_input.get(&input) {
        found.unprocessable.push(issue(
            severity::ERROR,
            issue_type::DUPLICATE,
            format!(
                "two Observations for the same input ({}); send one",
                input.label()
            ),
            vec![
                format!("{}.code", panel.observations[first].expression),
                format!("{at}.code"),
            ],
        ));
        return;
    }
    if let Some(other) = panel.observations.iter().find(|o| o.id == id) {
        found.unprocessable.push(issue(
            severity::ERROR,
            issue_type::DUPLICATE,
            "two input Observations share an id; derived values could not say which they come from",
            vec![format!("{}.id", other.expression), format!("{at}.id")],
        ));
        return;
    }
    panel.by_input.insert(input, panel.observations.len());
    panel.observations.push(InputObservation {
        input,
        expression: at,
        id,
        value,
        unit,
        specimen: observation.specimen,
        effective: observation.effective_date_time,
    });
}
