//! Writing the operation's answer: one derived Observation per value, the
//! Device that describes the service, one Provenance for the set, and an
//! OperationOutcome with the warnings and information.
//!
//! The inputs' `subject` and `encounter` are copied to every derived
//! Observation, `specimen` where its inputs share one, and the effective
//! time as given: the inputs' `effectiveDateTime` when they agree, the span
//! of them (`effectivePeriod`) when they differ.

use oxbind_proto::v1::{WarningCode, WarningSeverity};
use prost_types::Timestamp;

use super::{
    codes::MAPPING,
    compute::Computed,
    outcome::{error, issue, issue_type, severity, Refusal},
    panel::Panel,
    resources::{
        Annotation, CodeableConcept, Coding, DeviceName, DeviceOut, DeviceVersion, Issue,
        ObservationOut, OperationOutcome, ParameterOut, ParametersOut, Period, ProvenanceAgent,
        ProvenanceEntity, ProvenanceOut, Quantity, Reference, ResourceOut,
        OBSERVATION_CATEGORY_SYSTEM,
    },
    time,
};
use crate::{BUILD_COMMIT, SERVICE_VERSION};

/// The caution every Device carries.
pub const CAUTION: &str = "Decision support only: results support, and never replace, measured \
co-oximetry and the judgement of licensed clinicians; local laboratory policy decides which \
values are reported.";

/// The Device's id: the service's name, version and the first 12 digits of
/// its build commit (stable for one build).
pub fn device_id() -> String {
    let commit: String = BUILD_COMMIT.chars().take(12).collect();
    format!("oxbind-{SERVICE_VERSION}-{commit}")
}

/// The Device resource that describes the service.
pub fn device() -> DeviceOut {
    DeviceOut {
        resource_type: "Device",
        id: device_id(),
        status: "active",
        device_name: vec![DeviceName {
            name: "Oxbind".to_owned(),
            type_: "manufacturer-name",
        }],
        type_: CodeableConcept::text(
            "oxygen-haemoglobin dissociation calculation service (software)",
        ),
        version: vec![
            DeviceVersion {
                type_: CodeableConcept::text("software version"),
                value: SERVICE_VERSION.to_owned(),
            },
            DeviceVersion {
                type_: CodeableConcept::text("build commit"),
                value: BUILD_COMMIT.to_owned(),
            },
        ],
        note: vec![Annotation {
            text: CAUTION.to_owned(),
        }],
    }
}

fn new_id() -> String {
    uuid::Uuid::new_v4().to_string()
}

/// The answer for a computed panel.
pub fn parameters(panel: &Panel, computed: Computed) -> Result<ParametersOut, Refusal> {
    let device = device();
    let device_reference = format!("Device/{}", device.id);
    let recorded = computed
        .compute_time
        .unwrap_or_else(|| Timestamp::from(std::time::SystemTime::now()));
    let issued = time::instant(&recorded);
    let mut parameter = Vec::new();
    let mut targets = Vec::new();
    let mut positions = Vec::new();
    for derived in &computed.derived {
        let Some(coding) = MAPPING.coding_of(derived.output, &derived.unit) else {
            tracing::error!(
                output = derived.output.name(),
                unit = %derived.unit,
                "no coding in the mapping table for a derived value"
            );
            return Err(Refusal::with(
                http::StatusCode::INTERNAL_SERVER_ERROR,
                vec![error(
                    issue_type::EXCEPTION,
                    "the server could not code a derived value; this is a fault of the server",
                    "Parameters".to_owned(),
                )],
            ));
        };
        let (effective_date_time, effective_period) = effective(panel, &derived.derived_from)?;
        let id = new_id();
        targets.push(Reference::to(format!("Observation/{id}")));
        positions.push(parameter.len());
        let observation = ObservationOut {
            resource_type: "Observation",
            id,
            status: "final",
            category: vec![CodeableConcept::coded(
                OBSERVATION_CATEGORY_SYSTEM,
                "laboratory",
                Some("Laboratory"),
            )],
            code: CodeableConcept {
                coding: Some(vec![Coding {
                    system: Some(coding.system.to_owned()),
                    code: Some(coding.code.clone()),
                    display: coding.display.clone(),
                    ..Coding::default()
                }]),
                text: Some(derived.output.label().to_owned()),
                ..CodeableConcept::default()
            },
            subject: panel.subject.clone(),
            encounter: panel.encounter.clone(),
            effective_date_time,
            effective_period,
            issued: issued.clone(),
            value_quantity: Quantity::ucum(derived.value, &derived.unit),
            method: CodeableConcept::text(derived.method.clone()),
            specimen: shared_specimen(panel, &derived.derived_from),
            device: Reference::to(device_reference.clone()),
            derived_from: derived
                .derived_from
                .iter()
                .map(|&i| Reference::to(format!("Observation/{}", panel.observations[i].id)))
                .collect(),
        };
        parameter.push(ParameterOut {
            name: "observation",
            resource: ResourceOut::Observation(Box::new(observation)),
        });
    }
    let provenance = ProvenanceOut {
        resource_type: "Provenance",
        id: new_id(),
        target: targets,
        recorded: issued,
        activity: CodeableConcept::text("derivation of oxygen-transport values"),
        agent: vec![ProvenanceAgent {
            who: Reference::to(device_reference),
        }],
        entity: used_inputs(&computed)
            .into_iter()
            .map(|i| ProvenanceEntity {
                role: "derivation",
                what: Reference::to(format!("Observation/{}", panel.observations[i].id)),
            })
            .collect(),
    };
    let mut issues = warnings(panel, &computed, &positions);
    issues.extend(panel.information.iter().cloned());
    issues.extend(computed.information.iter().cloned());
    parameter.push(ParameterOut {
        name: "device",
        resource: ResourceOut::Device(Box::new(device)),
    });
    parameter.push(ParameterOut {
        name: "provenance",
        resource: ResourceOut::Provenance(Box::new(provenance)),
    });
    if !issues.is_empty() {
        parameter.push(ParameterOut {
            name: "outcome",
            resource: ResourceOut::OperationOutcome(OperationOutcome::new(issues)),
        });
    }
    Ok(ParametersOut {
        resource_type: "Parameters",
        parameter,
    })
}

