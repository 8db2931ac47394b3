//! A cap on a listener's open connections, so that memory stays bounded
//! however many clients connect: past the cap, new connections wait in the
//! kernel's accept queue until an open one closes.
//!
//! Each accepted socket gets TCP_NODELAY (small gRPC calls would otherwise
//! stall on Nagle's algorithm and delayed ACKs, about 40 ms each).

use std::{
    io,
    pin::Pin,
    sync::Arc,
    task::{Context, Poll},
    time::Duration,
};

use tokio::{
    io::{AsyncRead, AsyncWrite, ReadBuf},
    net::{TcpListener, TcpStream},
    sync::{mpsc, OwnedSemaphorePermit, Semaphore},
};
use tokio_stream::wrappers::ReceiverStream;
use tonic::transport::server::{Connected, TcpConnectInfo};

/// Pause after a failed `accept` (for example out of file descriptors) before
/// trying again, so the loop never spins.
const ACCEPT_ERROR_BACKOFF: Duration = Duration::from_millis(50);

/// An accepted connection holding one of the listener's connection permits
/// until it is dropped.
#[derive(Debug)]
pub struct LimitedConnection {
    stream: TcpStream,
    _permit: OwnedSemaphorePermit,
}

/// Accept connections from `listener`, at most `max_connections` open at
/// once, as a stream for `serve_with_incoming_shutdown`. The accept task ends
/// when the stream is dropped.
pub fn limited_incoming(
    listener: TcpListener,
    max_connections: usize,
) -> ReceiverStream<io::Result<LimitedConnection>> {
    let permits = Arc::new(Semaphore::new(max_connections));
    let (tx, rx) = mpsc::channel(1);
    tokio::spawn(async move {
        loop {
            let permit = tokio::select! {
                () = tx.closed() => return,
                permit = permits.clone().acquire_owned() => match permit {
                    Ok(permit) => permit,
                    Err(_) => return,
                },
            };
            let accepted = tokio::select! {
                () = tx.closed() => return,
                accepted = listener.accept() => accepted,
            };
            match accepted {
                Ok((stream, _peer)) => {
                    let _ = stream.set_nodelay(true);
                    let connection = LimitedConnection {
                        stream,
                        _permit: permit,
                    };
                    if tx.send(Ok(connection)).await.is_err() {
                        return;
                    }
                }
                Err(error) => {
                    tracing::warn!(%error, "accept failed; retrying");
                    tokio::time::sleep(ACCEPT_ERROR_BACKOFF).await;
                }
            }
        }
    });
    ReceiverStream::new(rx)
}

impl Connected for LimitedConnection {
    type ConnectInfo = TcpConnectInfo;

    fn connect_info(&self) -> Self::ConnectInfo {
        self.stream.connect_info()
    }
}

impl AsyncRead for LimitedConnection {
    fn poll_read(
        mut self: Pin<&mut Self>,
        cx: &mut Context<'_>,
        buf: &mut ReadBuf<'_>,
    ) -> Poll<io::Result<()>> {
        Pin::new(&mut self.stream).poll_read(cx, buf)
    }
}

impl AsyncWrite for LimitedConnection {
    fn poll_write(
        mut self: Pin<&mut Self>,
        cx: &mut Context<'_>,
        buf: &[u8],
    ) -> Poll<io::Result<usize>> {
        Pin::new(&mut self.stream).poll_write(cx, buf)
    }

    fn poll_flush(mut self: Pin<&mut Self>, cx: &mut Context<'_>) -> Poll<io::Result<()>> {
        Pin::new(&mut self.stream).poll_flush(cx)
    }

    fn poll_shutdown(mut self: Pin<&mut Self>, cx: &mut Context<'_>) -> Poll<io::Result<()>> {
        Pin::new(&mut self.stream).poll_shutdown(cx)
    }

    fn poll_write_vectored(
        mut self: Pin<&mut Self>,
        cx: &mut Context<'_>,
        bufs: &[io::IoSlice<'_>],
    ) -> Poll<io::Result<usize>> {
        Pin::new(&mut self.stream).poll_write_vectored(cx, bufs)
    }

    fn is_write_vectored(&self) -> bool {
        self.stream.is_write_vectored()
    }
}
