//! One error type for every call: [`ClientError`].

use oxbind_proto::google::rpc as pb;
use prost::Message;
use tonic::Code;

/// One field the server refused, from `google.rpc.BadRequest`.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct FieldViolation {
    /// Dotted path of the refused field in the request, e.g. `po2.value` or
    /// `conditions.ph`.
    pub field: String,
    /// Stable upper-snake-case reason, e.g. `VALUE_OUT_OF_RANGE`.
    pub reason: String,
    /// English description for developers.
    pub description: String,
}

/// The machine-readable cause the server attached (`google.rpc.ErrorInfo`).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct ErrorInfo {
    /// Upper-snake-case reason.
    pub reason: String,
    /// The domain that issued the reason.
    pub domain: String,
    /// Extra facts, e.g. the limits that were crossed.
    pub metadata: Vec<(String, String)>,
}

/// Everything that can go wrong when calling Oxbind.
///
/// [`ClientError::code`] gives the gRPC status code in every case, and
/// [`ClientError::field_violations`] each refused field.
///
/// ```
/// use oxbind_client::ClientError;
/// let error = ClientError::from(tonic::Status::unavailable("draining"));
/// assert_eq!(error.code(), tonic::Code::Unavailable);
/// assert!(error.field_violations().is_empty());
/// ```
#[derive(Debug)]
pub enum ClientError {
    /// The server address is not a valid URI.
    InvalidEndpoint {
        /// The address as given.
        endpoint: String,
        /// Why it was refused.
        reason: String,
    },
    /// The TLS settings could not be applied (for example an unreadable CA
    /// bundle).
    Tls(String),
    /// No connection could be opened to the server.
    Connect(tonic::transport::Error),
    /// The server (or the transport) answered with a non-OK status.
    Status {
        /// The gRPC status code.
        code: Code,
        /// The status message.
        message: String,
        /// Each refused field, from `google.rpc.BadRequest`.
        violations: Vec<FieldViolation>,
        /// The `google.rpc.ErrorInfo`, when the server sent one.
        info: Option<ErrorInfo>,
    },
}

impl ClientError {
    /// The gRPC status code: UNAVAILABLE for a connection that could not be
    /// opened, INVALID_ARGUMENT for a bad endpoint or TLS setting.
    pub fn code(&self) -> Code {
        match self {
            ClientError::InvalidEndpoint { .. } | ClientError::Tls(_) => Code::InvalidArgument,
            ClientError::Connect(_) => Code::Unavailable,
            ClientError::Status { code, .. } => *code,
        }
    }

    /// The refused fields (empty unless the server refused the input).
    pub fn field_violations(&self) -> &[FieldViolation] {
        match self {
            ClientError::Status { violations, .. } => violations,
            _ => &[],
        }
    }

    /// The server's `google.rpc.ErrorInfo`, if any.
    pub fn error_info(&self) -> Option<&ErrorInfo> {
        match self {
            ClientError::Status { info, .. } => info.as_ref(),
            _ => None,
        }
    }

    /// True when the server refused the input (INVALID_ARGUMENT): retrying
    /// the same request cannot help.
    pub fn is_refusal(&self) -> bool {
        matches!(
            self,
            ClientError::Status {
                code: Code::InvalidArgument,
                ..
            }
        )
    }

    /// True when the server could not be reached or was unavailable.
    pub fn is_unavailable(&self) -> bool {
        self.code() == Code::Unavailable
    }

    /// Build from a `google.rpc.Status`, as carried by each batch item.
    pub fn from_rpc_status(status: &pb::Status) -> Self {
        let (violations, info) = decode_details(&status.details);
        ClientError::Status {
            code: Code::from_i32(status.code),
            message: status.message.clone(),
            violations,
            info,
        }
    }
}

fn decode_details(details: &[oxbind_proto::Any]) -> (Vec<FieldViolation>, Option<ErrorInfo>) {
    let mut violations = Vec::new();
    let mut info = None;
    for any in details {
        if any.type_url.ends_with("/google.rpc.BadRequest") {
            if let Ok(bad) = pb::BadRequest::decode(any.value.as_slice()) {
                violations.extend(bad.field_violations.into_iter().map(|v| FieldViolation {
                    field: v.field,
                    reason: v.reason,
                    description: v.description,
                }));
            }
        } else if any.type_url.ends_with("/google.rpc.ErrorInfo") {
            if let Ok(e) = pb::ErrorInfo::decode(any.value.as_slice()) {
                let mut metadata: Vec<(String, String)> = e.metadata.into_iter().collect();
                metadata.sort();
                info = Some(ErrorInfo {
                    reason: e.reason,
                    domain: e.domain,
                    metadata,
                });
            }
        }
    }
    (violations, info)
}

