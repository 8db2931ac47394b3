//! CorrectForTemperature: pH, PCO2 and PO2 carried from the analyser's
//! temperature to the patient's.

use oxbind_proto::v1::{CorrectForTemperatureRequest, CorrectForTemperatureResponse};

use crate::{
    api::{
        field_path::FieldPath,
        limits,
        observe::Observed,
        provenance,
        reader::RequestReader,
        status::{InvalidRequest, Violation},
        units::{self, QuantityKind},
    },
    physiology::{
        error::Input,
        temperature::{self, BloodGasTemperatureInput},
    },
};

/// The published methods behind blood-gas temperature correction.
///
/// Version 2: PO2 is carried by the exact integral of Eq. 3 (version 1 used
/// fourth-order Runge-Kutta steps of at most 0.25 Cel; the two differ by less
/// than 5e-10 relative).
pub const TEMPERATURE_CORRECTION: provenance::Method = provenance::Method {
    version: "2",
    reference:
        "pH and PCO2: temperature coefficients as documented in the engine (temperature module); \
PO2: Severinghaus JW. Simple, accurate equations for human blood O2 dissociation computations. \
J Appl Physiol 1979;46(3):599-602, Eq. 3, integrated exactly",
    doi: "10.1152/jappl.1979.46.3.599",
};

/// CorrectForTemperature for one request.
pub fn compute_correct_for_temperature(
    request: &CorrectForTemperatureRequest,
) -> Result<CorrectForTemperatureResponse, InvalidRequest> {
    compute(request).inspect(Observed::observe)
}

fn compute(
    request: &CorrectForTemperatureRequest,
) -> Result<CorrectForTemperatureResponse, InvalidRequest> {
    let root = FieldPath::ROOT;
    let mut reader = RequestReader::new(request.unit_system);
    let system = reader.system();
    let ph = reader.ph(request.ph, &root.field("ph"));
    let pco2 = reader.quantity(
        request.pco2.as_ref(),
        &root.field("pco2"),
        QuantityKind::Pressure,
        &limits::PRESSURE,
    );
    let po2 = reader.quantity(
        request.po2.as_ref(),
        &root.field("po2"),
        QuantityKind::Pressure,
        &limits::PRESSURE,
    );
    let measured = reader.quantity_or(
        request.measured_temperature.as_ref(),
        &root.field("measured_temperature"),
        QuantityKind::Temperature,
        &limits::TEMPERATURE,
        temperature::REFERENCE_TEMPERATURE_CELSIUS,
    );
    let target = reader.required_quantity(
        request.target_temperature.as_ref(),
        &root.field("target_temperature"),
        QuantityKind::Temperature,
        &limits::TEMPERATURE,
    );
    if request.ph.is_none() && request.pco2.is_none() && request.po2.is_none() {
        reader.refuse(Violation::required_unless(
            &root.field("po2"),
            &["ph", "pco2"],
        ));
    }
    let inputs_used = reader.finish()?;
    let corrected = temperature::correct_blood_gas(&BloodGasTemperatureInput {
        ph,
        pco2_mmhg: pco2,
        po2_mmhg: po2,
        measured_celsius: measured,
        target_celsius: target.unwrap_or(measured),
    })
    .map_err(|e| {
        let field = match e.input() {
            Input::Ph => "ph".to_owned(),
            Input::Pco2 => "pco2.value".to_owned(),
            Input::Po2 => "po2.value".to_owned(),
            Input::MeasuredTemperature => "measured_temperature.value".to_owned(),
            _ => "target_temperature.value".to_owned(),
        };
        InvalidRequest::one(Violation::from_physiology_at(field, &e))
    })?;
    Ok(CorrectForTemperatureResponse {
        ph: corrected.ph,
        pco2: corrected
            .pco2_mmhg
            .map(|p| units::from_engine(p, QuantityKind::Pressure, system)),
        po2: corrected
            .po2_mmhg
            .map(|p| units::from_engine(p, QuantityKind::Pressure, system)),
        provenance: Some(provenance::for_method(
            &TEMPERATURE_CORRECTION,
            inputs_used,
            true,
        )),
        warnings: Vec::new(),
    })
}
