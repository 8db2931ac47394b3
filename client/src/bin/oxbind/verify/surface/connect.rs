//! The Connect door, in its JSON form: `POST /package.Service/Method` with
//! `content-type: application/json` on the main listener (Connect protocol
//! reference, "Unary-Request" and "Error and EndStreamResponse",
//! https://connectrpc.com/docs/protocol). The request is sent exactly in the
//! protobuf JSON form the case holds, so the door's JSON reading is checked
//! too; the answer is read back through the contract.

use base64::{
    alphabet,
    engine::{DecodePaddingMode, GeneralPurpose, GeneralPurposeConfig},
    Engine as _,
};
use prost::Message;
use prost_reflect::MethodDescriptor;
use reqwest::{header, StatusCode};
use serde_json::Value;
use std::time::Duration;

use super::{CallFailure, Pending, Probe, Surface};
use crate::verify::{case::Case, contract};

/// The Connect protocol version header and its one value.
const PROTOCOL_VERSION: (&str, &str) = ("connect-protocol-version", "1");
/// The header that carries the call's deadline in milliseconds.
const TIMEOUT_HEADER: &str = "connect-timeout-ms";
/// Error details are base64, unpadded as sent, padded accepted.
const DETAIL_BASE64: GeneralPurpose = GeneralPurpose::new(
    &alphabet::STANDARD,
    GeneralPurposeConfig::new().with_decode_padding_mode(DecodePaddingMode::Indifferent),
);

/// The Connect JSON door of one deployment.
pub(crate) struct ConnectJson {
    client: reqwest::Client,
    base: String,
    timeout: Duration,
}

impl ConnectJson {
    /// The door at `base` (the `--server` address), through `client`.
    pub(crate) fn new(client: reqwest::Client, base: &str, timeout: Duration) -> Self {
        Self {
            client,
            base: base.trim_end_matches('/').to_owned(),
            timeout,
        }
    }

    async fn post(&self, rpc: &str, body: Vec<u8>) -> Result<(StatusCode, Value), CallFailure> {
        let response = self
            .client
            .post(format!("{}/{rpc}", self.base))
            .header(header::CONTENT_TYPE, "application/json")
            .header(PROTOCOL_VERSION.0, PROTOCOL_VERSION.1)
            .header(TIMEOUT_HEADER, self.timeout.as_millis().to_string())
            .body(body)
            .send()
            .await
            .map_err(|e| CallFailure::no_answer(describe(&e)))?;
        let status = response.status();
        let json_answer = response
            .headers()
            .get(header::CONTENT_TYPE)
            .and_then(|v| v.to_str().ok())
            .is_some_and(|v| v.starts_with("application/json"));
        let bytes = response
            .bytes()
            .await
            .map_err(|e| CallFailure::no_answer(describe(&e)))?;
        if !json_answer {
            return Err(CallFailure::no_answer(format!(
                "HTTP {status} without a JSON body"
            )));
        }
        let json = serde_json::from_slice(&bytes).map_err(|e| {
            CallFailure::no_answer(format!("HTTP {status}: the body is not JSON: {e}"))
        })?;
        Ok((status, json))
    }
}

/// What an HTTP client error means, in words that do not change from run to
/// run (the transport's own messages can vary with timing, and the report
/// must not).
pub(crate) fn describe(error: &reqwest::Error) -> String {
    if error.is_connect() {
        "could not connect".to_owned()
    } else if error.is_timeout() {
        "no answer within --timeout".to_owned()
    } else if error.is_body() || error.is_decode() {
        "the answer broke off".to_owned()
    } else {
        "no answer in this protocol".to_owned()
    }
}

