//! From a panel of inputs to derived values, through the same API functions
//! the gRPC handlers call: this module builds the contract's request
//! messages from the Observations, calls `compute_*`, and reads the numbers
//! off the responses unchanged (a fraction is stated in % as value x 100).
//! No physiology here.
//!
//! | request | called when the panel has | derived values |
//! | --- | --- | --- |
//! | SaturationFromTension (arterial, venous) | that sample's PO2 | saturation calculated from PO2 |
//! | EstimateP50 (arterial, venous) | that sample's PO2 and measured functional sO2 at most 0.97 | P50 at the sample's conditions and at standard conditions |
//! | ShiftFactors | arterial pH or PCO2, and no arterial EstimateP50 | P50 at the arterial sample's conditions |
//! | OxygenContent | total haemoglobin and arterial PO2 | contents, a-v difference, extraction, delivery, consumption |
//! | GasExchange | FiO2 | alveolar PO2, A-a gradient, PaO2/FiO2, SpO2/FiO2, imputed PaO2, OI, OSI, shunt |
//! | CorrectForTemperature | body temperature and an arterial pH, PCO2 or PO2 | those at body temperature |
//!
//! Blood-gas values are read as the analyser reports them (LOINC's
//! unadjusted terms, measured at 37 Cel): the curve is computed at 37 Cel
//! from the sample's pH and PCO2, and body temperature serves the
//! temperature correction and the alveolar gas equation.

use oxbind_proto::v1::{
    BloodConditions, BloodSample, CorrectForTemperatureRequest, EstimateP50Request,
    GasExchangeRequest, MeasuredPair, OxygenContentRequest, Provenance, Quantity as WireQuantity,
    SaturationFromTensionRequest, SaturationKind, ShiftFactorsRequest, UnitSystem, Warning,
    WarningCode,
};
use prost_types::Timestamp;

use super::{
    codes::{Input, Output},
    outcome::{error, from_violation, issue, issue_type, severity, Refusal},
    panel::Panel,
    resources::Issue,
};
use crate::{
    api::{
        dissociation::{
            compute_correct_for_temperature, compute_estimate_p50, compute_saturation_from_tension,
            compute_shift_factors,
        },
        status::InvalidRequest,
        transport::{compute_gas_exchange, compute_oxygen_content},
        units::{self, QuantityKind},
    },
    physiology::p50_estimation::INFORMATIVE_SATURATION_MAX,
};

/// UCUM code of pH.
pub const PH_UNIT: &str = "[pH]";

/// How single-point P50 estimation works, for `Observation.method`
/// (physiology/p50_estimation.rs has the formulas and full citations).
const P50_ESTIMATION_METHOD: &str = "P50 from one measured (PO2, functional saturation) pair: \
single-point Hill method with n 2.7 (Aberman A, Cavanilles JM, Weil MH, Shubin H. J Appl Physiol \
1975;38:171-176), standardised to pH 7.40, PCO2 40 mm[Hg] and 37 Cel with Kelman's virtual-PO2 \
factors (Kelman GR. J Appl Physiol 1966;21(4):1375-1376)";

/// One derived value.
#[derive(Debug, Clone)]
pub struct Derived {
    /// What it is.
    pub output: Output,
    /// The number, exactly as the API computed it (x 100 for a fraction
    /// stated in %).
    pub value: f64,
    /// Its UCUM unit.
    pub unit: String,
    /// The panel Observations it was derived from (indices).
    pub derived_from: Vec<usize>,
    /// `Observation.method` text: the model or equation and its citation.
    pub method: String,
    /// Which call produced it (its warnings are that call's).
    pub call: usize,
}

/// One warning of a call, with the panel Observation its field came from.
#[derive(Debug, Clone)]
pub struct CallWarning {
    /// The warning as the API raised it.
    pub warning: Warning,
    /// The input it concerns, when its field is one.
    pub input: Option<usize>,
}

/// One API call's warnings and the inputs it read.
#[derive(Debug, Clone, Default)]
pub struct Call {
    /// The response's warnings.
    pub warnings: Vec<CallWarning>,
    /// Panel Observations the call read.
    pub inputs: Vec<usize>,
    /// Inputs the model did not take into account
    /// (`WARNING_CODE_CONDITION_NOT_MODELLED`): not among what a value was
    /// derived from.
    pub unmodelled: Vec<usize>,
}

/// Everything the panel allowed.
#[derive(Debug, Default)]
pub struct Computed {
    /// The derived values, in table order.
    pub derived: Vec<Derived>,
    /// The calls made.
    pub calls: Vec<Call>,
    /// Information: inputs not used, P50 not estimated, and why.
    pub information: Vec<Issue>,
    /// The latest compute time of the calls.
    pub compute_time: Option<Timestamp>,
}