impl From<tonic::Status> for ClientError {
    fn from(status: tonic::Status) -> Self {
        let (violations, info) = if status.details().is_empty() {
            (Vec::new(), None)
        } else {
            match pb::Status::decode(status.details()) {
                Ok(rpc) => decode_details(&rpc.details),
                Err(_) => (Vec::new(), None),
            }
        };
        ClientError::Status {
            code: status.code(),
            message: status.message().to_owned(),
            violations,
            info,
        }
    }
}

impl std::fmt::Display for ClientError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            ClientError::InvalidEndpoint { endpoint, reason } => {
                write!(f, "invalid server address {endpoint:?}: {reason}")
            }
            ClientError::Tls(reason) => write!(f, "TLS configuration: {reason}"),
            ClientError::Connect(error) => {
                write!(f, "server unavailable: {}", cause_chain(error))
            }
            ClientError::Status {
                code,
                message,
                violations,
                ..
            } => {
                write!(f, "{}: {message}", code_name(*code))?;
                for v in violations {
                    write!(f, "; field `{}`: {}", v.field, v.description)?;
                }
                Ok(())
            }
        }
    }
}

impl std::error::Error for ClientError {
    fn source(&self) -> Option<&(dyn std::error::Error + 'static)> {
        match self {
            ClientError::Connect(error) => Some(error),
            _ => None,
        }
    }
}

/// `error` and its causes joined by `: `, each said once: transport errors
/// often repeat their cause's text in their own (`tcp connect error: tcp
/// connect error: ...`), so a cause already contained in the text before it
/// is left out.
pub(crate) fn cause_chain(error: &(dyn std::error::Error + 'static)) -> String {
    let mut parts: Vec<String> = vec![error.to_string()];
    let mut source = error.source();
    while let Some(cause) = source {
        let text = cause.to_string();
        if !parts.iter().any(|p| p.contains(&text)) {
            parts.push(text);
        }
        source = cause.source();
    }
    parts.join(": ")
}

/// The canonical upper-snake-case name of a status code
/// (`google/rpc/code.proto`).
pub fn code_name(code: Code) -> &'static str {
    match code {
        Code::Ok => "OK",
        Code::Cancelled => "CANCELLED",
        Code::Unknown => "UNKNOWN",
        Code::InvalidArgument => "INVALID_ARGUMENT",
        Code::DeadlineExceeded => "DEADLINE_EXCEEDED",
        Code::NotFound => "NOT_FOUND",
        Code::AlreadyExists => "ALREADY_EXISTS",
        Code::PermissionDenied => "PERMISSION_DENIED",
        Code::ResourceExhausted => "RESOURCE_EXHAUSTED",
        Code::FailedPrecondition => "FAILED_PRECONDITION",
        Code::Aborted => "ABORTED",
        Code::OutOfRange => "OUT_OF_RANGE",
        Code::Unimplemented => "UNIMPLEMENTED",
        Code::Internal => "INTERNAL",
        Code::Unavailable => "UNAVAILABLE",
        Code::DataLoss => "DATA_LOSS",
        Code::Unauthenticated => "UNAUTHENTICATED",
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[derive(Debug)]
    struct Layer(&'static str, Option<Box<Layer>>);

    impl std::fmt::Display for Layer {
        fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
            f.write_str(self.0)
        }
    }

    impl std::error::Error for Layer {
        fn source(&self) -> Option<&(dyn std::error::Error + 'static)> {
            self.1.as_deref().map(|l| l as _)
        }
    }

    #[test]
    fn a_cause_is_said_once() {
        let error = Layer(
            "transport error",
            Some(Box::new(Layer(
                "tcp connect error",
                Some(Box::new(Layer(
                    "tcp connect error",
                    Some(Box::new(Layer("Connection refused (os error 111)", None))),
                ))),
            ))),
        );
        assert_eq!(
            cause_chain(&error),
            "transport error: tcp connect error: Connection refused (os error 111)"
        );
    }
}
