//! How a command fails, the one message each failure gets, and the exit
//! status it gives.

use oxbind_client::{code_name, ClientError, Code};

use crate::{fields::FieldNames, output::note};

/// Exit status: success.
pub(crate) const EXIT_OK: i32 = 0;
/// Exit status: any other failure (a file that cannot be written, a server
/// that is not SERVING, no answer within `--timeout`, an unexpected status).
pub(crate) const EXIT_FAILURE: i32 = 1;
/// Exit status: usage error (bad flags or values, a bare number above 1 for
/// a fraction, an unreadable input file, an unknown CSV column, a server
/// address without `http://` or `https://`); clap uses it too.
pub(crate) const EXIT_USAGE: i32 = 2;
/// Exit status: the server refused the input (INVALID_ARGUMENT); each
/// refused field is named on standard error by the flag that set it.
pub(crate) const EXIT_REFUSED: i32 = 3;
/// Exit status: the server could not be reached or was unavailable.
pub(crate) const EXIT_UNAVAILABLE: i32 = 4;
/// Exit status: `batch` wrote every row, but at least one was refused or
/// unreadable (its `error` column says why).
pub(crate) const EXIT_ROWS_REFUSED: i32 = 5;

/// Exit status: `verify` ran and wrote its reports, but the instance is not
/// verified (a case failed, a method or model had no case, or a source row
/// could not be read).
pub(crate) const EXIT_NOT_VERIFIED: i32 = 6;

/// The exit statuses, for `--help`.
pub(crate) const EXIT_HELP: &str = "Exit status: 0 success; 1 other failure (including no answer \
within --timeout); 2 usage error (a bad flag or value, a bare number above 1 for a fraction, an \
unknown CSV column); 3 input refused by the server (each field named by its flag); 4 server \
unavailable; 5 batch finished with refused rows (every row written); 6 verify finished and \
wrote its reports, but not every case passed.";

/// Why a command did not succeed.
#[derive(Debug)]
pub(crate) enum Failure {
    /// The command line or an input file was unusable.
    Usage(String),
    /// The call failed.
    Client(Box<ClientError>),
    /// A batch finished and wrote every row, but some were refused (the
    /// summary line has been written).
    RowsRefused,
    /// Standard output was closed (`| head`): stop quietly.
    ClosedOutput,
    /// `verify` wrote its reports, and the instance is not verified (its
    /// summary has been written).
    NotVerified,
    /// The server could not be reached (a message for standard error).
    Unavailable(String),
    /// Something else (writing a file, a server that is not SERVING).
    Other(String),
}

impl From<ClientError> for Failure {
    fn from(error: ClientError) -> Self {
        Failure::Client(Box::new(error))
    }
}

/// What reporting a failure needs to know about the command that failed.
pub(crate) struct Reporting<'a> {
    /// How the command's flags name the request's fields.
    pub(crate) names: &'a FieldNames,
    /// `--json` was given: a refusal is reported as JSON, with field paths.
    pub(crate) json: bool,
    /// The `--timeout` as the user wrote it.
    pub(crate) timeout: &'a str,
}

impl Failure {
    /// Print the failure on standard error, once, and return its exit status.
    pub(crate) fn report(&self, how: &Reporting<'_>) -> i32 {
        match self {
            Failure::Usage(message) => {
                note(format!("oxbind: {message}"));
                EXIT_USAGE
            }
            Failure::Other(message) => {
                note(format!("oxbind: {message}"));
                EXIT_FAILURE
            }
            Failure::RowsRefused => EXIT_ROWS_REFUSED,
            Failure::NotVerified => EXIT_NOT_VERIFIED,
            Failure::Unavailable(message) => {
                note(format!("oxbind: {message}"));
                EXIT_UNAVAILABLE
            }
            Failure::ClosedOutput => EXIT_OK,
            Failure::Client(error) => {
                if how.json {
                    note(json_error(error, how.names));
                } else {
                    for line in client_lines(error, how) {
                        note(format!("oxbind: {line}"));
                    }
                }
                match error.code() {
                    _ if matches!(
                        error.as_ref(),
                        ClientError::InvalidEndpoint { .. } | ClientError::Tls(_)
                    ) =>
                    {
                        EXIT_USAGE
                    }
                    Code::InvalidArgument => EXIT_REFUSED,
                    Code::Unavailable => EXIT_UNAVAILABLE,
                    _ => EXIT_FAILURE,
                }
            }
        }
    }
}

/// One line per refused field (naming the flag), or one line for any other
/// failure of a call.
fn client_lines(error: &ClientError, how: &Reporting<'_>) -> Vec<String> {
    match error {
        ClientError::Status {
            code, violations, ..
        } if *code == Code::InvalidArgument && !violations.is_empty() => violations
            .iter()
            .map(|v| how.names.restate(&v.field, &v.description))
            .collect(),
        ClientError::Status {
            code: Code::DeadlineExceeded,
            message,
            ..
        } => vec![format!(
            "no answer within --timeout {} ({message}); give a longer --timeout for large requests",
            how.timeout
        )],
        ClientError::Status { code, message, .. } => {
            vec![format!(
                "server answered {}: {}",
                code_name(*code),
                crate::fields::model_flags(message)
            )]
        }
        other => vec![other.to_string()],
    }
}

/// The failure as one line of JSON: the status code name, its message and
/// each refused field with its contract path and the flag that set it.
fn json_error(error: &ClientError, names: &FieldNames) -> String {
    let message = match error {
        ClientError::Status { message, .. } => message.clone(),
        other => other.to_string(),
    };
    let violations: Vec<serde_json::Value> = error
        .field_violations()
        .iter()
        .map(|v| {
            serde_json::json!({
                "field": v.field,
                "flag": names.name(&v.field),
                "reason": v.reason,
                "description": v.description,
            })
        })
        .collect();
    let mut body = serde_json::json!({
        "code": code_name(error.code()),
        "message": message,
    });
    if !violations.is_empty() {
        body["fieldViolations"] = serde_json::Value::Array(violations);
    }
    serde_json::json!({ "error": body }).to_string()
}
