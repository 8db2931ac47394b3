//! The names users wrote: a contract field path (`conditions.pco2.value`)
//! turned back into the flag (`--pco2`) or CSV column (`PCO2 (kPa)`) that
//! set it, for refusals and warnings. The JSON output keeps the paths.

/// How the fields of one command's request are named on its command line.
#[derive(Debug, Clone, Default)]
pub(crate) struct FieldNames {
    /// (field path without `.value`, the name the user wrote), most
    /// specific first is not needed: lookups are exact, then by parent.
    names: Vec<(String, String)>,
}

/// The condition flags, by `BloodConditions` field.
const CONDITION_FLAGS: [(&str, &str); 8] = [
    ("ph", "--ph"),
    ("pco2", "--pco2"),
    ("temperature", "--temp"),
    ("dpg", "--dpg"),
    ("base_excess", "--base-excess"),
    ("cohb", "--cohb"),
    ("methb", "--methb"),
    ("hbf", "--hbf"),
];

/// The Hill flags, by `HillParameters` field.
const HILL_FLAGS: [(&str, &str); 4] = [
    ("", "--hill-p50/--hill-n/--hill-preset"),
    ("p50", "--hill-p50"),
    ("n", "--hill-n"),
    ("preset", "--hill-preset"),
];

impl FieldNames {
    /// Names shared by every RPC command: `--model`, `--unit-system`.
    pub(crate) fn new() -> Self {
        Self::default()
            .with("model", "--model")
            .with("unit_system", "--unit-system")
    }

    /// `path` is set by `name`.
    pub(crate) fn with(mut self, path: &str, name: impl Into<String>) -> Self {
        self.names.push((path.to_owned(), name.into()));
        self
    }

    /// The `BloodConditions` at `prefix` are set by the condition flags,
    /// each with `flag_prefix` after its dashes (`--venous-ph`).
    pub(crate) fn with_conditions(mut self, prefix: &str, flag_prefix: &str) -> Self {
        self.names.push((
            prefix.to_owned(),
            format!("the {}condition flags", flag_prefix.replace('-', " ")),
        ));
        for (field, flag) in CONDITION_FLAGS {
            let flag = if flag_prefix.is_empty() {
                flag.to_owned()
            } else if field == "temperature" {
                format!("--{flag_prefix}temp")
            } else {
                format!("--{flag_prefix}{}", &flag[2..])
            };
            self.names.push((format!("{prefix}.{field}"), flag));
        }
        self
    }

    /// The `HillParameters` at `prefix` are set by the Hill flags.
    pub(crate) fn with_hill(mut self, prefix: &str) -> Self {
        for (field, flag) in HILL_FLAGS {
            let path = if field.is_empty() {
                prefix.to_owned()
            } else {
                format!("{prefix}.{field}")
            };
            self.names.push((path, flag.to_owned()));
        }
        self
    }

    /// The name the user wrote for field `path` (a refusal's or warning's
    /// dotted path), if this command sets it. `X.unit` is "the unit of" X's
    /// name; `X.value` is X's name.
    pub(crate) fn name(&self, path: &str) -> Option<String> {
        if let Some(quantity) = path.strip_suffix(".unit") {
            return self.lookup(quantity).map(|n| format!("the unit of {n}"));
        }
        self.lookup(path.strip_suffix(".value").unwrap_or(path))
    }

    /// The request field path the flag `flag` sets (the first path named
    /// exactly so).
    pub(crate) fn path_of(&self, flag: &str) -> Option<String> {
        self.names
            .iter()
            .find(|(_, n)| n == flag)
            .map(|(p, _)| p.clone())
    }

    fn lookup(&self, path: &str) -> Option<String> {
        self.names
            .iter()
            .find(|(p, _)| p == path)
            .map(|(_, n)| n.clone())
    }

    /// `description` (which starts with `path`, as every refusal's does)
    /// restated with the user's name for the field, and enum names as the
    /// flag values that choose them (`MODEL_HILL` -> `--model hill`).
    pub(crate) fn restate(&self, path: &str, description: &str) -> String {
        let text = match self.name(path) {
            Some(name) => match description.strip_prefix(path) {
                Some(rest) => {
                    let rest = rest
                        .strip_prefix(':')
                        .map_or(rest.to_owned(), |r| format!(":{r}"));
                    format!("{name}{rest}")
                }
                None => format!("{name}: {description}"),
            },
            None => description.to_owned(),
        };
        model_flags(&self.rename_identifiers(&text))
    }

