//! Tower layers and connection handling around the doors.
//!
//! Per connection ([`connections`], with [`tls`]): the connection cap, the
//! TLS-handshake and preface deadlines, the idle timeout, the maximum age,
//! stuck answers. HTTP/2 and HTTP/1.1 ([`protocol::MAIN_ACCEPTS_HTTP1`]).
//!
//! Per request, outermost first (`server.rs` assembles them):
//!
//! - [`web`]: CORS for browsers (with `--grpc-web` or
//!   `--cors-allowed-origins`);
//! - the dispatch by door (`http::DispatchLayer`: FHIR, Connect, gRPC);
//! - [`call`]: request id, span, deadline, metrics and the access log line,
//!   a copy in each door;
//! - for gRPC and grpc-web:
//!   - [`grpc_strict`]: only gRPC content types, POST, HTTP/2, allowed
//!     origins ([`protocol`] holds the content-type decisions);
//!   - grpc-web translation ([`web`]);
//!   - [`panic`]: a handler's panic becomes INTERNAL;
//!   - [`streaming`]: the streaming calls' cap, idle timeout and end at
//!     shutdown;
//!   - [`request_gate`]: a unary call's whole request, then [`admission`]
//!     (call slots, each connection's fair share, request bytes, [`work`]);
//!   - [`compute`]: large calls run on the compute pool;
//! - for Connect and FHIR, [`door`]: [`panic`], then the door, which reads
//!   its request and is admitted by the same [`admission`] (its [`work`]
//!   counted from the wire, JSON or binary), and runs large calls on the
//!   same [`compute`] pool.
//!
//! Every status these layers make up is in [`statuses`]; the small bodies
//! they share are in [`body`].

pub mod admission;
pub mod body;
pub mod call;
pub mod compute;
pub mod connections;
pub mod door;
pub mod grpc_strict;
pub mod panic;
pub mod protocol;
pub mod request_gate;
pub mod statuses;
pub mod streaming;
pub mod tls;
pub mod web;
pub mod work;