/// The UCUM unit `output` is stated in under `system`.
pub fn unit_of(output: Output, system: UnitSystem) -> &'static str {
    use Output as O;
    match output {
        O::SaturationCalculatedArterial
        | O::SaturationCalculatedVenous
        | O::ExtractionFraction
        | O::ShuntFraction
        | O::Spo2Fio2Ratio => "%",
        O::P50AtConditionsArterial
        | O::P50AtConditionsVenous
        | O::P50StandardArterial
        | O::P50StandardVenous
        | O::AlveolarPo2
        | O::AlveolarArterialGradient
        | O::Pao2Fio2Ratio
        | O::ImputedPao2
        | O::Pco2AtBodyTemperature
        | O::Po2AtBodyTemperature => units::output_unit(QuantityKind::Pressure, system),
        O::ContentArterial | O::ContentVenous | O::ContentDifference => {
            units::output_unit(QuantityKind::OxygenContent, system)
        }
        O::Delivery | O::Consumption => units::output_unit(QuantityKind::OxygenFlow, system),
        O::OxygenationIndex | O::OxygenSaturationIndex => "1",
        O::PhAtBodyTemperature => PH_UNIT,
    }
}

/// How a request field holds an input: a Quantity (value and unit) or a
/// plain number converted by the door.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Holds {
    Quantity,
    Number,
}

/// Where each input went in one request: (field path, input, how).
type FieldMap = Vec<(String, Input, Holds)>;

/// One sample's site.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Site {
    Arterial,
    Venous,
}

impl Site {
    fn po2(self) -> Input {
        match self {
            Site::Arterial => Input::ArterialPo2,
            Site::Venous => Input::VenousPo2,
        }
    }
    fn pco2(self) -> Input {
        match self {
            Site::Arterial => Input::ArterialPco2,
            Site::Venous => Input::VenousPco2,
        }
    }
    fn ph(self) -> Input {
        match self {
            Site::Arterial => Input::ArterialPh,
            Site::Venous => Input::VenousPh,
        }
    }
    fn base_excess(self) -> Input {
        match self {
            Site::Arterial => Input::ArterialBaseExcess,
            Site::Venous => Input::VenousBaseExcess,
        }
    }
    fn functional(self) -> Input {
        match self {
            Site::Arterial => Input::ArterialSo2,
            Site::Venous => Input::VenousSo2,
        }
    }
    fn fractional(self) -> Input {
        match self {
            Site::Arterial => Input::ArterialFo2hb,
            Site::Venous => Input::VenousFo2hb,
        }
    }
}

/// The work of one request: the panel, the plain numbers read from it, and
/// what has been computed so far.
struct Work<'p> {
    panel: &'p Panel,
    system: UnitSystem,
    numbers: Numbers,
    out: Computed,
    refusals: Vec<Issue>,
}

/// Inputs the contract takes as plain numbers, converted once.
#[derive(Debug, Default)]
struct Numbers {
    arterial_ph: Option<f64>,
    venous_ph: Option<f64>,
    arterial_so2: Option<f64>,
    venous_so2: Option<f64>,
    arterial_fo2hb: Option<f64>,
    venous_fo2hb: Option<f64>,
    spo2: Option<f64>,
}

/// Compute every value the panel allows, or refuse with every issue found.
pub fn compute(panel: &Panel) -> Result<Computed, Refusal> {
    let numbers = read_numbers(panel)?;
    let system = UnitSystem::try_from(panel.unit_system).unwrap_or(UnitSystem::Conventional);
    let mut work = Work {
        panel,
        system,
        numbers,
        out: Computed::default(),
        refusals: Vec::new(),
    };
    work.saturation(Site::Arterial);
    work.saturation(Site::Venous);
    let estimated_arterial = work.p50_estimate(Site::Arterial);
    work.p50_estimate(Site::Venous);
    if !estimated_arterial {
        work.p50_at_arterial_conditions();
    }
    work.oxygen_content();
    work.gas_exchange();
    work.temperature_correction();
    if !work.refusals.is_empty() {
        let mut issues = work.refusals;
        issues.dedup();
        return Err(Refusal::unprocessable(issues));
    }
    if work.out.derived.is_empty() {
        return Err(Refusal::unprocessable(vec![error(
            issue_type::BUSINESS_RULE,
            "no value can be derived from these inputs: the operation needs at least a PO2, \
total haemoglobin with an arterial PO2, an FiO2, or a body temperature with an arterial blood gas \
(see the OperationDefinition)",
            "Parameters.parameter".to_owned(),
        )]));
    }
    work.note_unused_inputs();
    Ok(work.out)
}

