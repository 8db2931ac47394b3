//! The uncertainty of derived values: how sure each computed number is, given
//! the uncertainty of what went into it.
//!
//! Pure and synchronous, like the rest of the engine: no gRPC, no I/O.
//!
//! - A derived value is a [`MeasurementFunction`] of its inputs (JCGM
//!   100:2008 clause 4.1): [`SaturationFromTension`],
//!   [`TensionFromSaturation`] (also `po2_change_per_percent`),
//!   [`P50AtConditions`], [`OxygenContentValue`] (arterial, venous, a−v
//!   difference, extraction), [`ImputedPao2`] (alone or over FiO2),
//!   [`Pao2Fio2Ratio`], [`AlveolarValue`] (alveolar PO2, A–a gradient).
//! - Each input's uncertainty is a [`Statement`] (a standard uncertainty, or a
//!   bound with its coverage or shape, converted per the GUM) or a built-in
//!   [`profiles`] entry with its source.
//! - [`evaluate_uncertainty`] propagates them by the law of propagation of
//!   uncertainty ([`first_order`], JCGM 100:2008) and, on request, by a seeded
//!   Monte Carlo method ([`monte_carlo`], JCGM 101:2008), validates the first
//!   by the second ([`coverage::validate`], clause 8), adds the spread between
//!   published adult models ([`model_spread`]) and reports what it left out.
//!
//! Inputs are treated as independent: correlations (JCGM 100:2008 Eq. 13)
//! are not handled. Decision support only: the interval describes the
//! arithmetic from the stated figures, not the patient; measured co-oximetry
//! and licensed clinicians decide.

pub mod content_values;
pub mod coverage;
pub mod curve_values;
pub mod evaluate;
pub mod first_order;
pub mod function;
pub mod gas_exchange_values;
pub mod model_spread;
pub mod monte_carlo;
pub mod normal;
pub mod profiles;
pub mod quantity;
pub mod statement;

pub use content_values::{ContentInputs, ContentSample, OxygenContentValue, SampleSaturation};
pub use coverage::{CoverageInterval, IntervalKind, Validation};
pub use curve_values::{P50AtConditions, SaturationFromTension, TensionFromSaturation};
pub use evaluate::{
    evaluate_uncertainty, FigureSource, InputFigure, Method, MethodUsed, NotConsidered,
    NotConsideredReason, UncertaintyError, UncertaintyEvaluation, UncertaintyRequest,
    UncertaintyWarning, UsedFigure, UsedSource,
};
pub use first_order::{linearity, BudgetLine, FirstOrderResult, Linearity};
pub use function::{
    AbsentReason, DerivativeMethod, DerivedQuantity, MeasurementFunction, Partial, Slot,
};
pub use gas_exchange_values::{AlveolarInputs, AlveolarValue, ImputedPao2, Pao2Fio2Ratio};
pub use model_spread::{ModelComponent, ModelSpread};
pub use monte_carlo::{MonteCarloOptions, MonteCarloResult, DEFAULT_DRAWS, MAX_DRAWS};
pub use quantity::{Domain, InputQuantity};
pub use statement::{Amount, BoundShape, Statement};
