//! EstimateP50: the P50 from one or more measured (PO2, saturation) pairs.

use oxbind_proto::v1::{EstimateP50Request, EstimateP50Response, WarningCode};

use super::field_of;
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
        error::{Input, PhysiologyError},
        model::DissociationModel,
        p50_estimation::{self, MeasuredPair, Standardisation},
    },
};

/// EstimateP50 for one request.
pub fn compute_estimate_p50(
    request: &EstimateP50Request,
) -> Result<EstimateP50Response, InvalidRequest> {
    compute(request).inspect(Observed::observe)
}

fn compute(request: &EstimateP50Request) -> Result<EstimateP50Response, InvalidRequest> {
    let root = FieldPath::ROOT;
    let mut reader = RequestReader::new(request.unit_system);
    let system = reader.system();
    if !limits::MEASURED_PAIRS.accepts(request.pairs.len() as f64) {
        reader.refuse(Violation::outside_limit(
            &root.field("pairs"),
            &limits::MEASURED_PAIRS,
        ));
    }
    let model = choose_model(&mut reader, request.model, None, &root);
    let mut pairs = Vec::with_capacity(request.pairs.len());
    for (index, pair) in request.pairs.iter().enumerate() {
        let pair_path = root.indexed("pairs", index);
        let po2 = reader.required_quantity(
            pair.po2.as_ref(),
            &pair_path.field("po2"),
            QuantityKind::Pressure,
            &limits::PRESSURE,
        );
        let saturation = reader.number(
            pair.saturation_fraction,
            &pair_path.field("saturation_fraction"),
            &limits::SATURATION_OPEN,
            QuantityKind::Fraction,
        );
        let conditions = reader.conditions(
            pair.conditions.as_ref(),
            &pair_path.field("conditions"),
            &model,
        );
        if let (Some(po2_mmhg), Some(saturation)) = (po2, saturation) {
            pairs.push((
                index,
                MeasuredPair {
                    po2_mmhg,
                    saturation,
                    conditions,
                },
            ));
        }
    }
    let inputs_used = reader.finish()?;
    let method = Standardisation::default();
    let pair_refusal = |index: usize, e: PhysiologyError| {
        let field = match e.input() {
            Input::Saturation => format!("pairs[{index}].saturation_fraction"),
            Input::Po2 => format!("pairs[{index}].po2.value"),
            Input::MeasuredPairs => "pairs".to_owned(),
            other => field_of(other, &format!("pairs[{index}].conditions")),
        };
        InvalidRequest::one(Violation::from_physiology_at(field, &e))
    };

    let mut found = Vec::new();
    let mut inside = true;
    for (index, pair) in &pairs {
        let pair_path = root.indexed("pairs", *index);
        let po2_path = pair_path.field("po2");
        let saturation_path = pair_path.field("saturation_fraction");
        inside &= warnings::validated_ranges(
            &model,
            &pair.conditions,
            &pair_path.field("conditions"),
            &[
                (Input::Po2, pair.po2_mmhg, &po2_path),
                (Input::Saturation, pair.saturation, &saturation_path),
            ],
            &mut found,
        );
    }
    let response = if let [(index, pair)] = pairs.as_slice() {
        let single = p50_estimation::single_point_p50(pair, &model, method)
            .map_err(|e| pair_refusal(*index, e))?;
        if (pair.saturation - 0.5).abs() > 0.4 {
            found.push(warning(
                WarningCode::Extrapolated,
                format!("pairs[{index}].saturation_fraction"),
                "a saturation far from 0.5 makes the single-point P50 depend strongly on the assumed Hill coefficient",
            ));
        }
        EstimateP50Response {
            p50_at_conditions: Some(units::from_engine(
                single.in_vivo_hill_mmhg,
                QuantityKind::Pressure,
                system,
            )),
            p50_standard: Some(units::from_engine(
                single.standard_hill_mmhg,
                QuantityKind::Pressure,
                system,
            )),
            fitted_hill_n: None,
            fit_rms_logit: 0.0,
            p50_at_conditions_curve_shift: Some(units::from_engine(
                single.in_vivo_ratio_mmhg,
                QuantityKind::Pressure,
                system,
            )),
            p50_standard_curve_shift: Some(units::from_engine(
                single.standard_ratio_mmhg,
                QuantityKind::Pressure,
                system,
            )),
            provenance: Some(provenance::for_model(model.info(), inputs_used, inside)),
            warnings: found,
        }
    } else {
        let just_pairs: Vec<MeasuredPair> = pairs.iter().map(|(_, p)| *p).collect();
        let fit = p50_estimation::fit_hill(&just_pairs, method).map_err(|e| {
            let index = first_uninformative(&pairs).unwrap_or(0);
            pair_refusal(index, e)
        })?;
        EstimateP50Response {
            p50_at_conditions: Some(units::from_engine(
                fit.p50_in_vivo_mmhg,
                QuantityKind::Pressure,
                system,
            )),
            p50_standard: Some(units::from_engine(
                fit.p50_standard_mmhg,
                QuantityKind::Pressure,
                system,
            )),
            fitted_hill_n: Some(fit.n),
            fit_rms_logit: fit.rms_logit_residual,
            p50_at_conditions_curve_shift: None,
            p50_standard_curve_shift: None,
            provenance: Some(provenance::for_model(model.info(), inputs_used, inside)),
            warnings: found,
        }
    };
    Ok(response)
}

fn first_uninformative(pairs: &[(usize, MeasuredPair)]) -> Option<usize> {
    pairs
        .iter()
        .find(|(_, p)| p.saturation > p50_estimation::INFORMATIVE_SATURATION_MAX)
        .map(|(index, _)| *index)
}
