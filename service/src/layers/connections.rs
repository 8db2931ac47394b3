//! Connection handling for a listener: what a connection may hold and for
//! how long, before any request is looked at.
//!
//! - **A cap on open connections** ([`ListenerSettings::max_connections`]):
//!   past it, new connections wait in the kernel's accept queue.
//! - **TLS with a handshake deadline**: a client that sends no TLS hello (or
//!   never finishes the handshake) is closed after
//!   [`ListenerSettings::tls_handshake_timeout`].
//! - **A preface deadline**: a client that does not send the HTTP/2
//!   connection preface (or, where HTTP/1.1 is spoken, a first request) within
//!   [`ListenerSettings::preface_timeout`] is closed.
//! - **An idle timeout**: a connection with no call in progress for
//!   [`ListenerSettings::idle_timeout`] gets a graceful GOAWAY; keepalive
//!   pings keep a connection alive at the TCP level but do not make it busy.
//! - **A maximum age**: after [`ListenerSettings::max_connection_age`] (give
//!   or take a tenth) a graceful GOAWAY, then
//!   [`ListenerSettings::max_connection_age_grace`] for the calls in
//!   progress, then the connection is closed. Clients reconnect, so
//!   long-lived gRPC connections spread over replicas as they come and go.
//! - **Stuck answers**: a call still open [`STUCK_CALL_MARGIN`] after the
//!   time it must end by ([`CallClock`], set by the layers that know it: the
//!   call's deadline, or a stream's idle deadline) has an answer that is not
//!   moving, because its client stopped reading and HTTP/2 flow control
//!   holds it; nothing else would end it, so its connection is closed.
//! - **The drain**: when the server stops, every connection gets a GOAWAY;
//!   the caller bounds the wait by dropping the future [`serve`] returns.
//!
//! Each connection's calls see its [`ConnectionHandle`] in their request
//! extensions (the admission layer uses it for each connection's fair share
//! of call slots). The per-request service is any tower service over
//! `http::Request<tonic::body::Body>`: this module knows nothing of gRPC.
//!
//! Each accepted socket gets TCP_NODELAY (small gRPC calls would otherwise
//! stall on Nagle's algorithm and delayed ACKs, about 40 ms each).

use std::{
    convert::Infallible,
    future::Future,
    io,
    net::SocketAddr,
    pin::Pin,
    sync::{
        atomic::{AtomicU64, AtomicUsize, Ordering},
        Arc,
    },
    task::{Context, Poll},
    time::Duration,
};

use http::{Request, Response};
use hyper_util::{
    rt::{TokioExecutor, TokioIo, TokioTimer},
    server::conn::auto,
    service::TowerToHyperService,
};
use pin_project_lite::pin_project;
use tokio::{
    io::{AsyncRead, AsyncWrite, ReadBuf},
    net::{TcpListener, TcpStream},
    sync::{watch, OwnedSemaphorePermit, Semaphore},
    task::JoinSet,
    time::{sleep, Instant, Sleep},
};
use tokio_rustls::TlsAcceptor;
use tokio_util::either::Either;
use tonic::body::Body;
use tower::Service;

use super::body::Holding;
use crate::instruments;

/// Pause after a failed `accept` (for example out of file descriptors) before
/// trying again, so the loop never spins.
const ACCEPT_ERROR_BACKOFF: Duration = Duration::from_millis(50);

/// Length of the HTTP/2 connection preface (`PRI * HTTP/2.0\r\n\r\nSM\r\n\r\n`,
/// RFC 9113 section 3.4).
const HTTP2_PREFACE_BYTES: u64 = 24;

/// Largest header block a request may send, in bytes (the 8 KiB that the gRPC
/// over HTTP/2 protocol suggests for metadata). Bounds what a stream that is
/// still waiting for its message can hold.
pub const MAX_HEADER_LIST_BYTES: u32 = 8 * 1024;

/// How long past the time it must end by a call may still be open before its
/// connection is closed as stuck.
pub const STUCK_CALL_MARGIN: Duration = Duration::from_secs(1);

/// How often a connection with calls open checks them for one that is
/// stuck.
const STUCK_CALL_CHECK: Duration = Duration::from_secs(1);

/// Spread of the maximum connection age: each connection's age is drawn
/// from the setting plus or minus this fraction of it, as gRPC's own servers
/// do, so that connections opened together do not all close together.
const MAX_AGE_JITTER: f64 = 0.1;

