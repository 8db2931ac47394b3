//! The FHIR R4 (4.0.1) door, under [`BASE_PATH`] on the main listener.
//!
//! | request | answer |
//! | --- | --- |
//! | `GET /fhir/r4/metadata` | the CapabilityStatement, listing the operation |
//! | `GET /fhir/r4/OperationDefinition/derive-oxygen-values` | the operation's definition |
//! | `GET /fhir/r4/CodeSystem/oxygen-derived-values` | the codes of derived values without a LOINC term |
//! | `POST /fhir/r4/$derive-oxygen-values` | a `Parameters` of LOINC-coded Observations in; derived Observations, a Device and a Provenance out |
//!
//! [`handle`] is transport-neutral: method, path, headers and body bytes in;
//! status, headers and body out. The operation reads the Observations into
//! a panel ([`panel`]), builds the contract's request messages and calls the
//! same API functions as the gRPC handlers ([`compute`]: the numbers are
//! the gRPC RPCs' numbers), then writes the answer ([`respond`]). Refusals
//! become OperationOutcomes in one place ([`outcome`]).
//!
//! Patient references (`subject`, `encounter`, `specimen`) and the
//! effective time pass from the inputs to the derived Observations as given:
//! they are never logged at any level, never put in a span or a metric, and
//! never kept. This is the one place where an identifier crosses the
//! service.

pub mod codes;
pub mod compute;
pub mod conformance;
pub mod door;
pub mod outcome;
pub mod panel;
pub mod resources;
pub mod respond;
pub mod time;

use http::{header, HeaderMap, HeaderValue, Method, StatusCode};

use self::outcome::{error, issue_type, Refusal};

/// Where the endpoint lives on the main listener.
pub const BASE_PATH: &str = "/fhir/r4";

/// The FHIR JSON media type (https://hl7.org/fhir/R4/http.html#mime-type).
pub const FHIR_JSON: &str = "application/fhir+json";

/// Content type of every answer.
pub const RESPONSE_CONTENT_TYPE: &str = "application/fhir+json; charset=utf-8";

/// The operation's code (its path is `$` and the code).
pub const OPERATION_CODE: &str = "derive-oxygen-values";

/// Media types a request body may have, and an `Accept` or `_format` may
/// ask for (FHIR R4 also names `application/json`; `application/json+fhir`
/// is the older spelling).
const JSON_TYPES: [&str; 3] = [FHIR_JSON, "application/json", "application/json+fhir"];

/// A request to the FHIR door.
#[derive(Debug, Clone, Copy)]
pub struct FhirRequest<'a> {
    /// The HTTP method.
    pub method: &'a Method,
    /// The path, starting with [`BASE_PATH`].
    pub path: &'a str,
    /// The query string, if any.
    pub query: Option<&'a str>,
    /// The request headers.
    pub headers: &'a HeaderMap,
    /// The whole body.
    pub body: &'a [u8],
}

/// The door's answer.
#[derive(Debug, Clone)]
pub struct FhirResponse {
    /// The HTTP status.
    pub status: StatusCode,
    /// Content type, and `Allow` on a 405.
    pub headers: HeaderMap,
    /// A FHIR JSON resource.
    pub body: Vec<u8>,
}

impl FhirResponse {
    fn json(status: StatusCode, body: Vec<u8>) -> Self {
        let mut headers = HeaderMap::new();
        headers.insert(
            header::CONTENT_TYPE,
            HeaderValue::from_static(RESPONSE_CONTENT_TYPE),
        );
        Self {
            status,
            headers,
            body,
        }
    }

    /// The OperationOutcome of `refusal`, with its status.
    pub fn refused(refusal: &Refusal) -> Self {
        // Counts only: never an element, never a value.
        tracing::debug!(
            status = refusal.status.as_u16(),
            issues = refusal.issues.len(),
            "FHIR request refused"
        );
        let body = serde_json::to_vec(&refusal.outcome()).unwrap_or_default();
        let mut response = Self::json(refusal.status, body);
        if let Some(allow) = refusal.allow {
            response
                .headers
                .insert(header::ALLOW, HeaderValue::from_static(allow));
        }
        response
    }
}

/// What a path under [`BASE_PATH`] names.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Route {
    Metadata,
    OperationDefinition,
    CodeSystem,
    Operation,
    NotFound,
}

fn route(path: &str) -> Route {
    let Some(rest) = path.strip_prefix(BASE_PATH) else {
        return Route::NotFound;
    };
    let rest = rest.strip_suffix('/').unwrap_or(rest);
    let operation = rest
        .strip_prefix("/$")
        .or_else(|| rest.strip_prefix("/%24"));
    if operation == Some(OPERATION_CODE) {
        return Route::Operation;
    }
    if rest == "/metadata" {
        Route::Metadata
    } else if rest
        == format!(
            "/OperationDefinition/{}",
            conformance::OPERATION_DEFINITION_ID
        )
    {
        Route::OperationDefinition
    } else if rest == format!("/CodeSystem/{}", conformance::CODE_SYSTEM_ID) {
        Route::CodeSystem
    } else {
        Route::NotFound
    }
}

