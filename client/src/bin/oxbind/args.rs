//! Command-line values: quantities with UCUM units, the one rule for bare
//! fractions, durations, and the flag groups several commands share
//! (blood conditions, Hill parameters, blood samples).

use clap::{Args, ValueEnum};
use oxbind_client::{
    ucum,
    v1::{
        BloodConditions, BloodSample, HillParameters, HillPreset, Quantity, SaturationKind,
        UnitSystem,
    },
};

/// Split `48mm[Hg]` into 48 and `mm[Hg]`; a bare number takes `default_unit`.
/// Returns the quantity and whether the unit was written.
pub(crate) fn split_quantity(text: &str, default_unit: &str) -> Result<(Quantity, bool), String> {
    let text = text.trim();
    let split = (1..=text.len())
        .rev()
        .filter(|&i| text.is_char_boundary(i))
        .find(|&i| text[..i].parse::<f64>().is_ok())
        .ok_or_else(|| format!("`{text}` does not start with a number"))?;
    let value: f64 = text[..split].parse().map_err(|e| format!("{e}"))?;
    let unit = text[split..].trim();
    if unit.is_empty() {
        Ok((Quantity::new(value, default_unit), false))
    } else {
        Ok((Quantity::new(value, unit), true))
    }
}

/// A quantity; a bare number is in `default_unit`.
pub(crate) fn parse_quantity(text: &str, default_unit: &str) -> Result<Quantity, String> {
    split_quantity(text, default_unit).map(|(q, _)| q)
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

/// The one rule for fractions (saturations, FiO2, COHb, MetHb, HbF), as in
/// the contract: a bare number is the fraction itself, 0 to 1; per cent is
/// written with `%`. A bare number above 1 is refused with the per cent
/// spelling, since it can only be a per cent written without its unit.
pub(crate) fn fraction(text: &str) -> Result<Quantity, String> {
    let (q, with_unit) = split_quantity(text, ucum::FRACTION)?;
    if !with_unit && q.value > 1.0 {
        return Err(bare_fraction_hint(text.trim()));
    }
    match q.unit.as_str() {
        ucum::FRACTION | ucum::PERCENT => Ok(q),
        other => Err(format!(
            "a fraction takes no unit but `%` (per cent) or `1` (the fraction), not `{other}`"
        )),
    }
}

/// Why a bare number above 1 is refused for a fraction, with the per cent
/// spelling of what was written.
pub(crate) fn bare_fraction_hint(text: &str) -> String {
    format!("a bare number is a fraction between 0 and 1; for per cent write `{text}%`")
}

/// A saturation as a plain fraction: `0.93`, or `93%`.
pub(crate) fn saturation(text: &str) -> Result<f64, String> {
    let q = fraction(text)?;
    Ok(if q.unit == ucum::PERCENT {
        q.value / 100.0
    } else {
        q.value
    })
}

/// A measured pair `PO2:SO2`, e.g. `30mm[Hg]:0.57` or `4kPa:57%`.
pub(crate) fn pair(text: &str) -> Result<(Quantity, f64), String> {
    let (po2, so2) = text
        .rsplit_once(':')
        .ok_or_else(|| format!("`{text}` is not PO2:SO2 (for example 30mm[Hg]:0.57)"))?;
    let so2 = saturation(so2).map_err(|e| {
        if so2.trim().parse::<f64>().is_ok_and(|v| v > 1.0) {
            bare_fraction_hint(text.trim())
        } else {
            e
        }
    })?;
    Ok((pressure(po2)?, so2))
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

impl HillPresetArg {
    /// The preset's name as the command line spells it.
    pub(crate) fn name(self) -> &'static str {
        match self {
            HillPresetArg::Adult => "adult",
            HillPresetArg::Fetal => "fetal",
            HillPresetArg::Myoglobin => "myoglobin",
        }
    }
}

/// Whether a saturation counts dyshaemoglobins in its denominator.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub(crate) enum SaturationKindArg {
    /// O2Hb / (O2Hb + HHb), as pulse oximeters and calculated saturations give.
    Functional,
    /// O2Hb / total haemoglobin, as a co-oximeter reports the oxyhaemoglobin fraction.
    Fractional,
}

impl From<SaturationKindArg> for SaturationKind {
    fn from(kind: SaturationKindArg) -> Self {
        match kind {
            SaturationKindArg::Functional => SaturationKind::Functional,
            SaturationKindArg::Fractional => SaturationKind::Fractional,
        }
    }
}