/// How a listener treats its connections.
#[derive(Clone)]
pub struct ListenerSettings {
    /// What the listener is called in log lines and metrics (`main`, `health`).
    pub name: &'static str,
    /// Open connections at most; more wait in the accept queue.
    pub max_connections: usize,
    /// TLS (`None`: plaintext).
    pub tls: Option<TlsAcceptor>,
    /// Time to finish the TLS handshake.
    pub tls_handshake_timeout: Duration,
    /// Time to send the HTTP/2 preface (or a first HTTP/1.1 request).
    pub preface_timeout: Duration,
    /// Time with no call in progress before a GOAWAY.
    pub idle_timeout: Duration,
    /// Longest life of a connection before a GOAWAY.
    pub max_connection_age: Duration,
    /// Time calls get after a maximum-age or idle GOAWAY before the
    /// connection is closed.
    pub max_connection_age_grace: Duration,
    /// Whether HTTP/1.1 is spoken beside HTTP/2 (see
    /// [`super::protocol::MAIN_ACCEPTS_HTTP1`]).
    pub accept_http1: bool,
    /// Concurrent HTTP/2 streams per connection.
    pub max_concurrent_streams: u32,
    /// HTTP/2 keepalive ping interval.
    pub keepalive_interval: Duration,
    /// Time a keepalive ping may go unanswered.
    pub keepalive_timeout: Duration,
}

impl std::fmt::Debug for ListenerSettings {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("ListenerSettings")
            .field("name", &self.name)
            .field("max_connections", &self.max_connections)
            .field("tls", &self.tls.is_some())
            .finish_non_exhaustive()
    }
}

/// File descriptors kept free beyond the connection caps: the listeners,
/// the runtime's own, standard streams, telemetry export, certificates read.
pub const FILE_DESCRIPTOR_RESERVE: u64 = 64;

/// Make room for the connection caps in the process's open-file limit:
/// raise the soft limit towards the hard one if it is short of
/// `connections` plus [`FILE_DESCRIPTOR_RESERVE`], and refuse if even the
/// hard limit is. Returns the soft limit in force.
///
/// Without this, connections held open on one listener could use up the
/// descriptors and leave the other unable to accept.
///
/// # Errors
///
/// A message naming the limit and the caps, when they cannot fit.
pub fn ensure_open_file_limit(connections: u64) -> Result<u64, String> {
    use nix::sys::resource::{getrlimit, setrlimit, Resource};
    let needed = connections + FILE_DESCRIPTOR_RESERVE;
    let (soft, hard) = getrlimit(Resource::RLIMIT_NOFILE)
        .map_err(|e| format!("cannot read the open-file limit: {e}"))?;
    if soft >= needed {
        return Ok(soft);
    }
    if hard < needed {
        return Err(format!(
            "the open-file limit ({hard}) is below the {needed} descriptors that \
             --max-connections and --max-health-connections need (plus {FILE_DESCRIPTOR_RESERVE} \
             for the server itself): raise `ulimit -n` or lower the caps"
        ));
    }
    setrlimit(Resource::RLIMIT_NOFILE, hard, hard)
        .map_err(|e| format!("cannot raise the open-file limit to {hard}: {e}"))?;
    Ok(hard)
}

/// What the server knows of one connection, shared by its task and its
/// calls.
#[derive(Debug)]
pub struct ConnectionState {
    opened: Instant,
    /// Bytes read from the client (after TLS), counted until the preface is in.
    bytes_read: AtomicU64,
    /// Requests received in all.
    requests: AtomicU64,
    /// Requests whose response has not ended.
    calls_open: AtomicUsize,
    /// When the last call ended, in ms since `opened`.
    last_call_end_ms: AtomicU64,
    /// Call slots this connection holds (kept by the admission layer).
    pub(crate) slots_held: AtomicUsize,
    /// The clocks of the calls in progress, by call number.
    clocks: std::sync::Mutex<Vec<(u64, CallClock)>>,
}

/// The time a call must end by, in its request's extensions for the layers
/// that know it (the call layer sets the call's deadline; the streaming
/// layer moves a stream's idle deadline on with each message). Until one is
/// set, the call has none.
#[derive(Debug, Clone)]
pub struct CallClock(Arc<ClockInner>);

