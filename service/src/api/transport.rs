//! `oxbind.v1.OxygenTransportService`: oxygen content, delivery and
//! consumption, and gas-exchange indices; one transport-neutral function per
//! RPC (see [`super::dissociation`] for the pattern).

use oxbind_proto::v1::{
    AlveolarEquation, BloodSample, GasExchangeRequest, GasExchangeResponse, InputUsed,
    OxygenContentRequest, OxygenContentResponse, Quantity, SaturationKind as WireSaturationKind,
    Warning, WarningCode,
};

use super::{
    field_path::FieldPath,
    limits,
    model_choice::choose_model,
    observe::Observed,
    provenance::{self, Method},
    reader::RequestReader,
    status::{InvalidRequest, Violation, REASON_INCONSISTENT, REASON_UNKNOWN_ENUM},
    uncertainty::{self, Call, Requested, ValueUnit},
    units::{self, QuantityKind},
    warnings::{condition_field, warning},
};
use crate::physiology::{
    conditions::{Condition, Conditions},
    content::{self, BloodOxygenSample, OxygenTransportInput, SaturationKind},
    error::{Input, PhysiologyError},
    gas_exchange::{self, AlveolarGasForm, AlveolarGasInput, ShuntInput},
    model::{DissociationModel, Model},
    uncertainty::{
        AlveolarInputs, AlveolarValue, ContentInputs, ContentSample, DerivedQuantity, ImputedPao2,
        OxygenContentValue, Pao2Fio2Ratio, SampleSaturation,
    },
};

/// The published methods behind oxygen content and transport.
pub const OXYGEN_CONTENT_METHOD: Method = Method {
    version: "1",
    reference: "Oxygen content = Hüfner factor x Hb x saturation + 0.0031 mL/dL/mm[Hg] x PO2 \
(Hüfner factors: Dijkhuizen P et al. Pflügers Arch 1977;369:223-231); delivery = cardiac output x \
arterial content; consumption by the Fick principle",
    doi: "10.1007/BF00582188",
};

/// The published methods behind the gas-exchange indices.
pub const GAS_EXCHANGE_METHOD: Method = Method {
    version: "1",
    reference: "Alveolar gas equation (full and simplified forms); shunt Qs/Qt = (CcO2 - CaO2) / \
(CcO2 - CvO2); PaO2/FiO2 (ARDS Definition Task Force, JAMA 2012;307(23):2526-2533); oxygenation \
and oxygen saturation indices; PaO2 imputed from SpO2 by the nonlinear method of Brown SM et al., \
Chest 2016;150(2):307-313 (the Ellis 1989 inverse of Severinghaus 1979 Eq. 1)",
    doi: "10.1016/j.chest.2016.01.003",
};

/// A blood sample read from the request, with its saturation resolved.
struct ReadSample {
    sample: BloodOxygenSample,
    calculated: bool,
    /// The model and conditions a calculated saturation came from.
    model: Model,
    conditions: Conditions,
    /// Conditions or a model were given with a measured saturation, which
    /// makes them unused.
    unused_conditions: bool,
}

