//! The one test server of the client crate's command-line tests: a real
//! Oxbind server on `127.0.0.1:0`, running on its own runtime thread so the
//! blocking command runs (`assert_cmd`) can talk to it, stopped on drop.

#![allow(dead_code, unreachable_pub)]

use assert_cmd::Command;
use tokio::sync::oneshot;

/// A server running in this process on an ephemeral port.
pub struct Server {
    /// The `http://` address of the server.
    pub uri: String,
    stop: Option<oneshot::Sender<()>>,
    thread: Option<std::thread::JoinHandle<()>>,
}

impl Server {
    /// Start a server with the default configuration.
    pub fn start() -> Self {
        let (ready_tx, ready_rx) = std::sync::mpsc::channel();
        let (stop, stopped) = oneshot::channel::<()>();
        let thread = std::thread::spawn(move || {
            let runtime = tokio::runtime::Builder::new_multi_thread()
                .worker_threads(2)
                .enable_all()
                .build()
                .unwrap();
            runtime.block_on(async move {
                let listener = tokio::net::TcpListener::bind("127.0.0.1:0").await.unwrap();
                ready_tx
                    .send(format!("http://{}", listener.local_addr().unwrap()))
                    .unwrap();
                oxbind_service::serve(listener, oxbind_service::Config::default(), async move {
                    let _ = stopped.await;
                })
                .await
                .unwrap();
            });
        });
        Self {
            uri: ready_rx.recv().unwrap(),
            stop: Some(stop),
            thread: Some(thread),
        }
    }

    /// `oxbind` pointed at this server.
    pub fn oxbind(&self) -> Command {
        let mut cmd = oxbind();
        cmd.env("OXBIND_SERVER", &self.uri);
        cmd
    }

    /// `oxbind-load` pointed at this server.
    pub fn oxbind_load(&self) -> Command {
        let mut cmd = Command::cargo_bin("oxbind-load").unwrap();
        cmd.env("OXBIND_SERVER", &self.uri);
        cmd
    }
}

impl Drop for Server {
    fn drop(&mut self) {
        if let Some(stop) = self.stop.take() {
            let _ = stop.send(());
        }
        if let Some(thread) = self.thread.take() {
            let _ = thread.join();
        }
    }
}

/// `oxbind` with no server set in the environment.
pub fn oxbind() -> Command {
    let mut cmd = Command::cargo_bin("oxbind").unwrap();
    for variable in [
        "OXBIND_SERVER",
        "OXBIND_CA_CERT",
        "OXBIND_CLIENT_CERT",
        "OXBIND_CLIENT_KEY",
    ] {
        cmd.env_remove(variable);
    }
    cmd
}

/// An address where nothing listens.
pub fn closed_address() -> String {
    let listener = std::net::TcpListener::bind("127.0.0.1:0").unwrap();
    format!("http://127.0.0.1:{}", listener.local_addr().unwrap().port())
}

/// Standard output of a successful run.
pub fn stdout_of(cmd: &mut Command) -> String {
    let output = cmd.output().unwrap();
    assert!(
        output.status.success(),
        "exit {:?}: {}",
        output.status.code(),
        String::from_utf8_lossy(&output.stderr)
    );
    String::from_utf8(output.stdout).unwrap()
}

/// Standard output of a successful run, as JSON.
pub fn json_of(cmd: &mut Command) -> serde_json::Value {
    serde_json::from_str(&stdout_of(cmd)).expect("stdout is JSON")
}

/// Exit status and standard error of a run.
pub fn failure_of(cmd: &mut Command) -> (Option<i32>, String) {
    let output = cmd.output().unwrap();
    (
        output.status.code(),
        String::from_utf8_lossy(&output.stderr).into_owned(),
    )
}

/// The rows of a CSV text, with a lookup by column name.
pub struct Csv {
    /// The header.
    pub headers: Vec<String>,
    /// The data rows.
    pub rows: Vec<Vec<String>>,
}

impl Csv {
    /// Parse CSV text.
    pub fn parse(text: &str) -> Self {
        let mut reader = csv::Reader::from_reader(text.as_bytes());
        let headers = reader
            .headers()
            .unwrap()
            .iter()
            .map(str::to_owned)
            .collect();
        let rows = reader
            .records()
            .map(|r| r.unwrap().iter().map(str::to_owned).collect())
            .collect();
        Self { headers, rows }
    }

    /// Cell `column` of row `row` (0-based).
    pub fn cell(&self, row: usize, column: &str) -> &str {
        let index = self
            .headers
            .iter()
            .position(|h| h == column)
            .unwrap_or_else(|| panic!("no column {column} in {:?}", self.headers));
        &self.rows[row][index]
    }

    /// Cell `column` of row `row` as a number.
    pub fn number(&self, row: usize, column: &str) -> f64 {
        let text = self.cell(row, column);
        text.parse()
            .unwrap_or_else(|_| panic!("row {row} {column} = {text:?}: {:?}", self.rows[row]))
    }
}
