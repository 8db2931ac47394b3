//! Reading a CheckBloodGas request: the sample's results through the unit
//! table and the hard limits, the enums, the uncertainty figures and the
//! settings; every bad field is collected into one refusal.

use oxbind_proto::v1::{
    BicarbonateSource as WireBicarbonateSource, BloodGasResults, BloodGasSampleType,
    CheckBloodGasRequest, ConsistencyThresholdRule, InputUsed, ReportedTemperature as WireReported,
    ResultsAt37Cel, SaturationKind as WireSaturationKind, UnitSystem,
};

use super::figures::read_uncertainty;
use crate::api::{
    field_path::FieldPath,
    limits,
    model_choice::choose_model,
    reader::RequestReader,
    status::{
        InvalidRequest, Violation, REASON_INCONSISTENT, REASON_NOT_APPLICABLE, REASON_UNKNOWN_ENUM,
    },
    units::QuantityKind,
};
use crate::physiology::{
    conditions::STANDARD_TEMPERATURE_CELSIUS,
    consistency::{
        sample::STANDARD_BAROMETRIC_PRESSURE_MMHG, Bicarbonate, BicarbonateSource, BloodGasSample,
        CheckSettings, MeasuredSaturation, ReportedTemperature, ResultsAt37, SampleType,
        ThresholdRule,
    },
    content::SaturationKind,
};

/// A request, read and validated.
#[derive(Debug)]
pub(super) struct ReadRequest {
    /// The sample in engine units.
    pub(super) sample: BloodGasSample,
    /// The settings of the checks.
    pub(super) settings: CheckSettings,
    /// The inputs as used, for provenance.
    pub(super) inputs_used: Vec<InputUsed>,
    /// The unit system of the response.
    pub(super) system: UnitSystem,
}

/// Read `request`, or refuse it naming every bad field.
pub(super) fn read(request: &CheckBloodGasRequest) -> Result<ReadRequest, InvalidRequest> {
    let root = FieldPath::ROOT;
    let mut reader = RequestReader::new(request.unit_system);
    let system = reader.system();
    let sample_path = root.field("sample");
    let sample = match request.sample.as_ref() {
        Some(given) => read_sample(&mut reader, given, &sample_path),
        None => {
            reader.refuse(Violation::required(&sample_path));
            None
        }
    };
    // MODEL_HILL takes its adult preset: the request has no Hill parameters
    // (and so no `hill` fields to record).
    let model = match oxbind_proto::v1::Model::try_from(request.model) {
        Ok(oxbind_proto::v1::Model::Hill) => {
            crate::physiology::model::Model::Hill(crate::physiology::hill::Hill::ADULT)
        }
        _ => choose_model(&mut reader, request.model, None, &root),
    };
    let rule = match ConsistencyThresholdRule::try_from(request.threshold_rule) {
        Ok(ConsistencyThresholdRule::UncertaintyBased) => ThresholdRule::UncertaintyBased,
        Ok(_) => ThresholdRule::PublishedWhereAvailable,
        Err(_) => {
            reader.refuse(unknown_enum(
                &root.field("threshold_rule"),
                "ConsistencyThresholdRule",
            ));
            ThresholdRule::PublishedWhereAvailable
        }
    };
    let (figures, coverage_probability) = read_uncertainty(
        &mut reader,
        request.uncertainty.as_ref(),
        &root.field("uncertainty"),
    );
    let inputs_used = reader.finish()?;
    let Some(sample) = sample else {
        // finish() has already refused a request without one.
        return Err(InvalidRequest::one(Violation::required(&sample_path)));
    };
    Ok(ReadRequest {
        sample,
        settings: CheckSettings {
            model,
            rule,
            coverage_probability,
            figures,
        },
        inputs_used,
        system,
    })
}

fn unknown_enum(path: &FieldPath<'_>, name: &str) -> Violation {
    Violation::other(
        path,
        REASON_UNKNOWN_ENUM,
        format!("not a known oxbind.v1.{name} value"),
    )
}