    /// Every other field path the text mentions as a whole word (one that
    /// looks like a contract identifier, with `_`, `.` or `[`), restated as
    /// the user's name: `po2_max must be greater than po2_min` ->
    /// `--po2-max must be greater than --po2-min`.
    fn rename_identifiers(&self, text: &str) -> String {
        let mut names: Vec<&(String, String)> = self
            .names
            .iter()
            .filter(|(p, _)| p.contains(['_', '.', '[']))
            .collect();
        names.sort_by_key(|(p, _)| std::cmp::Reverse(p.len()));
        let mut out = text.to_owned();
        for (path, name) in names {
            let mut result = String::with_capacity(out.len());
            let mut rest = out.as_str();
            while let Some(at) = rest.find(path.as_str()) {
                let before = rest[..at].chars().next_back();
                let mut following = rest[at + path.len()..].chars();
                let after = following.next();
                let after_next = following.next();
                let joined_before =
                    before.is_some_and(|c| c.is_ascii_alphanumeric() || "_.-[".contains(c));
                // A following `.` joins only when a path goes on after it
                // (`po2.value`), not at the end of a sentence.
                let joined_after = after.is_some_and(|c| c.is_ascii_alphanumeric() || c == '_')
                    || (after == Some('.')
                        && after_next.is_some_and(|c| c.is_ascii_alphanumeric()));
                result.push_str(&rest[..at]);
                if joined_before || joined_after {
                    result.push_str(path);
                } else {
                    result.push_str(name);
                }
                rest = &rest[at + path.len()..];
            }
            result.push_str(rest);
            out = result;
        }
        out
    }
}

/// The uncertainty enum names a message may mention, and the flags that
/// choose them.
const UNCERTAINTY_FLAGS: [(&str, &str); 4] = [
    (
        "UNCERTAINTY_METHOD_MONTE_CARLO",
        "--uncertainty-method monte-carlo",
    ),
    (
        "UNCERTAINTY_METHOD_FIRST_ORDER",
        "--uncertainty-method first-order",
    ),
    (
        "COVERAGE_INTERVAL_KIND_PROBABILISTICALLY_SYMMETRIC",
        "--interval symmetric",
    ),
    ("COVERAGE_INTERVAL_KIND_SHORTEST", "--interval shortest"),
];

/// `MODEL_SIGGAARD_ANDERSEN_1984` -> `--model siggaard-andersen-1984`, for
/// every model enum name in `text`; the uncertainty method and interval
/// names likewise (`UNCERTAINTY_METHOD_MONTE_CARLO` -> `--uncertainty-method
/// monte-carlo`).
pub(crate) fn model_flags(text: &str) -> String {
    let mut text = text.to_owned();
    for (name, flag) in UNCERTAINTY_FLAGS {
        text = text.replace(name, flag);
    }
    model_enum_flags(&text)
}

fn model_enum_flags(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    let mut rest = text;
    while let Some(start) = rest.find("MODEL_") {
        out.push_str(&rest[..start]);
        let tail = &rest[start + "MODEL_".len()..];
        let end = tail
            .find(|c: char| !(c.is_ascii_uppercase() || c.is_ascii_digit() || c == '_'))
            .unwrap_or(tail.len());
        let id = tail[..end]
            .trim_end_matches('_')
            .to_lowercase()
            .replace('_', "-");
        if id.is_empty() {
            out.push_str("MODEL_");
        } else {
            out.push_str("--model ");
            out.push_str(&id);
        }
        rest = &tail[end..];
    }
    out.push_str(rest);
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn paths_are_named_as_the_user_wrote_them() {
        let names = FieldNames::new()
            .with("po2", "--po2")
            .with_conditions("conditions", "")
            .with_conditions("venous.conditions", "venous-")
            .with_hill("hill");
        assert_eq!(names.name("po2.value").as_deref(), Some("--po2"));
        assert_eq!(names.name("po2.unit").as_deref(), Some("the unit of --po2"));
        assert_eq!(
            names.name("conditions.temperature.value").as_deref(),
            Some("--temp")
        );
        assert_eq!(
            names.name("venous.conditions.base_excess.value").as_deref(),
            Some("--venous-base-excess")
        );
        assert_eq!(
            names.name("venous.conditions.temperature").as_deref(),
            Some("--venous-temp")
        );
        assert_eq!(names.name("hill.n").as_deref(), Some("--hill-n"));
        assert_eq!(names.name("nonesuch"), None);
        assert_eq!(
            names.restate("po2.value", "po2.value must lie in [0.001, 7600] mm[Hg]"),
            "--po2 must lie in [0.001, 7600] mm[Hg]"
        );
        assert_eq!(
            names.restate(
                "hill",
                "hill: Hill parameters are read only with MODEL_HILL"
            ),
            "--hill-p50/--hill-n/--hill-preset: Hill parameters are read only with --model hill"
        );
    }

    #[test]
    fn other_fields_in_a_message_are_named_too() {
        let names = FieldNames::new()
            .with("po2_min", "--po2-min")
            .with("po2_max", "--po2-max");
        assert_eq!(
            names.restate("po2_max", "po2_max: po2_max must be greater than po2_min"),
            "--po2-max: --po2-max must be greater than --po2-min"
        );
    }

    #[test]
    fn model_enum_names_become_flags() {
        assert_eq!(
            model_flags("use MODEL_SIGGAARD_ANDERSEN_1984, or MODEL_HILL."),
            "use --model siggaard-andersen-1984, or --model hill."
        );
    }
}
