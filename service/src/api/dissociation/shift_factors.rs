//! ShiftFactors: how far the conditions move the curve, factor by factor.

use oxbind_proto::v1::{FactorContribution, ShiftFactorsRequest, ShiftFactorsResponse};

use super::engine_refusal;
use crate::{
    api::{
        field_path::FieldPath,
        model_choice::choose_model,
        observe::Observed,
        provenance,
        reader::RequestReader,
        status::InvalidRequest,
        uncertainty::{self, Call, ValueUnit},
        units::{self, QuantityKind},
        warnings,
    },
    physiology::{
        conditions::Condition,
        model::DissociationModel,
        shift::{self, ShiftDirection},
        uncertainty::P50AtConditions,
    },
};

/// The wire value of a shift direction.
pub fn direction(direction: ShiftDirection) -> i32 {
    use oxbind_proto::v1::ShiftDirection as Wire;
    (match direction {
        ShiftDirection::None => Wire::None,
        ShiftDirection::Right => Wire::Right,
        ShiftDirection::Left => Wire::Left,
    }) as i32
}

/// The wire value of a shift factor.
pub fn shift_factor(condition: Condition) -> i32 {
    use oxbind_proto::v1::ShiftFactor as Wire;
    (match condition {
        Condition::Ph => Wire::Ph,
        Condition::Pco2 => Wire::Pco2,
        Condition::Temperature => Wire::Temperature,
        Condition::Dpg => Wire::Dpg,
        Condition::BaseExcess => Wire::BaseExcess,
        Condition::Cohb => Wire::Cohb,
        Condition::Methb => Wire::Methb,
        Condition::Hbf => Wire::Hbf,
    }) as i32
}

/// ShiftFactors for one request.
pub fn compute_shift_factors(
    request: &ShiftFactorsRequest,
) -> Result<ShiftFactorsResponse, InvalidRequest> {
    compute(request).inspect(Observed::observe)
}

fn compute(request: &ShiftFactorsRequest) -> Result<ShiftFactorsResponse, InvalidRequest> {
    let root = FieldPath::ROOT;
    let mut reader = RequestReader::new(request.unit_system);
    let model = choose_model(&mut reader, request.model, None, &root);
    let conditions_path = root.field("conditions");
    let conditions = reader.conditions(request.conditions.as_ref(), &conditions_path, &model);
    let requested = uncertainty::read(
        &mut reader,
        request.uncertainty.as_ref(),
        &uncertainty::SHIFT_FACTORS_INPUTS,
        Call::Single,
    );
    let system = reader.system();
    let inputs_used = reader.finish()?;

    let refuse = |e| engine_refusal(&e, "conditions");
    let analysis = shift::shift_factors(&model, &conditions).map_err(refuse)?;
    let mut found = Vec::new();
    warnings::unmodelled_conditions(&model, &conditions, &conditions_path, &mut found);
    let inside = warnings::validated_ranges(&model, &conditions, &conditions_path, &[], &mut found);
    let mut uncertainties = Vec::new();
    if let Some(requested) = &requested {
        let f = P50AtConditions::new(model, conditions).map_err(refuse)?;
        uncertainties.push(requested.evaluate(
            "p50_at_conditions",
            &f,
            ValueUnit::Pressure,
            system,
        )?);
        found.extend(uncertainty::not_evaluated(&[
            "log10_p50_shift",
            "contributions",
            "po2_correction_factor",
        ]));
    }
    Ok(ShiftFactorsResponse {
        p50_standard: Some(units::from_engine(
            analysis.p50_standard_mmhg,
            QuantityKind::Pressure,
            system,
        )),
        p50_at_conditions: Some(units::from_engine(
            analysis.p50_at_conditions_mmhg,
            QuantityKind::Pressure,
            system,
        )),
        log10_p50_shift: analysis.log10_p50_shift,
        direction: direction(analysis.direction),
        contributions: analysis
            .contributions
            .iter()
            .map(|c| FactorContribution {
                factor: shift_factor(c.factor),
                log10_p50_shift: c.log10_p50_shift,
                direction: direction(c.direction),
            })
            .collect(),
        po2_correction_factor: analysis.po2_correction_factor,
        provenance: Some(provenance::for_model(model.info(), inputs_used, inside)),
        warnings: found,
        uncertainties,
    })
}
