//! SampleCurve: saturation over a range of PO2, for one or more sets of
//! conditions.

use oxbind_proto::v1::{
    BloodConditions, Curve, CurvePoint, CurveSpacing, SampleCurveRequest, SampleCurveResponse,
    UnitSystem, WarningCode,
};

use super::{engine_refusal, field_of};
use crate::{
    api::{
        field_path::FieldPath,
        limits,
        model_choice::choose_model,
        observe::Observed,
        provenance,
        reader::RequestReader,
        status::{InvalidRequest, Violation},
        units::{self, QuantityKind},
        warnings::{self, warning},
    },
    physiology::{
        conditions::Conditions,
        error::{Input, PhysiologyError},
        model::{DissociationModel, Model},
    },
};

/// Default lowest PO2 of a sampled curve, mmHg.
pub const CURVE_DEFAULT_PO2_MIN_MMHG: f64 = 1.0;
/// Default highest PO2 of a sampled curve, mmHg.
pub const CURVE_DEFAULT_PO2_MAX_MMHG: f64 = 150.0;
/// Default number of points per sampled curve.
pub const CURVE_DEFAULT_POINT_COUNT: i32 = 100;

/// SampleCurve for one request.
pub fn compute_sample_curve(
    request: &SampleCurveRequest,
) -> Result<SampleCurveResponse, InvalidRequest> {
    compute(request).inspect(Observed::observe)
}