/// Read a `BloodSample` at `path`. `fallback_po2` supplies the tension when
/// the sample has none (GasExchange's `pao2`). The saturation is computed
/// through the sample's model when absent (and `calculated` is set).
fn read_sample(
    reader: &mut RequestReader,
    sample: &BloodSample,
    path: &FieldPath<'_>,
    fallback_po2: Option<f64>,
) -> Option<ReadSample> {
    let po2_path = path.field("po2");
    let po2 = match (sample.po2.as_ref(), fallback_po2) {
        (None, Some(po2)) => Some(po2),
        (given, _) => {
            reader.required_quantity(given, &po2_path, QuantityKind::Pressure, &limits::PRESSURE)
        }
    };
    let kind = match WireSaturationKind::try_from(sample.saturation_kind) {
        Ok(WireSaturationKind::Fractional) => SaturationKind::Fractional,
        Ok(_) => SaturationKind::Functional,
        Err(_) => {
            reader.refuse(Violation::other(
                &path.field("saturation_kind"),
                REASON_UNKNOWN_ENUM,
                "not a known oxbind.v1.SaturationKind value",
            ));
            SaturationKind::Functional
        }
    };
    let saturation = sample.saturation_fraction.and_then(|s| {
        reader.number(
            s,
            &path.field("saturation_fraction"),
            &limits::SATURATION_MEASURED,
            QuantityKind::Fraction,
        )
    });
    let cohb = reader.quantity(
        sample.cohb.as_ref(),
        &path.field("cohb"),
        QuantityKind::Fraction,
        &limits::DYSHEMOGLOBIN_FRACTION,
    );
    let methb = reader.quantity(
        sample.methb.as_ref(),
        &path.field("methb"),
        QuantityKind::Fraction,
        &limits::DYSHEMOGLOBIN_FRACTION,
    );
    // Conditions and model only serve to calculate a missing saturation;
    // with a measured one they are not read (and the caller is warned).
    let measured = sample.saturation_fraction.is_some();
    let unused_conditions =
        measured && (sample.conditions.is_some() || sample.model != 0 || sample.hill.is_some());
    let conditions_path = path.field("conditions");
    let model = if measured {
        crate::physiology::model::DEFAULT_MODEL
    } else {
        choose_model(reader, sample.model, sample.hill.as_ref(), path)
    };
    let mut conditions = if measured {
        crate::physiology::conditions::Conditions::default()
    } else {
        reader.conditions(sample.conditions.as_ref(), &conditions_path, &model)
    };
    // One COHb and one MetHb per sample: the sample's own field, else the
    // conditions'; both set and different is refused.
    for (own, from_conditions, name) in [
        (cohb, &mut conditions.cohb_fraction, "cohb"),
        (methb, &mut conditions.methb_fraction, "methb"),
    ] {
        match (own, *from_conditions) {
            (Some(a), Some(b)) if a != b => reader.refuse(Violation::other(
                &path.field(name),
                REASON_INCONSISTENT,
                format!("differs from conditions.{name}; give one value"),
            )),
            (Some(a), None) => *from_conditions = Some(a),
            _ => {}
        }
    }
    reader.dyshemoglobin_sum(
        conditions.cohb_fraction,
        conditions.methb_fraction,
        &path.field("cohb"),
    );
    let po2 = po2?;
    if reader.has_violations() {
        return None;
    }
    let (saturation, calculated, kind) = match saturation {
        Some(s) => (s, false, kind),
        None => match model.saturation(po2, &conditions) {
            Ok(s) => (s, true, SaturationKind::Functional),
            Err(e) => {
                let field = sample_engine_field(e.input(), path, &conditions_path);
                reader.refuse(Violation::from_physiology_at(field, &e));
                return None;
            }
        },
    };
    Some(ReadSample {
        sample: BloodOxygenSample {
            saturation_fraction: saturation,
            saturation_kind: kind,
            po2_mmhg: po2,
            cohb_fraction: conditions.cohb_fraction,
            methb_fraction: conditions.methb_fraction,
        },
        calculated,
        model,
        conditions,
        unused_conditions,
    })
}

impl ReadSample {
    /// The sample as the uncertainty engine takes it.
    fn content_sample(&self) -> ContentSample {
        ContentSample {
            saturation: if self.calculated {
                SampleSaturation::Calculated {
                    model: self.model,
                    conditions: self.conditions,
                }
            } else {
                SampleSaturation::Measured {
                    fraction: self.sample.saturation_fraction,
                    kind: self.sample.saturation_kind,
                }
            },
            po2_mmhg: self.sample.po2_mmhg,
            cohb_fraction: self.sample.cohb_fraction,
            methb_fraction: self.sample.methb_fraction,
        }
    }
}

/// The request field an engine refusal names when a sample's saturation is
/// calculated: a condition under the sample's `conditions`, a Hill parameter
/// under its `hill`, and anything else its PO2.
fn sample_engine_field(input: Input, sample: &FieldPath<'_>, conditions: &FieldPath<'_>) -> String {
    let condition = Condition::ALL.iter().copied().find(|c| c.input() == input);
    match (input, condition) {
        (_, Some(Condition::Ph)) => conditions.field("ph").render(),
        (_, Some(c)) => conditions.field(condition_field(c)).field("value").render(),
        (Input::P50, _) => sample.field("hill").field("p50").field("value").render(),
        (Input::HillN, _) => sample.field("hill").field("n").render(),
        _ => sample.field("po2").field("value").render(),
    }
}

