//! Reading a Connect unary request: the codec and the message's bytes, from
//! a POST body or from the GET form's query, after the protocol's headers
//! and parameters are checked (Connect protocol reference, "Unary-Request"
//! and "Unary-Get-Request", <https://connectrpc.com/docs/protocol>).

use base64::{
    alphabet,
    engine::{DecodePaddingMode, GeneralPurpose, GeneralPurposeConfig},
    Engine as _,
};
use http::{header, request::Parts, HeaderMap, Method};
use tokio::sync::OwnedSemaphorePermit;
use tonic::{body::Body, codegen::Bytes, Status};

use super::{compression::Coding, Codec};
use crate::layers::door::{DoorLayers, NotRead, ReadBody};

/// The request header naming the protocol version.
pub const PROTOCOL_VERSION_HEADER: &str = "connect-protocol-version";

/// The only protocol version there is.
pub const PROTOCOL_VERSION: &str = "1";

/// The request header carrying the caller's timeout, in milliseconds.
pub const TIMEOUT_HEADER: &str = "connect-timeout-ms";

/// Most digits `connect-timeout-ms` may have.
pub const TIMEOUT_MAX_DIGITS: usize = 10;

/// The GET form's query parameters.
mod query {
    pub(super) const MESSAGE: &str = "message";
    pub(super) const ENCODING: &str = "encoding";
    pub(super) const BASE64: &str = "base64";
    pub(super) const COMPRESSION: &str = "compression";
    pub(super) const CONNECT: &str = "connect";
    /// The value of `connect` for this protocol version.
    pub(super) const CONNECT_V1: &str = "v1";
}

/// URL-safe base64 (RFC 4648 section 5), with or without padding, as the
/// GET form's `base64=1` asks.
const URL_SAFE_ANY_PADDING: GeneralPurpose = GeneralPurpose::new(
    &alphabet::URL_SAFE,
    GeneralPurposeConfig::new().with_decode_padding_mode(DecodePaddingMode::Indifferent),
);

/// One unary request, read.
#[derive(Debug)]
pub struct UnaryRequest {
    /// The codec of the message (and of the answer).
    pub codec: Codec,
    /// The message, encoded by `codec` (decompressed).
    pub message: Bytes,
    /// How the request was compressed (and so how the answer is).
    pub coding: Coding,
    /// The request bytes reserved for the message, until the answer ends.
    pub reserved: Option<OwnedSemaphorePermit>,
}

/// The `encoding` of a GET form in `query`: `None` when the query has no
/// `encoding`, `Some(None)` for an encoding the door does not speak.
pub fn get_encoding(query: Option<&str>) -> Option<Option<Codec>> {
    let query = query?;
    form_urlencoded::parse(query.as_bytes())
        .find(|(name, _)| name == query::ENCODING)
        .map(|(_, value)| Codec::from_encoding(&value))
}

/// The caller's timeout from `connect-timeout-ms`: `Ok(None)` when absent;
/// a value that is not a positive whole number of at most ten digits is
/// refused.
pub fn timeout_ms(headers: &HeaderMap) -> Result<Option<u64>, Status> {
    let Some(value) = headers.get(TIMEOUT_HEADER) else {
        return Ok(None);
    };
    value
        .to_str()
        .ok()
        .filter(|text| {
            !text.is_empty()
                && text.len() <= TIMEOUT_MAX_DIGITS
                && text.bytes().all(|b| b.is_ascii_digit())
        })
        .and_then(|text| text.parse::<u64>().ok())
        .filter(|ms| *ms > 0)
        .map(Some)
        .ok_or_else(|| {
            Status::invalid_argument(format!(
                "{TIMEOUT_HEADER} must be a positive whole number of milliseconds of at most {TIMEOUT_MAX_DIGITS} digits"
            ))
        })
}

