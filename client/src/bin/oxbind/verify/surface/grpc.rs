//! The gRPC door: protobuf over HTTP/2 (TLS and mutual TLS as the command
//! line's flags ask), each method called by its path with the request
//! encoded by reflection, so every method of the contract is reachable.

use oxbind_client::ClientError;
use prost::bytes::{Buf, BufMut};
use prost_reflect::MethodDescriptor;
use serde_json::Value;
use tonic::{
    codec::{Codec, DecodeBuf, Decoder, EncodeBuf, Encoder},
    codegen::http::uri::PathAndQuery,
    transport::Channel,
    Status,
};

use super::{CallFailure, Pending, Probe, Surface};
use crate::verify::{case::Case, contract};

/// The gRPC door of one deployment.
pub(crate) struct Grpc {
    channel: Channel,
}

impl Grpc {
    /// The door behind `channel`.
    pub(crate) fn new(channel: Channel) -> Self {
        Self { channel }
    }

    /// Send encoded `bytes` to `path` and give back the encoded answer.
    pub(crate) async fn raw(&self, path: &str, bytes: Vec<u8>) -> Result<Vec<u8>, CallFailure> {
        let mut grpc = tonic::client::Grpc::new(self.channel.clone());
        grpc.ready()
            .await
            .map_err(|e| CallFailure::no_answer(format!("the connection is not ready: {e}")))?;
        let path: PathAndQuery = path
            .parse()
            .map_err(|e| CallFailure::no_answer(format!("method path {path}: {e}")))?;
        grpc.unary(tonic::Request::new(bytes), path, RawCodec)
            .await
            .map(tonic::Response::into_inner)
            .map_err(|status| CallFailure::from(ClientError::from(status)))
    }
}

/// The path of a method, `/package.Service/Method`.
pub(crate) fn path_of(method: &MethodDescriptor) -> String {
    format!("/{}/{}", method.parent_service().full_name(), method.name())
}

impl Surface for Grpc {
    fn key(&self) -> &'static str {
        "grpc"
    }

    fn title(&self) -> &'static str {
        "gRPC (protobuf over HTTP/2)"
    }

    fn probe(&self) -> Pending<'_, Probe> {
        Box::pin(async move {
            let Some(method) = contract::method("oxbind.v1.ModelCatalogService/ListModels") else {
                return Probe::not_offered("this build's contract has no ListModels");
            };
            match self.raw(&path_of(&method), Vec::new()).await {
                Ok(_) => Probe::answered("ListModels answered"),
                Err(failure) => {
                    Probe::not_offered(format!("ListModels: {} {}", failure.code, failure.message))
                }
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
            let bytes =
                contract::encode_request(method, request).map_err(CallFailure::no_answer)?;
            let answer = self.raw(&path_of(method), bytes).await?;
            contract::decode_response(method, &answer).map_err(CallFailure::no_answer)
        })
    }
}

/// A codec that passes messages through as their encoded bytes: the
/// request is encoded, and the answer decoded, by reflection.
#[derive(Debug, Clone, Copy, Default)]
struct RawCodec;

impl Codec for RawCodec {
    type Encode = Vec<u8>;
    type Decode = Vec<u8>;
    type Encoder = RawCodec;
    type Decoder = RawCodec;

    fn encoder(&mut self) -> Self::Encoder {
        RawCodec
    }

    fn decoder(&mut self) -> Self::Decoder {
        RawCodec
    }
}

impl Encoder for RawCodec {
    type Item = Vec<u8>;
    type Error = Status;

    fn encode(&mut self, item: Self::Item, dst: &mut EncodeBuf<'_>) -> Result<(), Self::Error> {
        dst.put_slice(&item);
        Ok(())
    }
}

impl Decoder for RawCodec {
    type Item = Vec<u8>;
    type Error = Status;

    fn decode(&mut self, src: &mut DecodeBuf<'_>) -> Result<Option<Self::Item>, Self::Error> {
        let mut bytes = vec![0; src.remaining()];
        src.copy_to_slice(&mut bytes);
        Ok(Some(bytes))
    }
}
