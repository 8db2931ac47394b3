//! `oxbind.v1.DissociationService`: thin handlers over pure request functions.
//!
//! Each `fn compute_*` reads and validates one request (collecting every bad
//! field), calls the physiology engine, and builds the response with warnings
//! and provenance. The async trait methods only call them and map refusals to
//! a status through [`super::status`].

use oxbind_proto::v1::{
    dissociation_service_server::DissociationService, saturation_from_tension_result,
    tension_from_saturation_result, BatchSaturationFromTensionRequest,
    BatchSaturationFromTensionResponse, BatchTensionFromSaturationRequest,
    BatchTensionFromSaturationResponse, BloodConditions, CorrectForTemperatureRequest,
    CorrectForTemperatureResponse, Curve, CurvePoint, CurveSpacing, EstimateP50Request,
    EstimateP50Response, FactorContribution, InputUsed, ProvenancePlacement, Quantity,
    SampleCurveRequest, SampleCurveResponse, SaturationFromTensionRequest,
    SaturationFromTensionResponse, SaturationFromTensionResult, ShiftFactorsRequest,
    ShiftFactorsResponse, TensionFromSaturationRequest, TensionFromSaturationResponse,
    TensionFromSaturationResult, UnitSystem, WarningCode,
};
use tonic::{Request, Response, Status};

use super::{
    field_path::FieldPath,
    limits,
    model_choice::choose_model,
    observe, provenance,
    reader::RequestReader,
    status::{
        batch_refusal, InvalidRequest, Violation, REASON_BATCH_EMPTY, REASON_BATCH_TOO_LARGE,
    },
    units::{self, QuantityKind},
    warnings::{self, warning, PLATEAU_SATURATION},
};
use crate::physiology::{
    conditions::{Condition, Conditions},
    error::{Input, PhysiologyError},
    model::{DissociationModel, Model, ModelInfo},
    p50_estimation::{self, MeasuredPair, Standardisation},
    shift::{self, ShiftDirection},
    temperature::{self, BloodGasTemperatureInput},
};

/// Default lowest PO2 of a sampled curve, mmHg.
pub const CURVE_DEFAULT_PO2_MIN_MMHG: f64 = 1.0;
/// Default highest PO2 of a sampled curve, mmHg.
pub const CURVE_DEFAULT_PO2_MAX_MMHG: f64 = 150.0;
/// Default number of points per sampled curve.
pub const CURVE_DEFAULT_POINT_COUNT: i32 = 100;

/// The dissociation-curve RPCs.
#[derive(Debug, Clone)]
pub struct DissociationApi {
    max_batch_items: usize,
}

impl DissociationApi {
    /// A handler refusing batches of more than `max_batch_items` items.
    pub fn new(max_batch_items: usize) -> Self {
        Self { max_batch_items }
    }

    fn check_batch_size(&self, len: usize) -> Result<(), Status> {
        if len == 0 {
            return Err(batch_refusal(
                REASON_BATCH_EMPTY,
                "requests must hold at least one item".to_owned(),
                self.max_batch_items,
            ));
        }
        if len > self.max_batch_items {
            return Err(batch_refusal(
                REASON_BATCH_TOO_LARGE,
                format!(
                    "requests holds more than the limit of {} items; split the batch",
                    self.max_batch_items
                ),
                self.max_batch_items,
            ));
        }
        Ok(())
    }
}

#[tonic::async_trait]
impl DissociationService for DissociationApi {
    async fn saturation_from_tension(
        &self,
        request: Request<SaturationFromTensionRequest>,
    ) -> Result<Response<SaturationFromTensionResponse>, Status> {
        let response = compute_saturation_from_tension(request.get_ref())?;
        observe::result(response.provenance.as_ref(), &response.warnings);
        Ok(Response::new(response))
    }

