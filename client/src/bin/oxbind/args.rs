//! Command-line values: quantities with UCUM units, conditions, models.

use clap::{Args, ValueEnum};
use oxbind_client::{
    ucum,
    v1::{BloodConditions, HillParameters, HillPreset, Model, Quantity, UnitSystem},
};

/// Split `48mm[Hg]` into 48 and `mm[Hg]`; a bare number takes `default_unit`.
pub(crate) fn parse_quantity(text: &str, default_unit: &str) -> Result<Quantity, String> {
    let text = text.trim();
    let split = (1..=text.len())
        .rev()
        .filter(|&i| text.is_char_boundary(i))
        .find(|&i| text[..i].parse::<f64>().is_ok())
        .ok_or_else(|| format!("`{text}` does not start with a number"))?;
    let value: f64 = text[..split].parse().map_err(|e| format!("{e}"))?;
    let unit = text[split..].trim();
    let unit = if unit.is_empty() { default_unit } else { unit };
    Ok(Quantity::new(value, unit))
}

/// A pressure; a bare number is in mm[Hg].
pub(crate) fn pressure(text: &str) -> Result<Quantity, String> {
    parse_quantity(text, ucum::MM_HG)
}

/// A temperature; a bare number is in Cel.
pub(crate) fn temperature(text: &str) -> Result<Quantity, String> {
    parse_quantity(text, ucum::CELSIUS)
}

/// A concentration; a bare number is in mmol/L.
pub(crate) fn concentration(text: &str) -> Result<Quantity, String> {
    parse_quantity(text, ucum::MMOL_PER_L)
}

/// A haemoglobin fraction (COHb, MetHb, HbF); a bare number is in %.
pub(crate) fn percent(text: &str) -> Result<Quantity, String> {
    parse_quantity(text, ucum::PERCENT)
}

/// A haemoglobin concentration; a bare number is in g/dL.
pub(crate) fn hemoglobin(text: &str) -> Result<Quantity, String> {
    parse_quantity(text, ucum::G_PER_DL)
}

/// A blood flow; a bare number is in L/min.
pub(crate) fn blood_flow(text: &str) -> Result<Quantity, String> {
    parse_quantity(text, ucum::L_PER_MIN)
}

/// An airway pressure; a bare number is in cm[H2O].
pub(crate) fn airway_pressure(text: &str) -> Result<Quantity, String> {
    parse_quantity(text, ucum::CM_H2O)
}

/// A fraction as a quantity (FIO2); a bare number is a fraction (unit `1`).
pub(crate) fn fraction_quantity(text: &str) -> Result<Quantity, String> {
    parse_quantity(text, ucum::FRACTION)
}

/// A saturation as a plain fraction: `0.93`, `0.93 1`, or `93%`.
pub(crate) fn saturation(text: &str) -> Result<f64, String> {
    let q = parse_quantity(text, ucum::FRACTION)?;
    match q.unit.as_str() {
        "1" => Ok(q.value),
        "%" => Ok(q.value / 100.0),
        other => Err(format!("saturation unit must be `1` or `%`, not `{other}`")),
    }
}

/// A measured pair `PO2:SO2`, e.g. `30mm[Hg]:0.57` or `4kPa:57%`.
pub(crate) fn pair(text: &str) -> Result<(Quantity, f64), String> {
    let (po2, so2) = text
        .rsplit_once(':')
        .ok_or_else(|| format!("`{text}` is not PO2:SO2 (for example 30mm[Hg]:0.57)"))?;
    Ok((pressure(po2)?, saturation(so2)?))
}

/// The dissociation models, by their catalog ids.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub(crate) enum ModelArg {
    /// Severinghaus 1979 (the server's default).
    #[value(name = "severinghaus-1979")]
    Severinghaus1979,
    /// Kelman 1966.
    #[value(name = "kelman-1966")]
    Kelman1966,
    /// Hill equation with a caller-set P50 and n (or a preset).
    Hill,
    /// Adair equation.
    Adair,
    /// Siggaard-Andersen 1984.
    #[value(name = "siggaard-andersen-1984")]
    SiggaardAndersen1984,
    /// Dash 2016.
    #[value(name = "dash-2016")]
    Dash2016,
}

impl From<ModelArg> for Model {
    fn from(model: ModelArg) -> Self {
        match model {
            ModelArg::Severinghaus1979 => Model::Severinghaus1979,
            ModelArg::Kelman1966 => Model::Kelman1966,
            ModelArg::Hill => Model::Hill,
            ModelArg::Adair => Model::Adair,
            ModelArg::SiggaardAndersen1984 => Model::SiggaardAndersen1984,
            ModelArg::Dash2016 => Model::Dash2016,
        }
    }
}

/// Units of the answers.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub(crate) enum UnitSystemArg {
    /// mm[Hg], g/dL, mL/dL, mL/min.
    Conventional,
    /// kPa, g/L, mmol/L, mmol/min.
    Si,
}

impl From<UnitSystemArg> for UnitSystem {
    fn from(system: UnitSystemArg) -> Self {
        match system {
            UnitSystemArg::Conventional => UnitSystem::Conventional,
            UnitSystemArg::Si => UnitSystem::Si,
        }
    }
}