/// The default Hüfner factor as used: it depends on the saturation kind, so
/// provenance records the one the engine chose.
fn default_hufner_used(factor_ml_per_g: f64) -> InputUsed {
    InputUsed {
        name: "hufner_factor_ml_per_g".to_owned(),
        value: Some(Quantity {
            value: factor_ml_per_g,
            unit: "mL/g".to_owned(),
        }),
        defaulted: true,
    }
}

fn unused_conditions_warning(path: &str) -> Warning {
    warning(
        WarningCode::ConditionNotModelled,
        format!("{path}.conditions"),
        "conditions and model are used only to calculate a missing saturation; with a measured saturation they were not used",
    )
}

/// The warnings a sample read from `path` draws.
fn sample_warnings(sample: &ReadSample, path: &str, out: &mut Vec<Warning>) {
    if sample.calculated {
        out.push(calculated_warning(&format!("{path}.saturation_fraction")));
    }
    if sample.unused_conditions {
        out.push(unused_conditions_warning(path));
    }
}

fn calculated_warning(path: &str) -> Warning {
    warning(
        WarningCode::SaturationCalculated,
        path.to_owned(),
        "saturation calculated from PO2 through a model, not measured; prefer a measured co-oximetry value",
    )
}

fn engine_refusal(error: &PhysiologyError) -> InvalidRequest {
    let field = match error.input() {
        Input::Hemoglobin => "hemoglobin.value",
        Input::Saturation => "arterial.saturation_fraction",
        Input::Po2 => "arterial.po2.value",
        Input::VenousSaturation => "venous.saturation_fraction",
        Input::VenousPo2 => "venous.po2.value",
        Input::CardiacOutput => "cardiac_output.value",
        Input::HufnerFactor => "hufner_factor_ml_per_g",
        Input::Cohb => "arterial.cohb.value",
        Input::Methb => "arterial.methb.value",
        Input::Fio2 => "fio2.value",
        Input::BarometricPressure => "barometric_pressure.value",
        Input::Paco2 => "paco2.value",
        Input::Pao2 => "pao2.value",
        Input::RespiratoryQuotient => "respiratory_quotient",
        Input::Spo2 => "spo2_fraction",
        Input::MeanAirwayPressure => "mean_airway_pressure.value",
        Input::Temperature => "body_temperature.value",
        other => other.name(),
    };
    InvalidRequest::one(Violation::from_physiology_at(field.to_owned(), error))
}

/// OxygenContent for one request.
pub fn compute_oxygen_content(
    request: &OxygenContentRequest,
) -> Result<OxygenContentResponse, InvalidRequest> {
    oxygen_content_response(request).inspect(Observed::observe)
}

