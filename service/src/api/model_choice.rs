//! Choosing the engine model from a request's `model` and `hill` fields.

use oxbind_proto::v1::{HillParameters, HillPreset, Model as ModelId};

use super::{
    field_path::FieldPath,
    limits,
    reader::RequestReader,
    status::{Violation, REASON_NOT_APPLICABLE, REASON_UNKNOWN_ENUM},
    units::QuantityKind,
};
use crate::physiology::{
    adair::Adair,
    dash::Dash2016,
    hill::Hill,
    kelman::Kelman1966,
    model::{Model, DEFAULT_MODEL},
    severinghaus::Severinghaus1979,
    siggaard_andersen::SiggaardAndersen1984,
    siggaard_andersen_1990::SiggaardAndersen1990,
};

/// The engine model a request asks for, reading (and recording) the Hill
/// parameters when the model is MODEL_HILL. Refusals go to `reader`.
pub fn choose_model(
    reader: &mut RequestReader,
    raw_model: i32,
    hill: Option<&HillParameters>,
    base: &FieldPath<'_>,
) -> Model {
    let Ok(id) = ModelId::try_from(raw_model) else {
        reader.refuse(Violation::other(
            &base.field("model"),
            REASON_UNKNOWN_ENUM,
            "not a known oxbind.v1.Model value",
        ));
        return DEFAULT_MODEL;
    };
    let model = match id {
        ModelId::Unspecified => DEFAULT_MODEL,
        ModelId::Severinghaus1979 => Model::Severinghaus1979(Severinghaus1979),
        ModelId::Kelman1966 => Model::Kelman1966(Kelman1966),
        ModelId::Adair => Model::Adair(Adair),
        ModelId::SiggaardAndersen1984 => Model::SiggaardAndersen1984(SiggaardAndersen1984),
        ModelId::Dash2016 => Model::Dash2016(Dash2016),
        ModelId::SiggaardAndersen1990 => Model::SiggaardAndersen1990(SiggaardAndersen1990),
        ModelId::Hill => return Model::Hill(hill_parameters(reader, hill, &base.field("hill"))),
    };
    if hill.is_some() {
        reader.refuse(Violation::other(
            &base.field("hill"),
            REASON_NOT_APPLICABLE,
            "Hill parameters are read only with MODEL_HILL",
        ));
    }
    model
}

/// The Hill curve from caller parameters, filling unset ones from the preset.
fn hill_parameters(
    reader: &mut RequestReader,
    hill: Option<&HillParameters>,
    path: &FieldPath<'_>,
) -> Hill {
    let default = HillParameters::default();
    let given = hill.unwrap_or(&default);
    let preset = match HillPreset::try_from(given.preset) {
        Ok(HillPreset::Unspecified | HillPreset::Adult) => Hill::ADULT,
        Ok(HillPreset::Fetal) => Hill::FETAL,
        Ok(HillPreset::Myoglobin) => Hill::MYOGLOBIN,
        Err(_) => {
            reader.refuse(Violation::other(
                &path.field("preset"),
                REASON_UNKNOWN_ENUM,
                "not a known oxbind.v1.HillPreset value",
            ));
            Hill::ADULT
        }
    };
    let p50_mmhg = reader.quantity_or(
        given.p50.as_ref(),
        &path.field("p50"),
        QuantityKind::Pressure,
        &limits::PRESSURE,
        preset.p50_mmhg,
    );
    let n_path = path.field("n");
    let n = if given.n == 0.0 {
        reader.record_raw(&n_path, preset.n, "1", true);
        preset.n
    } else {
        reader
            .number(given.n, &n_path, &limits::HILL_N, QuantityKind::Fraction)
            .unwrap_or(preset.n)
    };
    Hill {
        p50_mmhg,
        n,
        shift: preset.shift,
    }
}
