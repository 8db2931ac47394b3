//! The built-in uncertainty profiles as the catalog lists them.

use oxbind_proto::v1::{
    uncertainty_profile::Figure, BoundShape as WireBoundShape, Quantity, UncertaintyAmount,
    UncertaintyBound, UncertaintyProfile,
};

use super::result::verification;
use crate::physiology::uncertainty::{
    profiles::{profiles, Profile},
    Amount, BoundShape, Statement,
};

/// Every built-in profile, in table order (none if the embedded table were
/// malformed, a build defect the engine's unit tests catch).
pub fn catalog_profiles() -> Vec<UncertaintyProfile> {
    profiles()
        .map(|all| all.iter().map(describe).collect())
        .unwrap_or_default()
}

fn amount(a: &Amount, unit: &str) -> UncertaintyAmount {
    let part = |value: f64, unit: &str| {
        (value > 0.0).then(|| Quantity {
            value,
            unit: unit.to_owned(),
        })
    };
    UncertaintyAmount {
        absolute: part(a.absolute, unit),
        relative: part(a.relative, "1"),
    }
}

fn describe(p: &Profile) -> UncertaintyProfile {
    let unit = p.input.unit();
    let figure = match &p.statement {
        Statement::StandardUncertainty(a) => Figure::StandardUncertainty(amount(a, unit)),
        Statement::Bound { half_width, shape } => {
            let mut bound = UncertaintyBound {
                half_width: Some(amount(half_width, unit)),
                ..Default::default()
            };
            bound.shape = match *shape {
                BoundShape::Normal {
                    coverage_probability,
                } => {
                    bound.coverage_probability = coverage_probability;
                    WireBoundShape::Normal
                }
                BoundShape::CoverageFactor { k } => {
                    bound.coverage_factor = k;
                    WireBoundShape::CoverageFactor
                }
                BoundShape::Rectangular => WireBoundShape::Rectangular,
                BoundShape::Triangular => WireBoundShape::Triangular,
                BoundShape::Trapezoidal { beta } => {
                    bound.trapezoid_top_ratio = beta;
                    WireBoundShape::Trapezoidal
                }
            } as i32;
            Figure::Bound(bound)
        }
    };
    UncertaintyProfile {
        profile_id: p.id.clone(),
        profile_set: p.set.clone(),
        input: p.input.name().to_owned(),
        figure: Some(figure),
        description: p.what.clone(),
        conversion: p.conversion.clone(),
        source: p.source.clone(),
        verification: verification(p.verification) as i32,
        verification_note: p.verification_note.clone(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_profile_is_listed_with_its_source() {
        let listed = catalog_profiles();
        assert_eq!(listed.len(), profiles().unwrap().len());
        let po2 = listed
            .iter()
            .find(|p| p.profile_id == "clia-2024-po2")
            .unwrap();
        let Some(Figure::Bound(bound)) = &po2.figure else {
            panic!("a bound expected");
        };
        let half_width = bound.half_width.as_ref().unwrap();
        assert_eq!(half_width.absolute.as_ref().unwrap().value, 15.0);
        assert_eq!(half_width.absolute.as_ref().unwrap().unit, "mm[Hg]");
        assert_eq!(half_width.relative.as_ref().unwrap().value, 0.15);
        assert_eq!(bound.coverage_probability, 0.95);
        assert!(listed.iter().all(|p| !p.source.is_empty()));
    }
}