fn oxygen_content_response(
    request: &OxygenContentRequest,
) -> Result<OxygenContentResponse, InvalidRequest> {
    let root = FieldPath::ROOT;
    let mut reader = RequestReader::new(request.unit_system);
    let system = reader.system();
    let hemoglobin = reader.required_quantity(
        request.hemoglobin.as_ref(),
        &root.field("hemoglobin"),
        QuantityKind::Hemoglobin,
        &limits::HEMOGLOBIN,
    );
    let arterial_path = root.field("arterial");
    let arterial = match request.arterial.as_ref() {
        Some(sample) => read_sample(&mut reader, sample, &arterial_path, None),
        None => {
            reader.refuse(Violation::required(&arterial_path));
            None
        }
    };
    let venous = request
        .venous
        .as_ref()
        .and_then(|sample| read_sample(&mut reader, sample, &root.field("venous"), None));
    let cardiac_output = reader.quantity(
        request.cardiac_output.as_ref(),
        &root.field("cardiac_output"),
        QuantityKind::BloodFlow,
        &limits::CARDIAC_OUTPUT,
    );
    let hufner = request.hufner_factor_ml_per_g.and_then(|k| {
        reader.number(
            k,
            &root.field("hufner_factor_ml_per_g"),
            &limits::HUFNER_FACTOR,
            QuantityKind::Fraction,
        )
    });
    let requested = uncertainty::read(
        &mut reader,
        request.uncertainty.as_ref(),
        &uncertainty::OXYGEN_CONTENT_INPUTS,
        Call::Single,
    );
    let inputs_used = reader.finish()?;
    let (Some(hemoglobin), Some(arterial)) = (hemoglobin, arterial) else {
        // finish() has already refused any request lacking either.
        return Err(InvalidRequest::one(Violation::required(&arterial_path)));
    };

    let transport = content::oxygen_transport(&OxygenTransportInput {
        hemoglobin_g_per_dl: hemoglobin,
        arterial: arterial.sample,
        venous: venous.as_ref().map(|v| v.sample),
        cardiac_output_l_per_min: cardiac_output,
        hufner_factor_ml_per_g: hufner,
    })
    .map_err(|e| engine_refusal(&e))?;

    let mut found = Vec::new();
    sample_warnings(&arterial, "arterial", &mut found);
    if let Some(venous) = &venous {
        sample_warnings(venous, "venous", &mut found);
    }
    let mut inputs_used = inputs_used;
    if hufner.is_none() {
        inputs_used.push(default_hufner_used(
            transport.arterial.hufner_factor_ml_per_g,
        ));
    }
    let content = |v: f64| units::from_engine(v, QuantityKind::OxygenContent, system);
    let flow = |v: f64| units::from_engine(v, QuantityKind::OxygenFlow, system);
    let uncertainties = match &requested {
        Some(requested) => {
            let inputs = ContentInputs {
                hemoglobin_g_per_dl: hemoglobin,
                hufner_factor_ml_per_g: hufner,
                arterial: arterial.content_sample(),
                venous: venous.as_ref().map(ReadSample::content_sample),
            };
            let mut not_evaluated = vec!["oxygen_capacity"];
            if transport.delivery_ml_per_min.is_some() {
                not_evaluated.push("delivery");
            }
            if transport.consumption_ml_per_min.is_some() {
                not_evaluated.push("consumption");
            }
            found.extend(uncertainty::not_evaluated(&not_evaluated));
            content_uncertainties(requested, inputs, system)?
        }
        None => Vec::new(),
    };
    Ok(OxygenContentResponse {
        arterial_content: Some(content(transport.arterial.total_ml_per_dl)),
        venous_content: transport.venous.map(|v| content(v.total_ml_per_dl)),
        arteriovenous_difference: transport.arteriovenous_difference_ml_per_dl.map(content),
        extraction_fraction: transport.extraction_fraction,
        oxygen_capacity: Some(content(transport.oxygen_capacity_ml_per_dl)),
        delivery: transport.delivery_ml_per_min.map(flow),
        consumption: transport.consumption_ml_per_min.map(flow),
        provenance: Some(provenance::for_method(
            &OXYGEN_CONTENT_METHOD,
            inputs_used,
            true,
        )),
        warnings: found,
        uncertainties,
    })
}

/// The uncertainty of each content value the response carries, in its
/// order: arterial, then (with a venous sample) venous, the difference and
/// the extraction.
fn content_uncertainties(
    requested: &Requested,
    inputs: ContentInputs,
    system: oxbind_proto::v1::UnitSystem,
) -> Result<Vec<oxbind_proto::v1::UncertaintyResult>, InvalidRequest> {
    let mut values = vec![(
        "arterial_content",
        DerivedQuantity::ArterialContent,
        ValueUnit::OxygenContent,
    )];
    if inputs.venous.is_some() {
        values.extend([
            (
                "venous_content",
                DerivedQuantity::VenousContent,
                ValueUnit::OxygenContent,
            ),
            (
                "arteriovenous_difference",
                DerivedQuantity::ArteriovenousDifference,
                ValueUnit::OxygenContent,
            ),
            (
                "extraction_fraction",
                DerivedQuantity::ExtractionFraction,
                ValueUnit::Fraction,
            ),
        ]);
    }
    values
        .into_iter()
        .map(|(name, quantity, unit)| {
            let f = OxygenContentValue::new(quantity, inputs).map_err(|e| engine_refusal(&e))?;
            requested.evaluate(name, &f, unit, system)
        })
        .collect()
}

/// Why the shunt inputs are required together.
const SHUNT_PURPOSE: &str =
    "the shunt fraction, which hemoglobin, arterial and venous serve (one of them was given)";

