//! The content codings the Connect door reads and writes: `identity` and
//! `gzip` (flate2). A request compressed with gzip gets its answer
//! compressed with gzip too, as the protocol asks ("Servers must use the
//! same encoding as Content-Encoding when it is not identity"); an error is
//! always sent uncompressed, which the protocol allows.

use std::io::{Read, Write};

use flate2::{read::GzDecoder, write::GzEncoder};
use tonic::{codegen::Bytes, Status};

/// The codings served, as an `unimplemented` refusal lists them.
pub const SUPPORTED: &str = "gzip, identity";

/// A content coding.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Coding {
    /// No compression.
    Identity,
    /// gzip (RFC 1952).
    Gzip,
}

impl Coding {
    /// The coding named `name` (a `content-encoding` value or the GET form's
    /// `compression`); anything else is refused with `unimplemented`.
    pub fn named(name: &str) -> Result<Self, Status> {
        match name.trim() {
            "" | "identity" => Ok(Self::Identity),
            "gzip" => Ok(Self::Gzip),
            _ => Err(Status::unimplemented(format!(
                "the request's compression is not supported; supported: {SUPPORTED}"
            ))),
        }
    }

    /// The `content-encoding` of a compressed answer, if any.
    pub fn header_value(self) -> Option<&'static str> {
        match self {
            Self::Identity => None,
            Self::Gzip => Some("gzip"),
        }
    }

    /// `bytes` decompressed, at most `max_bytes` of them (more is refused
    /// with RESOURCE_EXHAUSTED, so a small compressed body cannot unpack
    /// past the limit). Empty content is never decompressed.
    pub fn decompress(self, bytes: Bytes, max_bytes: usize) -> Result<Bytes, Status> {
        if self == Self::Identity || bytes.is_empty() {
            return Ok(bytes);
        }
        let mut out = Vec::new();
        GzDecoder::new(bytes.as_ref())
            .take(max_bytes as u64 + 1)
            .read_to_end(&mut out)
            .map_err(|_| Status::invalid_argument("the request body is not valid gzip"))?;
        if out.len() > max_bytes {
            return Err(super::request::too_large(max_bytes));
        }
        Ok(Bytes::from(out))
    }

    /// `bytes` compressed.
    pub fn compress(self, bytes: Bytes) -> Result<Bytes, Status> {
        match self {
            Self::Identity => Ok(bytes),
            Self::Gzip => {
                let mut encoder = GzEncoder::new(Vec::new(), flate2::Compression::fast());
                encoder
                    .write_all(&bytes)
                    .and_then(|()| encoder.finish())
                    .map(Bytes::from)
                    .map_err(|_| Status::internal("the response could not be compressed"))
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn gzip_round_trips_and_unknown_codings_are_unimplemented() {
        let text = Bytes::from_static(br#"{"po2":{"value":60,"unit":"mm[Hg]"}}"#);
        let packed = Coding::Gzip.compress(text.clone()).unwrap();
        assert_ne!(packed, text);
        assert_eq!(Coding::Gzip.decompress(packed, 1024).unwrap(), text);
        assert_eq!(Coding::named("identity").unwrap(), Coding::Identity);
        assert_eq!(
            Coding::named("br").unwrap_err().code(),
            tonic::Code::Unimplemented
        );
    }

    #[test]
    fn a_gzip_body_may_not_unpack_past_the_limit() {
        let big = Bytes::from(vec![b' '; 10_000]);
        let packed = Coding::Gzip.compress(big).unwrap();
        assert!(packed.len() < 1_000);
        assert_eq!(
            Coding::Gzip.decompress(packed, 1_000).unwrap_err().code(),
            tonic::Code::ResourceExhausted
        );
        assert_eq!(
            Coding::Gzip
                .decompress(Bytes::from_static(b"not gzip"), 1_000)
                .unwrap_err()
                .code(),
            tonic::Code::InvalidArgument
        );
    }
}