/// The blood conditions a sample can carry (all but COHb and MetHb, which a
/// sample carries itself); each absent flag means the standard value.
#[derive(Debug, Clone, Default, Args)]
pub(crate) struct BloodArgs {
    /// pH (no unit); standard 7.40.
    #[arg(long, allow_hyphen_values = true)]
    pub(crate) ph: Option<f64>,
    /// PCO2 (`48mm[Hg]`, `6.4kPa`); a bare number is mm[Hg]. Standard 40 mm[Hg].
    #[arg(long, value_parser = pressure, value_name = "PRESSURE")]
    pub(crate) pco2: Option<Quantity>,
    /// Blood temperature (`38.5Cel`, `101.3[degF]`); a bare number is Cel. Standard 37 Cel.
    #[arg(long = "temp", visible_alias = "temperature", value_parser = temperature, value_name = "TEMPERATURE")]
    pub(crate) temperature: Option<Quantity>,
    /// Red-cell 2,3-DPG; a bare number is mmol/L. Standard: the model's own.
    #[arg(long, value_parser = concentration, value_name = "CONCENTRATION")]
    pub(crate) dpg: Option<Quantity>,
    /// Base excess; a bare number is mmol/L. Standard 0.
    #[arg(long, value_parser = concentration, allow_hyphen_values = true, value_name = "CONCENTRATION")]
    pub(crate) base_excess: Option<Quantity>,
    /// Fetal haemoglobin (`60%`, or the fraction `0.6`). Standard none. Only
    /// `--model siggaard-andersen-1990` takes it into account (`oxbind models`
    /// lists what each model does); with any other model the answer carries a
    /// warning that it was not used.
    #[arg(long, value_parser = fraction, value_name = "FRACTION")]
    pub(crate) hbf: Option<Quantity>,
}

impl BloodArgs {
    fn is_empty(&self) -> bool {
        self.ph.is_none()
            && self.pco2.is_none()
            && self.temperature.is_none()
            && self.dpg.is_none()
            && self.base_excess.is_none()
            && self.hbf.is_none()
    }

    fn to_conditions(&self) -> BloodConditions {
        BloodConditions {
            ph: self.ph,
            pco2: self.pco2.clone(),
            temperature: self.temperature.clone(),
            dpg: self.dpg.clone(),
            base_excess: self.base_excess.clone(),
            hbf: self.hbf.clone(),
            ..Default::default()
        }
    }
}

/// Blood conditions as flags; each absent flag means the standard value.
#[derive(Debug, Clone, Default, Args)]
#[command(next_help_heading = "Blood conditions (each absent flag: the standard value)")]
pub(crate) struct ConditionArgs {
    #[command(flatten)]
    pub(crate) blood: BloodArgs,
    /// Carboxyhaemoglobin (`12%`, or the fraction `0.12`). Standard none.
    #[arg(long, value_parser = fraction, value_name = "FRACTION")]
    pub(crate) cohb: Option<Quantity>,
    /// Methaemoglobin (`1.5%`, or the fraction `0.015`). Standard none. Only
    /// `--model siggaard-andersen-1990` takes it into account (`oxbind models`
    /// lists what each model does); with any other model the answer carries a
    /// warning that it was not used.
    #[arg(long, value_parser = fraction, value_name = "FRACTION")]
    pub(crate) methb: Option<Quantity>,
}

impl ConditionArgs {
    /// The conditions as the contract's message, or `None` when no flag was
    /// given (the server then uses standard conditions; nothing empty is
    /// sent).
    pub(crate) fn to_conditions(&self) -> Option<BloodConditions> {
        if self.blood.is_empty() && self.cohb.is_none() && self.methb.is_none() {
            return None;
        }
        Some(BloodConditions {
            cohb: self.cohb.clone(),
            methb: self.methb.clone(),
            ..self.blood.to_conditions()
        })
    }
}