impl Surface for ConnectJson {
    fn key(&self) -> &'static str {
        "connect-json"
    }

    fn title(&self) -> &'static str {
        "Connect protocol, JSON (HTTP POST)"
    }

    fn probe(&self) -> Pending<'_, Probe> {
        Box::pin(async move {
            match self
                .post("oxbind.v1.ModelCatalogService/ListModels", b"{}".to_vec())
                .await
            {
                Ok((status, json)) if status == StatusCode::OK && json.get("models").is_some() => {
                    Probe::answered("POST /oxbind.v1.ModelCatalogService/ListModels answered")
                }
                Ok((status, _)) => Probe::not_offered(format!(
                    "POST /oxbind.v1.ModelCatalogService/ListModels answered HTTP {status} without the catalog"
                )),
                Err(failure) => Probe::not_offered(format!(
                    "POST /oxbind.v1.ModelCatalogService/ListModels: {}",
                    failure.message
                )),
            }
        })
    }

    fn offers(&self, _case: &Case) -> bool {
        true
    }

    fn call<'a>(
        &'a self,
        method: &'a MethodDescriptor,
        request: &'a Value,
    ) -> Pending<'a, Result<Value, CallFailure>> {
        Box::pin(async move {
            let rpc = format!("{}/{}", method.parent_service().full_name(), method.name());
            let body = serde_json::to_vec(request)
                .map_err(|e| CallFailure::no_answer(format!("request: {e}")))?;
            let (status, json) = self.post(&rpc, body).await?;
            if status == StatusCode::OK {
                contract::normalise_response(method, json).map_err(CallFailure::no_answer)
            } else {
                Err(error_of(status, &json))
            }
        })
    }
}

/// A Connect error body as the status it stands for.
fn error_of(status: StatusCode, body: &Value) -> CallFailure {
    let Some(code) = body["code"].as_str() else {
        return CallFailure::no_answer(format!("HTTP {status} without a Connect error code"));
    };
    let mut failure = CallFailure {
        // Connect's names are gRPC's in lower case, but for one spelling.
        code: match code {
            "canceled" => "CANCELLED".to_owned(),
            other => other.to_ascii_uppercase(),
        },
        message: body["message"].as_str().unwrap_or_default().to_owned(),
        violations: Vec::new(),
        error_info: None,
    };
    for detail in body["details"].as_array().map(Vec::as_slice).unwrap_or(&[]) {
        let kind = detail["type"].as_str().unwrap_or_default();
        let Some(bytes) = detail["value"]
            .as_str()
            .and_then(|v| DETAIL_BASE64.decode(v).ok())
        else {
            continue;
        };
        match kind {
            "google.rpc.BadRequest" => {
                if let Ok(bad) = tonic_types::pb::BadRequest::decode(bytes.as_slice()) {
                    failure.violations.extend(
                        bad.field_violations
                            .into_iter()
                            .map(|v| (v.field, v.reason)),
                    );
                }
            }
            "google.rpc.ErrorInfo" => {
                if let Ok(info) = tonic_types::pb::ErrorInfo::decode(bytes.as_slice()) {
                    failure.error_info = Some((info.reason, info.domain));
                }
            }
            _ => {}
        }
    }
    failure
}

#[cfg(test)]
mod tests {
    use serde_json::json;
    use tonic_types::pb;

    use super::*;

    #[test]
    fn a_connect_refusal_reads_as_its_grpc_status() {
        let bad = pb::BadRequest {
            field_violations: vec![pb::bad_request::FieldViolation {
                field: "po2".to_owned(),
                reason: "FIELD_REQUIRED".to_owned(),
                ..Default::default()
            }],
        };
        let info = pb::ErrorInfo {
            reason: "FIELD_REQUIRED".to_owned(),
            domain: "oxbind.v1".to_owned(),
            ..Default::default()
        };
        let body = json!({
            "code": "invalid_argument",
            "message": "po2 is required",
            "details": [
                {"type": "google.rpc.BadRequest",
                 "value": base64::engine::general_purpose::STANDARD_NO_PAD.encode(bad.encode_to_vec())},
                {"type": "google.rpc.ErrorInfo",
                 "value": base64::engine::general_purpose::STANDARD.encode(info.encode_to_vec())}
            ]
        });
        let failure = error_of(StatusCode::BAD_REQUEST, &body);
        assert_eq!(failure.code, "INVALID_ARGUMENT");
        assert_eq!(
            failure.violations,
            vec![("po2".to_owned(), "FIELD_REQUIRED".to_owned())]
        );
        assert_eq!(
            failure.error_info,
            Some(("FIELD_REQUIRED".to_owned(), "oxbind.v1".to_owned()))
        );
        assert_eq!(
            error_of(StatusCode::OK, &json!({"code": "canceled"})).code,
            "CANCELLED"
        );
    }
}