/// Whether a media type (parameters ignored) is one of [`JSON_TYPES`] or a
/// wildcard covering them.
fn is_json(media_type: &str, wildcards: bool) -> bool {
    let essence = media_type.split(';').next().unwrap_or("").trim();
    JSON_TYPES.iter().any(|t| essence.eq_ignore_ascii_case(t))
        || (wildcards && (essence == "*/*" || essence.eq_ignore_ascii_case("application/*")))
}

/// The answer can be JSON: no `Accept`, or one that allows it; and no
/// `_format`, or a JSON one.
fn accepts_json(request: &FhirRequest<'_>) -> bool {
    let accept_ok = request
        .headers
        .get_all(header::ACCEPT)
        .iter()
        .filter_map(|v| v.to_str().ok())
        .flat_map(|v| v.split(','))
        .map(|t| t.to_owned())
        .collect::<Vec<_>>();
    let accept_ok = accept_ok.is_empty() || accept_ok.iter().any(|t| is_json(t, true));
    let format_ok = request
        .query
        .into_iter()
        .flat_map(|q| q.split('&'))
        .filter_map(|pair| pair.strip_prefix("_format="))
        .all(|f| {
            let f = f
                .replace("%2B", "+")
                .replace("%2b", "+")
                .replace("%2F", "/")
                .replace("%2f", "/");
            f == "json" || is_json(&f, false)
        });
    accept_ok && format_ok
}

/// Answer one request to the FHIR endpoint.
pub fn handle(request: &FhirRequest<'_>) -> FhirResponse {
    match answer(request) {
        Ok(body) => FhirResponse::json(StatusCode::OK, body),
        Err(refusal) => FhirResponse::refused(&refusal),
    }
}

fn answer(request: &FhirRequest<'_>) -> Result<Vec<u8>, Refusal> {
    let route = route(request.path);
    if route == Route::NotFound {
        return Err(not_found());
    }
    let allowed = if route == Route::Operation {
        Method::POST
    } else {
        Method::GET
    };
    if request.method != allowed {
        let mut refusal = Refusal::with(
            StatusCode::METHOD_NOT_ALLOWED,
            vec![error(
                issue_type::NOT_SUPPORTED,
                format!("this path answers {allowed} only"),
                "Parameters".to_owned(),
            )],
        );
        refusal.allow = Some(if allowed == Method::POST {
            "POST"
        } else {
            "GET"
        });
        return Err(refusal);
    }
    if !accepts_json(request) {
        return Err(Refusal::with(
            StatusCode::NOT_ACCEPTABLE,
            vec![error(
                issue_type::NOT_SUPPORTED,
                "this endpoint answers application/fhir+json only",
                "Parameters".to_owned(),
            )],
        ));
    }
    match route {
        Route::Metadata => Ok(conformance::METADATA.clone()),
        Route::OperationDefinition => Ok(conformance::OPERATION_DEFINITION.as_bytes().to_vec()),
        Route::CodeSystem => Ok(conformance::CODE_SYSTEM.as_bytes().to_vec()),
        Route::Operation => {
            let content_type = request
                .headers
                .get(header::CONTENT_TYPE)
                .and_then(|v| v.to_str().ok());
            if !content_type.is_some_and(|t| is_json(t, false)) {
                return Err(Refusal::with(
                    StatusCode::UNSUPPORTED_MEDIA_TYPE,
                    vec![error(
                        issue_type::NOT_SUPPORTED,
                        "send the Parameters as application/fhir+json",
                        "Parameters".to_owned(),
                    )],
                ));
            }
            derive(request.body)
        }
        Route::NotFound => Err(not_found()),
    }
}

/// A 404 that lists what the endpoint serves.
fn not_found() -> Refusal {
    Refusal::with(
        StatusCode::NOT_FOUND,
        vec![error(
            issue_type::NOT_FOUND,
            format!(
                "this endpoint serves {BASE_PATH}/metadata, \
{BASE_PATH}/OperationDefinition/{}, {BASE_PATH}/CodeSystem/{} and POST {BASE_PATH}/${OPERATION_CODE}",
                conformance::OPERATION_DEFINITION_ID,
                conformance::CODE_SYSTEM_ID
            ),
            "Parameters".to_owned(),
        )],
    )
}

/// The operation: read, compute, write.
fn derive(body: &[u8]) -> Result<Vec<u8>, Refusal> {
    let panel = panel::read(body)?;
    let computed = compute::compute(&panel)?;
    let answer = respond::parameters(&panel, computed)?;
    serde_json::to_vec(&answer).map_err(|_| {
        Refusal::with(
            StatusCode::INTERNAL_SERVER_ERROR,
            vec![error(
                issue_type::EXCEPTION,
                "the server could not write its answer",
                "Parameters".to_owned(),
            )],
        )
    })
}