/// Read the sample at `path`; `None` when a field was refused.
fn read_sample(
    reader: &mut RequestReader,
    given: &BloodGasResults,
    path: &FieldPath<'_>,
) -> Option<BloodGasSample> {
    use limits as l;
    use QuantityKind as K;
    let po2 = reader.required_quantity(
        given.po2.as_ref(),
        &path.field("po2"),
        K::Pressure,
        &l::PRESSURE,
    );
    let pco2 = reader.quantity(
        given.pco2.as_ref(),
        &path.field("pco2"),
        K::Pressure,
        &l::CONDITIONS_PCO2,
    );
    let ph = reader.ph(given.ph, &path.field("ph"));
    let temperature_path = path.field("temperature");
    let temperature = reader.quantity(
        given.temperature.as_ref(),
        &temperature_path,
        K::Temperature,
        &l::TEMPERATURE,
    );
    let reported_at = match WireReported::try_from(given.reported_at) {
        Ok(WireReported::AtPatientTemperature) => ReportedTemperature::AtPatientTemperature,
        Ok(_) => ReportedTemperature::At37,
        Err(_) => {
            reader.refuse(unknown_enum(
                &path.field("reported_at"),
                "ReportedTemperature",
            ));
            ReportedTemperature::At37
        }
    };
    if given.temperature.is_none() {
        if reported_at == ReportedTemperature::AtPatientTemperature {
            reader.refuse(Violation::required_for(
                &temperature_path,
                "results reported at the patient's temperature (reported_at)",
            ));
        } else {
            reader.record(
                &temperature_path,
                STANDARD_TEMPERATURE_CELSIUS,
                K::Temperature,
                true,
            );
        }
    }
    let sample_type = match BloodGasSampleType::try_from(given.sample_type) {
        Ok(BloodGasSampleType::Arterial) => SampleType::Arterial,
        Ok(BloodGasSampleType::Venous) => SampleType::Venous,
        Ok(BloodGasSampleType::MixedVenous) => SampleType::MixedVenous,
        Ok(BloodGasSampleType::Capillary) => SampleType::Capillary,
        Ok(BloodGasSampleType::Unknown | BloodGasSampleType::Unspecified) => SampleType::Unknown,
        Err(_) => {
            reader.refuse(unknown_enum(
                &path.field("sample_type"),
                "BloodGasSampleType",
            ));
            SampleType::Unknown
        }
    };
    let so2_path = path.field("so2_fraction");
    let so2 = given
        .so2_fraction
        .and_then(|s| reader.number(s, &so2_path, &l::SATURATION_MEASURED, K::Fraction));
    let so2_kind = match WireSaturationKind::try_from(given.so2_kind) {
        Ok(WireSaturationKind::Fractional) => SaturationKind::Fractional,
        Ok(_) => SaturationKind::Functional,
        Err(_) => {
            reader.refuse(unknown_enum(&path.field("so2_kind"), "SaturationKind"));
            SaturationKind::Functional
        }
    };
    if given.so2_kind != 0 && given.so2_fraction.is_none() {
        reader.refuse(Violation::other(
            &path.field("so2_kind"),
            REASON_NOT_APPLICABLE,
            "given without so2_fraction, which it describes",
        ));
    }
    let fraction = |reader: &mut RequestReader, name: &'static str, limit: &l::HardLimit| {
        let q = match name {
            "cohb" => given.cohb.as_ref(),
            "methb" => given.methb.as_ref(),
            _ => given.hbf.as_ref(),
        };
        reader.quantity(q, &path.field(name), K::Fraction, limit)
    };
    let cohb = fraction(reader, "cohb", &l::DYSHEMOGLOBIN_FRACTION);
    let methb = fraction(reader, "methb", &l::DYSHEMOGLOBIN_FRACTION);
    reader.dyshemoglobin_sum(cohb, methb, &path.field("cohb"));
    if let (Some(so2), SaturationKind::Fractional) = (so2, so2_kind) {
        if so2 + cohb.unwrap_or(0.0) + methb.unwrap_or(0.0) > 1.0 + 1e-9 {
            reader.refuse(Violation::other(
                &so2_path,
                REASON_INCONSISTENT,
                "a fractional oxyhaemoglobin plus COHb and MetHb cannot exceed 1",
            ));
        }
    }
    let hemoglobin = reader.quantity(
        given.hemoglobin.as_ref(),
        &path.field("hemoglobin"),
        K::Hemoglobin,
        &l::HEMOGLOBIN,
    );
    let hbf = fraction(reader, "hbf", &l::HBF_FRACTION);
    let spo2 = given
        .spo2_fraction
        .and_then(|s| reader.number(s, &path.field("spo2_fraction"), &l::SPO2, K::Fraction));
    let fio2 = reader.quantity(
        given.fio2.as_ref(),
        &path.field("fio2"),
        K::Fraction,
        &l::FIO2,
    );
    let barometric_path = path.field("barometric_pressure");
    let barometric = reader.quantity(
        given.barometric_pressure.as_ref(),
        &barometric_path,
        K::Pressure,
        &l::BAROMETRIC_PRESSURE,
    );
    if given.barometric_pressure.is_none() {
        reader.record(
            &barometric_path,
            STANDARD_BAROMETRIC_PRESSURE_MMHG,
            K::Pressure,
            true,
        );
    }
    let bicarbonate = read_bicarbonate(reader, given, path);
    let white_cells = reader.quantity(
        given.white_cell_count.as_ref(),
        &path.field("white_cell_count"),
        K::CellCount,
        &l::WHITE_CELL_COUNT,
    );
    let at_37 = given
        .results_at_37_cel
        .as_ref()
        .map(|r| read_at_37(reader, r, &path.field("results_at_37_cel")))
        .unwrap_or_default();
    let po2 = po2?;
    if reader.has_violations() {
        return None;
    }
    Some(BloodGasSample {
        po2_mmhg: po2,
        pco2_mmhg: pco2,
        ph,
        patient_temperature_celsius: temperature,
        reported_at,
        sample_type,
        so2: so2.map(|fraction| MeasuredSaturation {
            fraction,
            kind: so2_kind,
        }),
        cohb_fraction: cohb,
        methb_fraction: methb,
        hemoglobin_g_per_dl: hemoglobin,
        hbf_fraction: hbf,
        spo2_fraction: spo2,
        fio2_fraction: fio2,
        barometric_pressure_mmhg: barometric,
        bicarbonate,
        white_cell_count_per_nl: white_cells,
        at_37,
    })
}