fn compute(request: &SampleCurveRequest) -> Result<SampleCurveResponse, InvalidRequest> {
    let root = FieldPath::ROOT;
    let mut reader = RequestReader::new(request.unit_system);
    let system = reader.system();
    let po2_min = reader.quantity_or(
        request.po2_min.as_ref(),
        &root.field("po2_min"),
        QuantityKind::Pressure,
        &limits::PRESSURE,
        CURVE_DEFAULT_PO2_MIN_MMHG,
    );
    let po2_max = reader.quantity_or(
        request.po2_max.as_ref(),
        &root.field("po2_max"),
        QuantityKind::Pressure,
        &limits::PRESSURE,
        CURVE_DEFAULT_PO2_MAX_MMHG,
    );
    if po2_max <= po2_min && !reader.has_violations() {
        reader.refuse(Violation::other(
            &root.field("po2_max"),
            crate::api::status::REASON_INCONSISTENT,
            "must be greater than po2_min",
        ));
    }
    let count_path = root.field("point_count");
    let point_count = if request.point_count == 0 {
        reader.record_raw(&count_path, f64::from(CURVE_DEFAULT_POINT_COUNT), "1", true);
        CURVE_DEFAULT_POINT_COUNT
    } else {
        reader
            .number(
                f64::from(request.point_count),
                &count_path,
                &limits::CURVE_POINTS,
                QuantityKind::Fraction,
            )
            .map(|_| request.point_count)
            .unwrap_or(CURVE_DEFAULT_POINT_COUNT)
    };
    let spacing = match CurveSpacing::try_from(request.spacing) {
        Ok(CurveSpacing::Logarithmic) => CurveSpacing::Logarithmic,
        Ok(_) => CurveSpacing::Linear,
        Err(_) => {
            reader.refuse(Violation::other(
                &root.field("spacing"),
                crate::api::status::REASON_UNKNOWN_ENUM,
                "not a known oxbind.v1.CurveSpacing value",
            ));
            CurveSpacing::Linear
        }
    };
    if !limits::CURVE_CONDITION_SETS.accepts(request.condition_sets.len() as f64) {
        reader.refuse(Violation::outside_limit(
            &root.field("condition_sets"),
            &limits::CURVE_CONDITION_SETS,
        ));
    }
    let model = choose_model(&mut reader, request.model, request.hill.as_ref(), &root);
    let shared_inputs = reader.finish()?;

    let standard = [oxbind_proto::v1::BloodConditions::default()];
    let sets: &[oxbind_proto::v1::BloodConditions] = if request.condition_sets.is_empty() {
        &standard
    } else {
        &request.condition_sets
    };
    let po2_unit = units::output_unit(QuantityKind::Pressure, system);
    let mut curves = Vec::with_capacity(sets.len());
    for (index, set) in sets.iter().enumerate() {
        let mut reader = RequestReader::in_system(system);
        let set_path = root.indexed("condition_sets", index);
        let conditions = reader.conditions(Some(set), &set_path, &model);
        let mut inputs_used = shared_inputs.clone();
        inputs_used.extend(reader.finish()?);
        inputs_used.sort_by_key(|input| input.defaulted);
        let set_field = format!("condition_sets[{index}]");
        let refuse = |e: PhysiologyError| engine_refusal(&e, &set_field);
        let p50 = model.p50_mmhg(&conditions).map_err(refuse)?;
        let mut points = Vec::with_capacity(point_count as usize);
        let steps = f64::from(point_count - 1);
        for i in 0..point_count {
            let t = f64::from(i) / steps;
            let po2 = match spacing {
                CurveSpacing::Logarithmic => po2_min * (po2_max / po2_min).powf(t),
                _ => po2_min + (po2_max - po2_min) * t,
            };
            let saturation = model.saturation(po2, &conditions).map_err(|e| {
                // The curve is monotone in PO2, so a refusal at a point belongs
                // to the nearer end of the requested range.
                let field = if e.input() == Input::Po2 {
                    if po2 < (po2_min * po2_max).sqrt() {
                        "po2_min.value".to_owned()
                    } else {
                        "po2_max.value".to_owned()
                    }
                } else {
                    field_of(e.input(), &set_field)
                };
                InvalidRequest::one(Violation::from_physiology_at(field, &e))
            })?;
            points.push(CurvePoint {
                po2: units::from_engine(po2, QuantityKind::Pressure, system).value,
                saturation_fraction: saturation,
            });
        }
        let mut found = Vec::new();
        warnings::unmodelled_conditions(&model, &conditions, &set_path, &mut found);
        let inside_conditions =
            warnings::validated_ranges(&model, &conditions, &set_path, &[], &mut found);
        let mut ends_inside = true;
        for (end, value) in [("po2_min", po2_min), ("po2_max", po2_max)] {
            if !model.info().within_validated_range(Input::Po2, value) {
                ends_inside = false;
                found.push(warning(
                    WarningCode::Extrapolated,
                    end.to_owned(),
                    format!(
                        "this end of the curve lies outside the PO2 range model {} was validated for",
                        model.info().id
                    ),
                ));
            }
        }
        curves.push(Curve {
            conditions: Some(filled_conditions(&conditions, &model, system)),
            p50: Some(units::from_engine(p50, QuantityKind::Pressure, system)),
            points,
            po2_unit: po2_unit.to_owned(),
            provenance: Some(provenance::for_model(
                model.info(),
                inputs_used,
                inside_conditions && ends_inside,
            )),
            warnings: found,
        });
    }
    Ok(SampleCurveResponse { curves })
}

/// The conditions a curve was computed for, with every default filled in, in
/// the response's unit system.
fn filled_conditions(
    conditions: &Conditions,
    model: &Model,
    system: UnitSystem,
) -> BloodConditions {
    let fraction = |v: f64| units::from_engine(v, QuantityKind::Fraction, system);
    BloodConditions {
        ph: Some(conditions.ph()),
        pco2: Some(units::from_engine(
            conditions.pco2_mmhg(),
            QuantityKind::Pressure,
            system,
        )),
        temperature: Some(units::from_engine(
            conditions.temperature_celsius(),
            QuantityKind::Temperature,
            system,
        )),
        dpg: Some(units::from_engine(
            conditions
                .dpg_mmol_per_l
                .unwrap_or_else(|| model.standard_dpg_mmol_per_l()),
            QuantityKind::Concentration,
            system,
        )),
        base_excess: Some(units::from_engine(
            conditions.base_excess_mmol_per_l(),
            QuantityKind::Concentration,
            system,
        )),
        cohb: Some(fraction(conditions.cohb_fraction())),
        methb: Some(fraction(conditions.methb_fraction())),
        hbf: Some(fraction(conditions.hbf_fraction())),
    }
}
