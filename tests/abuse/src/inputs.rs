//! Invented blood gases for the attacks (no patient's values): PO2 20 to
//! 150 mm[Hg], pH 7.20 to 7.55, PCO2 25 to 65 mm[Hg], temperature 34 to
//! 40 Cel, and for half of them a base excess, spread by the item's index.

use oxbind_proto::v1::{
    BatchSaturationFromTensionRequest, BloodConditions, Quantity, SaturationFromTensionRequest,
};

fn quantity(value: f64, unit: &str) -> Option<Quantity> {
    Some(Quantity {
        value,
        unit: unit.to_owned(),
    })
}

/// A fraction in [0, 1) that walks through its range with `i` (golden-ratio
/// steps, so neighbouring items differ).
fn spread(i: usize, salt: f64) -> f64 {
    ((i as f64 + salt) * 0.618_033_988_75).fract()
}

/// One invented blood gas.
pub fn blood_gas(i: usize) -> SaturationFromTensionRequest {
    SaturationFromTensionRequest {
        po2: quantity(20.0 + 130.0 * spread(i, 0.1), "mm[Hg]"),
        conditions: Some(BloodConditions {
            ph: Some(7.20 + 0.35 * spread(i, 0.3)),
            pco2: quantity(25.0 + 40.0 * spread(i, 0.5), "mm[Hg]"),
            temperature: quantity(34.0 + 6.0 * spread(i, 0.7), "Cel"),
            base_excess: i.is_multiple_of(2).then(|| Quantity {
                value: -8.0 + 16.0 * spread(i, 0.9),
                unit: "mmol/L".to_owned(),
            }),
            ..Default::default()
        }),
        ..Default::default()
    }
}

/// A batch of `items` invented blood gases, provenance on each item (the
/// default placement, and the heaviest answer).
pub fn batch(items: usize) -> BatchSaturationFromTensionRequest {
    BatchSaturationFromTensionRequest {
        requests: (0..items).map(blood_gas).collect(),
        ..Default::default()
    }
}
