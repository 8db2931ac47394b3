//! Test harness: start a real Oxbind server in-process on `127.0.0.1:0`, talk
//! to it through the client crate (or plain HTTP, [`http`]), and stop it with
//! a oneshot.

pub mod http;
pub mod vectors;

pub mod fhir;

use std::{future::Future, net::SocketAddr, pin::Pin};

use oxbind_service::Config;
use tokio::{net::TcpListener, sync::oneshot, task::JoinHandle};
use tonic::transport::Channel;

/// The future a server stops on.
pub type Shutdown = Pin<Box<dyn Future<Output = ()> + Send + 'static>>;

/// A server running in this process on an ephemeral port.
pub struct TestServer {
    address: SocketAddr,
    stop: Option<oneshot::Sender<()>>,
    task: Option<JoinHandle<Result<(), String>>>,
}

impl TestServer {
    /// Start a server with the default configuration.
    pub async fn start() -> Self {
        Self::start_with(Config::default()).await
    }

    /// Start a server with `config` (its listen address is ignored: the
    /// server binds `127.0.0.1:0`).
    pub async fn start_with(config: Config) -> Self {
        Self::start_serving(|listener, shutdown| oxbind_service::serve(listener, config, shutdown))
            .await
    }

    /// Start a stand-in server: `serve` gets the bound listener and the
    /// shutdown future and runs until that future completes (its error, if
    /// any, is any that displays: oxbind's own, or tonic's for a test
    /// double on tonic's server). For tests that need a deliberately
    /// different server (a test double); every other test uses
    /// [`TestServer::start`].
    pub async fn start_serving<S, F, E>(serve: S) -> Self
    where
        S: FnOnce(TcpListener, Shutdown) -> F,
        F: Future<Output = Result<(), E>> + Send + 'static,
        E: std::fmt::Display + Send + 'static,
    {
        let listener = TcpListener::bind("127.0.0.1:0")
            .await
            .expect("bind an ephemeral port");
        let address = listener.local_addr().expect("local address");
        let (stop, stopped) = oneshot::channel::<()>();
        let serving = serve(
            listener,
            Box::pin(async move {
                let _ = stopped.await;
            }),
        );
        let task = tokio::spawn(async move { serving.await.map_err(|e| e.to_string()) });
        Self {
            address,
            stop: Some(stop),
            task: Some(task),
        }
    }

    /// The server's address.
    pub fn address(&self) -> SocketAddr {
        self.address
    }

    /// The `http://` URI of the server.
    pub fn uri(&self) -> String {
        format!("http://{}", self.address)
    }

    /// A fresh channel to the server.
    pub async fn channel(&self) -> Channel {
        oxbind_client::connect(self.uri())
            .await
            .expect("connect to the test server")
    }

    /// Ask the server to stop and wait until it has.
    pub async fn stop(mut self) {
        if let Some(stop) = self.stop.take() {
            let _ = stop.send(());
        }
        if let Some(task) = self.task.take() {
            task.await
                .expect("server task did not panic")
                .expect("server stopped cleanly");
        }
    }
}

/// A quantity with a UCUM unit code.
pub fn q(value: f64, unit: &str) -> Option<oxbind_client::v1::Quantity> {
    Some(oxbind_client::v1::Quantity {
        value,
        unit: unit.to_owned(),
    })
}

/// One field violation as a test sees it.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Refusal {
    /// Dotted field path.
    pub field: String,
    /// The violation's reason.
    pub reason: String,
}

/// The `google.rpc.BadRequest` violations and `ErrorInfo` (reason, domain) in
/// an encoded `google.rpc.Status`'s details.
pub fn decode_details(
    details: &[prost_types_any::Any],
) -> (Vec<Refusal>, Option<(String, String)>) {
    use oxbind_proto::google::rpc as pb;
    use prost::Message;
    let mut violations = Vec::new();
    let mut info = None;
    for any in details {
        if any.type_url.ends_with("google.rpc.BadRequest") {
            let bad = pb::BadRequest::decode(any.value.as_slice()).expect("BadRequest decodes");
            violations.extend(bad.field_violations.into_iter().map(|v| Refusal {
                field: v.field,
                reason: v.reason,
            }));
        } else if any.type_url.ends_with("google.rpc.ErrorInfo") {
            let e = pb::ErrorInfo::decode(any.value.as_slice()).expect("ErrorInfo decodes");
            info = Some((e.reason, e.domain));
        }
    }
    (violations, info)
}

/// The violations and ErrorInfo of a refused call, asserting the status is
/// INVALID_ARGUMENT.
pub fn refusal_of(status: &tonic::Status) -> (Vec<Refusal>, Option<(String, String)>) {
    use prost::Message;
    assert_eq!(
        status.code(),
        tonic::Code::InvalidArgument,
        "expected INVALID_ARGUMENT, got {status:?}"
    );
    let rpc = oxbind_proto::google::rpc::Status::decode(status.details())
        .expect("grpc-status-details-bin decodes");
    decode_details(&rpc.details)
}

/// Re-export of the `Any` type used in `google.rpc.Status` details.
pub mod prost_types_any {
    pub use oxbind_proto::Any;
}

/// One unary gRPC call with the request and response as encoded bytes, to
/// `path` (`/package.Service/Method`), through tonic's generic client: for
/// tests that compare doors message by message.
pub async fn grpc_unary_bytes(
    channel: Channel,
    path: &str,
    request: Vec<u8>,
) -> Result<Vec<u8>, tonic::Status> {
    let mut grpc = tonic::client::Grpc::new(channel);
    grpc.ready()
        .await
        .map_err(|e| tonic::Status::unavailable(e.to_string()))?;
    let path = path.parse().expect("a gRPC path");
    grpc.unary(tonic::Request::new(request), path, raw::RawCodec)
        .await
        .map(tonic::Response::into_inner)
}

/// A tonic codec that passes encoded messages through unchanged.
mod raw {
    use prost::bytes::{Buf, BufMut};
    use tonic::{
        codec::{Codec, DecodeBuf, Decoder, EncodeBuf, Encoder},
        Status,
    };

    #[derive(Debug, Clone, Copy, Default)]
    pub(crate) struct RawCodec;

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

        fn encode(&mut self, item: Vec<u8>, dst: &mut EncodeBuf<'_>) -> Result<(), Status> {
            dst.put_slice(&item);
            Ok(())
        }
    }

    impl Decoder for RawCodec {
        type Item = Vec<u8>;
        type Error = Status;

        fn decode(&mut self, src: &mut DecodeBuf<'_>) -> Result<Option<Vec<u8>>, Status> {
            Ok(Some(src.copy_to_bytes(src.remaining()).to_vec()))
        }
    }
}
