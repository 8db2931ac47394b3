//! The dissociation-curve models.
//!
//! - [`curve`]: the trait every model implements ([`curve::DissociationModel`]),
//!   the crate-internal prepared-curve trait, [`curve::ModelInfo`] and the
//!   helpers the models share. It imports no model.
//! - [`prepared`]: a prepared curve under its conditions (carbon monoxide
//!   through the Haldane relation) and the macro that implements the trait.
//! - The models: [`severinghaus`], [`kelman`], [`hill`], [`adair`],
//!   [`siggaard_andersen`] (1984), [`siggaard_andersen_1990`] (the oxygen status
//!   algorithm), [`dash`]; carbon monoxide and the dyshaemoglobins
//!   in [`dyshemoglobin`].
//! - [`dispatch`]: the [`dispatch::Model`] enum over every model, the model
//!   ids and the catalog table. It imports the models; no model imports it.

pub mod adair;
pub mod curve;
pub mod dash;
pub mod dispatch;
pub mod dyshemoglobin;
pub mod hill;
pub mod kelman;
pub mod prepared;
pub mod severinghaus;
pub mod siggaard_andersen;
pub mod siggaard_andersen_1990;