/// Panel indices used by any derived value, in request order.
fn used_inputs(computed: &Computed) -> Vec<usize> {
    let mut used: Vec<usize> = computed
        .derived
        .iter()
        .flat_map(|d| d.derived_from.iter().copied())
        .collect();
    used.sort_unstable();
    used.dedup();
    used
}

/// Each call's warnings, pointing at the derived Observations of that call
/// (at the answer as a whole when it derived none).
fn warnings(panel: &Panel, computed: &Computed, positions: &[usize]) -> Vec<Issue> {
    let mut issues = Vec::new();
    for (call_index, call) in computed.calls.iter().enumerate() {
        if call.warnings.is_empty() {
            continue;
        }
        let mut expression: Vec<String> = computed
            .derived
            .iter()
            .zip(positions)
            .filter(|(d, _)| d.call == call_index)
            .map(|(_, &p)| format!("Parameters.parameter[{p}].resource"))
            .collect();
        if expression.is_empty() {
            expression = vec!["Parameters".to_owned()];
        }
        for found in &call.warnings {
            let code = WarningCode::try_from(found.warning.code)
                .unwrap_or(WarningCode::Unspecified)
                .as_str_name();
            // The expressions name the answer's derived Observations; the
            // input a warning is about is named by its id.
            let diagnostics = match found.input {
                Some(i) => {
                    let input = &panel.observations[i];
                    format!(
                        "{} (Observation/{}): {}",
                        input.input.label(),
                        input.id,
                        found.warning.message
                    )
                }
                None => found.warning.message.clone(),
            };
            // A caution is a FHIR warning; an informational finding (a
            // condition the model ignores inside its standard range) is
            // information.
            let level = match WarningSeverity::try_from(found.warning.severity) {
                Ok(WarningSeverity::Informational) => severity::INFORMATION,
                _ => severity::WARNING,
            };
            let mut warning = issue(
                level,
                issue_type::INFORMATIONAL,
                diagnostics,
                expression.clone(),
            );
            warning.details = Some(CodeableConcept::text(code));
            issues.push(warning);
        }
    }
    issues
}

/// The specimen every input of a value shares, if they share one.
fn shared_specimen(panel: &Panel, from: &[usize]) -> Option<Reference> {
    let mut specimens = from
        .iter()
        .filter_map(|&i| panel.observations[i].specimen.as_ref());
    let first = specimens.next()?;
    specimens.all(|s| s == first).then(|| first.clone())
}

/// The effective time of a value derived from `from`: the inputs'
/// effectiveDateTime when those that carry one agree, the span when they
/// differ (which needs full date-times to be ordered).
fn effective(panel: &Panel, from: &[usize]) -> Result<(Option<String>, Option<Period>), Refusal> {
    let mut distinct: Vec<(&str, &str)> = Vec::new();
    for &i in from {
        let o = &panel.observations[i];
        if let Some(t) = o.effective.as_deref() {
            if !distinct.iter().any(|d| d.0 == t) {
                distinct.push((t, o.expression.as_str()));
            }
        }
    }
    match distinct.as_slice() {
        [] => Ok((None, None)),
        [(one, _)] => Ok((Some((*one).to_owned()), None)),
        several => {
            let mut ordered = Vec::with_capacity(several.len());
            for (text, _) in several {
                match time::instant_of(text) {
                    Some(instant) => ordered.push((instant, *text)),
                    None => {
                        return Err(Refusal::unprocessable(vec![issue(
                            severity::ERROR,
                            issue_type::BUSINESS_RULE,
                            "inputs of one derived value have different effective times that are not all full date-times with a time zone, so their span cannot be stated",
                            several
                                .iter()
                                .map(|(_, at)| format!("{at}.effectiveDateTime"))
                                .collect(),
                        )]))
                    }
                }
            }
            ordered.sort();
            let start = ordered
                .first()
                .map(|(_, t)| (*t).to_owned())
                .unwrap_or_default();
            let end = ordered
                .last()
                .map(|(_, t)| (*t).to_owned())
                .unwrap_or_default();
            Ok((None, Some(Period { start, end })))
        }
    }
}
