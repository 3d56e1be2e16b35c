//! Limits that keep an unauthenticated or overeager client from exhausting the service. Through the router:
//! a request answered "abandoned" leaves no trace, and requests over `max_requests_in_flight` are shed
//! with 503 and Retry-After. Over a socket (only what needs one): half-sent requests and idle connections
//! are closed after the header timeout, connections over the cap are answered 503 in the JSON shape, heads
//! hyper refuses before the router sees them (malformed, a huge target, too many headers) are answered in
//! the JSON shape too, and the service still shuts down promptly with idle connections open.

use crate::service_support;

use std::io::{Read, Write};
use std::net::TcpStream;
use std::sync::Arc;
use std::time::{Duration, Instant};

use sayso_core::raster::{IndexImage, RgbImage};
use sayso_core::taxonomy::Taxonomy;
use sayso_session::config::ServiceConfig;
use sayso_session::corrector::{
    CorrectionOutcome, CorrectionRequest, Corrector, CorrectorError, SceneInput, SceneState,
};
use service_support::*;

/// The grid engine, slowed down: registering a scene takes `delay`, drawing an overlay `overlay_delay`.
struct SlowEngine {
    inner: GridEngine,
    delay: Duration,
    overlay_delay: Duration,
}

impl Corrector for SlowEngine {
    fn taxonomy(&self) -> &Taxonomy {
        self.inner.taxonomy()
    }

    fn register(&self, input: &SceneInput) -> Result<SceneState, CorrectorError> {
        std::thread::sleep(self.delay);
        self.inner.register(input)
    }

    fn apply(&self, request: &CorrectionRequest<'_>) -> Result<CorrectionOutcome, CorrectorError> {
        self.inner.apply(request)
    }

    fn overlay(
        &self,
        input: &SceneInput,
        state: &SceneState,
        parent: Option<&SceneState>,
    ) -> RgbImage {
        std::thread::sleep(self.overlay_delay);
        self.inner.overlay(input, state, parent)
    }
}