/// Hill parameters as flags (only with `--model hill`): a preset, or P50 and
/// n together; with none, the server uses the adult preset (and the answer
/// says so).
#[derive(Debug, Clone, Default, Args)]
#[command(next_help_heading = "Hill parameters (only with --model hill)")]
pub(crate) struct HillArgs {
    /// Hill P50 at standard conditions; a bare number is mm[Hg]. Needs --hill-n.
    #[arg(long, value_parser = pressure, value_name = "PRESSURE", requires = "hill_n")]
    pub(crate) hill_p50: Option<Quantity>,
    /// Hill coefficient n (no unit). Needs --hill-p50.
    #[arg(long, requires = "hill_p50")]
    pub(crate) hill_n: Option<f64>,
    /// A published Hill preset instead of --hill-p50 and --hill-n.
    #[arg(long, value_enum, conflicts_with_all = ["hill_p50", "hill_n"])]
    pub(crate) hill_preset: Option<HillPresetArg>,
}

impl HillArgs {
    /// Whether any Hill flag was given.
    pub(crate) fn is_given(&self) -> bool {
        self.hill_p50.is_some() || self.hill_n.is_some() || self.hill_preset.is_some()
    }

    /// The Hill parameters, when any flag was given.
    pub(crate) fn to_hill(&self) -> Option<HillParameters> {
        if !self.is_given() {
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

/// The arterial sample of `content` and `gas-exchange`: a measured
/// saturation, or the conditions to calculate it from the PO2.
#[derive(Debug, Clone, Default, Args)]
#[command(
    next_help_heading = "Arterial sample (the condition flags serve a calculated saturation)"
)]
pub(crate) struct ArterialArgs {
    /// Measured arterial saturation (`0.97`, or `97%`). Absent: calculated
    /// from the arterial PO2 through --model and the condition flags, and
    /// the answer says so.
    #[arg(long, value_parser = saturation, value_name = "FRACTION")]
    pub(crate) sao2: Option<f64>,
    /// What --sao2 measures (default functional).
    #[arg(long, value_enum, requires = "sao2")]
    pub(crate) saturation_kind: Option<SaturationKindArg>,
    /// Arterial carboxyhaemoglobin (`8%`, or the fraction `0.08`): lowers the
    /// oxygen content; with a calculated saturation it also shifts the curve.
    #[arg(long, value_parser = fraction, value_name = "FRACTION")]
    pub(crate) cohb: Option<Quantity>,
    /// Arterial methaemoglobin (`2%`, or the fraction `0.02`): lowers the
    /// oxygen content.
    #[arg(long, value_parser = fraction, value_name = "FRACTION")]
    pub(crate) methb: Option<Quantity>,
    #[command(flatten)]
    pub(crate) blood: BloodArgs,
}

impl ArterialArgs {
    /// Whether any arterial flag (besides the PO2) was given.
    pub(crate) fn is_given(&self) -> bool {
        self.sao2.is_some()
            || self.saturation_kind.is_some()
            || self.cohb.is_some()
            || self.methb.is_some()
            || !self.blood.is_empty()
    }

