//! The server under attack: a real `oxbind-server` process on loopback port
//! 0, its JSON log lines, and what `/proc` says about it (resident memory,
//! open file descriptors).

use std::{
    io::{BufRead, BufReader},
    net::SocketAddr,
    path::{Path, PathBuf},
    process::{Child, Command, ExitStatus, Stdio},
    sync::{Arc, Mutex},
    time::{Duration, Instant},
};

use serde::Serialize;

/// Log lines kept per server; past it the oldest are not dropped but new
/// ones are (a run that logs more has gone wrong anyway).
const MAX_KEPT_LOG_LINES: usize = 200_000;

/// Longest a server may take to say it is serving.
const START_TIMEOUT: Duration = Duration::from_secs(30);

/// The `oxbind-server` binary to attack: `OXBIND_SERVER_BIN` if set, else
/// the one cargo built beside the running executable (`target/<profile>/`).
pub fn server_binary() -> PathBuf {
    if let Some(path) = std::env::var_os("OXBIND_SERVER_BIN") {
        return PathBuf::from(path);
    }
    let exe = std::env::current_exe().expect("the running executable has a path");
    // target/<profile>/deps/<test> or target/<profile>/<bin>
    let mut dir = exe.parent().expect("a directory").to_path_buf();
    if dir.ends_with("deps") {
        dir.pop();
    }
    let path = dir.join("oxbind-server");
    assert!(
        path.exists(),
        "{} is missing: build it first (`cargo build -p oxbind-service --bin oxbind-server`) \
         or set OXBIND_SERVER_BIN",
        path.display()
    );
    path
}

/// Raise this process's soft open-file limit to its hard limit: an attack
/// holds many sockets.
pub fn raise_open_file_limit() {
    use nix::sys::resource::{getrlimit, setrlimit, Resource};
    if let Ok((soft, hard)) = getrlimit(Resource::RLIMIT_NOFILE) {
        if soft < hard {
            let _ = setrlimit(Resource::RLIMIT_NOFILE, hard, hard);
        }
    }
}

/// A free port on loopback, found by binding port 0 and letting it go (for
/// replicas that must share one port on several loopback addresses).
pub fn free_port() -> u16 {
    std::net::TcpListener::bind("127.0.0.1:0")
        .and_then(|l| l.local_addr())
        .map(|a| a.port())
        .expect("a free port")
}

/// Resident memory of a process, from `/proc/PID/status`.
#[derive(Debug, Clone, Copy, Default, Serialize, PartialEq)]
pub struct Memory {
    /// `VmRSS`: resident now, MiB.
    pub rss_mib: f64,
    /// `VmHWM`: the peak resident since the process started, MiB.
    pub peak_rss_mib: f64,
}

/// How to start a server.
#[derive(Debug, Clone, Default)]
pub struct ServerOptions {
    /// Extra command-line arguments (settings under test).
    pub args: Vec<String>,
    /// Also serve health on a plaintext listener on port 0.
    pub health_listener: bool,
    /// Start it under this open-file limit (`ulimit -n`, via `sh`).
    pub open_file_limit: Option<u64>,
    /// Listen address (default `127.0.0.1:0`).
    pub listen: Option<String>,
    /// Log filter (default `info`).
    pub log_filter: Option<String>,
}

impl ServerOptions {
    /// Options with these extra arguments.
    pub fn with_args<I, S>(args: I) -> Self
    where
        I: IntoIterator<Item = S>,
        S: Into<String>,
    {
        Self {
            args: args.into_iter().map(Into::into).collect(),
            ..Self::default()
        }
    }

    /// Also serve health on its own plaintext listener.
    pub fn health_listener(mut self) -> Self {
        self.health_listener = true;
        self
    }

    /// Start under this open-file limit.
    pub fn open_file_limit(mut self, limit: u64) -> Self {
        self.open_file_limit = Some(limit);
        self
    }

    /// Listen on `address` instead of `127.0.0.1:0`.
    pub fn listen(mut self, address: impl Into<String>) -> Self {
        self.listen = Some(address.into());
        self
    }

    /// Log with `filter` instead of `info`.
    pub fn log_filter(mut self, filter: impl Into<String>) -> Self {
        self.log_filter = Some(filter.into());
        self
    }
}

/// A running `oxbind-server`; killed when dropped.
pub struct ServerProcess {
    child: Child,
    /// The main listener.
    pub address: SocketAddr,
    /// The plaintext health listener, when asked for.
    pub health_address: Option<SocketAddr>,
    logs: Arc<Mutex<Vec<serde_json::Value>>>,
}