fn slow(delay_ms: u64) -> Arc<dyn Corrector> {
    Arc::new(SlowEngine {
        inner: GridEngine::new(),
        delay: Duration::from_millis(delay_ms),
        overlay_delay: Duration::ZERO,
    })
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn a_request_answered_abandoned_stores_nothing() {
    let data = tempfile::tempdir().unwrap();
    let config = ServiceConfig {
        request_timeout_ms: 100,
        ..ServiceConfig::default()
    };
    let (router, coordinator) = router_with(data.path(), config, slow(400));
    let labels = IndexImage::filled(6, 4, 0);
    let abandoned = call(
        &router,
        Call::new("POST", "/v1/scenes", None).json(scene_body(&labels)),
    )
    .await;
    assert_eq!(
        (abandoned.status, abandoned.code().as_str()),
        (503, "timeout")
    );
    assert!(abandoned.json()["message"]
        .as_str()
        .unwrap()
        .contains("nothing was stored"));
    // Long after the registration's work has finished, there is still no scene, in memory or in the log.
    tokio::time::sleep(Duration::from_millis(700)).await;
    let listed = call(&router, Call::new("GET", "/v1/scenes", None))
        .await
        .json();
    assert_eq!(listed["scenes"].as_array().unwrap().len(), 0, "{listed}");
    assert_eq!(coordinator.with_log(|log| log.scenes().unwrap().len()), 0);
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn a_registration_gets_a_time_limit_grown_with_its_image() {
    // 100 ms for any request, or 3 s a megapixel for a registration: 922 ms for 640x480, 0.07 ms for 6x4.
    let config = |per_megapixel| ServiceConfig {
        request_timeout_ms: 100,
        registration_ms_per_megapixel: per_megapixel,
        ..ServiceConfig::default()
    };
    let register = |router: axum::Router, width: u32, height: u32| async move {
        let labels = IndexImage::filled(width, height, 0);
        call(
            &router,
            Call::new("POST", "/v1/scenes", None).json(scene_body(&labels)),
        )
        .await
    };
    // A registration taking 400 ms: a room-sized image is given its time.
    let data = tempfile::tempdir().unwrap();
    let (router, coordinator) = router_with(data.path(), config(3_000), slow(400));
    let room = register(router.clone(), 640, 480).await;
    assert_eq!(room.status, 201, "{}", room.json());
    assert_eq!(coordinator.with_log(|log| log.scenes().unwrap().len()), 1);
    // A tiny image keeps request_timeout_ms, and the answer names the limit that passed.
    let tiny = register(router, 6, 4).await;
    assert_eq!((tiny.status, tiny.code().as_str()), (503, "timeout"));
    assert!(
        tiny.json()["message"]
            .as_str()
            .unwrap()
            .contains("its limit of 100 ms"),
        "{}",
        tiny.json()
    );
    // Drawing the room's overlay, 400 ms here, is given its time too.
    let data = tempfile::tempdir().unwrap();
    let slow_overlay = Arc::new(SlowEngine {
        inner: GridEngine::new(),
        delay: Duration::ZERO,
        overlay_delay: Duration::from_millis(400),
    });
    for (per_megapixel, status) in [(3_000, 200), (0, 503)] {
        let (router, _coordinator) =
            router_with(data.path(), config(per_megapixel), slow_overlay.clone());
        let path = if per_megapixel > 0 {
            let created = register(router.clone(), 640, 480).await;
            assert_eq!(created.status, 201, "{}", created.json());
            format!("/v1/scenes/{}/overlay.png", created.json()["scene_id"])
        } else {
            "/v1/scenes/1/overlay.png".to_string()
        };
        let overlay = call(&router, Call::new("GET", &path, None)).await;
        assert_eq!(overlay.status, status, "{per_megapixel} ms a megapixel");
        drop(router);
        drop(_coordinator);
    }
    // Without the growth the room-sized registration is abandoned too.
    let data = tempfile::tempdir().unwrap();
    let (router, coordinator) = router_with(data.path(), config(0), slow(400));
    let room = register(router, 640, 480).await;
    assert_eq!((room.status, room.code().as_str()), (503, "timeout"));
    tokio::time::sleep(Duration::from_millis(700)).await;
    assert_eq!(coordinator.with_log(|log| log.scenes().unwrap().len()), 0);
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn requests_over_the_in_flight_cap_are_shed_with_retry_after() {
    let data = tempfile::tempdir().unwrap();
    let config = ServiceConfig {
        max_requests_in_flight: 1,
        ..ServiceConfig::default()
    };
    let (router, _coordinator) = router_with(data.path(), config, slow(500));
    let labels = IndexImage::filled(6, 4, 0);
    let slow_router = router.clone();
    let first = tokio::spawn(async move {
        call(
            &slow_router,
            Call::new("POST", "/v1/scenes", None).json(scene_body(&labels)),
        )
        .await
    });
    tokio::time::sleep(Duration::from_millis(150)).await;
    let shed = call(&router, Call::new("GET", "/v1/classes", None)).await;
    assert_eq!((shed.status, shed.code().as_str()), (503, "overloaded"));
    assert_eq!(shed.header("retry-after"), Some("1"));
    assert_eq!(first.await.unwrap().status, 201);
    // Once the first is done, the next is served.
    assert_eq!(
        call(&router, Call::new("GET", "/v1/classes", None))
            .await
            .status,
        200
    );
}

/// Whether the server closed `stream` (end of file or reset) within `limit`.
fn closed_within(stream: &mut TcpStream, limit: Duration) -> Option<Duration> {
    let started = Instant::now();
    stream.set_read_timeout(Some(limit)).unwrap();
    let mut buffer = [0u8; 1024];
    loop {
        match stream.read(&mut buffer) {
            Ok(0) => return Some(started.elapsed()),
            Ok(_) => continue,
            Err(error)
                if matches!(
                    error.kind(),
                    std::io::ErrorKind::WouldBlock | std::io::ErrorKind::TimedOut
                ) =>
            {
                return None
            }
            Err(_) => return Some(started.elapsed()),
        }
    }
}

#[test]
fn half_sent_requests_and_idle_connections_are_closed_after_the_header_timeout() {
    let data = tempfile::tempdir().unwrap();
    let service = start_service(
        data.path(),
        ServiceConfig {
            header_timeout_ms: 300,
            ..ServiceConfig::default()
        },
    );
    // Half a request head, never finished.
    let mut half = TcpStream::connect(service.address).unwrap();
    half.write_all(b"GET /v1/health HTTP/1.1\r\nHost: x\r\n")
        .unwrap();
    let closed = closed_within(&mut half, Duration::from_secs(5));
    assert!(
        closed.is_some_and(|after| after < Duration::from_secs(2)),
        "{closed:?}"
    );
    // A kept-alive connection that has been answered and then idles.
    let mut idle = TcpStream::connect(service.address).unwrap();
    idle.write_all(b"GET /v1/health HTTP/1.1\r\nHost: x\r\n\r\n")
        .unwrap();
    let mut answer = [0u8; 4096];
    let read = idle.read(&mut answer).unwrap();
    assert!(answer[..read].starts_with(b"HTTP/1.1 200"));
    let closed = closed_within(&mut idle, Duration::from_secs(5));
    assert!(
        closed.is_some_and(|after| after < Duration::from_secs(2)),
        "{closed:?}"
    );
}

#[test]
fn connections_over_the_cap_are_answered_503_and_shutdown_is_prompt() {
    let data = tempfile::tempdir().unwrap();
    let service = start_service(
        data.path(),
        ServiceConfig {
            max_connections: 2,
            header_timeout_ms: 10_000,
            ..ServiceConfig::default()
        },
    );
    let holders: Vec<TcpStream> = (0..2)
        .map(|_| TcpStream::connect(service.address).unwrap())
        .collect();
    // Let the server take both before the third arrives.
    std::thread::sleep(Duration::from_millis(200));
    let refused = send(service.address, "GET", "/v1/health", &[], b"").unwrap();
    assert_eq!(refused.status, 503);
    assert_eq!(refused.code(), "too_many_connections");
    assert_eq!(refused.header("retry-after"), Some("1"));
    // A holder leaving frees a place.
    drop(holders);
    std::thread::sleep(Duration::from_millis(200));
    assert_eq!(get(service.address, "/v1/health", None).status, 200);
    // Shutting down with an idle connection open does not wait for the idle connection's timeout.
    let _idle = TcpStream::connect(service.address).unwrap();
    std::thread::sleep(Duration::from_millis(100));
    let started = Instant::now();
    drop(service);
    assert!(
        started.elapsed() < Duration::from_secs(3),
        "{:?}",
        started.elapsed()
    );
}

/// Sends raw bytes and reads the answer until the service closes the connection.
fn raw_exchange(address: std::net::SocketAddr, request: &[u8]) -> (u16, String, serde_json::Value) {
    let mut stream = TcpStream::connect(address).unwrap();
    stream
        .set_read_timeout(Some(Duration::from_secs(10)))
        .unwrap();
    // The service may answer and close before the whole request is sent: a failed write is fine.
    let _ = stream.write_all(request);
    let mut answer = Vec::new();
    let _ = stream.read_to_end(&mut answer);
    let text = String::from_utf8_lossy(&answer).to_string();
    let (head, body) = text.split_once("\r\n\r\n").unwrap_or((&text, ""));
    let status = head
        .split(' ')
        .nth(1)
        .and_then(|code| code.parse().ok())
        .unwrap_or(0);
    let json = serde_json::from_str(body).unwrap_or(serde_json::Value::Null);
    (status, head.to_string(), json)
}

#[test]
fn heads_hyper_refuses_are_answered_in_the_json_shape() {
    let data = tempfile::tempdir().unwrap();
    let service = start_service(data.path(), ServiceConfig::default());
    let long_target = format!(
        "GET /v1/health?{} HTTP/1.1\r\nHost: x\r\n\r\n",
        "q".repeat(70_000)
    );
    let many_headers = format!(
        "GET /v1/health HTTP/1.1\r\nHost: x\r\n{}\r\n",
        // Over the 400 headers hyper reads (`service::server::HEADER_COUNT_HARD_LIMIT`).
        (0..410)
            .map(|i| format!("x-filler-{i}: 1\r\n"))
            .collect::<String>()
    );
    for (request, status, code) in [
        (
            b"GET /v1/health HTTP/1.1\r\nHost x\r\n\r\n".to_vec(),
            400,
            "malformed_request",
        ),
        (
            b"\x01\x02 nonsense\r\n\r\n".to_vec(),
            400,
            "malformed_request",
        ),
        (long_target.into_bytes(), 414, "uri_too_long"),
        (many_headers.into_bytes(), 431, "headers_too_large"),
    ] {
        let (answered, head, json) = raw_exchange(service.address, &request);
        assert_eq!(answered, status, "{head}");
        assert!(
            head.to_ascii_lowercase()
                .contains("content-type: application/json"),
            "{head}"
        );
        assert_eq!(json["code"], code, "{head}");
        assert!(json["message"].as_str().is_some_and(|m| !m.is_empty()));
    }
    // A well-formed request on the same service is answered as before.
    assert_eq!(get(service.address, "/v1/health", None).status, 200);
}