/// Hill presets.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub(crate) enum HillPresetArg {
    /// Adult haemoglobin.
    Adult,
    /// Fetal haemoglobin.
    Fetal,
    /// Myoglobin.
    Myoglobin,
}

/// Blood conditions as flags; each absent flag means the standard value.
#[derive(Debug, Clone, Default, Args)]
pub(crate) struct ConditionArgs {
    /// pH (no unit); standard 7.40.
    #[arg(long, allow_hyphen_values = true)]
    pub(crate) ph: Option<f64>,
    /// PCO2 with a UCUM unit (`48mm[Hg]`, `6.4kPa`); a bare number is mm[Hg]. Standard 40 mm[Hg].
    #[arg(long, value_parser = pressure, value_name = "PRESSURE")]
    pub(crate) pco2: Option<Quantity>,
    /// Blood temperature (`38.5Cel`, `101.3[degF]`); a bare number is Cel. Standard 37 Cel.
    #[arg(long = "temp", value_parser = temperature, value_name = "TEMPERATURE")]
    pub(crate) temperature: Option<Quantity>,
    /// Red-cell 2,3-DPG; a bare number is mmol/L. Standard: the model's own.
    #[arg(long, value_parser = concentration, value_name = "CONCENTRATION")]
    pub(crate) dpg: Option<Quantity>,
    /// Base excess; a bare number is mmol/L. Standard 0.
    #[arg(long, value_parser = concentration, allow_hyphen_values = true, value_name = "CONCENTRATION")]
    pub(crate) base_excess: Option<Quantity>,
    /// Carboxyhaemoglobin (`12%`, `0.12 1`); a bare number is %. Standard none.
    #[arg(long, value_parser = percent, value_name = "FRACTION")]
    pub(crate) cohb: Option<Quantity>,
    /// Methaemoglobin; a bare number is %. Standard none.
    #[arg(long, value_parser = percent, value_name = "FRACTION")]
    pub(crate) methb: Option<Quantity>,
    /// Fetal haemoglobin; a bare number is %. Standard none.
    #[arg(long, value_parser = percent, value_name = "FRACTION")]
    pub(crate) hbf: Option<Quantity>,
}

impl ConditionArgs {
    /// The conditions as the contract's message.
    pub(crate) fn to_conditions(&self) -> BloodConditions {
        BloodConditions {
            ph: self.ph,
            pco2: self.pco2.clone(),
            temperature: self.temperature.clone(),
            dpg: self.dpg.clone(),
            base_excess: self.base_excess.clone(),
            cohb: self.cohb.clone(),
            methb: self.methb.clone(),
            hbf: self.hbf.clone(),
        }
    }
}

/// Hill parameters as flags (used with `--model hill`).
#[derive(Debug, Clone, Default, Args)]
pub(crate) struct HillArgs {
    /// Hill P50; a bare number is mm[Hg].
    #[arg(long, value_parser = pressure, value_name = "PRESSURE")]
    pub(crate) hill_p50: Option<Quantity>,
    /// Hill coefficient n (no unit).
    #[arg(long)]
    pub(crate) hill_n: Option<f64>,
    /// A published Hill preset instead of P50 and n.
    #[arg(long, value_enum)]
    pub(crate) hill_preset: Option<HillPresetArg>,
}

impl HillArgs {
    /// The Hill parameters, when any flag was given.
    pub(crate) fn to_hill(&self) -> Option<HillParameters> {
        if self.hill_p50.is_none() && self.hill_n.is_none() && self.hill_preset.is_none() {
            return None;
        }
        let preset = match self.hill_preset {
            None => HillPreset::Unspecified,
            Some(HillPresetArg::Adult) => HillPreset::Adult,
            Some(HillPresetArg::Fetal) => HillPreset::Fetal,
            Some(HillPresetArg::Myoglobin) => HillPreset::Myoglobin,
        };
        Some(HillParameters {
            p50: self.hill_p50.clone(),
            n: self.hill_n.unwrap_or_default(),
            preset: preset as i32,
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn quantities_split_number_and_ucum_code() {
        assert_eq!(pressure("48mm[Hg]").unwrap(), Quantity::mm_hg(48.0));
        assert_eq!(pressure("6.4kPa").unwrap(), Quantity::kpa(6.4));
        assert_eq!(pressure("48").unwrap(), Quantity::mm_hg(48.0));
        assert_eq!(temperature("38.5Cel").unwrap(), Quantity::celsius(38.5));
        assert_eq!(concentration("-20").unwrap(), Quantity::mmol_per_l(-20.0));
        assert_eq!(percent("1e1").unwrap(), Quantity::percent(10.0));
        assert!(pressure("mm[Hg]").is_err());
        assert!((saturation("93%").unwrap() - 0.93).abs() < 1e-12);
        assert!(saturation("93kPa").is_err());
        let (po2, so2) = pair("4kPa:57%").unwrap();
        assert_eq!(po2, Quantity::kpa(4.0));
        assert!((so2 - 0.57).abs() < 1e-12);
    }
}