    async fn tension_from_saturation(
        &self,
        request: Request<TensionFromSaturationRequest>,
    ) -> Result<Response<TensionFromSaturationResponse>, Status> {
        let response = compute_tension_from_saturation(request.get_ref())?;
        observe::result(response.provenance.as_ref(), &response.warnings);
        Ok(Response::new(response))
    }

    async fn sample_curve(
        &self,
        request: Request<SampleCurveRequest>,
    ) -> Result<Response<SampleCurveResponse>, Status> {
        let response = compute_sample_curve(request.get_ref())?;
        for curve in &response.curves {
            observe::result(curve.provenance.as_ref(), &curve.warnings);
        }
        Ok(Response::new(response))
    }

    async fn shift_factors(
        &self,
        request: Request<ShiftFactorsRequest>,
    ) -> Result<Response<ShiftFactorsResponse>, Status> {
        let response = compute_shift_factors(request.get_ref())?;
        observe::result(response.provenance.as_ref(), &response.warnings);
        Ok(Response::new(response))
    }

    async fn estimate_p50(
        &self,
        request: Request<EstimateP50Request>,
    ) -> Result<Response<EstimateP50Response>, Status> {
        let response = compute_estimate_p50(request.get_ref())?;
        observe::result(response.provenance.as_ref(), &response.warnings);
        Ok(Response::new(response))
    }

    async fn correct_for_temperature(
        &self,
        request: Request<CorrectForTemperatureRequest>,
    ) -> Result<Response<CorrectForTemperatureResponse>, Status> {
        let response = compute_correct_for_temperature(request.get_ref())?;
        observe::result(response.provenance.as_ref(), &response.warnings);
        Ok(Response::new(response))
    }

    async fn batch_saturation_from_tension(
        &self,
        request: Request<BatchSaturationFromTensionRequest>,
    ) -> Result<Response<BatchSaturationFromTensionResponse>, Status> {
        let request = request.get_ref();
        self.check_batch_size(request.requests.len())?;
        crate::instruments::record_batch_items(
            "oxbind.v1.DissociationService/BatchSaturationFromTension",
            request.requests.len() as u64,
        );
        let (results, shared_provenance) = compute_batch(
            &request.requests,
            request.provenance_placement,
            saturation_from_tension,
            |outcome, shared_provenance_index| SaturationFromTensionResult {
                result: Some(match outcome {
                    Ok(response) => saturation_from_tension_result::Result::Response(response),
                    Err(status) => saturation_from_tension_result::Result::Error(status),
                }),
                shared_provenance_index,
            },
        )?;
        Ok(Response::new(BatchSaturationFromTensionResponse {
            results,
            shared_provenance,
        }))
    }

    async fn batch_tension_from_saturation(
        &self,
        request: Request<BatchTensionFromSaturationRequest>,
    ) -> Result<Response<BatchTensionFromSaturationResponse>, Status> {
        let request = request.get_ref();
        self.check_batch_size(request.requests.len())?;
        crate::instruments::record_batch_items(
            "oxbind.v1.DissociationService/BatchTensionFromSaturation",
            request.requests.len() as u64,
        );
        let (results, shared_provenance) = compute_batch(
            &request.requests,
            request.provenance_placement,
            tension_from_saturation,
            |outcome, shared_provenance_index| TensionFromSaturationResult {
                result: Some(match outcome {
                    Ok(response) => tension_from_saturation_result::Result::Response(response),
                    Err(status) => tension_from_saturation_result::Result::Error(status),
                }),
                shared_provenance_index,
            },
        )?;
        Ok(Response::new(BatchTensionFromSaturationResponse {
            results,
            shared_provenance,
        }))
    }
}

