//! SaturationFromTension and TensionFromSaturation: one point of the curve,
//! for a single call or a batch item.

use oxbind_proto::v1::{
    Quantity, SaturationFromTensionRequest, SaturationFromTensionResponse,
    TensionFromSaturationRequest, TensionFromSaturationResponse, WarningCode,
};

use super::{
    engine_refusal,
    item_provenance::{ItemProvenance, ProvenanceKey},
};
use crate::{
    api::{
        field_path::FieldPath,
        limits,
        model_choice::choose_model,
        observe::Observed,
        status::InvalidRequest,
        uncertainty::{self, Call, ValueUnit},
        units::{self, QuantityKind},
        warnings::{self, warning, PLATEAU_SATURATION},
    },
    physiology::{
        error::{Input, PhysiologyError},
        model::DissociationModel,
        uncertainty::{SaturationFromTension, TensionFromSaturation},
    },
};

/// SaturationFromTension for one request.
pub fn compute_saturation_from_tension(
    request: &SaturationFromTensionRequest,
) -> Result<SaturationFromTensionResponse, InvalidRequest> {
    saturation_from_tension(request, ItemProvenance::Full, Call::Single)
        .map(|(response, _)| response)
        .inspect(Observed::observe)
}

/// SaturationFromTension for one request or batch item (`call`), with the
/// provenance `placement` asks for, and the key of that provenance.
pub(super) fn saturation_from_tension(
    request: &SaturationFromTensionRequest,
    placement: ItemProvenance,
    call: Call,
) -> Result<(SaturationFromTensionResponse, ProvenanceKey), InvalidRequest> {
    let root = FieldPath::ROOT;
    let mut reader = placement.reader(request.unit_system);
    let po2_path = root.field("po2");
    let po2 = reader.required_quantity(
        request.po2.as_ref(),
        &po2_path,
        QuantityKind::Pressure,
        &limits::PRESSURE,
    );
    let model = choose_model(&mut reader, request.model, request.hill.as_ref(), &root);
    let conditions_path = root.field("conditions");
    let conditions = reader.conditions(request.conditions.as_ref(), &conditions_path, &model);
    let requested = uncertainty::read(
        &mut reader,
        request.uncertainty.as_ref(),
        &uncertainty::SATURATION_FROM_TENSION_INPUTS,
        call,
    );
    let system = reader.system();
    let inputs_used = reader.finish()?;
    let po2 = po2.unwrap_or_default();

    let refuse = |e: PhysiologyError| engine_refusal(&e, "conditions");
    let (saturation, hill_slope) = model
        .saturation_and_slope(po2, &conditions)
        .map_err(refuse)?;
    let p50 = model.p50_mmhg(&conditions).map_err(refuse)?;

    let mut found = Vec::new();
    warnings::unmodelled_conditions(&model, &conditions, &conditions_path, &mut found);
    let inside = warnings::validated_ranges(
        &model,
        &conditions,
        &conditions_path,
        // The saturation found is the result, so its warning names the input
        // that produced it.
        &[
            (Input::Po2, po2, &po2_path),
            (Input::Saturation, saturation, &po2_path),
        ],
        &mut found,
    );
    let mut uncertainties = Vec::new();
    if let Some(requested) = &requested {
        let f = SaturationFromTension::new(model, po2, conditions).map_err(refuse)?;
        uncertainties.push(requested.evaluate(
            "saturation_fraction",
            &f,
            ValueUnit::Fraction,
            system,
        )?);
        found.extend(uncertainty::not_evaluated(&[
            "p50_at_conditions",
            "hill_slope",
        ]));
    }
    let key = ProvenanceKey {
        model: model.info(),
        within_validated_range: inside,
    };
    Ok((
        SaturationFromTensionResponse {
            saturation_fraction: saturation,
            p50_at_conditions: Some(units::from_engine(p50, QuantityKind::Pressure, system)),
            hill_slope,
            provenance: placement.item_provenance(&key, inputs_used),
            warnings: found,
            uncertainties,
        },
        key,
    ))
}