#[derive(Debug)]
struct ClockInner {
    base: Instant,
    must_end_ms: AtomicU64,
}

impl CallClock {
    fn new(base: Instant) -> Self {
        Self(Arc::new(ClockInner {
            base,
            must_end_ms: AtomicU64::new(u64::MAX),
        }))
    }

    /// The call must end by `at`.
    pub fn must_end_by(&self, at: Instant) {
        let ms = at.saturating_duration_since(self.0.base).as_millis() as u64;
        self.0.must_end_ms.store(ms, Ordering::Relaxed);
    }

    /// Whether the call is still open [`STUCK_CALL_MARGIN`] past its time.
    fn overdue(&self, now: Instant) -> bool {
        let due = self.0.must_end_ms.load(Ordering::Relaxed);
        due != u64::MAX
            && now.saturating_duration_since(self.0.base)
                > Duration::from_millis(due) + STUCK_CALL_MARGIN
    }
}

impl ConnectionState {
    fn new() -> Self {
        Self {
            opened: Instant::now(),
            bytes_read: AtomicU64::new(0),
            requests: AtomicU64::new(0),
            calls_open: AtomicUsize::new(0),
            last_call_end_ms: AtomicU64::new(0),
            slots_held: AtomicUsize::new(0),
            clocks: std::sync::Mutex::new(Vec::new()),
        }
    }

    /// A state for a request that came through no connection loop (tests of
    /// a layer on its own).
    pub fn detached() -> Arc<Self> {
        Arc::new(Self::new())
    }

    /// Whether the client has sent its preface (or already a request).
    fn preface_received(&self) -> bool {
        self.bytes_read.load(Ordering::Relaxed) >= HTTP2_PREFACE_BYTES
            || self.requests.load(Ordering::Relaxed) > 0
    }

    /// Since when the connection has had no call in progress, or `None` if a
    /// call is in progress.
    fn idle_since(&self) -> Option<Instant> {
        if self.calls_open.load(Ordering::Acquire) > 0 {
            return None;
        }
        let ms = self.last_call_end_ms.load(Ordering::Acquire);
        Some(self.opened + Duration::from_millis(ms))
    }

    fn call_started(&self) -> (u64, CallClock) {
        let number = self.requests.fetch_add(1, Ordering::Relaxed);
        self.calls_open.fetch_add(1, Ordering::AcqRel);
        let clock = CallClock::new(self.opened);
        self.clocks
            .lock()
            .expect("clock list")
            .push((number, clock.clone()));
        (number, clock)
    }

    fn call_ended(&self, number: u64) {
        let ms = self.opened.elapsed().as_millis() as u64;
        self.last_call_end_ms.fetch_max(ms, Ordering::AcqRel);
        self.calls_open.fetch_sub(1, Ordering::AcqRel);
        let mut clocks = self.clocks.lock().expect("clock list");
        if let Some(index) = clocks.iter().position(|(n, _)| *n == number) {
            clocks.swap_remove(index);
        }
    }

    /// Whether a call in progress is stuck past its time.
    fn has_stuck_call(&self) -> bool {
        self.has_stuck_call_at(Instant::now())
    }

    /// Whether a call in progress is stuck past its time at `now`.
    fn has_stuck_call_at(&self, now: Instant) -> bool {
        self.clocks
            .lock()
            .expect("clock list")
            .iter()
            .any(|(_, clock)| clock.overdue(now))
    }
}

/// The connection a request came on, in its extensions.
#[derive(Debug, Clone)]
pub struct ConnectionHandle(pub Arc<ConnectionState>);