/// The plain-number inputs, with their units checked through the same UCUM
/// table as the gRPC path ([`units::to_engine`]).
fn read_numbers(panel: &Panel) -> Result<Numbers, Refusal> {
    let mut issues = Vec::new();
    let mut ph = |input: Input| {
        let o = panel.get(input)?;
        if o.unit == PH_UNIT {
            Some(o.value)
        } else {
            issues.push(error(
                issue_type::CODE_INVALID,
                format!("the {} takes the UCUM code `{PH_UNIT}`", input.label()),
                format!("{}.valueQuantity.code", o.expression),
            ));
            None
        }
    };
    let arterial_ph = ph(Input::ArterialPh);
    let venous_ph = ph(Input::VenousPh);
    let mut fraction = |input: Input| {
        let o = panel.get(input)?;
        match units::to_engine(o.value, &o.unit, QuantityKind::Fraction) {
            Ok(value) => Some(value),
            Err(refusal) => {
                let hint = refusal
                    .hint
                    .map(|right| format!(" (UCUM writes it `{right}`)"))
                    .unwrap_or_default();
                issues.push(error(
                    issue_type::CODE_INVALID,
                    format!(
                        "the {} has a unit code this input does not accept{hint}; accepted UCUM \
codes (case-sensitive): {}",
                        input.label(),
                        units::accepted_units(QuantityKind::Fraction).join(", ")
                    ),
                    format!("{}.valueQuantity.code", o.expression),
                ));
                None
            }
        }
    };
    let numbers = Numbers {
        arterial_ph,
        venous_ph,
        arterial_so2: fraction(Input::ArterialSo2),
        venous_so2: fraction(Input::VenousSo2),
        arterial_fo2hb: fraction(Input::ArterialFo2hb),
        venous_fo2hb: fraction(Input::VenousFo2hb),
        spo2: fraction(Input::Spo2),
    };
    if issues.is_empty() {
        Ok(numbers)
    } else {
        Err(Refusal::unprocessable(issues))
    }
}

/// `Observation.method` text for a result with `provenance`.
fn method_text(what: &str, provenance: Option<&Provenance>) -> String {
    let Some(p) = provenance else {
        return what.to_owned();
    };
    let doi = if p.doi.is_empty() {
        String::new()
    } else {
        format!("; doi:{}", p.doi)
    };
    if p.model_id.is_empty() {
        format!(
            "{what} (method version {}): {}{doi}",
            p.model_version, p.reference
        )
    } else {
        format!(
            "{what}: model {} version {}, {}{doi}",
            p.model_id, p.model_version, p.reference
        )
    }
}

