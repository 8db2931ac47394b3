//! The engine's findings as the contract's `ConsistencyFinding`s, in the
//! response's unit system.

use oxbind_proto::v1::{
    ConsistencyCause, ConsistencyCheck, ConsistencyFinding, ConsistencyVerdict, FigureOrigin,
    FindingDirection, FindingUncertainty as WireUncertainty, InputNotConsidered,
    NotConsideredReason, Quantity, ThresholdBasis as WireBasis, UncertaintyComponent, UnitSystem,
};

use super::figures::{field_path, input_kind};
use crate::api::{
    uncertainty::verification,
    units::{self, QuantityKind},
};
use crate::physiology::consistency::{
    causes, finding::ComponentOrigin, Check, Component, ComponentName, Direction,
    FigureOrigin as Origin, Finding, FindingUncertainty, StatisticUnit, ThresholdBasis, Verdict,
};

/// Why an input of a statistic without a figure adds nothing, in words.
const NO_FIGURE: &str = "no figure for this input (none in the request, none in its profile \
sets, and no built-in one, or built-in figures were turned off): it adds nothing";

/// The contract's code of a check.
pub fn wire_check(check: Check) -> ConsistencyCheck {
    match check {
        Check::MeasuredSaturation => ConsistencyCheck::MeasuredSaturation,
        Check::PulseOximetryGap => ConsistencyCheck::PulseOximetryGap,
        Check::CarbonMonoxideGap => ConsistencyCheck::CarbonMonoxideGap,
        Check::AboveAlveolar => ConsistencyCheck::AboveAlveolar,
        Check::RoomAirExposure => ConsistencyCheck::RoomAirExposure,
        Check::VenousPattern => ConsistencyCheck::VenousPattern,
        Check::AcidBase => ConsistencyCheck::AcidBase,
        Check::TemperatureCorrectionPh => ConsistencyCheck::TemperatureCorrectionPh,
        Check::TemperatureCorrectionPco2 => ConsistencyCheck::TemperatureCorrectionPco2,
        Check::TemperatureCorrectionPo2 => ConsistencyCheck::TemperatureCorrectionPo2,
        Check::WhiteCellConsumption => ConsistencyCheck::WhiteCellConsumption,
    }
}

/// The contract's verdict.
pub fn wire_verdict(verdict: Verdict) -> ConsistencyVerdict {
    match verdict {
        Verdict::Consistent => ConsistencyVerdict::Consistent,
        Verdict::Discordant => ConsistencyVerdict::Discordant,
        Verdict::NotEvaluable => ConsistencyVerdict::NotEvaluable,
    }
}

/// An engine value with its unit, in `system`.
fn quantity(value: f64, unit: StatisticUnit, system: UnitSystem) -> Quantity {
    let raw = |unit: &str| Quantity {
        value,
        unit: unit.to_owned(),
    };
    match unit {
        StatisticUnit::Fraction => raw("1"),
        StatisticUnit::Ph => raw("[pH]"),
        StatisticUnit::Pressure => units::from_engine(value, QuantityKind::Pressure, system),
        StatisticUnit::CellCount => units::from_engine(value, QuantityKind::CellCount, system),
        StatisticUnit::Concentration => {
            units::from_engine(value, QuantityKind::Concentration, system)
        }
    }
}

/// An input's value (or standard uncertainty) in `system`.
fn input_quantity(
    input: crate::physiology::consistency::FigureInput,
    value: f64,
    system: UnitSystem,
) -> Quantity {
    match input_kind(input) {
        Some(kind) => units::from_engine(value, kind, system),
        None => Quantity {
            value,
            unit: "[pH]".to_owned(),
        },
    }
}

/// One finding in the contract's shape.
pub(super) fn finding(f: &Finding, system: UnitSystem) -> ConsistencyFinding {
    let mut out = ConsistencyFinding {
        check: wire_check(f.check) as i32,
        verdict: wire_verdict(f.verdict()) as i32,
        causes: causes::of(f.check)
            .into_iter()
            .map(|c| ConsistencyCause {
                cause: c.cause.clone(),
                source: if c.source == c.verification {
                    c.source.clone()
                } else {
                    format!("{} ({})", c.source, c.verification)
                },
            })
            .collect(),
        ..Default::default()
    };
    if let Some(n) = f.not_evaluable() {
        out.not_evaluable_reason = n.reason.clone();
        out.missing_inputs = n
            .missing
            .iter()
            .map(|field| format!("sample.{}", field.name()))
            .collect();
        out.direction = FindingDirection::Unspecified as i32;
        return out;
    }
    let Some(e) = f.evaluated() else {
        return out;
    };
    out.statistic = Some(quantity(e.statistic, e.unit, system));
    out.threshold = Some(quantity(e.threshold.value, e.unit, system));
    out.threshold_basis = match e.threshold.basis {
        ThresholdBasis::Published => WireBasis::Published,
        ThresholdBasis::UncertaintyBased => WireBasis::UncertaintyBased,
    } as i32;
    out.threshold_source = e.threshold.source.clone();
    out.rule = e.threshold.rule.clone();
    out.direction = match Direction::of(e.statistic) {
        Direction::Above => FindingDirection::Above,
        Direction::Below => FindingDirection::Below,
        Direction::None => FindingDirection::None,
    } as i32;
    out.uncertainty = e
        .uncertainty
        .as_ref()
        .map(|u| uncertainty(u, e.unit, system));
    out.observed = e.observed.map(|(v, unit)| quantity(v, unit, system));
    out.reference = e.reference.map(|(v, unit)| quantity(v, unit, system));
    out.note = e.note.clone();
    out
}

fn uncertainty(u: &FindingUncertainty, unit: StatisticUnit, system: UnitSystem) -> WireUncertainty {
    WireUncertainty {
        combined_standard_uncertainty: Some(quantity(u.standard_uncertainty, unit, system)),
        coverage_factor: u.coverage_factor,
        coverage_probability: u.coverage_probability,
        expanded_uncertainty: Some(quantity(u.expanded(), unit, system)),
        components: u
            .components
            .iter()
            .map(|c| component(c, unit, system))
            .collect(),
        inputs_not_considered: u
            .not_considered
            .iter()
            .map(|i| InputNotConsidered {
                field: field_path(*i).to_owned(),
                reason: NotConsideredReason::NoFigure as i32,
                message: NO_FIGURE.to_owned(),
            })
            .collect(),
    }
}

fn component(c: &Component, unit: StatisticUnit, system: UnitSystem) -> UncertaintyComponent {
    let mut out = UncertaintyComponent {
        name: match c.name {
            ComponentName::Input(input) => field_path(input).to_owned(),
            other => other.name().to_owned(),
        },
        input_standard_uncertainty: match (c.name, c.input_standard_uncertainty) {
            (ComponentName::Input(input), Some(u)) => Some(input_quantity(input, u, system)),
            _ => None,
        },
        contribution: Some(quantity(c.contribution, unit, system)),
        ..Default::default()
    };
    match &c.origin {
        ComponentOrigin::Figure(origin) => {
            out.source = origin.describe();
            match origin {
                Origin::Stated => out.origin = FigureOrigin::Stated as i32,
                Origin::Profile {
                    id,
                    verification: v,
                    ..
                } => {
                    out.origin = FigureOrigin::Profile as i32;
                    out.profile_id = id.clone();
                    out.profile_verification = verification(*v) as i32;
                }
            }
        }
        ComponentOrigin::Rule(rule) => out.source = rule.clone(),
    }
    out
}