/// TensionFromSaturation for one request.
pub fn compute_tension_from_saturation(
    request: &TensionFromSaturationRequest,
) -> Result<TensionFromSaturationResponse, InvalidRequest> {
    tension_from_saturation(request, ItemProvenance::Full, Call::Single)
        .map(|(response, _)| response)
        .inspect(Observed::observe)
}

/// TensionFromSaturation for one request or batch item (`call`), with the
/// provenance `placement` asks for, and the key of that provenance.
pub(super) fn tension_from_saturation(
    request: &TensionFromSaturationRequest,
    placement: ItemProvenance,
    call: Call,
) -> Result<(TensionFromSaturationResponse, ProvenanceKey), InvalidRequest> {
    let root = FieldPath::ROOT;
    let mut reader = placement.reader(request.unit_system);
    let saturation_path = root.field("saturation_fraction");
    let saturation = reader.number(
        request.saturation_fraction,
        &saturation_path,
        &limits::SATURATION_OPEN,
        QuantityKind::Fraction,
    );
    let model = choose_model(&mut reader, request.model, request.hill.as_ref(), &root);
    let conditions_path = root.field("conditions");
    let conditions = reader.conditions(request.conditions.as_ref(), &conditions_path, &model);
    let requested = uncertainty::read(
        &mut reader,
        request.uncertainty.as_ref(),
        &uncertainty::TENSION_FROM_SATURATION_INPUTS,
        call,
    );
    let system = reader.system();
    let inputs_used = reader.finish()?;
    let saturation = saturation.unwrap_or(0.5);

    let refuse = |e: PhysiologyError| engine_refusal(&e, "conditions");
    let po2 = model
        .tension_mmhg(saturation, &conditions)
        .map_err(refuse)?;
    let hill_slope = model.hill_slope(po2, &conditions).map_err(refuse)?;
    let p50 = model.p50_mmhg(&conditions).map_err(refuse)?;
    // dS/dP = n_H * S * (1 - S) / P (from n_H = d logit S / d ln P), so one
    // percentage point of saturation moves PO2 by P / (n_H S (1 - S)) / 100.
    let change_per_percent_mmhg = po2 / (hill_slope * saturation * (1.0 - saturation)) / 100.0;

    let mut found = Vec::new();
    warnings::unmodelled_conditions(&model, &conditions, &conditions_path, &mut found);
    let inside = warnings::validated_ranges(
        &model,
        &conditions,
        &conditions_path,
        // The PO2 found is the result, so its warning names the input that
        // produced it.
        &[
            (Input::Saturation, saturation, &saturation_path),
            (Input::Po2, po2, &saturation_path),
        ],
        &mut found,
    );
    if saturation > PLATEAU_SATURATION {
        found.push(warning(
            WarningCode::PlateauPoorlyDetermined,
            saturation_path.render(),
            format!(
                "above saturation {PLATEAU_SATURATION} the curve is flat: a small saturation error gives a large PO2 error (see po2_change_per_percent)"
            ),
        ));
    }
    let change = units::from_engine(change_per_percent_mmhg, QuantityKind::Pressure, system);
    let mut uncertainties = Vec::new();
    if let Some(requested) = &requested {
        let po2_value =
            TensionFromSaturation::new(model, saturation, conditions).map_err(refuse)?;
        uncertainties.push(requested.evaluate("po2", &po2_value, ValueUnit::Pressure, system)?);
        let change_value = TensionFromSaturation::change_per_percent(model, saturation, conditions)
            .map_err(refuse)?;
        uncertainties.push(requested.evaluate(
            "po2_change_per_percent",
            &change_value,
            ValueUnit::PressurePerPercent,
            system,
        )?);
        found.extend(uncertainty::not_evaluated(&["p50_at_conditions"]));
    }
    let key = ProvenanceKey {
        model: model.info(),
        within_validated_range: inside,
    };
    Ok((
        TensionFromSaturationResponse {
            po2: Some(units::from_engine(po2, QuantityKind::Pressure, system)),
            po2_change_per_percent: Some(Quantity {
                value: change.value,
                unit: format!("{}/%", change.unit),
            }),
            p50_at_conditions: Some(units::from_engine(p50, QuantityKind::Pressure, system)),
            provenance: placement.item_provenance(&key, inputs_used),
            warnings: found,
            uncertainties,
        },
        key,
    ))
}