/// Read a unary request (POST or GET), whose head is `parts` and body
/// `body`, whose message may have at most `max_bytes` bytes. The body is
/// read under the server's admission rules ([`DoorLayers::read_body`]): the
/// request bytes it holds (the message, decompressed) are reserved until
/// the answer ends.
pub async fn read(
    parts: &Parts,
    body: Body,
    max_bytes: usize,
    layers: &DoorLayers,
) -> Result<UnaryRequest, Status> {
    timeout_ms(&parts.headers)?;
    if parts.method == Method::GET {
        let mut read = read_get(parts.uri.query(), max_bytes)?;
        layers.reserve(&mut read.reserved, read.message.len())?;
        return Ok(read);
    }
    let headers = &parts.headers;
    let codec = headers
        .get(header::CONTENT_TYPE)
        .and_then(|v| v.to_str().ok())
        .and_then(Codec::from_content_type)
        .ok_or_else(|| {
            Status::internal("a request without a Connect content type reached the Connect door")
        })?;
    if let Some(version) = headers.get(PROTOCOL_VERSION_HEADER) {
        if version != PROTOCOL_VERSION {
            return Err(Status::invalid_argument(format!(
                "{PROTOCOL_VERSION_HEADER} must be {PROTOCOL_VERSION}"
            )));
        }
    }
    let coding = Coding::named(
        headers
            .get(header::CONTENT_ENCODING)
            .and_then(|v| v.to_str().ok())
            .unwrap_or_default(),
    )?;
    let ReadBody {
        bytes,
        mut reserved,
    } = layers
        .read_body(body, max_bytes)
        .await
        .map_err(|not_read| match not_read {
            NotRead::TooLarge => too_large(max_bytes),
            NotRead::Refused(status) => status,
        })?;
    let sent = bytes.len();
    let message = coding.decompress(bytes, max_bytes)?;
    layers.reserve(&mut reserved, message.len().saturating_sub(sent))?;
    Ok(UnaryRequest {
        codec,
        message,
        coding,
        reserved,
    })
}

/// The GET form: `?encoding=json|proto&message=...[&base64=1]
/// [&compression=identity][&connect=v1]`, parameters in any order, unknown
/// ones allowed.
fn read_get(query: Option<&str>, max_bytes: usize) -> Result<UnaryRequest, Status> {
    let (mut message, mut encoding, mut base64, mut compression, mut connect) =
        (None, None, false, None, None);
    for (name, value) in form_urlencoded::parse(query.unwrap_or_default().as_bytes()) {
        match name.as_ref() {
            query::MESSAGE => message = Some(value),
            query::ENCODING => encoding = Some(value),
            query::BASE64 => base64 = value == "1",
            query::COMPRESSION => compression = Some(value),
            query::CONNECT => connect = Some(value),
            _ => {}
        }
    }
    let usage = "a Connect GET needs ?encoding=json&message=<the request as percent-encoded JSON> (or encoding=proto&base64=1&message=<URL-safe base64>)";
    let codec = match encoding {
        Some(encoding) => Codec::from_encoding(&encoding)
            .ok_or_else(|| Status::invalid_argument(format!("unknown encoding; {usage}")))?,
        None => {
            return Err(Status::invalid_argument(format!(
                "encoding is missing; {usage}"
            )))
        }
    };
    let Some(message) = message else {
        return Err(Status::invalid_argument(format!(
            "message is missing; {usage}"
        )));
    };
    if connect.is_some_and(|v| v != query::CONNECT_V1) {
        return Err(Status::invalid_argument(format!(
            "connect must be {}",
            query::CONNECT_V1
        )));
    }
    let coding = Coding::named(compression.as_deref().unwrap_or_default())?;
    let message = if base64 {
        URL_SAFE_ANY_PADDING
            .decode(message.as_bytes())
            .map_err(|_| {
                Status::invalid_argument(
                    "message is not URL-safe base64 (RFC 4648 section 5), as base64=1 says",
                )
            })?
    } else {
        message.into_owned().into_bytes()
    };
    if message.len() > max_bytes {
        return Err(too_large(max_bytes));
    }
    let message = coding.decompress(Bytes::from(message), max_bytes)?;
    Ok(UnaryRequest {
        codec,
        message,
        coding,
        reserved: None,
    })
}