/// The bicarbonate with its source: a source is required with a value, and
/// refused without one.
fn read_bicarbonate(
    reader: &mut RequestReader,
    given: &BloodGasResults,
    path: &FieldPath<'_>,
) -> Option<Bicarbonate> {
    let value = reader.quantity(
        given.bicarbonate.as_ref(),
        &path.field("bicarbonate"),
        QuantityKind::Concentration,
        &limits::BICARBONATE,
    );
    let source_path = path.field("bicarbonate_source");
    let source = match WireBicarbonateSource::try_from(given.bicarbonate_source) {
        Ok(WireBicarbonateSource::Measured) => Some(BicarbonateSource::Measured),
        Ok(WireBicarbonateSource::MeasuredTotalCo2) => Some(BicarbonateSource::MeasuredTotalCo2),
        Ok(WireBicarbonateSource::Calculated) => Some(BicarbonateSource::Calculated),
        Ok(WireBicarbonateSource::Unspecified) => None,
        Err(_) => {
            reader.refuse(unknown_enum(&source_path, "BicarbonateSource"));
            return None;
        }
    };
    match (given.bicarbonate.is_some(), source) {
        (true, None) => {
            reader.refuse(Violation::required_for(
                &source_path,
                "the bicarbonate given (measured, measured total CO2, or calculated)",
            ));
            None
        }
        (false, Some(_)) => {
            reader.refuse(Violation::other(
                &source_path,
                REASON_NOT_APPLICABLE,
                "given without bicarbonate, which it describes",
            ));
            None
        }
        (true, Some(source)) => value.map(|mmol_per_l| Bicarbonate { mmol_per_l, source }),
        (false, None) => None,
    }
}

/// The results at 37 °C.
fn read_at_37(
    reader: &mut RequestReader,
    given: &ResultsAt37Cel,
    path: &FieldPath<'_>,
) -> ResultsAt37 {
    ResultsAt37 {
        ph: reader.ph(given.ph, &path.field("ph")),
        pco2_mmhg: reader.quantity(
            given.pco2.as_ref(),
            &path.field("pco2"),
            QuantityKind::Pressure,
            &limits::CONDITIONS_PCO2,
        ),
        po2_mmhg: reader.quantity(
            given.po2.as_ref(),
            &path.field("po2"),
            QuantityKind::Pressure,
            &limits::PRESSURE,
        ),
    }
}