impl ServerProcess {
    /// Start `binary` on `127.0.0.1:0` with JSON logs at info and `options`,
    /// and wait until it says it is serving.
    pub fn start(binary: &Path, options: &ServerOptions) -> Self {
        let mut args: Vec<String> = vec![
            "--listen".into(),
            options
                .listen
                .clone()
                .unwrap_or_else(|| "127.0.0.1:0".into()),
            "--log-format".into(),
            "json".into(),
            "--log-filter".into(),
            options.log_filter.clone().unwrap_or_else(|| "info".into()),
        ];
        if options.health_listener {
            args.extend(["--health-listen".into(), "127.0.0.1:0".into()]);
        }
        args.extend(options.args.iter().cloned());
        let mut command = match options.open_file_limit {
            Some(limit) => {
                let mut sh = Command::new("sh");
                sh.arg("-c")
                    .arg(format!("ulimit -n {limit} && exec \"$0\" \"$@\""))
                    .arg(binary)
                    .args(&args);
                sh
            }
            None => {
                let mut direct = Command::new(binary);
                direct.args(&args);
                direct
            }
        };
        for (name, _) in std::env::vars_os() {
            if name.to_string_lossy().starts_with("OXBIND_")
                || name.to_string_lossy().starts_with("OTEL_")
            {
                command.env_remove(&name);
            }
        }
        let mut child = command
            .env("OTEL_SDK_DISABLED", "true")
            .stdout(Stdio::null())
            .stderr(Stdio::piped())
            .spawn()
            .unwrap_or_else(|e| panic!("cannot start {}: {e}", binary.display()));
        let stderr = child.stderr.take().expect("stderr is piped");
        let logs = Arc::new(Mutex::new(Vec::new()));
        let (tx, rx) = std::sync::mpsc::channel::<(String, SocketAddr)>();
        let kept = logs.clone();
        std::thread::spawn(move || {
            for line in BufReader::new(stderr).lines() {
                let Ok(line) = line else { break };
                let Ok(event) = serde_json::from_str::<serde_json::Value>(&line) else {
                    continue;
                };
                if let (Some(message), Some(address)) =
                    (event["message"].as_str(), event["address"].as_str())
                {
                    if let Ok(address) = address.parse() {
                        let _ = tx.send((message.to_owned(), address));
                    }
                }
                let mut kept = kept.lock().expect("log lock");
                if kept.len() < MAX_KEPT_LOG_LINES {
                    kept.push(event);
                }
            }
        });
        let deadline = Instant::now() + START_TIMEOUT;
        let (mut address, mut health_address) = (None, None);
        while address.is_none() || (options.health_listener && health_address.is_none()) {
            let left = deadline.saturating_duration_since(Instant::now());
            match rx.recv_timeout(left) {
                Ok((message, at)) if message == "serving" => address = Some(at),
                Ok((message, at)) if message == "serving health" => health_address = Some(at),
                Ok(_) => {}
                Err(_) => {
                    let _ = child.kill();
                    panic!(
                        "{} did not report serving within {START_TIMEOUT:?}; logs: {:?}",
                        binary.display(),
                        logs.lock().unwrap()
                    );
                }
            }
        }
        Self {
            child,
            address: address.expect("serving"),
            health_address,
            logs,
        }
    }

    /// `http://` URI of the main listener.
    pub fn uri(&self) -> String {
        format!("http://{}", self.address)
    }

    /// `http://` URI of the health listener, or the main one.
    pub fn health_uri(&self) -> String {
        format!("http://{}", self.health_address.unwrap_or(self.address))
    }

    /// The server's process id.
    pub fn pid(&self) -> u32 {
        self.child.id()
    }

    /// Resident memory now and at its peak.
    pub fn memory(&self) -> Memory {
        let status =
            std::fs::read_to_string(format!("/proc/{}/status", self.pid())).unwrap_or_default();
        let kib = |key: &str| {
            status
                .lines()
                .find(|l| l.starts_with(key))
                .and_then(|l| l.split_whitespace().nth(1))
                .and_then(|v| v.parse::<f64>().ok())
                .unwrap_or(0.0)
        };
        Memory {
            rss_mib: kib("VmRSS:") / 1024.0,
            peak_rss_mib: kib("VmHWM:") / 1024.0,
        }
    }

    /// Open file descriptors of the server (sockets included).
    pub fn open_fds(&self) -> usize {
        std::fs::read_dir(format!("/proc/{}/fd", self.pid()))
            .map(|d| d.count())
            .unwrap_or(0)
    }

    /// Every JSON log line so far.
    pub fn logs(&self) -> Vec<serde_json::Value> {
        self.logs.lock().expect("log lock").clone()
    }

    /// The access-log lines (`"message":"call"`) so far.
    pub fn call_lines(&self) -> Vec<serde_json::Value> {
        self.logs()
            .into_iter()
            .filter(|l| l["message"] == "call")
            .collect()
    }

    /// Send SIGTERM.
    pub fn terminate(&self) {
        use nix::{
            sys::signal::{kill, Signal},
            unistd::Pid,
        };
        let _ = kill(Pid::from_raw(self.pid() as i32), Signal::SIGTERM);
    }

    /// Wait up to `limit` for the process to exit.
    pub fn wait_exit(&mut self, limit: Duration) -> Option<ExitStatus> {
        let deadline = Instant::now() + limit;
        loop {
            if let Ok(Some(status)) = self.child.try_wait() {
                return Some(status);
            }
            if Instant::now() >= deadline {
                return None;
            }
            std::thread::sleep(Duration::from_millis(5));
        }
    }
}

impl Drop for ServerProcess {
    fn drop(&mut self) {
        let _ = self.child.kill();
        let _ = self.child.wait();
    }
}
