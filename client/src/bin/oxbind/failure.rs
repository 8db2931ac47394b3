//! How a command fails, and the exit status each failure gives.

use oxbind_client::{code_name, ClientError, Code};

/// Exit status: success.
pub(crate) const EXIT_OK: i32 = 0;
/// Exit status: any other failure (file could not be written, server
/// not SERVING, unexpected status).
pub(crate) const EXIT_FAILURE: i32 = 1;
/// Exit status: usage error (bad flags or input file); clap uses it too.
pub(crate) const EXIT_USAGE: i32 = 2;
/// Exit status: the server refused the input (INVALID_ARGUMENT).
pub(crate) const EXIT_REFUSED: i32 = 3;
/// Exit status: the server could not be reached or was unavailable.
pub(crate) const EXIT_UNAVAILABLE: i32 = 4;

/// Why a command did not succeed.
#[derive(Debug)]
pub(crate) enum Failure {
    /// The command line or an input file was unusable.
    Usage(String),
    /// The call failed.
    Client(Box<ClientError>),
    /// Something else (writing a file, a server that is not SERVING).
    Other(String),
}

impl From<ClientError> for Failure {
    fn from(error: ClientError) -> Self {
        Failure::Client(Box::new(error))
    }
}

impl Failure {
    /// Print the failure on standard error and return its exit status.
    pub(crate) fn report(&self) -> i32 {
        match self {
            Failure::Usage(message) => {
                eprintln!("oxbind: {message}");
                EXIT_USAGE
            }
            Failure::Other(message) => {
                eprintln!("oxbind: {message}");
                EXIT_FAILURE
            }
            Failure::Client(error) => {
                match error.as_ref() {
                    ClientError::Status {
                        code,
                        message,
                        violations,
                        ..
                    } => {
                        eprintln!("oxbind: server answered {}: {message}", code_name(*code));
                        for v in violations {
                            eprintln!(
                                "oxbind: field `{}` refused ({}): {}",
                                v.field, v.reason, v.description
                            );
                        }
                    }
                    other => eprintln!("oxbind: {other}"),
                }
                match error.code() {
                    Code::InvalidArgument => EXIT_REFUSED,
                    Code::Unavailable => EXIT_UNAVAILABLE,
                    _ => EXIT_FAILURE,
                }
            }
        }
    }
}
