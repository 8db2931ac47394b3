//! The enum that dispatches over every model (no trait objects on the hot
//! path), the model ids and the catalog table.

use super::adair::Adair;
use super::curve::{DissociationModel, ModelInfo};
use super::dash::Dash2016;
use super::hill::Hill;
use super::kelman::Kelman1966;
use super::severinghaus::Severinghaus1979;
use super::siggaard_andersen::SiggaardAndersen1984;
use super::siggaard_andersen_1990::SiggaardAndersen1990;
use crate::physiology::conditions::{ConditionSet, Conditions};
use crate::physiology::error::PhysiologyError;

/// Every model of the service, dispatched by `match` (no trait objects on the
/// hot path).
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Model {
    /// Severinghaus 1979 (the default).
    Severinghaus1979(Severinghaus1979),
    /// Kelman 1966.
    Kelman1966(Kelman1966),
    /// Hill equation with caller-set P50 and n.
    Hill(Hill),
    /// Adair four-step equation.
    Adair(Adair),
    /// Siggaard-Andersen 1984 tanh model.
    SiggaardAndersen1984(SiggaardAndersen1984),
    /// Dash, Korman & Bassingthwaighte 2016.
    Dash2016(Dash2016),
    /// Siggaard-Andersen oxygen status algorithm (1990; equations as in 1993).
    SiggaardAndersen1990(SiggaardAndersen1990),
}

/// The service's default model: Severinghaus 1979.
pub const DEFAULT_MODEL: Model = Model::Severinghaus1979(Severinghaus1979);

impl Default for Model {
    fn default() -> Self {
        DEFAULT_MODEL
    }
}

macro_rules! dispatch {
    ($self:ident, $m:ident => $e:expr) => {
        match $self {
            Model::Severinghaus1979($m) => $e,
            Model::Kelman1966($m) => $e,
            Model::Hill($m) => $e,
            Model::Adair($m) => $e,
            Model::SiggaardAndersen1984($m) => $e,
            Model::Dash2016($m) => $e,
            Model::SiggaardAndersen1990($m) => $e,
        }
    };
}

impl DissociationModel for Model {
    fn info(&self) -> &'static ModelInfo {
        dispatch!(self, m => m.info())
    }
    #[inline]
    fn saturation(&self, po2_mmhg: f64, conditions: &Conditions) -> Result<f64, PhysiologyError> {
        dispatch!(self, m => m.saturation(po2_mmhg, conditions))
    }
    #[inline]
    fn tension_mmhg(
        &self,
        saturation: f64,
        conditions: &Conditions,
    ) -> Result<f64, PhysiologyError> {
        dispatch!(self, m => m.tension_mmhg(saturation, conditions))
    }
    #[inline]
    fn hill_slope(&self, po2_mmhg: f64, conditions: &Conditions) -> Result<f64, PhysiologyError> {
        dispatch!(self, m => m.hill_slope(po2_mmhg, conditions))
    }
    #[inline]
    fn logit_saturation(
        &self,
        po2_mmhg: f64,
        conditions: &Conditions,
    ) -> Result<f64, PhysiologyError> {
        dispatch!(self, m => m.logit_saturation(po2_mmhg, conditions))
    }
    #[inline]
    fn saturation_and_slope(
        &self,
        po2_mmhg: f64,
        conditions: &Conditions,
    ) -> Result<(f64, f64), PhysiologyError> {
        dispatch!(self, m => m.saturation_and_slope(po2_mmhg, conditions))
    }
    fn unmodelled_conditions(&self, conditions: &Conditions) -> ConditionSet {
        dispatch!(self, m => m.unmodelled_conditions(conditions))
    }
}

impl Model {
    /// The red-cell 2,3-DPG (mmol/L) the model assumes when none is given:
    /// Dash 2016's own standard of 4.65 mmol/L, otherwise the service's
    /// standard (see [`crate::physiology::conditions::STANDARD_DPG_MMOL_PER_L`]).
    pub fn standard_dpg_mmol_per_l(&self) -> f64 {
        match self {
            Model::Dash2016(_) => super::dash::DPG_STANDARD_MOL_PER_L * 1000.0,
            _ => crate::physiology::conditions::STANDARD_DPG_MMOL_PER_L,
        }
    }

    /// The carbon dioxide tension (mmHg) the model assumes when none is given:
    /// the oxygen status algorithm's reference 5.33 kPa (39.978 mmHg) for
    /// `siggaard-andersen-1990`, otherwise the service's standard (see
    /// [`crate::physiology::conditions::STANDARD_PCO2_MMHG`]).
    pub fn standard_pco2_mmhg(&self) -> f64 {
        match self {
            Model::SiggaardAndersen1990(_) => {
                super::siggaard_andersen_1990::PCO2_REFERENCE_KPA
                    / crate::physiology::units::KPA_PER_MMHG
            }
            _ => crate::physiology::conditions::STANDARD_PCO2_MMHG,
        }
    }

    /// The model with the given catalog id, with default parameters (Hill: the
    /// adult preset); `None` for an unknown id.
    pub fn from_id(id: &str) -> Option<Model> {
        Some(match id {
            "severinghaus-1979" => Model::Severinghaus1979(Severinghaus1979),
            "kelman-1966" => Model::Kelman1966(Kelman1966),
            "hill" => Model::Hill(Hill::ADULT),
            "adair" => Model::Adair(Adair),
            "siggaard-andersen-1984" => Model::SiggaardAndersen1984(SiggaardAndersen1984),
            "dash-2016" => Model::Dash2016(Dash2016),
            "siggaard-andersen-1990" => Model::SiggaardAndersen1990(SiggaardAndersen1990),
            _ => return None,
        })
    }
}

static CATALOG: [&ModelInfo; 7] = [
    &super::severinghaus::INFO,
    &super::kelman::INFO,
    &super::hill::INFO,
    &super::adair::INFO,
    &super::siggaard_andersen::INFO,
    &super::dash::INFO,
    &super::siggaard_andersen_1990::INFO,
];

/// Descriptions of every model, in the order of the contract's `Model` enum (one table, used by the engine and the catalog).
pub fn catalog() -> &'static [&'static ModelInfo] {
    &CATALOG
}
