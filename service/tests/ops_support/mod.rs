//! Shared helpers of the `ops_*` tests: an in-process server on loopback
//! port 0 (with an optional plaintext health listener) and small requests.

#![allow(dead_code, unreachable_pub)]

use std::net::SocketAddr;

use oxbind_client::v1::{BloodConditions, Quantity, SaturationFromTensionRequest};
use oxbind_service::{serve_on, Config, ServeError};
use tokio::{net::TcpListener, sync::oneshot, task::JoinHandle};

/// A server running in this process.
pub struct Running {
    /// Main listener address.
    pub address: SocketAddr,
    /// Plaintext health listener address, when asked for.
    pub health_address: Option<SocketAddr>,
    stop: Option<oneshot::Sender<()>>,
    task: Option<JoinHandle<Result<(), ServeError>>>,
}

impl Running {
    /// Start `config` on `127.0.0.1:0`, plus a health listener if `health`.
    pub async fn start(config: Config, health: bool) -> Self {
        let listener = TcpListener::bind("127.0.0.1:0").await.expect("bind");
        let address = listener.local_addr().expect("address");
        let health_listener = if health {
            Some(TcpListener::bind("127.0.0.1:0").await.expect("bind health"))
        } else {
            None
        };
        let health_address = health_listener.as_ref().map(|l| l.local_addr().unwrap());
        let (stop, stopped) = oneshot::channel::<()>();
        let task = tokio::spawn(serve_on(listener, health_listener, config, async move {
            let _ = stopped.await;
        }));
        Self {
            address,
            health_address,
            stop: Some(stop),
            task: Some(task),
        }
    }

    /// `http://` URI of the main listener.
    pub fn uri(&self) -> String {
        format!("http://{}", self.address)
    }

    /// Stop and wait; the server must stop cleanly.
    pub async fn stop(mut self) {
        if let Some(stop) = self.stop.take() {
            let _ = stop.send(());
        }
        if let Some(task) = self.task.take() {
            task.await.expect("no panic").expect("clean stop");
        }
    }
}

/// A quantity.
pub fn q(value: f64, unit: &str) -> Option<Quantity> {
    Some(Quantity {
        value,
        unit: unit.to_owned(),
    })
}

/// A saturation-from-tension request at `po2_mmhg` and pH `ph`.
pub fn saturation_request(po2_mmhg: f64, ph: f64) -> SaturationFromTensionRequest {
    SaturationFromTensionRequest {
        po2: q(po2_mmhg, "mm[Hg]"),
        conditions: Some(BloodConditions {
            ph: Some(ph),
            ..Default::default()
        }),
        ..Default::default()
    }
}