/// Compute every item of a batch with `compute`, in order, and wrap each
/// outcome (the response, or the refusal's status with its field paths under
/// `requests[i]`) with its shared provenance index by `wrap`; the shared
/// entries come back beside the results. `raw_placement` is the request's
/// `provenance_placement`; an unknown value refuses the batch.
fn compute_batch<Req, Resp, Item>(
    requests: &[Req],
    raw_placement: i32,
    compute: impl Fn(&Req, ItemProvenance) -> Result<(Resp, ProvenanceKey), InvalidRequest>,
    wrap: impl Fn(Result<Resp, oxbind_proto::google::rpc::Status>, u32) -> Item,
) -> Result<(Vec<Item>, Vec<oxbind_proto::v1::Provenance>), Status> {
    let (placement, mut shared) = batch_placement(raw_placement)?;
    let results = requests
        .iter()
        .enumerate()
        .map(|(index, item)| match compute(item, placement) {
            Ok((response, key)) => wrap(Ok(response), shared.index_for(placement, &key)),
            Err(refusal) => wrap(Err(item_refusal(refusal, index)), 0),
        })
        .collect();
    Ok((results, shared.into_entries()))
}

/// The status of a refused batch item, its field paths prefixed by the
/// item's place (`requests[3].po2.value`).
fn item_refusal(refusal: InvalidRequest, index: usize) -> oxbind_proto::google::rpc::Status {
    let refusal = refusal.within_item("requests", index);
    observe::refused_item(&refusal);
    refusal.to_rpc_status()
}

/// The placement a batch asked for (its raw enum value), with an empty shared
/// list; an unknown value refuses the batch.
fn batch_placement(raw: i32) -> Result<(ItemProvenance, SharedProvenance), Status> {
    let placement = match ProvenancePlacement::try_from(raw) {
        Ok(ProvenancePlacement::Shared) => ItemProvenance::Shared,
        Ok(ProvenancePlacement::Unspecified | ProvenancePlacement::EachItem) => {
            ItemProvenance::Full
        }
        Err(_) => {
            return Err(InvalidRequest::one(Violation::other(
                &FieldPath::ROOT.field("provenance_placement"),
                super::status::REASON_UNKNOWN_ENUM,
                "not a known oxbind.v1.ProvenancePlacement value",
            ))
            .into_status())
        }
    };
    Ok((placement, SharedProvenance::default()))
}

/// Whether a computed item carries its own full provenance or shares one.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum ItemProvenance {
    /// Full provenance, inputs_used included, on the item.
    Full,
    /// No provenance on the item; it names a shared entry.
    Shared,
}

impl ItemProvenance {
    /// The request reader this placement needs (recording inputs only when
    /// they are reported).
    fn reader(self, raw_unit_system: i32) -> RequestReader {
        match self {
            Self::Full => RequestReader::new(raw_unit_system),
            Self::Shared => RequestReader::without_inputs_used(raw_unit_system),
        }
    }

    /// The provenance the item's response carries.
    fn item_provenance(
        self,
        key: &ProvenanceKey,
        inputs_used: Vec<InputUsed>,
    ) -> Option<oxbind_proto::v1::Provenance> {
        match self {
            Self::Full => Some(provenance::for_model(
                key.model,
                inputs_used,
                key.within_validated_range,
            )),
            Self::Shared => None,
        }
    }
}

/// What tells one shared provenance entry from another.
#[derive(Debug, Clone, Copy)]
struct ProvenanceKey {
    model: &'static ModelInfo,
    within_validated_range: bool,
}

/// The shared provenance entries of one batch answer, in order of first use.
#[derive(Debug, Default)]
struct SharedProvenance {
    entries: Vec<oxbind_proto::v1::Provenance>,
}

impl SharedProvenance {
    /// The index of `key`'s entry (added on first use) under `placement`;
    /// 0 when items carry their own provenance.
    fn index_for(&mut self, placement: ItemProvenance, key: &ProvenanceKey) -> u32 {
        if placement == ItemProvenance::Full {
            return 0;
        }
        let index = match self.entries.iter().position(|entry| {
            entry.model_id == key.model.id
                && entry.within_validated_range == key.within_validated_range
        }) {
            Some(index) => index,
            None => {
                self.entries.push(provenance::for_model(
                    key.model,
                    Vec::new(),
                    key.within_validated_range,
                ));
                self.entries.len() - 1
            }
        };
        // At most two entries per model in the catalog: the cast cannot
        // truncate.
        index as u32
    }

