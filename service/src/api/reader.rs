//! Reading a request: each input is converted from its UCUM unit to the
//! engine's, checked against its hard limit, and recorded for provenance as
//! used (with the defaulted flag). Every bad field is collected, so one
//! refusal lists them all.

use oxbind_proto::v1::{BloodConditions, InputUsed, Quantity, UnitSystem};

use super::{
    field_path::FieldPath,
    limits::{self, HardLimit},
    status::{InvalidRequest, Violation, REASON_FRACTIONS_SUM},
    units::{self, QuantityKind},
};
use crate::physiology::{
    conditions::{self as engine_conditions, Conditions},
    model::Model,
};

/// Room for the inputs a request usually records (a curve input, the model's
/// parameters and the eight blood conditions), so the list rarely grows.
const INPUTS_USED_CAPACITY: usize = 12;

/// Hint for a fraction Quantity above 1 with unit `1`.
const PERCENT_AS_QUANTITY_HINT: &str =
    " (unit `1` means a fraction between 0 and 1; write per cent with unit `%`)";

/// Hint for a plain fraction field above 1.
const PERCENT_AS_NUMBER_HINT: &str =
    " (this field takes a fraction between 0 and 1; send per cent divided by 100)";

/// Whether a refused `value` of a fraction limit looks like a percentage
/// (above 1, at most 100): the refusal then says how to send per cent.
fn looks_like_percent(limit: &HardLimit, value: f64) -> bool {
    limit.unit_key == "fraction" && value > 1.0 && value <= 100.0
}

/// Collects the inputs of one request (or one batch item).
#[derive(Debug)]
pub struct RequestReader {
    system: UnitSystem,
    violations: Vec<Violation>,
    inputs_used: Vec<InputUsed>,
    records_inputs: bool,
}

impl RequestReader {
    /// A reader reporting inputs in the request's `unit_system` (its raw enum
    /// value; UNSPECIFIED means conventional, an unknown value is refused).
    pub fn new(raw_unit_system: i32) -> Self {
        Self::reading(raw_unit_system, true)
    }

    fn reading(raw_unit_system: i32, records_inputs: bool) -> Self {
        let mut reader = Self {
            system: UnitSystem::Conventional,
            violations: Vec::new(),
            inputs_used: if records_inputs {
                Vec::with_capacity(INPUTS_USED_CAPACITY)
            } else {
                Vec::new()
            },
            records_inputs,
        };
        match UnitSystem::try_from(raw_unit_system) {
            Ok(UnitSystem::Si) => reader.system = UnitSystem::Si,
            Ok(_) => {}
            Err(_) => reader.refuse(Violation::other(
                &FieldPath::ROOT.field("unit_system"),
                super::status::REASON_UNKNOWN_ENUM,
                "not a known oxbind.v1.UnitSystem value",
            )),
        }
        reader
    }

    /// A reader reporting inputs in `system`.
    pub fn in_system(system: UnitSystem) -> Self {
        Self {
            system,
            violations: Vec::new(),
            inputs_used: Vec::with_capacity(INPUTS_USED_CAPACITY),
            records_inputs: true,
        }
    }

    /// A reader like [`RequestReader::new`] that validates and converts but
    /// does not record the inputs used: [`RequestReader::finish`] gives an
    /// empty list. For batch items whose provenance is shared.
    pub fn without_inputs_used(raw_unit_system: i32) -> Self {
        Self::reading(raw_unit_system, false)
    }

    /// The unit system responses are reported in.
    pub fn system(&self) -> UnitSystem {
        self.system
    }

    /// Record a violation found elsewhere.
    pub fn refuse(&mut self, violation: Violation) {
        self.violations.push(violation);
    }

    /// Whether any field has been refused so far.
    pub fn has_violations(&self) -> bool {
        !self.violations.is_empty()
    }

    /// Read an optional quantity of `kind` limited by `limit`.
    ///
    /// Absent: `None` (and nothing recorded). Present and good: the engine
    /// value, recorded as used. Present and bad: a violation, and `None`.
    pub fn quantity(
        &mut self,
        quantity: Option<&Quantity>,
        path: &FieldPath<'_>,
        kind: QuantityKind,
        limit: &HardLimit,
    ) -> Option<f64> {
        let quantity = quantity?;
        let value = self.convert(quantity, path, kind)?;
        if !limit.accepts(value) {
            let mut violation = Violation::outside_limit(&path.field("value"), limit);
            if looks_like_percent(limit, value) && quantity.unit == "1" {
                violation = violation.with_hint(PERCENT_AS_QUANTITY_HINT);
            }
            self.violations.push(violation);
            return None;
        }
        self.record(path, value, kind, false);
        Some(value)
    }

