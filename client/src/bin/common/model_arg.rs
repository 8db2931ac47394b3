//! The dissociation models by their catalog ids, as a command-line value;
//! shared by `oxbind` and `oxbind-load` (included by path in each binary).

use clap::ValueEnum;
use oxbind_client::v1::Model;

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
    /// Siggaard-Andersen 1990 (the oxygen status algorithm, with the 1993
    /// carbon monoxide terms).
    #[value(name = "siggaard-andersen-1990")]
    SiggaardAndersen1990,
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
            ModelArg::SiggaardAndersen1990 => Model::SiggaardAndersen1990,
            ModelArg::Dash2016 => Model::Dash2016,
        }
    }
}

/// A duration as the server's settings take it (`10s`, `1500ms`, `1m`:
/// humantime), or a bare number of seconds; it must be more than 0.
pub(crate) fn duration(text: &str) -> Result<std::time::Duration, String> {
    let text = text.trim();
    let parsed = match text.parse::<f64>() {
        Ok(seconds) if seconds.is_finite() && seconds > 0.0 => {
            std::time::Duration::from_secs_f64(seconds)
        }
        Ok(_) => return Err("must be more than 0".to_owned()),
        Err(_) => humantime::parse_duration(text)
            .map_err(|e| format!("not a duration such as `10s` or `1500ms` ({e})"))?,
    };
    if parsed.is_zero() {
        return Err("must be more than 0".to_owned());
    }
    Ok(parsed)
}
