//! The connection layer under the router: accepting TCP connections, HTTP/1.1 on each (hyper), the
//! header-read timeout, the connection cap and graceful shutdown.
//!
//! Owns: `ConnectionLimits` and `serve`. A client gets `header_timeout` to send each request's head, and a
//! kept-alive connection waits no longer than that for its next request (hyper starts the same timer when
//! it begins reading a head), so half-sent requests and idle sockets are closed. At most
//! `max_connections` connections are open; one more is answered 503 with Retry-After in the JSON error
//! shape and closed, and accept errors (a full file-descriptor table) pause accepting briefly instead of
//! ending the service.
//! Must not: know routes, callers or bodies; it hands every request, with the client's address as
//! `ConnectInfo`, to the router.
//!
//! Refusals the router never sees are answered by hyper: a malformed request line or header (400), a
//! request target over 65,534 bytes (414), more than `HEADER_COUNT_HARD_LIMIT` headers or a head over
//! hyper's read buffer (about 400 kB) (431); hyper writes them with an empty body, and the connection's
//! stream (`head_refusal::JsonHeadRefusals`) puts the JSON error shape in. Smaller heads over the router's
//! own limits are refused in the JSON shape by `guard::shape_and_measure`.

use std::convert::Infallible;
use std::future::Future;
use std::net::SocketAddr;
use std::sync::Arc;
use std::time::Duration;

use axum::body::Body;
use axum::extract::ConnectInfo;
use axum::Router;
use hyper::body::Incoming;
use hyper::server::conn::http1;
use hyper_util::rt::{TokioIo, TokioTimer};
use tokio::io::{AsyncRead, AsyncWrite};
use tokio::net::{TcpListener, TcpStream};
use tokio::sync::{watch, OwnedSemaphorePermit, Semaphore};
use tower::ServiceExt;

use super::error::ApiError;
use crate::config::ServiceConfig;

/// Headers hyper reads before refusing a request bare; the router refuses more than
/// `guard::HEADER_COUNT_LIMIT` in the JSON shape.
pub const HEADER_COUNT_HARD_LIMIT: usize = 400;
/// Connections over the cap being answered 503 at once; past that they are closed unanswered.
const REFUSALS_AT_ONCE: usize = 64;
/// How long a refused connection is given to take its 503.
const REFUSAL_GRACE: Duration = Duration::from_secs(1);
/// The pause after a failed accept (for example, no file descriptors left).
const ACCEPT_PAUSE: Duration = Duration::from_millis(50);

/// The limits of the connection layer.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct ConnectionLimits {
    pub header_timeout: Duration,
    pub max_connections: usize,
    /// Whether hyper's bare head refusals are answered in the JSON error shape (`head_refusal`): always
    /// on in the service; off only where a bench prices the stream wrapper (`benches/service.rs`).
    pub json_head_refusals: bool,
}

impl ConnectionLimits {
    /// The limits a validated configuration sets.
    pub fn from_config(config: &ServiceConfig) -> ConnectionLimits {
        ConnectionLimits {
            header_timeout: Duration::from_millis(config.header_timeout_ms),
            max_connections: config.max_connections,
            json_head_refusals: true,
        }
    }
}

/// The bytes sent to a connection over the cap: 503, Retry-After, the JSON error shape, then close.
fn refusal_bytes() -> Vec<u8> {
    let body = serde_json::to_string(
        &ApiError::caller(
            axum::http::StatusCode::SERVICE_UNAVAILABLE,
            "too_many_connections",
            "the service has as many open connections as it takes; retry shortly",
        )
        .body(),
    )
    .unwrap_or_default();
    format!(
        "HTTP/1.1 503 Service Unavailable\r\ncontent-type: application/json\r\nretry-after: 1\r\n\
         connection: close\r\ncontent-length: {}\r\n\r\n{body}",
        body.len()
    )
    .into_bytes()
}

async fn write_everything(stream: &TcpStream, mut bytes: &[u8]) -> std::io::Result<()> {
    while !bytes.is_empty() {
        stream.writable().await?;
        match stream.try_write(bytes) {
            Ok(written) => bytes = &bytes[written..],
            Err(error) if error.kind() == std::io::ErrorKind::WouldBlock => continue,
            Err(error) => return Err(error),
        }
    }
    Ok(())
}