    /// Read a required quantity; absence is a violation.
    pub fn required_quantity(
        &mut self,
        quantity: Option<&Quantity>,
        path: &FieldPath<'_>,
        kind: QuantityKind,
        limit: &HardLimit,
    ) -> Option<f64> {
        if quantity.is_none() {
            self.violations.push(Violation::required(path));
            return None;
        }
        self.quantity(quantity, path, kind, limit)
    }

    /// Read an optional quantity, or use `default` (recorded as defaulted).
    pub fn quantity_or(
        &mut self,
        quantity: Option<&Quantity>,
        path: &FieldPath<'_>,
        kind: QuantityKind,
        limit: &HardLimit,
        default: f64,
    ) -> f64 {
        if quantity.is_none() {
            self.record(path, default, kind, true);
            return default;
        }
        // A bad value is refused; the default keeps later code simple and is
        // never used, since the request fails as a whole.
        self.quantity(quantity, path, kind, limit)
            .unwrap_or(default)
    }

    /// Read a plain number (unit given by the field itself) limited by `limit`.
    pub fn number(
        &mut self,
        value: f64,
        path: &FieldPath<'_>,
        limit: &HardLimit,
        kind: QuantityKind,
    ) -> Option<f64> {
        if !value.is_finite() {
            self.violations.push(Violation::not_finite(path));
            return None;
        }
        if !limit.accepts(value) {
            let mut violation = Violation::outside_limit(path, limit);
            if looks_like_percent(limit, value) {
                violation = violation.with_hint(PERCENT_AS_NUMBER_HINT);
            }
            self.violations.push(violation);
            return None;
        }
        self.record(path, value, kind, false);
        Some(value)
    }

    /// Read an optional plain number, or use `default` (recorded as defaulted).
    pub fn number_or(
        &mut self,
        value: Option<f64>,
        path: &FieldPath<'_>,
        limit: &HardLimit,
        kind: QuantityKind,
        default: f64,
    ) -> f64 {
        match value {
            Some(value) => self.number(value, path, limit, kind).unwrap_or(default),
            None => {
                self.record(path, default, kind, true);
                default
            }
        }
    }

    /// Read a pH (a plain number with the UCUM unit `[pH]` in provenance).
    pub fn ph(&mut self, value: Option<f64>, path: &FieldPath<'_>) -> Option<f64> {
        let value = value?;
        if !value.is_finite() {
            self.violations.push(Violation::not_finite(path));
            return None;
        }
        if !limits::PH.accepts(value) {
            self.violations
                .push(Violation::outside_limit(path, &limits::PH));
            return None;
        }
        self.record_raw(path, value, "[pH]", false);
        Some(value)
    }

    /// Record a pH that was defaulted.
    pub fn ph_defaulted(&mut self, path: &FieldPath<'_>, value: f64) {
        self.record_raw(path, value, "[pH]", true);
    }