/// GasExchange for one request.
pub fn compute_gas_exchange(
    request: &GasExchangeRequest,
) -> Result<GasExchangeResponse, InvalidRequest> {
    gas_exchange_response(request).inspect(Observed::observe)
}

fn gas_exchange_response(
    request: &GasExchangeRequest,
) -> Result<GasExchangeResponse, InvalidRequest> {
    let root = FieldPath::ROOT;
    let mut reader = RequestReader::new(request.unit_system);
    let system = reader.system();
    let fio2 = reader.required_quantity(
        request.fio2.as_ref(),
        &root.field("fio2"),
        QuantityKind::Fraction,
        &limits::FIO2,
    );
    let barometric = reader.quantity_or(
        request.barometric_pressure.as_ref(),
        &root.field("barometric_pressure"),
        QuantityKind::Pressure,
        &limits::BAROMETRIC_PRESSURE,
        gas_exchange::SEA_LEVEL_BAROMETRIC_PRESSURE_MMHG,
    );
    let paco2 = reader.quantity(
        request.paco2.as_ref(),
        &root.field("paco2"),
        QuantityKind::Pressure,
        &limits::PRESSURE,
    );
    let pao2 = reader.quantity(
        request.pao2.as_ref(),
        &root.field("pao2"),
        QuantityKind::Pressure,
        &limits::PRESSURE,
    );
    let quotient = reader.number_or(
        request.respiratory_quotient,
        &root.field("respiratory_quotient"),
        &limits::RESPIRATORY_QUOTIENT,
        QuantityKind::Fraction,
        gas_exchange::RESPIRATORY_QUOTIENT_DEFAULT,
    );
    let spo2 = request.spo2_fraction.and_then(|s| {
        reader.number(
            s,
            &root.field("spo2_fraction"),
            &limits::SPO2,
            QuantityKind::Fraction,
        )
    });
    let mean_airway = reader.quantity(
        request.mean_airway_pressure.as_ref(),
        &root.field("mean_airway_pressure"),
        QuantityKind::AirwayPressure,
        &limits::MEAN_AIRWAY_PRESSURE,
    );
    let hemoglobin = reader.quantity(
        request.hemoglobin.as_ref(),
        &root.field("hemoglobin"),
        QuantityKind::Hemoglobin,
        &limits::HEMOGLOBIN,
    );
    let body_temperature = reader.quantity_or(
        request.body_temperature.as_ref(),
        &root.field("body_temperature"),
        QuantityKind::Temperature,
        &limits::TEMPERATURE,
        crate::physiology::conditions::STANDARD_TEMPERATURE_CELSIUS,
    );
    let form = match AlveolarEquation::try_from(request.alveolar_equation) {
        Ok(AlveolarEquation::Simplified) => AlveolarGasForm::Simplified,
        Ok(_) => AlveolarGasForm::Full,
        Err(_) => {
            reader.refuse(Violation::other(
                &root.field("alveolar_equation"),
                REASON_UNKNOWN_ENUM,
                "not a known oxbind.v1.AlveolarEquation value",
            ));
            AlveolarGasForm::Full
        }
    };
    // The samples and the haemoglobin serve only the shunt fraction: any of
    // them given asks for it, and then everything it needs is required, so
    // that nothing given is ignored. The arterial sample's PO2 defaults to
    // pao2; both given must agree, whether or not the shunt is computed.
    let arterial_path = root.field("arterial");
    let given_arterial = request.arterial.clone().unwrap_or_default();
    if let (Some(own), Some(pao2)) = (given_arterial.po2.as_ref(), pao2) {
        if let Ok(own) = units::to_engine(own.value, &own.unit, QuantityKind::Pressure) {
            if (own - pao2).abs() > 1e-9 * pao2 {
                reader.refuse(Violation::other(
                    &arterial_path.field("po2"),
                    REASON_INCONSISTENT,
                    "differs from pao2; give one value",
                ));
            }
        }
    }
    let wants_shunt =
        request.hemoglobin.is_some() || request.venous.is_some() || request.arterial.is_some();
    let mut arterial = None;
    let mut venous = None;
    if wants_shunt {
        for (missing, name) in [
            (request.hemoglobin.is_none(), "hemoglobin"),
            (request.venous.is_none(), "venous"),
            (request.paco2.is_none(), "paco2"),
        ] {
            if missing {
                reader.refuse(Violation::required_for(&root.field(name), SHUNT_PURPOSE));
            }
        }
        match (given_arterial.po2.is_some(), request.pao2.is_some()) {
            (false, false) => {
                reader.refuse(Violation::required_for(&root.field("pao2"), SHUNT_PURPOSE));
            }
            // A pao2 that was given but refused is already named.
            (false, true) if pao2.is_none() => {}
            _ => arterial = read_sample(&mut reader, &given_arterial, &arterial_path, pao2),
        }
        venous = request
            .venous
            .as_ref()
            .and_then(|v| read_sample(&mut reader, v, &root.field("venous"), None));
    }
    let requested = uncertainty::read(
        &mut reader,
        request.uncertainty.as_ref(),
        &uncertainty::GAS_EXCHANGE_INPUTS,
        Call::Single,
    );
    let mut inputs_used = reader.finish()?;
    let fio2 = fio2.unwrap_or(gas_exchange::FIO2_MIN_FRACTION);
    let refuse = |e: PhysiologyError| engine_refusal(&e);
    let system_pressure = |v: f64| units::from_engine(v, QuantityKind::Pressure, system);
    // A ratio PaO2/FiO2 in the response's pressure unit.
    let ratio_in_system = |mmhg_per_fraction: f64| {
        units::from_engine(mmhg_per_fraction, QuantityKind::Pressure, system).value
    };

    let mut found = Vec::new();
    let mut response = GasExchangeResponse::default();
    let alveolar = match paco2 {
        Some(paco2) => Some(
            gas_exchange::alveolar_po2_mmhg(
                &AlveolarGasInput {
                    fio2_fraction: fio2,
                    barometric_pressure_mmhg: barometric,
                    paco2_mmhg: paco2,
                    respiratory_quotient: quotient,
                    body_temperature_celsius: body_temperature,
                },
                form,
            )
            .map_err(refuse)?
            .alveolar_po2_mmhg,
        ),
        None => None,
    };
    response.alveolar_po2 = alveolar.map(system_pressure);
    if let (Some(alveolar), Some(pao2)) = (alveolar, pao2) {
        let gradient =
            gas_exchange::alveolar_arterial_gradient_mmhg(alveolar, pao2).map_err(refuse)?;
        response.alveolar_arterial_gradient = Some(system_pressure(gradient));
    }
    if let Some(pao2) = pao2 {
        let ratio = gas_exchange::pao2_fio2_ratio_mmhg(pao2, fio2).map_err(refuse)?;
        response.pao2_fio2_ratio = Some(ratio_in_system(ratio));
        if let Some(map) = mean_airway {
            response.oxygenation_index =
                Some(gas_exchange::oxygenation_index(fio2, map, pao2).map_err(refuse)?);
        }
    }
    if let Some(spo2) = spo2 {
        response.spo2_fio2_ratio = Some(gas_exchange::spo2_fio2_ratio(spo2, fio2).map_err(refuse)?);
        if let Some(map) = mean_airway {
            response.oxygen_saturation_index =
                Some(gas_exchange::oxygen_saturation_index(fio2, map, spo2).map_err(refuse)?);
        }
        if spo2 > 0.0 && spo2 < 1.0 {
            let imputed = gas_exchange::impute_pao2_from_spo2(spo2).map_err(refuse)?;
            response.imputed_pao2 = Some(system_pressure(imputed.pao2_mmhg));
            response.imputed_pao2_fio2_ratio = Some(ratio_in_system(imputed.pao2_mmhg / fio2));
            if !imputed.is_valid() {
                found.push(warning(
                    WarningCode::ImputationNotValid,
                    "spo2_fraction".to_owned(),
                    format!(
                        "imputing PaO2 from SpO2 was validated only up to SpO2 {} (Brown et al. 2016); do not use imputed_pao2",
                        gas_exchange::IMPUTATION_MAX_SPO2_FRACTION
                    ),
                ));
            }
        } else {
            found.push(warning(
                WarningCode::ImputationNotValid,
                "spo2_fraction".to_owned(),
                "SpO2 of 0 or 1 has no finite PaO2 on the curve; no PaO2 was imputed",
            ));
        }
    }
    if let (Some(hemoglobin), Some(alveolar), Some(arterial), Some(venous)) =
        (hemoglobin, alveolar, &arterial, &venous)
    {
        let shunt = gas_exchange::shunt_fraction(&ShuntInput {
            hemoglobin_g_per_dl: hemoglobin,
            alveolar_po2_mmhg: alveolar,
            arterial: arterial.sample,
            venous: venous.sample,
            hufner_factor_ml_per_g: None,
        })
        .map_err(refuse)?;
        response.shunt_fraction = Some(shunt.shunt_fraction);
        inputs_used.push(default_hufner_used(shunt.arterial.hufner_factor_ml_per_g));
        sample_warnings(arterial, "arterial", &mut found);
        sample_warnings(venous, "venous", &mut found);
    }
    if let Some(requested) = &requested {
        let alveolar_inputs = AlveolarInputs {
            fio2_fraction: fio2,
            barometric_pressure_mmhg: barometric,
            paco2_mmhg: paco2.unwrap_or_default(),
            respiratory_quotient: quotient,
            body_temperature_celsius: body_temperature,
            form,
        };
        response.uncertainties =
            gas_exchange_uncertainties(requested, &response, alveolar_inputs, pao2, spo2, system)?;
        let not_evaluated: Vec<&str> = [
            ("spo2_fio2_ratio", response.spo2_fio2_ratio.is_some()),
            ("oxygenation_index", response.oxygenation_index.is_some()),
            (
                "oxygen_saturation_index",
                response.oxygen_saturation_index.is_some(),
            ),
            ("shunt_fraction", response.shunt_fraction.is_some()),
        ]
        .into_iter()
        .filter_map(|(name, set)| set.then_some(name))
        .collect();
        found.extend(uncertainty::not_evaluated(&not_evaluated));
    }
    response.provenance = Some(provenance::for_method(
        &GAS_EXCHANGE_METHOD,
        inputs_used,
        true,
    ));
    response.warnings = found;
    Ok(response)
}

