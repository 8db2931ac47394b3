//! The abuse suite of issue 19: hostile or heavy traffic against a real
//! `oxbind-server` process on loopback, reproducing each finding and
//! measuring what the server did about it.
//!
//! - [`server`]: start the binary on port 0 and read its logs, memory and
//!   file descriptors from `/proc`.
//! - [`wire`]: gRPC by hand over HTTP/2 and HTTP/1.1, for what no
//!   well-behaved client sends.
//! - [`probe`]: a health prober timing every check.
//! - [`attacks`]: the attacks, each returning its figures.
//! - [`doors`]: the same attacks through the doors beside gRPC (the Connect
//!   protocol over HTTP/1.1 and HTTP/2, the FHIR door).
//! - [`bound`]: the documented bound on the server's resident memory.
//!
//! The tests in `tests/abuse.rs` run every attack with small, fast settings
//! and assert the outcome; the `oxbind-abuse` command runs one attack with
//! the defaults against any server binary and prints its figures as JSON,
//! which is how RELIABILITY.md's before and after figures were taken.

pub mod attacks;
pub mod bound;
pub mod doors;
pub mod inputs;
pub mod probe;
pub mod server;
pub mod tls;
pub mod wire;