    /// Read blood conditions below `path` for `model`; absent fields keep
    /// `None` in the result (standard conditions) and are recorded as
    /// defaulted with the standard value the model uses.
    pub fn conditions(
        &mut self,
        conditions: Option<&BloodConditions>,
        path: &FieldPath<'_>,
        model: &Model,
    ) -> Conditions {
        let empty = BloodConditions::default();
        let given = conditions.unwrap_or(&empty);
        let ph_path = path.field("ph");
        let ph = self.ph(given.ph, &ph_path);
        if given.ph.is_none() {
            self.ph_defaulted(&ph_path, engine_conditions::STANDARD_PH);
        }
        let read = |reader: &mut Self,
                    q: Option<&Quantity>,
                    name: &'static str,
                    kind: QuantityKind,
                    limit: &HardLimit,
                    standard: f64| {
            let field = path.field(name);
            match q {
                Some(_) => reader.quantity(q, &field, kind, limit),
                None => {
                    reader.record(&field, standard, kind, true);
                    None
                }
            }
        };
        let pco2 = read(
            self,
            given.pco2.as_ref(),
            "pco2",
            QuantityKind::Pressure,
            &limits::CONDITIONS_PCO2,
            model.standard_pco2_mmhg(),
        );
        let temperature = read(
            self,
            given.temperature.as_ref(),
            "temperature",
            QuantityKind::Temperature,
            &limits::TEMPERATURE,
            engine_conditions::STANDARD_TEMPERATURE_CELSIUS,
        );
        let dpg = read(
            self,
            given.dpg.as_ref(),
            "dpg",
            QuantityKind::Concentration,
            &limits::DPG,
            model.standard_dpg_mmol_per_l(),
        );
        let base_excess = read(
            self,
            given.base_excess.as_ref(),
            "base_excess",
            QuantityKind::Concentration,
            &limits::BASE_EXCESS,
            engine_conditions::STANDARD_BASE_EXCESS_MMOL_PER_L,
        );
        let cohb = read(
            self,
            given.cohb.as_ref(),
            "cohb",
            QuantityKind::Fraction,
            &limits::DYSHEMOGLOBIN_FRACTION,
            0.0,
        );
        let methb = read(
            self,
            given.methb.as_ref(),
            "methb",
            QuantityKind::Fraction,
            &limits::DYSHEMOGLOBIN_FRACTION,
            0.0,
        );
        let hbf = read(
            self,
            given.hbf.as_ref(),
            "hbf",
            QuantityKind::Fraction,
            &limits::HBF_FRACTION,
            0.0,
        );
        self.dyshemoglobin_sum(cohb, methb, &path.field("cohb"));
        Conditions {
            ph,
            pco2_mmhg: pco2,
            temperature_celsius: temperature,
            dpg_mmol_per_l: dpg,
            base_excess_mmol_per_l: base_excess,
            cohb_fraction: cohb,
            methb_fraction: methb,
            hbf_fraction: hbf,
        }
    }

    /// Refuse COHb and MetHb fractions that together leave no haemoglobin to
    /// carry oxygen.
    pub fn dyshemoglobin_sum(
        &mut self,
        cohb: Option<f64>,
        methb: Option<f64>,
        path: &FieldPath<'_>,
    ) {
        let sum = cohb.unwrap_or(0.0) + methb.unwrap_or(0.0);
        if sum >= 1.0 {
            self.violations.push(Violation::other(
                path,
                REASON_FRACTIONS_SUM,
                "COHb and MetHb fractions must sum to less than 1",
            ));
        }
    }

    /// Finish reading: the inputs used, or the refusal listing every bad field.
    ///
    /// The inputs come explicit ones first, then defaulted ones, each group in
    /// the order the request's fields were read.
    pub fn finish(mut self) -> Result<Vec<InputUsed>, InvalidRequest> {
        if self.violations.is_empty() {
            // A stable sort keeps the reading order within each group.
            self.inputs_used.sort_by_key(|input| input.defaulted);
            Ok(self.inputs_used)
        } else {
            Err(InvalidRequest::new(self.violations))
        }
    }

    /// Record an engine value of `kind` as used (in the response unit system).
    pub fn record(
        &mut self,
        path: &FieldPath<'_>,
        value: f64,
        kind: QuantityKind,
        defaulted: bool,
    ) {
        if !self.records_inputs {
            return;
        }
        self.inputs_used.push(InputUsed {
            name: path.render(),
            value: Some(units::from_engine(value, kind, self.system)),
            defaulted,
        });
    }

    /// Record a value with an explicit unit code.
    pub fn record_raw(&mut self, path: &FieldPath<'_>, value: f64, unit: &str, defaulted: bool) {
        if !self.records_inputs {
            return;
        }
        self.inputs_used.push(InputUsed {
            name: path.render(),
            value: Some(Quantity {
                value,
                unit: unit.to_owned(),
            }),
            defaulted,
        });
    }

    fn convert(
        &mut self,
        quantity: &Quantity,
        path: &FieldPath<'_>,
        kind: QuantityKind,
    ) -> Option<f64> {
        if !quantity.value.is_finite() {
            self.violations
                .push(Violation::not_finite(&path.field("value")));
            return None;
        }
        match units::to_engine(quantity.value, &quantity.unit, kind) {
            Ok(value) => Some(value),
            Err(refusal) => {
                self.violations
                    .push(Violation::unit(&path.field("unit"), kind, refusal.hint));
                None
            }
        }
    }
}
