//! `google.protobuf.Timestamp`, with the JSON form the proto3 JSON mapping
//! gives it: an RFC 3339 string in UTC, written Z-normalized with 0, 3, 6 or
//! 9 fractional digits (`"2026-12-03T10:26:39.361355079Z"`), read with any
//! offset.
//!
//! pbjson-types' own Timestamp writes the offset as `+00:00`, which the
//! mapping's output form does not allow; the formatting and parsing here are
//! prost-types' (`Display` and `FromStr` of `prost_types::Timestamp`), which
//! follow it.

use std::{str::FromStr, time::SystemTime};

use serde::{de::Error as _, Deserialize, Serialize};

/// A point in time (`google.protobuf.Timestamp`).
#[derive(Clone, Copy, PartialEq, Eq, Hash, prost::Message)]
pub struct Timestamp {
    /// Seconds since 1970-01-01T00:00:00Z.
    #[prost(int64, tag = "1")]
    pub seconds: i64,
    /// Non-negative fractions of a second at nanosecond resolution.
    #[prost(int32, tag = "2")]
    pub nanos: i32,
}

impl From<prost_types::Timestamp> for Timestamp {
    fn from(t: prost_types::Timestamp) -> Self {
        Self {
            seconds: t.seconds,
            nanos: t.nanos,
        }
    }
}

impl From<Timestamp> for prost_types::Timestamp {
    fn from(t: Timestamp) -> Self {
        Self {
            seconds: t.seconds,
            nanos: t.nanos,
        }
    }
}

impl From<SystemTime> for Timestamp {
    fn from(time: SystemTime) -> Self {
        prost_types::Timestamp::from(time).into()
    }
}

impl std::fmt::Display for Timestamp {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        prost_types::Timestamp::from(*self).fmt(f)
    }
}

impl Serialize for Timestamp {
    fn serialize<S: serde::Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        serializer.collect_str(self)
    }
}

impl<'de> Deserialize<'de> for Timestamp {
    fn deserialize<D: serde::Deserializer<'de>>(deserializer: D) -> Result<Self, D::Error> {
        let text = std::borrow::Cow::<str>::deserialize(deserializer)?;
        prost_types::Timestamp::from_str(&text)
            .map(Self::from)
            .map_err(|_| D::Error::custom("a timestamp must be an RFC 3339 date and time"))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn written_z_normalized_and_read_with_any_offset() {
        let t = Timestamp {
            seconds: 1_796_294_799,
            nanos: 361_355_079,
        };
        let text = serde_json::to_string(&t).unwrap();
        assert_eq!(text, r#""2026-12-03T10:46:39.361355079Z""#);
        assert_eq!(serde_json::from_str::<Timestamp>(&text).unwrap(), t);
        let offset: Timestamp =
            serde_json::from_str(r#""2026-12-03T11:46:39.361355079+01:00""#).unwrap();
        assert_eq!(offset, t);
        let whole = Timestamp {
            seconds: 0,
            nanos: 0,
        };
        assert_eq!(
            serde_json::to_string(&whole).unwrap(),
            r#""1970-01-01T00:00:00Z""#
        );
        assert!(serde_json::from_str::<Timestamp>(r#""yesterday""#).is_err());
    }
}
