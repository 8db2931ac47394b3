//! Test harness: start a real Oxbind server in-process on `127.0.0.1:0`, talk
//! to it through the client crate, and stop it with a oneshot.

use std::net::SocketAddr;

use oxbind_service::Config;
use tokio::{net::TcpListener, sync::oneshot, task::JoinHandle};
use tonic::transport::Channel;

/// A server running in this process on an ephemeral port.
pub struct TestServer {
    address: SocketAddr,
    stop: Option<oneshot::Sender<()>>,
    task: Option<JoinHandle<Result<(), oxbind_service::ServeError>>>,
}

impl TestServer {
    /// Start a server with the default configuration.
    pub async fn start() -> Self {
        Self::start_with(Config::default()).await
    }

    /// Start a server with `config` (its listen address is ignored: the
    /// server binds `127.0.0.1:0`).
    pub async fn start_with(config: Config) -> Self {
        let listener = TcpListener::bind("127.0.0.1:0")
            .await
            .expect("bind an ephemeral port");
        let address = listener.local_addr().expect("local address");
        let (stop, stopped) = oneshot::channel::<()>();
        let task = tokio::spawn(oxbind_service::serve(listener, config, async move {
            let _ = stopped.await;
        }));
        Self {
            address,
            stop: Some(stop),
            task: Some(task),
        }
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