/// The uncertainty of each gas-exchange value the response carries, in the
/// order alveolar PO2, A-a gradient, PaO2/FiO2, imputed PaO2, imputed
/// PaO2/FiO2.
fn gas_exchange_uncertainties(
    requested: &Requested,
    response: &GasExchangeResponse,
    alveolar: AlveolarInputs,
    pao2: Option<f64>,
    spo2: Option<f64>,
    system: oxbind_proto::v1::UnitSystem,
) -> Result<Vec<oxbind_proto::v1::UncertaintyResult>, InvalidRequest> {
    let refuse = |e: PhysiologyError| engine_refusal(&e);
    let mut out = Vec::new();
    if response.alveolar_po2.is_some() {
        let f = AlveolarValue::alveolar_po2(alveolar).map_err(refuse)?;
        out.push(requested.evaluate("alveolar_po2", &f, ValueUnit::Pressure, system)?);
    }
    if let (Some(pao2), true) = (pao2, response.alveolar_arterial_gradient.is_some()) {
        let f = AlveolarValue::gradient(alveolar, pao2).map_err(refuse)?;
        out.push(requested.evaluate(
            "alveolar_arterial_gradient",
            &f,
            ValueUnit::Pressure,
            system,
        )?);
    }
    if let (Some(pao2), true) = (pao2, response.pao2_fio2_ratio.is_some()) {
        let f = Pao2Fio2Ratio::new(pao2, alveolar.fio2_fraction).map_err(refuse)?;
        out.push(requested.evaluate("pao2_fio2_ratio", &f, ValueUnit::Pressure, system)?);
    }
    if let (Some(spo2), true) = (spo2, response.imputed_pao2.is_some()) {
        let f = ImputedPao2::new(spo2).map_err(refuse)?;
        out.push(requested.evaluate("imputed_pao2", &f, ValueUnit::Pressure, system)?);
        let f = ImputedPao2::over_fio2(spo2, alveolar.fio2_fraction).map_err(refuse)?;
        out.push(requested.evaluate("imputed_pao2_fio2_ratio", &f, ValueUnit::Pressure, system)?);
    }
    Ok(out)
}