async fn refuse(stream: TcpStream) {
    let _ = tokio::time::timeout(REFUSAL_GRACE, async {
        write_everything(&stream, &refusal_bytes()).await?;
        let stream = stream.into_std()?;
        stream.shutdown(std::net::Shutdown::Write)?;
        let stream = TcpStream::from_std(stream)?;
        // Read what the client sent so closing does not reset the connection before it reads the answer.
        let mut sink = [0u8; 4096];
        let mut read = 0usize;
        while read < 64 * 1024 {
            stream.readable().await?;
            match stream.try_read(&mut sink) {
                Ok(0) => break,
                Ok(count) => read += count,
                Err(error) if error.kind() == std::io::ErrorKind::WouldBlock => continue,
                Err(error) => return Err(error),
            }
        }
        Ok::<(), std::io::Error>(())
    })
    .await;
}

/// Serves HTTP/1.1 on one accepted connection's stream until it ends or `close` changes (then gracefully);
/// `permit` is the connection's place under the cap, given back when it ends.
fn spawn_connection<S, Svc>(
    builder: &http1::Builder,
    stream: S,
    service: Svc,
    mut close: watch::Receiver<()>,
    permit: OwnedSemaphorePermit,
) where
    S: AsyncRead + AsyncWrite + Unpin + Send + 'static,
    Svc: hyper::service::Service<
            hyper::Request<Incoming>,
            Response = axum::response::Response,
            Error = Infallible,
        > + Send
        + 'static,
    Svc::Future: Send + 'static,
{
    let connection = builder.serve_connection(TokioIo::new(stream), service);
    tokio::spawn(async move {
        tokio::pin!(connection);
        tokio::select! {
            result = connection.as_mut() => {
                if let Err(error) = result {
                    tracing::debug!(%error, "connection ended with an error");
                }
            }
            _ = close.changed() => {
                connection.as_mut().graceful_shutdown();
                let _ = connection.await;
            }
        }
        drop(close);
        drop(permit);
    });
}

/// Serves `router` on `listener` until `shutdown` resolves; then stops accepting, lets requests in flight
/// finish and closes idle connections.
pub async fn serve(
    listener: TcpListener,
    router: Router,
    limits: ConnectionLimits,
    shutdown: impl Future<Output = ()> + Send + 'static,
) -> std::io::Result<()> {
    let connections = Arc::new(Semaphore::new(limits.max_connections));
    let refusals = Arc::new(Semaphore::new(REFUSALS_AT_ONCE));
    let (close_sender, close_receiver) = watch::channel(());
    let mut builder = http1::Builder::new();
    builder
        .timer(TokioTimer::new())
        .header_read_timeout(limits.header_timeout)
        .max_headers(HEADER_COUNT_HARD_LIMIT)
        .keep_alive(true);
    tokio::pin!(shutdown);
    loop {
        let (stream, peer) = tokio::select! {
            accepted = listener.accept() => match accepted {
                Ok(pair) => pair,
                Err(error) => {
                    tracing::warn!(%error, "accepting a connection failed; pausing");
                    tokio::time::sleep(ACCEPT_PAUSE).await;
                    continue;
                }
            },
            () = &mut shutdown => break,
        };
        let Ok(permit) = connections.clone().try_acquire_owned() else {
            if let Ok(refusal) = refusals.clone().try_acquire_owned() {
                tokio::spawn(async move {
                    refuse(stream).await;
                    drop(refusal);
                });
            }
            continue;
        };
        let _ = stream.set_nodelay(true);
        let router = router.clone();
        let service = hyper::service::service_fn(move |mut request: hyper::Request<Incoming>| {
            request
                .extensions_mut()
                .insert(ConnectInfo::<SocketAddr>(peer));
            router.clone().oneshot(request.map(Body::new))
        });
        let close = close_receiver.clone();
        if limits.json_head_refusals {
            let stream = super::head_refusal::JsonHeadRefusals::new(stream);
            spawn_connection(&builder, stream, service, close, permit);
        } else {
            spawn_connection(&builder, stream, service, close, permit);
        }
    }
    drop(listener);
    drop(close_receiver);
    let _ = close_sender.send(());
    close_sender.closed().await;
    Ok(())
}