    fn into_entries(self) -> Vec<oxbind_proto::v1::Provenance> {
        self.entries
    }
}

/// The request field path of an engine input in a request whose conditions
/// sit at `conditions` (and whose curve input is `po2` or
/// `saturation_fraction`).
fn field_of(input: Input, conditions: &str) -> String {
    let condition = Condition::ALL.iter().copied().find(|c| c.input() == input);
    match (input, condition) {
        (_, Some(Condition::Ph)) => format!("{conditions}.ph"),
        (_, Some(c)) => format!("{conditions}.{}.value", warnings::condition_field(c)),
        (Input::Po2, _) => "po2.value".to_owned(),
        (Input::Saturation, _) => "saturation_fraction".to_owned(),
        (Input::P50, _) => "hill.p50.value".to_owned(),
        (Input::HillN, _) => "hill.n".to_owned(),
        (other, _) => other.name().to_owned(),
    }
}

fn engine_refusal(error: &PhysiologyError, conditions: &str) -> InvalidRequest {
    InvalidRequest::one(Violation::from_physiology_at(
        field_of(error.input(), conditions),
        error,
    ))
}

/// SaturationFromTension for one request.
pub fn compute_saturation_from_tension(
    request: &SaturationFromTensionRequest,
) -> Result<SaturationFromTensionResponse, InvalidRequest> {
    saturation_from_tension(request, ItemProvenance::Full).map(|(response, _)| response)
}

/// SaturationFromTension for one request or batch item, with the provenance
/// `placement` asks for, and the key of that provenance.
fn saturation_from_tension(
    request: &SaturationFromTensionRequest,
    placement: ItemProvenance,
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
        },
        key,
    ))
}

/// TensionFromSaturation for one request.
pub fn compute_tension_from_saturation(
    request: &TensionFromSaturationRequest,
) -> Result<TensionFromSaturationResponse, InvalidRequest> {
    tension_from_saturation(request, ItemProvenance::Full).map(|(response, _)| response)
}

/// TensionFromSaturation for one request or batch item, with the provenance
/// `placement` asks for, and the key of that provenance.
fn tension_from_saturation(
    request: &TensionFromSaturationRequest,
    placement: ItemProvenance,
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
        },
        key,
    ))
}

/// SampleCurve for one request.
pub fn compute_sample_curve(
    request: &SampleCurveRequest,
) -> Result<SampleCurveResponse, InvalidRequest> {
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
            super::status::REASON_INCONSISTENT,
            "po2_max must be greater than po2_min",
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
                super::status::REASON_UNKNOWN_ENUM,
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
    let root = FieldPath::ROOT;
    let mut reader = RequestReader::new(request.unit_system);
    let model = choose_model(&mut reader, request.model, None, &root);
    let conditions_path = root.field("conditions");
    let conditions = reader.conditions(request.conditions.as_ref(), &conditions_path, &model);
    let system = reader.system();
    let inputs_used = reader.finish()?;

    let analysis =
        shift::shift_factors(&model, &conditions).map_err(|e| engine_refusal(&e, "conditions"))?;
    let mut found = Vec::new();
    warnings::unmodelled_conditions(&model, &conditions, &conditions_path, &mut found);
    let inside = warnings::validated_ranges(&model, &conditions, &conditions_path, &[], &mut found);
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
    })
}

/// EstimateP50 for one request.
pub fn compute_estimate_p50(
    request: &EstimateP50Request,
) -> Result<EstimateP50Response, InvalidRequest> {
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
        reader.refuse(Violation::required(&root.field("po2")));
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