/// A request over the size limit.
pub(super) fn too_large(max_bytes: usize) -> Status {
    Status::resource_exhausted(format!(
        "the request message is larger than the limit of {max_bytes} bytes"
    ))
}

#[cfg(test)]
mod tests {
    use super::*;
    use http::HeaderValue;
    use tonic::Code;

    fn headers(pairs: &[(&'static str, &'static str)]) -> HeaderMap {
        let mut map = HeaderMap::new();
        for (name, value) in pairs {
            map.insert(*name, HeaderValue::from_static(value));
        }
        map
    }

    #[test]
    fn timeouts_are_positive_whole_milliseconds_of_at_most_ten_digits() {
        assert_eq!(timeout_ms(&headers(&[])).unwrap(), None);
        assert_eq!(
            timeout_ms(&headers(&[(TIMEOUT_HEADER, "2500")])).unwrap(),
            Some(2500)
        );
        assert_eq!(
            timeout_ms(&headers(&[(TIMEOUT_HEADER, "9999999999")])).unwrap(),
            Some(9_999_999_999)
        );
        for bad in ["0", "-1", "1.5", "10s", "", "12345678901"] {
            let map = {
                let mut map = HeaderMap::new();
                map.insert(TIMEOUT_HEADER, HeaderValue::from_str(bad).unwrap());
                map
            };
            assert_eq!(
                timeout_ms(&map).unwrap_err().code(),
                Code::InvalidArgument,
                "{bad:?}"
            );
        }
    }

    #[test]
    fn the_get_form_reads_percent_encoded_json_and_base64_in_any_order() {
        let read = read_get(
            Some("connect=v1&message=%7B%22po2%22%3A%7B%7D%7D&encoding=json&other=x"),
            1024,
        )
        .unwrap();
        assert_eq!(read.codec, Codec::Json);
        assert_eq!(&read.message[..], br#"{"po2":{}}"#);
        // `{"a":1}` in URL-safe base64, unpadded and padded.
        for message in ["eyJhIjoxfQ", "eyJhIjoxfQ%3D%3D"] {
            let query = format!("encoding=json&base64=1&message={message}");
            let read = read_get(Some(&query), 1024).unwrap();
            assert_eq!(&read.message[..], br#"{"a":1}"#);
        }
    }

    #[test]
    fn an_incomplete_or_unsupported_get_form_is_refused() {
        let cases = [
            (None, Code::InvalidArgument),
            (Some("message=%7B%7D"), Code::InvalidArgument),
            (Some("encoding=json"), Code::InvalidArgument),
            (
                Some("encoding=json&message=%7B%7D&connect=v2"),
                Code::InvalidArgument,
            ),
            (
                Some("encoding=json&message=%7B%7D&compression=br"),
                Code::Unimplemented,
            ),
            (
                Some("encoding=proto&base64=1&message=%%%"),
                Code::InvalidArgument,
            ),
        ];
        for (query, code) in cases {
            assert_eq!(read_get(query, 1024).unwrap_err().code(), code, "{query:?}");
        }
        assert_eq!(
            read_get(Some("encoding=json&message=%7B%22a%22%3A1%7D"), 4)
                .unwrap_err()
                .code(),
            Code::ResourceExhausted
        );
    }

    #[test]
    fn the_get_encoding_is_found_or_named_unknown() {
        assert_eq!(get_encoding(None), None);
        assert_eq!(get_encoding(Some("message=x")), None);
        assert_eq!(get_encoding(Some("encoding=json")), Some(Some(Codec::Json)));
        assert_eq!(get_encoding(Some("encoding=xml")), Some(None));
    }
}