impl Work<'_> {
    fn q(&self, input: Input) -> Option<WireQuantity> {
        self.panel.get(input).map(|o| o.quantity())
    }

    fn index(&self, input: Input) -> Option<usize> {
        self.panel.by_input.get(&input).copied()
    }

    /// The panel indices of those of `inputs` that were given.
    fn present(&self, inputs: &[Input]) -> Vec<usize> {
        let mut found: Vec<usize> = inputs.iter().filter_map(|&i| self.index(i)).collect();
        found.sort_unstable();
        found.dedup();
        found
    }

    fn ph(&self, site: Site) -> Option<f64> {
        match site {
            Site::Arterial => self.numbers.arterial_ph,
            Site::Venous => self.numbers.venous_ph,
        }
    }

    /// A site's blood conditions: pH, PCO2 and base excess of the sample,
    /// and the dyshaemoglobins (the same blood on both sides). `dys` leaves
    /// COHb and MetHb out (a sample carries its own).
    fn conditions(
        &self,
        site: Site,
        prefix: &str,
        dys: bool,
        map: &mut FieldMap,
    ) -> BloodConditions {
        let mut c = BloodConditions {
            ph: self.ph(site),
            pco2: self.q(site.pco2()),
            base_excess: self.q(site.base_excess()),
            hbf: self.q(Input::Hbf),
            ..BloodConditions::default()
        };
        map.push((format!("{prefix}.ph"), site.ph(), Holds::Number));
        map.push((format!("{prefix}.pco2"), site.pco2(), Holds::Quantity));
        map.push((
            format!("{prefix}.base_excess"),
            site.base_excess(),
            Holds::Quantity,
        ));
        map.push((format!("{prefix}.hbf"), Input::Hbf, Holds::Quantity));
        if dys {
            c.cohb = self.q(Input::Cohb);
            c.methb = self.q(Input::Methb);
            map.push((format!("{prefix}.cohb"), Input::Cohb, Holds::Quantity));
            map.push((format!("{prefix}.methb"), Input::Methb, Holds::Quantity));
        }
        c
    }

    fn condition_inputs(site: Site) -> [Input; 6] {
        [
            site.ph(),
            site.pco2(),
            site.base_excess(),
            Input::Cohb,
            Input::Methb,
            Input::Hbf,
        ]
    }

    /// Record a refusal's issues, each naming the Observation element that
    /// held the refused field.
    fn refused(&mut self, refusal: &InvalidRequest, map: &FieldMap) {
        for violation in refusal.violations() {
            let (subject, expression) = self.locate(&violation.field, map);
            self.refusals
                .push(from_violation(violation, &subject, expression));
        }
    }

    /// The Observation element (and a label) for a request field path.
    fn locate(&self, field: &str, map: &FieldMap) -> (String, String) {
        let best = map
            .iter()
            .filter(|(prefix, input, _)| {
                self.index(*input).is_some()
                    && (field == prefix || field.starts_with(&format!("{prefix}.")))
            })
            .max_by_key(|(prefix, _, _)| prefix.len());
        if let Some((prefix, input, holds)) = best {
            let observation = &self.panel.observations[self.index(*input).unwrap_or_default()];
            let element = match (&field[prefix.len()..], holds) {
                (".unit", _) => ".valueQuantity.code",
                ("", Holds::Quantity) => ".valueQuantity",
                _ => ".valueQuantity.value",
            };
            return (
                format!("the {}", input.label()),
                format!("{}{element}", observation.expression),
            );
        }
        if field.starts_with("barometric_pressure") {
            if let Some((_, expression)) = &self.panel.barometric_pressure {
                return ("barometricPressure".to_owned(), expression.clone());
            }
        }
        if field.starts_with("model")
            || field.starts_with("hill")
            || field.contains(".model")
            || field.contains(".hill")
        {
            if let Some(expression) = &self.panel.model_expression {
                return ("model".to_owned(), expression.clone());
            }
        }
        // A default the caller did not give (for example the water vapour
        // pressure at the default temperature): the request as a whole.
        ("the inputs".to_owned(), "Parameters".to_owned())
    }

    /// The panel Observation a request field path came from.
    fn input_at(&self, field: &str, map: &FieldMap) -> Option<usize> {
        map.iter()
            .filter(|(prefix, input, _)| {
                self.index(*input).is_some()
                    && (field == prefix || field.starts_with(&format!("{prefix}.")))
            })
            .max_by_key(|(prefix, _, _)| prefix.len())
            .and_then(|(_, input, _)| self.index(*input))
    }

    fn call(
        &mut self,
        warnings: &[Warning],
        provenance: Option<&Provenance>,
        inputs: Vec<usize>,
        map: &FieldMap,
    ) -> usize {
        // The api function has already left its model and warning codes in
        // telemetry, as for every door.
        if let Some(time) = provenance.and_then(|p| p.compute_time) {
            let later = match &self.out.compute_time {
                Some(t) => (time.seconds, time.nanos) > (t.seconds, t.nanos),
                None => true,
            };
            if later {
                self.out.compute_time = Some(time.into());
            }
        }
        let warnings: Vec<CallWarning> = warnings
            .iter()
            .map(|w| CallWarning {
                warning: w.clone(),
                input: self.input_at(&w.field, map),
            })
            .collect();
        let unmodelled = warnings
            .iter()
            .filter(|w| w.warning.code == WarningCode::ConditionNotModelled as i32)
            .filter_map(|w| w.input)
            .collect();
        self.out.calls.push(Call {
            warnings,
            inputs,
            unmodelled,
        });
        self.out.calls.len() - 1
    }

    fn derive(
        &mut self,
        output: Output,
        value: f64,
        unit: &str,
        mut from: Vec<usize>,
        method: &str,
        call: usize,
    ) {
        let unmodelled = &self.out.calls[call].unmodelled;
        from.retain(|i| !unmodelled.contains(i));
        self.out.derived.push(Derived {
            output,
            value,
            unit: unit.to_owned(),
            derived_from: from,
            method: method.to_owned(),
            call,
        });
    }

    fn quantity_out(
        &mut self,
        output: Output,
        q: Option<&WireQuantity>,
        from: &[Input],
        method: &str,
        call: usize,
    ) {
        if let Some(q) = q {
            let from = self.present(from);
            self.derive(output, q.value, &q.unit.clone(), from, method, call);
        }
    }

    fn percent_out(
        &mut self,
        output: Output,
        fraction: Option<f64>,
        from: &[Input],
        method: &str,
        call: usize,
    ) {
        if let Some(f) = fraction {
            let from = self.present(from);
            self.derive(output, f * 100.0, "%", from, method, call);
        }
    }

    /// SaturationFromTension for one sample.
    fn saturation(&mut self, site: Site) {
        let Some(po2) = self.q(site.po2()) else {
            return;
        };
        let mut map = vec![("po2".to_owned(), site.po2(), Holds::Quantity)];
        let request = SaturationFromTensionRequest {
            po2: Some(po2),
            conditions: Some(self.conditions(site, "conditions", true, &mut map)),
            model: self.panel.model,
            unit_system: self.panel.unit_system,
            ..SaturationFromTensionRequest::default()
        };
        let mut inputs = vec![site.po2()];
        inputs.extend(Self::condition_inputs(site));
        match compute_saturation_from_tension(&request) {
            Ok(response) => {
                let call = self.call(
                    &response.warnings,
                    response.provenance.as_ref(),
                    self.present(&inputs),
                    &map,
                );
                let method = method_text(
                    "Saturation calculated from PO2",
                    response.provenance.as_ref(),
                );
                let output = match site {
                    Site::Arterial => Output::SaturationCalculatedArterial,
                    Site::Venous => Output::SaturationCalculatedVenous,
                };
                self.percent_out(
                    output,
                    Some(response.saturation_fraction),
                    &inputs,
                    &method,
                    call,
                );
            }
            Err(refusal) => self.refused(&refusal, &map),
        }
    }

    /// EstimateP50 from a measured functional saturation and its PO2, when
    /// the saturation is informative; says so when it is not.
    fn p50_estimate(&mut self, site: Site) -> bool {
        let (saturation, po2) = match site {
            Site::Arterial => (self.numbers.arterial_so2, self.q(Input::ArterialPo2)),
            Site::Venous => (self.numbers.venous_so2, self.q(Input::VenousPo2)),
        };
        let (Some(saturation), Some(po2)) = (saturation, po2) else {
            return false;
        };
        if saturation > INFORMATIVE_SATURATION_MAX {
            if let Some(o) = self.panel.get(site.functional()) {
                self.out.information.push(issue(
                    severity::INFORMATION,
                    issue_type::INFORMATIONAL,
                    format!(
                        "no P50 estimated from the {}: above saturation \
{INFORMATIVE_SATURATION_MAX} the curve is too flat for it",
                        site.functional().label()
                    ),
                    vec![format!("{}.valueQuantity.value", o.expression)],
                ));
            }
            return false;
        }
        let map = vec![
            ("pairs[0].po2".to_owned(), site.po2(), Holds::Quantity),
            (
                "pairs[0].saturation_fraction".to_owned(),
                site.functional(),
                Holds::Number,
            ),
            (
                "pairs[0].conditions.ph".to_owned(),
                site.ph(),
                Holds::Number,
            ),
            (
                "pairs[0].conditions.pco2".to_owned(),
                site.pco2(),
                Holds::Quantity,
            ),
        ];
        let request = EstimateP50Request {
            pairs: vec![MeasuredPair {
                po2: Some(po2),
                saturation_fraction: saturation,
                conditions: Some(BloodConditions {
                    ph: self.ph(site),
                    pco2: self.q(site.pco2()),
                    ..BloodConditions::default()
                }),
            }],
            model: self.panel.model,
            unit_system: self.panel.unit_system,
        };
        let inputs = [site.po2(), site.functional(), site.ph(), site.pco2()];
        match compute_estimate_p50(&request) {
            Ok(response) => {
                let call = self.call(
                    &response.warnings,
                    response.provenance.as_ref(),
                    self.present(&inputs),
                    &map,
                );
                let method = method_text(P50_ESTIMATION_METHOD, response.provenance.as_ref());
                let (at, standard) = match site {
                    Site::Arterial => {
                        (Output::P50AtConditionsArterial, Output::P50StandardArterial)
                    }
                    Site::Venous => (Output::P50AtConditionsVenous, Output::P50StandardVenous),
                };
                self.quantity_out(
                    at,
                    response.p50_at_conditions.as_ref(),
                    &inputs,
                    &method,
                    call,
                );
                self.quantity_out(
                    standard,
                    response.p50_standard.as_ref(),
                    &inputs,
                    &method,
                    call,
                );
                true
            }
            Err(refusal) => {
                self.refused(&refusal, &map);
                true
            }
        }
    }
    /// ShiftFactors at the arterial sample's conditions: the model's P50 there.
    fn p50_at_arterial_conditions(&mut self) {
        if self.numbers.arterial_ph.is_none() && self.panel.get(Input::ArterialPco2).is_none() {
            return;
        }
        let mut map = Vec::new();
        let request = ShiftFactorsRequest {
            conditions: Some(self.conditions(Site::Arterial, "conditions", true, &mut map)),
            model: self.panel.model,
            unit_system: self.panel.unit_system,
            // The FHIR operation offers no uncertainty (API.md section 9).
            uncertainty: None,
        };
        let inputs = Self::condition_inputs(Site::Arterial);
        match compute_shift_factors(&request) {
            Ok(response) => {
                let call = self.call(
                    &response.warnings,
                    response.provenance.as_ref(),
                    self.present(&inputs),
                    &map,
                );
                let method = method_text(
                    "P50 of the dissociation model at the sample's pH, PCO2, base excess and \
haemoglobin fractions",
                    response.provenance.as_ref(),
                );
                self.quantity_out(
                    Output::P50AtConditionsArterial,
                    response.p50_at_conditions.as_ref(),
                    &inputs,
                    &method,
                    call,
                );
            }
            Err(refusal) => self.refused(&refusal, &map),
        }
    }

    /// A BloodSample for `site`: the measured saturation (fractional FO2Hb
    /// first, else functional sO2) or, without one, the conditions to
    /// calculate it from. Returns the sample and the inputs it read.
    fn sample(&self, site: Site, prefix: &str, map: &mut FieldMap) -> (BloodSample, Vec<Input>) {
        let (fractional, functional) = match site {
            Site::Arterial => (self.numbers.arterial_fo2hb, self.numbers.arterial_so2),
            Site::Venous => (self.numbers.venous_fo2hb, self.numbers.venous_so2),
        };
        let mut sample = BloodSample {
            po2: self.q(site.po2()),
            cohb: self.q(Input::Cohb),
            methb: self.q(Input::Methb),
            model: 0,
            ..BloodSample::default()
        };
        map.push((format!("{prefix}.po2"), site.po2(), Holds::Quantity));
        map.push((format!("{prefix}.cohb"), Input::Cohb, Holds::Quantity));
        map.push((format!("{prefix}.methb"), Input::Methb, Holds::Quantity));
        let mut inputs = vec![site.po2(), Input::Cohb, Input::Methb];
        let saturation_path = format!("{prefix}.saturation_fraction");
        if let Some(s) = fractional {
            sample.saturation_fraction = Some(s);
            sample.saturation_kind = SaturationKind::Fractional as i32;
            map.push((saturation_path, site.fractional(), Holds::Number));
            inputs.push(site.fractional());
        } else if let Some(s) = functional {
            sample.saturation_fraction = Some(s);
            sample.saturation_kind = SaturationKind::Functional as i32;
            map.push((saturation_path, site.functional(), Holds::Number));
            inputs.push(site.functional());
        } else {
            sample.conditions =
                Some(self.conditions(site, &format!("{prefix}.conditions"), false, map));
            sample.model = self.panel.model;
            inputs.extend([site.ph(), site.pco2(), site.base_excess(), Input::Hbf]);
        }
        (sample, inputs)
    }

    /// OxygenContent: contents, difference, extraction, delivery, consumption.
    fn oxygen_content(&mut self) {
        let (Some(hemoglobin), true) = (
            self.q(Input::Hemoglobin),
            self.panel.get(Input::ArterialPo2).is_some(),
        ) else {
            return;
        };
        let mut map = vec![
            ("hemoglobin".to_owned(), Input::Hemoglobin, Holds::Quantity),
            (
                "cardiac_output".to_owned(),
                Input::CardiacOutput,
                Holds::Quantity,
            ),
        ];
        let (arterial, mut arterial_inputs) = self.sample(Site::Arterial, "arterial", &mut map);
        arterial_inputs.push(Input::Hemoglobin);
        let venous = self
            .panel
            .get(Input::VenousPo2)
            .map(|_| self.sample(Site::Venous, "venous", &mut map));
        let request = OxygenContentRequest {
            hemoglobin: Some(hemoglobin),
            arterial: Some(arterial),
            venous: venous.as_ref().map(|(s, _)| s.clone()),
            cardiac_output: self.q(Input::CardiacOutput),
            hufner_factor_ml_per_g: None,
            unit_system: self.panel.unit_system,
            uncertainty: None,
        };
        let venous_inputs: Vec<Input> = venous.map(|(_, i)| i).unwrap_or_default();
        let both: Vec<Input> = arterial_inputs
            .iter()
            .chain(&venous_inputs)
            .copied()
            .collect();
        let mut all = both.clone();
        all.push(Input::CardiacOutput);
        match compute_oxygen_content(&request) {
            Ok(r) => {
                let call = self.call(&r.warnings, r.provenance.as_ref(), self.present(&all), &map);
                let method = method_text("Oxygen content and transport", r.provenance.as_ref());
                let mut venous_side = venous_inputs.clone();
                venous_side.push(Input::Hemoglobin);
                let mut delivery = arterial_inputs.clone();
                delivery.push(Input::CardiacOutput);
                self.quantity_out(
                    Output::ContentArterial,
                    r.arterial_content.as_ref(),
                    &arterial_inputs,
                    &method,
                    call,
                );
                self.quantity_out(
                    Output::ContentVenous,
                    r.venous_content.as_ref(),
                    &venous_side,
                    &method,
                    call,
                );
                self.quantity_out(
                    Output::ContentDifference,
                    r.arteriovenous_difference.as_ref(),
                    &both,
                    &method,
                    call,
                );
                self.percent_out(
                    Output::ExtractionFraction,
                    r.extraction_fraction,
                    &both,
                    &method,
                    call,
                );
                self.quantity_out(
                    Output::Delivery,
                    r.delivery.as_ref(),
                    &delivery,
                    &method,
                    call,
                );
                self.quantity_out(
                    Output::Consumption,
                    r.consumption.as_ref(),
                    &all,
                    &method,
                    call,
                );
            }
            Err(refusal) => self.refused(&refusal, &map),
        }
    }

    /// GasExchange: alveolar gas, gradients, ratios, indices and shunt.
    fn gas_exchange(&mut self) {
        let Some(fio2) = self.q(Input::Fio2) else {
            return;
        };
        let mut map = vec![
            ("fio2".to_owned(), Input::Fio2, Holds::Quantity),
            ("paco2".to_owned(), Input::ArterialPco2, Holds::Quantity),
            ("pao2".to_owned(), Input::ArterialPo2, Holds::Quantity),
            ("spo2_fraction".to_owned(), Input::Spo2, Holds::Number),
            (
                "mean_airway_pressure".to_owned(),
                Input::MeanAirwayPressure,
                Holds::Quantity,
            ),
            (
                "body_temperature".to_owned(),
                Input::BodyTemperature,
                Holds::Quantity,
            ),
        ];
        let mut request = GasExchangeRequest {
            fio2: Some(fio2),
            barometric_pressure: self
                .panel
                .barometric_pressure
                .as_ref()
                .map(|(q, _)| q.clone()),
            paco2: self.q(Input::ArterialPco2),
            pao2: self.q(Input::ArterialPo2),
            spo2_fraction: self.numbers.spo2,
            mean_airway_pressure: self.q(Input::MeanAirwayPressure),
            body_temperature: self.q(Input::BodyTemperature),
            unit_system: self.panel.unit_system,
            ..GasExchangeRequest::default()
        };
        // The shunt needs haemoglobin, PaO2 and a venous sample.
        let wants_shunt = self.panel.get(Input::Hemoglobin).is_some()
            && self.panel.get(Input::VenousPo2).is_some()
            && self.panel.get(Input::ArterialPo2).is_some()
            && self.panel.get(Input::ArterialPco2).is_some();
        let mut shunt_inputs = Vec::new();
        if wants_shunt {
            map.push(("hemoglobin".to_owned(), Input::Hemoglobin, Holds::Quantity));
            let (mut arterial, arterial_inputs) = self.sample(Site::Arterial, "arterial", &mut map);
            // GasExchange takes the arterial tension from pao2.
            arterial.po2 = None;
            let (venous, venous_inputs) = self.sample(Site::Venous, "venous", &mut map);
            request.hemoglobin = self.q(Input::Hemoglobin);
            request.arterial = Some(arterial);
            request.venous = Some(venous);
            shunt_inputs = [arterial_inputs, venous_inputs].concat();
            shunt_inputs.extend([
                Input::Hemoglobin,
                Input::Fio2,
                Input::ArterialPco2,
                Input::BodyTemperature,
            ]);
        }
        let alveolar = [Input::Fio2, Input::ArterialPco2, Input::BodyTemperature];
        let gradient = [
            Input::Fio2,
            Input::ArterialPco2,
            Input::BodyTemperature,
            Input::ArterialPo2,
        ];
        let mut all: Vec<Input> = gradient.to_vec();
        all.extend([Input::Spo2, Input::MeanAirwayPressure]);
        all.extend(&shunt_inputs);
        match compute_gas_exchange(&request) {
            Ok(r) => {
                let call = self.call(&r.warnings, r.provenance.as_ref(), self.present(&all), &map);
                let method = method_text("Gas exchange", r.provenance.as_ref());
                let pressure = units::output_unit(QuantityKind::Pressure, self.system);
                self.quantity_out(
                    Output::AlveolarPo2,
                    r.alveolar_po2.as_ref(),
                    &alveolar,
                    &method,
                    call,
                );
                self.quantity_out(
                    Output::AlveolarArterialGradient,
                    r.alveolar_arterial_gradient.as_ref(),
                    &gradient,
                    &method,
                    call,
                );
                if let Some(ratio) = r.pao2_fio2_ratio {
                    let from = self.present(&[Input::ArterialPo2, Input::Fio2]);
                    self.derive(Output::Pao2Fio2Ratio, ratio, pressure, from, &method, call);
                }
                if let Some(ratio) = r.spo2_fio2_ratio {
                    let from = self.present(&[Input::Spo2, Input::Fio2]);
                    self.derive(Output::Spo2Fio2Ratio, ratio, "%", from, &method, call);
                }
                self.quantity_out(
                    Output::ImputedPao2,
                    r.imputed_pao2.as_ref(),
                    &[Input::Spo2],
                    &method,
                    call,
                );
                if let Some(index) = r.oxygenation_index {
                    let from =
                        self.present(&[Input::Fio2, Input::MeanAirwayPressure, Input::ArterialPo2]);
                    self.derive(Output::OxygenationIndex, index, "1", from, &method, call);
                }
                if let Some(index) = r.oxygen_saturation_index {
                    let from = self.present(&[Input::Fio2, Input::MeanAirwayPressure, Input::Spo2]);
                    self.derive(
                        Output::OxygenSaturationIndex,
                        index,
                        "1",
                        from,
                        &method,
                        call,
                    );
                }
                self.percent_out(
                    Output::ShuntFraction,
                    r.shunt_fraction,
                    &shunt_inputs,
                    &method,
                    call,
                );
            }
            Err(refusal) => self.refused(&refusal, &map),
        }
    }

    /// CorrectForTemperature: arterial pH, PCO2 and PO2 at body temperature.
    fn temperature_correction(&mut self) {
        let Some(target) = self.q(Input::BodyTemperature) else {
            return;
        };
        let ph = self.numbers.arterial_ph;
        let pco2 = self.q(Input::ArterialPco2);
        let po2 = self.q(Input::ArterialPo2);
        if ph.is_none() && pco2.is_none() && po2.is_none() {
            return;
        }
        let map = vec![
            ("ph".to_owned(), Input::ArterialPh, Holds::Number),
            ("pco2".to_owned(), Input::ArterialPco2, Holds::Quantity),
            ("po2".to_owned(), Input::ArterialPo2, Holds::Quantity),
            (
                "target_temperature".to_owned(),
                Input::BodyTemperature,
                Holds::Quantity,
            ),
        ];
        let request = CorrectForTemperatureRequest {
            ph,
            pco2,
            po2,
            measured_temperature: None,
            target_temperature: Some(target),
            unit_system: self.panel.unit_system,
        };
        let inputs = [
            Input::ArterialPh,
            Input::ArterialPco2,
            Input::ArterialPo2,
            Input::BodyTemperature,
        ];
        match compute_correct_for_temperature(&request) {
            Ok(r) => {
                let call = self.call(
                    &r.warnings,
                    r.provenance.as_ref(),
                    self.present(&inputs),
                    &map,
                );
                let method = method_text(
                    "Correction from the analyser's 37 Cel to body temperature",
                    r.provenance.as_ref(),
                );
                if let Some(ph) = r.ph {
                    let from = self.present(&[Input::ArterialPh, Input::BodyTemperature]);
                    self.derive(
                        Output::PhAtBodyTemperature,
                        ph,
                        PH_UNIT,
                        from,
                        &method,
                        call,
                    );
                }
                self.quantity_out(
                    Output::Pco2AtBodyTemperature,
                    r.pco2.as_ref(),
                    &[Input::ArterialPco2, Input::BodyTemperature],
                    &method,
                    call,
                );
                self.quantity_out(
                    Output::Po2AtBodyTemperature,
                    r.po2.as_ref(),
                    &[Input::ArterialPo2, Input::BodyTemperature],
                    &method,
                    call,
                );
            }
            Err(refusal) => self.refused(&refusal, &map),
        }
    }

    /// Information for every recognised input no derived value used.
    fn note_unused_inputs(&mut self) {
        for (index, o) in self.panel.observations.iter().enumerate() {
            let used = self
                .out
                .derived
                .iter()
                .any(|d| d.derived_from.contains(&index));
            if !used {
                self.out.information.push(issue(
                    severity::INFORMATION,
                    issue_type::INFORMATIONAL,
                    format!(
                        "not used: the {} was read, but the other inputs any value derived from it \
needs were not given, or a measured value took its place",
                        o.input.label()
                    ),
                    vec![format!("{}.code", o.expression)],
                ));
            }
        }
    }
}