    /// The arterial sample with PO2 `po2` (absent in GasExchange, whose
    /// server takes it from `pao2`).
    pub(crate) fn to_sample(
        &self,
        po2: Option<&Quantity>,
        model: i32,
        hill: Option<HillParameters>,
    ) -> BloodSample {
        sample(
            self.sao2,
            po2,
            self.saturation_kind,
            self.cohb.as_ref(),
            self.methb.as_ref(),
            &self.blood,
            model,
            hill,
        )
    }
}

/// The mixed (or central) venous sample of `content` and `gas-exchange`.
#[derive(Debug, Clone, Default, Args)]
#[command(next_help_heading = "Mixed venous sample")]
pub(crate) struct VenousArgs {
    /// Venous PO2; a bare number is mm[Hg]. Needed for any venous value.
    #[arg(long, value_parser = pressure, value_name = "PRESSURE")]
    pub(crate) pvo2: Option<Quantity>,
    /// Measured venous saturation (`0.75`, or `75%`). Absent: calculated from
    /// --pvo2 through --model and the --venous-* condition flags.
    #[arg(long, value_parser = saturation, value_name = "FRACTION", requires = "pvo2")]
    pub(crate) svo2: Option<f64>,
    /// What --svo2 measures (default functional).
    #[arg(long, value_enum, requires = "svo2")]
    pub(crate) venous_saturation_kind: Option<SaturationKindArg>,
    /// Venous carboxyhaemoglobin (`8%`, or the fraction `0.08`).
    #[arg(long, value_parser = fraction, value_name = "FRACTION", requires = "pvo2")]
    pub(crate) venous_cohb: Option<Quantity>,
    /// Venous methaemoglobin (`2%`, or the fraction `0.02`).
    #[arg(long, value_parser = fraction, value_name = "FRACTION", requires = "pvo2")]
    pub(crate) venous_methb: Option<Quantity>,
    /// Venous pH, for a calculated venous saturation.
    #[arg(long, allow_hyphen_values = true, requires = "pvo2")]
    pub(crate) venous_ph: Option<f64>,
    /// Venous PCO2, for a calculated venous saturation; a bare number is mm[Hg].
    #[arg(long, value_parser = pressure, value_name = "PRESSURE", requires = "pvo2")]
    pub(crate) venous_pco2: Option<Quantity>,
    /// Venous blood temperature, for a calculated venous saturation; a bare number is Cel.
    #[arg(long, value_parser = temperature, value_name = "TEMPERATURE", requires = "pvo2")]
    pub(crate) venous_temp: Option<Quantity>,
    /// Venous red-cell 2,3-DPG; a bare number is mmol/L.
    #[arg(long, value_parser = concentration, value_name = "CONCENTRATION", requires = "pvo2")]
    pub(crate) venous_dpg: Option<Quantity>,
    /// Venous base excess; a bare number is mmol/L.
    #[arg(long, value_parser = concentration, allow_hyphen_values = true, value_name = "CONCENTRATION", requires = "pvo2")]
    pub(crate) venous_base_excess: Option<Quantity>,
    /// Venous fetal haemoglobin (`60%`, or the fraction `0.6`).
    #[arg(long, value_parser = fraction, value_name = "FRACTION", requires = "pvo2")]
    pub(crate) venous_hbf: Option<Quantity>,
}

impl VenousArgs {
    /// The venous sample, when --pvo2 was given.
    pub(crate) fn to_sample(
        &self,
        model: i32,
        hill: Option<HillParameters>,
    ) -> Option<BloodSample> {
        let po2 = self.pvo2.as_ref()?;
        let blood = BloodArgs {
            ph: self.venous_ph,
            pco2: self.venous_pco2.clone(),
            temperature: self.venous_temp.clone(),
            dpg: self.venous_dpg.clone(),
            base_excess: self.venous_base_excess.clone(),
            hbf: self.venous_hbf.clone(),
        };
        Some(sample(
            self.svo2,
            Some(po2),
            self.venous_saturation_kind,
            self.venous_cohb.as_ref(),
            self.venous_methb.as_ref(),
            &blood,
            model,
            hill,
        ))
    }
}

/// A blood sample. Conditions, model and Hill parameters given beside a
/// measured saturation are still sent: the server then says they were not
/// used, rather than the command dropping them unseen.
#[allow(clippy::too_many_arguments)]
fn sample(
    saturation: Option<f64>,
    po2: Option<&Quantity>,
    kind: Option<SaturationKindArg>,
    cohb: Option<&Quantity>,
    methb: Option<&Quantity>,
    blood: &BloodArgs,
    model: i32,
    hill: Option<HillParameters>,
) -> BloodSample {
    BloodSample {
        saturation_fraction: saturation,
        po2: po2.cloned(),
        saturation_kind: kind.map_or(0, |k| SaturationKind::from(k) as i32),
        cohb: cohb.cloned(),
        methb: methb.cloned(),
        conditions: (!blood.is_empty()).then(|| blood.to_conditions()),
        model,
        hill,
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
        assert!(pressure("mm[Hg]").is_err());
        let (po2, so2) = pair("4kPa:57%").unwrap();
        assert_eq!(po2, Quantity::kpa(4.0));
        assert!((so2 - 0.57).abs() < 1e-12);
    }

    #[test]
    fn a_bare_fraction_is_the_fraction_and_per_cent_needs_its_sign() {
        assert_eq!(fraction("0.12").unwrap(), Quantity::fraction(0.12));
        assert_eq!(fraction("12%").unwrap(), Quantity::percent(12.0));
        assert_eq!(fraction("1").unwrap(), Quantity::fraction(1.0));
        let refused = fraction("12").unwrap_err();
        assert!(refused.contains("`12%`"), "{refused}");
        assert!(fraction("12kPa").is_err());
        assert!((saturation("93%").unwrap() - 0.93).abs() < 1e-12);
        assert!(saturation("90").unwrap_err().contains("`90%`"));
        assert!(pair("30:57").unwrap_err().contains("`30:57%`"));
    }
}
