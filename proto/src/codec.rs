//! The protobuf codec of the generated stubs: tonic-prost's encoder, and a
//! decoder that reads each message from one contiguous slice.
//!
//! tonic hands a decoder the message as a `bytes::BytesMut`-backed buffer.
//! Decoding through that `Buf` costs a bookkeeping call per field read; a
//! message of a 1,000-item batch has tens of thousands of fields, and
//! decoding was about a fifth of the server's time per item (BENCHMARKS.md).
//! The message is already contiguous, so this decoder takes it as `Bytes`
//! (no copy) and lets prost read the slice, which is its fast path. Errors
//! are what tonic-prost gives: a malformed message is INTERNAL, as the gRPC
//! status code guide asks. Every integration test (tests/, client/tests/)
//! goes through it.

use std::marker::PhantomData;

use prost::{bytes::Buf, Message};
use tonic::{
    codec::{BufferSettings, Codec, DecodeBuf, Decoder},
    Status,
};
use tonic_prost::ProstEncoder;

/// The codec named in the generated clients and servers.
#[derive(Debug, Clone, Copy)]
pub struct ContiguousProstCodec<T, U> {
    _messages: PhantomData<(T, U)>,
}

impl<T, U> Default for ContiguousProstCodec<T, U> {
    fn default() -> Self {
        Self {
            _messages: PhantomData,
        }
    }
}

impl<T, U> Codec for ContiguousProstCodec<T, U>
where
    T: Message + Send + 'static,
    U: Message + Default + Send + 'static,
{
    type Encode = T;
    type Decode = U;
    type Encoder = ProstEncoder<T>;
    type Decoder = ContiguousProstDecoder<U>;

    fn encoder(&mut self) -> Self::Encoder {
        ProstEncoder::new(BufferSettings::default())
    }

    fn decoder(&mut self) -> Self::Decoder {
        ContiguousProstDecoder {
            _message: PhantomData,
        }
    }
}

/// Decodes a message from the contiguous bytes tonic has gathered.
#[derive(Debug, Clone, Copy)]
pub struct ContiguousProstDecoder<U> {
    _message: PhantomData<U>,
}

impl<U: Message + Default> Decoder for ContiguousProstDecoder<U> {
    type Item = U;
    type Error = Status;

    fn decode(&mut self, buf: &mut DecodeBuf<'_>) -> Result<Option<U>, Status> {
        let len = buf.remaining();
        // BytesMut splits off the message without copying it.
        let message = buf.copy_to_bytes(len);
        U::decode(message.as_ref())
            .map(Some)
            .map_err(|error| Status::internal(error.to_string()))
    }
}
