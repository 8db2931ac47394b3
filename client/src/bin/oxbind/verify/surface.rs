//! The doors a case can be sent through. Each is one module implementing
//! [`Surface`]: whether the deployment answers on it, which methods it
//! offers, and one call that takes a request in the protobuf JSON mapping
//! and gives back the answer in the same form (every field present), or the
//! status it was refused with. A number must never depend on the door, so
//! every case runs through every door that answers and offers its method.

pub(crate) mod connect;
pub(crate) mod fhir;
pub(crate) mod grpc;

use std::{future::Future, pin::Pin};

use oxbind_client::ClientError;

use super::case::Case;
use prost_reflect::MethodDescriptor;
use serde::Serialize;
use serde_json::Value;

/// A future a surface returns (boxed, so that surfaces can sit in one list).
pub(crate) type Pending<'a, T> = Pin<Box<dyn Future<Output = T> + Send + 'a>>;

/// One door of the deployment.
pub(crate) trait Surface: Send + Sync {
    /// Its stable key in the JSON report, e.g. `grpc`.
    fn key(&self) -> &'static str;
    /// Its name in the report, e.g. `gRPC (protobuf over HTTP/2)`.
    fn title(&self) -> &'static str;
    /// Whether the deployment answers on it.
    fn probe(&self) -> Pending<'_, Probe>;
    /// Whether it can send `case` and read back everything the case checks.
    fn offers(&self, case: &Case) -> bool;
    /// Send `request` to `method`.
    fn call<'a>(
        &'a self,
        method: &'a MethodDescriptor,
        request: &'a Value,
    ) -> Pending<'a, Result<Value, CallFailure>>;
}

/// What probing a door found.
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub(crate) struct Probe {
    /// Whether the deployment answered on this door.
    pub(crate) answered: bool,
    /// What was asked and what came back, in a line.
    pub(crate) detail: String,
}

impl Probe {
    /// The door answered.
    pub(crate) fn answered(detail: impl Into<String>) -> Self {
        Self {
            answered: true,
            detail: detail.into(),
        }
    }

    /// The door did not answer.
    pub(crate) fn not_offered(detail: impl Into<String>) -> Self {
        Self {
            answered: false,
            detail: detail.into(),
        }
    }
}

/// Why a call gave no answer.
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
#[serde(rename_all = "camelCase")]
pub(crate) struct CallFailure {
    /// The gRPC status code name (`INVALID_ARGUMENT`), or `NO_ANSWER` when
    /// nothing came back.
    pub(crate) code: String,
    /// The status message, or what went wrong.
    pub(crate) message: String,
    /// Each refused field and its reason.
    pub(crate) violations: Vec<(String, String)>,
    /// The ErrorInfo's reason and domain.
    pub(crate) error_info: Option<(String, String)>,
}

impl CallFailure {
    /// Nothing came back.
    pub(crate) fn no_answer(message: impl Into<String>) -> Self {
        Self {
            code: "NO_ANSWER".to_owned(),
            message: message.into(),
            violations: Vec::new(),
            error_info: None,
        }
    }
}

impl From<ClientError> for CallFailure {
    fn from(error: ClientError) -> Self {
        match &error {
            ClientError::Status { .. } => Self {
                code: oxbind_client::code_name(error.code()).to_owned(),
                message: match &error {
                    ClientError::Status { message, .. } => message.clone(),
                    _ => String::new(),
                },
                violations: error
                    .field_violations()
                    .iter()
                    .map(|v| (v.field.clone(), v.reason.clone()))
                    .collect(),
                error_info: error
                    .error_info()
                    .map(|i| (i.reason.clone(), i.domain.clone())),
            },
            other => Self::no_answer(other.to_string()),
        }
    }
}