/// Serve `service` on every connection `listener` accepts until `stop`
/// completes; then stop accepting, send every connection a GOAWAY and wait
/// for them to close. Drop the returned future to close the remaining ones
/// (the drain's bound is the caller's).
pub async fn serve<S, F>(listener: TcpListener, settings: ListenerSettings, service: S, stop: F)
where
    S: Service<Request<Body>, Response = Response<Body>, Error = Infallible>
        + Clone
        + Send
        + 'static,
    S::Future: Send + 'static,
    F: Future<Output = ()>,
{
    let settings = Arc::new(settings);
    let http = Arc::new(http_builder(&settings));
    let permits = Arc::new(Semaphore::new(settings.max_connections));
    let (drain_tx, drain_rx) = watch::channel(false);
    let mut connections = JoinSet::new();
    tokio::pin!(stop);
    loop {
        while connections.try_join_next().is_some() {}
        let permit = tokio::select! {
            () = &mut stop => break,
            permit = permits.clone().acquire_owned() => match permit {
                Ok(permit) => permit,
                Err(_) => break,
            },
        };
        let (tcp, peer) = tokio::select! {
            () = &mut stop => break,
            accepted = listener.accept() => match accepted {
                Ok(accepted) => accepted,
                Err(error) => {
                    tracing::warn!(listener = settings.name, %error, "accept failed; retrying");
                    sleep(ACCEPT_ERROR_BACKOFF).await;
                    continue;
                }
            },
        };
        let _ = tcp.set_nodelay(true);
        connections.spawn(serve_connection(
            tcp,
            peer,
            permit,
            settings.clone(),
            http.clone(),
            service.clone(),
            drain_rx.clone(),
        ));
    }
    // Close the listening socket at once, so new clients are refused rather
    // than left waiting in the accept queue.
    drop(listener);
    let _ = drain_tx.send(true);
    while connections.join_next().await.is_some() {}
}

/// The HTTP server settings every connection of a listener shares.
fn http_builder(settings: &ListenerSettings) -> auto::Builder<TokioExecutor> {
    let mut builder = auto::Builder::new(TokioExecutor::new());
    if !settings.accept_http1 {
        builder = builder.http2_only();
    }
    builder
        .http2()
        .timer(TokioTimer::new())
        .max_concurrent_streams(settings.max_concurrent_streams)
        .max_header_list_size(MAX_HEADER_LIST_BYTES)
        .keep_alive_interval(settings.keepalive_interval)
        .keep_alive_timeout(settings.keepalive_timeout);
    builder
        .http1()
        .timer(TokioTimer::new())
        .header_read_timeout(settings.preface_timeout)
        .max_buf_size(MAX_HEADER_LIST_BYTES as usize * 2);
    builder
}

/// Why the server closed a connection, for the metric and the debug log.
#[derive(Debug, Clone, Copy)]
enum CloseReason {
    TlsHandshakeTimeout,
    TlsHandshakeFailed,
    PrefaceTimeout,
    StuckCall,
    Idle,
    MaxAge,
    GraceOver,
}

impl CloseReason {
    fn name(self) -> &'static str {
        match self {
            CloseReason::TlsHandshakeTimeout => "tls_handshake_timeout",
            CloseReason::TlsHandshakeFailed => "tls_handshake_failed",
            CloseReason::PrefaceTimeout => "preface_timeout",
            CloseReason::StuckCall => "stuck_call",
            CloseReason::Idle => "idle",
            CloseReason::MaxAge => "max_age",
            CloseReason::GraceOver => "grace_over",
        }
    }
}

fn record_close(settings: &ListenerSettings, peer: SocketAddr, reason: CloseReason) {
    tracing::debug!(listener = settings.name, %peer, reason = reason.name(), "closing connection");
    instruments::record_connection_closed(settings.name, reason.name());
}

