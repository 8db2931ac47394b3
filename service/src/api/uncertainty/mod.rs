//! Uncertainty on request, for SaturationFromTension, TensionFromSaturation,
//! ShiftFactors, OxygenContent and GasExchange: reading a request's
//! `uncertainty` part ([`read`]), evaluating each derived value with the
//! engine ([`Requested::evaluate`], [`crate::physiology::uncertainty`]) and
//! writing `UncertaintyResult`s in the response's unit system; and the
//! catalog's list of built-in profiles ([`catalog_profiles`]).
//!
//! Each RPC names the request fields a figure may be given for in its
//! [`inputs`] table. Refusals go to the call's [`RequestReader`]
//! (crate::api::reader::RequestReader), so one refusal lists every bad field
//! of the request, uncertainty fields included.

pub mod inputs;
mod profiles;
mod request;
mod result;

pub use inputs::{
    GAS_EXCHANGE_INPUTS, OXYGEN_CONTENT_INPUTS, SATURATION_FROM_TENSION_INPUTS,
    SHIFT_FACTORS_INPUTS, TENSION_FROM_SATURATION_INPUTS,
};
pub use profiles::catalog_profiles;
pub use request::{read, read_figure, read_profile_sets, Call, Requested};
pub use result::{
    not_evaluated, verification, ValueUnit, RANDOM_GENERATOR, UNCERTAINTY_METHOD_REFERENCE,
    UNCERTAINTY_METHOD_VERSION,
};
