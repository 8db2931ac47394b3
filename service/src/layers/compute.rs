//! The compute pool: calls with much work (a batch, a long curve, many
//! pairs) are decoded, computed and answered on a runtime of their own (one
//! per process), a fixed number of threads (`--compute-threads`, default one
//! per core), so
//! that the threads that accept connections and answer health checks are
//! never busy with a batch. The operating system shares the cores between
//! the two; a health check waits at most one scheduler time slice, not a
//! batch.
//!
//! Single calls (about a microsecond of work each) stay where they are:
//! moving them would cost more than it saves. The gate marks a call's work
//! ([`super::request_gate::Work`]) before it gets here.
//!
//! The answer is encoded on the pool too (the whole body is collected there,
//! which costs no memory: a unary answer is encoded in one piece anyway), so
//! the calling threads only copy bytes to the socket.
//!
//! A panic in a handler running on the pool is carried back to the calling
//! task, where the panic layer above catches it as it would any other.
//!
//! Both doors that compute v1 calls use the one pool: the gRPC stack through
//! [`ComputeLayer`] (the request gate has counted the work), and the Connect
//! door through [`ComputePool::run`] once it has read and counted its
//! request ([`super::door`]).

use std::{
    future::Future,
    pin::Pin,
    sync::OnceLock,
    task::{Context, Poll},
};

use http::{Request, Response};
use tokio::runtime::Handle;
use tonic::{body::Body, Status};
use tower::{Layer, Service};

use http_body_util::BodyExt;

use super::{body::Buffered, request_gate::Work, statuses};

/// Calls of at least this many items run on the compute pool.
pub const OFFLOAD_MIN_ITEMS: u64 = 32;

/// Name of the pool's threads (as `top -H` shows them).
const THREAD_NAME: &str = "oxbind-compute";

/// The process's compute runtime: one per process, started by the first
/// server that asks and shared by every server after it (a test process
/// starts many), so its threads live as long as the process.
#[derive(Debug)]
pub struct ComputePool {
    handle: Handle,
}

/// The process's pool, once started.
static POOL: OnceLock<ComputePool> = OnceLock::new();

impl ComputePool {
    /// The process's pool, started with `threads` threads if it is not yet
    /// (a later server's thread count is not applied).
    ///
    /// # Errors
    ///
    /// When the operating system refuses the threads.
    pub fn shared(threads: usize) -> std::io::Result<&'static ComputePool> {
        if let Some(pool) = POOL.get() {
            return Ok(pool);
        }
        let runtime = tokio::runtime::Builder::new_multi_thread()
            .worker_threads(threads.max(1))
            .thread_name(THREAD_NAME)
            .enable_time()
            .build()?;
        let handle = runtime.handle().clone();
        if POOL.set(ComputePool { handle }).is_ok() {
            // The runtime lives as long as the process.
            std::mem::forget(runtime);
        } else {
            // Another server started the pool first: use that one.
            runtime.shutdown_background();
        }
        Ok(POOL.get().expect("set just now"))
    }

    /// The layer that sends large calls to this pool.
    pub fn layer(&self) -> ComputeLayer {
        ComputeLayer {
            handle: self.handle.clone(),
        }
    }

    /// Run `work` (a door's decode, compute and encode of a call of
    /// [`OFFLOAD_MIN_ITEMS`] or more) on the pool and wait for it; for a
    /// door beside gRPC that reads its request itself (Connect).
    ///
    /// # Errors
    ///
    /// UNAVAILABLE when the pool is shutting down with the process. A panic
    /// in `work` is carried back to the caller.
    pub async fn run<T: Send + 'static>(
        &self,
        work: impl FnOnce() -> T + Send + 'static,
    ) -> Result<T, Status> {
        on_pool(&self.handle, async move { work() }).await
    }
}

/// Run `future` on the pool behind `handle` and wait for it. Abandoned by
/// the caller, the task stops at its next await (a handler computing a
/// batch finishes that first); a panic is carried back to the caller, where
/// the panic layer above catches it as it would any other.
async fn on_pool<F>(handle: &Handle, future: F) -> Result<F::Output, Status>
where
    F: Future + Send + 'static,
    F::Output: Send + 'static,
{
    let mut task = AbortOnDrop(handle.spawn(future));
    match (&mut task.0).await {
        Ok(output) => Ok(output),
        Err(error) if error.is_panic() => std::panic::resume_unwind(error.into_panic()),
        // Cancelled: the pool is shutting down with the server.
        Err(_) => Err(statuses::shutting_down()),
    }
}

/// Sends large calls to the compute pool.
#[derive(Debug, Clone)]
pub struct ComputeLayer {
    handle: Handle,
}

impl<S> Layer<S> for ComputeLayer {
    type Service = Compute<S>;

    fn layer(&self, inner: S) -> Self::Service {
        Compute {
            inner,
            handle: self.handle.clone(),
        }
    }
}

/// The service [`ComputeLayer`] makes.
#[derive(Debug, Clone)]
pub struct Compute<S> {
    inner: S,
    handle: Handle,
}

impl<S> Service<Request<Body>> for Compute<S>
where
    S: Service<Request<Body>, Response = Response<Body>> + Clone + Send + 'static,
    S::Future: Send + 'static,
    S::Error: Send + 'static,
{
    type Response = Response<Body>;
    type Error = S::Error;
    type Future = Pin<Box<dyn Future<Output = Result<Response<Body>, S::Error>> + Send>>;

    fn poll_ready(&mut self, cx: &mut Context<'_>) -> Poll<Result<(), Self::Error>> {
        self.inner.poll_ready(cx)
    }

    fn call(&mut self, request: Request<Body>) -> Self::Future {
        let heavy = request
            .extensions()
            .get::<Work>()
            .is_some_and(|work| work.0 >= OFFLOAD_MIN_ITEMS);
        let clone = self.inner.clone();
        let mut inner = std::mem::replace(&mut self.inner, clone);
        if !heavy {
            return Box::pin(inner.call(request));
        }
        let handle = self.handle.clone();
        Box::pin(async move {
            let work = async move {
                let response = inner.call(request).await?;
                Ok(encoded(response).await)
            };
            match on_pool(&handle, work).await {
                Ok(result) => result,
                Err(status) => Ok(status.into_http()),
            }
        })
    }
}

/// `response` with its body collected (encoded, for a gRPC answer) into
/// memory.
async fn encoded(response: Response<Body>) -> Response<Body> {
    let (parts, body) = response.into_parts();
    match body.collect().await {
        Ok(collected) => {
            let trailers = collected.trailers().cloned();
            let body = Buffered::new(collected.to_bytes(), trailers);
            Response::from_parts(parts, Body::new(body))
        }
        Err(status) => status.into_http(),
    }
}

/// Aborts a pool task whose caller went away.
struct AbortOnDrop<T>(tokio::task::JoinHandle<T>);

impl<T> Drop for AbortOnDrop<T> {
    fn drop(&mut self) {
        self.0.abort();
    }
}