/// One connection from accept to close; holds `_permit` (one of the
/// listener's connection slots) throughout.
async fn serve_connection<S>(
    tcp: TcpStream,
    peer: SocketAddr,
    _permit: OwnedSemaphorePermit,
    settings: Arc<ListenerSettings>,
    http: Arc<auto::Builder<TokioExecutor>>,
    service: S,
    mut drain: watch::Receiver<bool>,
) where
    S: Service<Request<Body>, Response = Response<Body>, Error = Infallible>
        + Clone
        + Send
        + 'static,
    S::Future: Send + 'static,
{
    let io = match &settings.tls {
        None => Either::Right(tcp),
        Some(acceptor) => {
            let handshake =
                tokio::time::timeout(settings.tls_handshake_timeout, acceptor.accept(tcp));
            let outcome = tokio::select! {
                outcome = handshake => outcome,
                _ = drain.wait_for(|draining| *draining) => return,
            };
            match outcome {
                Ok(Ok(tls)) => Either::Left(tls),
                Ok(Err(error)) => {
                    tracing::debug!(listener = settings.name, %peer, %error, "TLS handshake failed");
                    record_close(&settings, peer, CloseReason::TlsHandshakeFailed);
                    return;
                }
                Err(_) => {
                    record_close(&settings, peer, CloseReason::TlsHandshakeTimeout);
                    return;
                }
            }
        }
    };
    let state = Arc::new(ConnectionState::new());
    let io = CountingIo {
        inner: io,
        state: state.clone(),
    };
    let service = TowerToHyperService::new(PerConnection {
        inner: service,
        state: state.clone(),
    });
    let connection = http.serve_connection(TokioIo::new(io), service);
    tokio::pin!(connection);

    let preface = sleep(settings.preface_timeout);
    tokio::pin!(preface);
    let mut preface_pending = true;
    let idle = sleep(settings.idle_timeout);
    tokio::pin!(idle);
    let age = sleep(jittered(settings.max_connection_age));
    tokio::pin!(age);
    let mut stuck_check = tokio::time::interval(STUCK_CALL_CHECK);
    stuck_check.set_missed_tick_behavior(tokio::time::MissedTickBehavior::Delay);
    // Set once a GOAWAY has been sent: when the connection is closed anyway.
    let mut close_at: Option<Pin<Box<Sleep>>> = None;
    let mut goaway_sent = false;
    let mut draining = *drain.borrow();
    if draining {
        return;
    }

    loop {
        tokio::select! {
            result = connection.as_mut() => {
                if let Err(error) = result {
                    tracing::debug!(listener = settings.name, %peer, %error, "connection ended with an error");
                }
                break;
            }
            () = &mut preface, if preface_pending => {
                preface_pending = false;
                if !state.preface_received() {
                    record_close(&settings, peer, CloseReason::PrefaceTimeout);
                    break;
                }
            }
            () = &mut idle, if !goaway_sent => match state.idle_since() {
                Some(since) if since.elapsed() >= settings.idle_timeout => {
                    record_close(&settings, peer, CloseReason::Idle);
                    connection.as_mut().graceful_shutdown();
                    goaway_sent = true;
                    close_at = Some(Box::pin(sleep(settings.max_connection_age_grace)));
                }
                Some(since) => idle.as_mut().reset(since + settings.idle_timeout),
                None => idle.as_mut().reset(Instant::now() + settings.idle_timeout),
            },
            () = &mut age, if !goaway_sent => {
                record_close(&settings, peer, CloseReason::MaxAge);
                connection.as_mut().graceful_shutdown();
                goaway_sent = true;
                close_at = Some(Box::pin(sleep(settings.max_connection_age_grace)));
            }
            _ = stuck_check.tick() => {
                if state.has_stuck_call() {
                    record_close(&settings, peer, CloseReason::StuckCall);
                    break;
                }
            }
            () = async { close_at.as_mut().expect("guarded").await }, if close_at.is_some() => {
                record_close(&settings, peer, CloseReason::GraceOver);
                break;
            }
            _ = drain.wait_for(|draining| *draining), if !draining => {
                draining = true;
                if !goaway_sent {
                    connection.as_mut().graceful_shutdown();
                    goaway_sent = true;
                }
            }
        }
    }
}

/// `age` give or take [`MAX_AGE_JITTER`] of it.
fn jittered(age: Duration) -> Duration {
    let factor = 1.0 + MAX_AGE_JITTER * (2.0 * fastrand::f64() - 1.0);
    age.mul_f64(factor)
}

/// The per-request service of one connection: converts hyper's body, puts
/// the [`ConnectionHandle`] in the extensions and counts the calls in
/// progress (for the idle timeout).
#[derive(Clone)]
struct PerConnection<S> {
    inner: S,
    state: Arc<ConnectionState>,
}

impl<S> Service<Request<hyper::body::Incoming>> for PerConnection<S>
where
    S: Service<Request<Body>, Response = Response<Body>, Error = Infallible>
        + Clone
        + Send
        + 'static,
    S::Future: Send + 'static,
{
    type Response = Response<Body>;
    type Error = Infallible;
    type Future = Pin<Box<dyn Future<Output = Result<Response<Body>, Infallible>> + Send>>;

    fn poll_ready(&mut self, cx: &mut Context<'_>) -> Poll<Result<(), Self::Error>> {
        self.inner.poll_ready(cx)
    }

    fn call(&mut self, request: Request<hyper::body::Incoming>) -> Self::Future {
        let guard = CallGuard::new(self.state.clone());
        let mut request = request.map(Body::new);
        let extensions = request.extensions_mut();
        extensions.insert(ConnectionHandle(self.state.clone()));
        extensions.insert(guard.clock.clone());
        let clone = self.inner.clone();
        let mut inner = std::mem::replace(&mut self.inner, clone);
        Box::pin(async move {
            let response = inner.call(request).await?;
            Ok(response.map(|body| Body::new(Holding::new(body, guard))))
        })
    }
}

/// Counts one call in progress on a connection until dropped.
struct CallGuard {
    state: Arc<ConnectionState>,
    number: u64,
    clock: CallClock,
}

impl CallGuard {
    fn new(state: Arc<ConnectionState>) -> Self {
        let (number, clock) = state.call_started();
        Self {
            state,
            number,
            clock,
        }
    }
}

impl Drop for CallGuard {
    fn drop(&mut self) {
        self.state.call_ended(self.number);
    }
}

pin_project! {
    /// The connection's byte stream (after TLS), counting what the client
    /// sends until the preface is in.
    struct CountingIo<T> {
        #[pin]
        inner: T,
        state: Arc<ConnectionState>,
    }
}

impl<T: AsyncRead> AsyncRead for CountingIo<T> {
    fn poll_read(
        self: Pin<&mut Self>,
        cx: &mut Context<'_>,
        buf: &mut ReadBuf<'_>,
    ) -> Poll<io::Result<()>> {
        let this = self.project();
        let before = buf.filled().len();
        let result = this.inner.poll_read(cx, buf);
        let read = (buf.filled().len() - before) as u64;
        if read > 0 && this.state.bytes_read.load(Ordering::Relaxed) < HTTP2_PREFACE_BYTES {
            this.state.bytes_read.fetch_add(read, Ordering::Relaxed);
        }
        result
    }
}

impl<T: AsyncWrite> AsyncWrite for CountingIo<T> {
    fn poll_write(
        self: Pin<&mut Self>,
        cx: &mut Context<'_>,
        buf: &[u8],
    ) -> Poll<io::Result<usize>> {
        self.project().inner.poll_write(cx, buf)
    }

    fn poll_flush(self: Pin<&mut Self>, cx: &mut Context<'_>) -> Poll<io::Result<()>> {
        self.project().inner.poll_flush(cx)
    }

    fn poll_shutdown(self: Pin<&mut Self>, cx: &mut Context<'_>) -> Poll<io::Result<()>> {
        self.project().inner.poll_shutdown(cx)
    }

    fn poll_write_vectored(
        self: Pin<&mut Self>,
        cx: &mut Context<'_>,
        bufs: &[io::IoSlice<'_>],
    ) -> Poll<io::Result<usize>> {
        self.project().inner.poll_write_vectored(cx, bufs)
    }

    fn is_write_vectored(&self) -> bool {
        self.inner.is_write_vectored()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_age_is_spread_within_a_tenth() {
        let age = Duration::from_secs(300);
        for _ in 0..1000 {
            let drawn = jittered(age);
            assert!(drawn >= Duration::from_secs(270) && drawn <= Duration::from_secs(330));
        }
    }

    #[tokio::test]
    async fn a_connection_is_idle_only_with_no_call_in_progress() {
        let state = ConnectionState::detached();
        assert!(state.idle_since().is_some());
        let guard = CallGuard::new(state.clone());
        assert!(state.idle_since().is_none());
        assert!(state.preface_received(), "a request counts as the preface");
        drop(guard);
        assert!(state.idle_since().is_some());
    }

    #[tokio::test]
    async fn a_call_open_past_its_time_is_stuck() {
        let state = ConnectionState::detached();
        let guard = CallGuard::new(state.clone());
        let later = Instant::now() + Duration::from_secs(60);
        assert!(!state.has_stuck_call_at(later), "no time set: never stuck");
        let due = Instant::now() + Duration::from_secs(2);
        guard.clock.must_end_by(due);
        assert!(!state.has_stuck_call_at(due + STUCK_CALL_MARGIN / 2));
        assert!(state.has_stuck_call_at(due + STUCK_CALL_MARGIN * 2));
        assert!(!state.has_stuck_call(), "not yet");
        drop(guard);
        assert!(
            !state.has_stuck_call_at(later),
            "an ended call is never stuck"
        );
    }
}
