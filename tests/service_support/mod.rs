//! Shared helpers for the service tests and the service bench: the router called directly (`route_service`,
//! `router_with` and `call`, tower's `oneshot`, no socket), a small grid engine implementing `Corrector` on
//! plain label maps, and, for the tests of limits, timeouts and shutdown only, the service started on port 0
//! with a minimal HTTP/1.1 client over `std::net::TcpStream` (a connection cap or a header timeout exists
//! only on a socket); and `sayso serve` started as a process on port 0 (`start_serve`).
//!
//! Owns: test-only code. Must not: be used by the library; the grid engine exists only to exercise the
//! service without the real pipeline.
#![allow(dead_code)]

use std::ffi::OsStr;
use std::io::{BufRead, BufReader, Read, Write};
use std::net::{SocketAddr, TcpStream};
use std::path::Path;
use std::process::{Child, Command, Stdio};
use std::sync::Arc;
use std::time::Duration;

use base64::Engine;
use sayso_core::ids::ClassId;
use sayso_core::language::constraint::{Constraint, ConstraintKind, Focus, Referent, Span};
use sayso_core::raster::{self, IndexImage, RgbImage};
use sayso_core::scene::BoundingBox;
use sayso_core::taxonomy::Taxonomy;
use sayso_service::AppState;
use sayso_session::config::ServiceConfig;
use sayso_session::corrector::{
    CorrectionOutcome, CorrectionRequest, Corrector, CorrectorError, ObjectSummary, ReportedChange,
    SceneInput, SceneState, SceneSummary, Verdict,
};
use sayso_session::{Coordinator, CoordinatorSettings};

/// An HTTP response as the tests read it.
#[derive(Debug)]
pub struct Reply {
    pub status: u16,
    pub headers: Vec<(String, String)>,
    pub body: Vec<u8>,
}

impl Reply {
    pub fn json(&self) -> serde_json::Value {
        serde_json::from_slice(&self.body).unwrap_or_else(|error| {
            panic!(
                "status {} body is not JSON ({error}): {:?}",
                self.status,
                String::from_utf8_lossy(&self.body)
            )
        })
    }

    pub fn header(&self, name: &str) -> Option<&str> {
        self.headers
            .iter()
            .find(|(key, _)| key.eq_ignore_ascii_case(name))
            .map(|(_, value)| value.as_str())
    }

    /// The error code of a JSON error body.
    pub fn code(&self) -> String {
        self.json()["code"].as_str().unwrap_or("").to_string()
    }
}

/// Where a test sends its requests: the router itself (`&Routed`), or a socket (`SocketAddr`, for limits,
/// timeouts and shutdown only).
pub trait Client {
    fn exchange(
        &self,
        method: &str,
        path: &str,
        headers: &[(&str, &str)],
        body: &[u8],
    ) -> std::io::Result<Reply>;
}

impl Client for SocketAddr {
    fn exchange(
        &self,
        method: &str,
        path: &str,
        headers: &[(&str, &str)],
        body: &[u8],
    ) -> std::io::Result<Reply> {
        over_socket(*self, method, path, headers, body)
    }
}

/// The router over a coordinator with the grid engine, and a runtime to call it on, from plain test code
/// (`route_service`). Clones share the router, the runtime and the coordinator.
#[derive(Clone)]
pub struct Routed {
    pub router: axum::Router,
    pub coordinator: Arc<Coordinator>,
    runtime: Arc<tokio::runtime::Runtime>,
}

impl Client for &Routed {
    fn exchange(
        &self,
        method: &str,
        path: &str,
        headers: &[(&str, &str)],
        body: &[u8],
    ) -> std::io::Result<Reply> {
        let mut builder = axum::http::Request::builder()
            .method(axum::http::Method::from_bytes(method.as_bytes()).expect("a method token"))
            .uri(path);
        for (name, value) in headers {
            builder = builder.header(*name, *value);
        }
        let mut request = builder
            .body(axum::body::Body::from(body.to_vec()))
            .expect("request");
        request
            .extensions_mut()
            .insert(axum::extract::ConnectInfo(SocketAddr::from((
                [127, 0, 0, 1],
                40000,
            ))));
        Ok(self.runtime.block_on(call_request(&self.router, request)))
    }
}

/// The router of a service with the grid engine over `data_dir`, with `config` (its data_dir replaced),
/// called without a socket.
pub fn route_service(data_dir: &Path, config: ServiceConfig) -> Routed {
    let (router, coordinator) = router_with(data_dir, config, Arc::new(GridEngine::new()));
    let runtime = tokio::runtime::Builder::new_multi_thread()
        .worker_threads(2)
        .enable_all()
        .build()
        .expect("runtime");
    Routed {
        router,
        coordinator,
        runtime: Arc::new(runtime),
    }
}

/// Sends one request and reads the whole answer.
/// The checkerboard scene's floor and rug class ids, its cells across and each cell's side in pixels.
pub const CHECKERBOARD_FLOOR: u16 = 0;
pub const CHECKERBOARD_RUG: u16 = 6;
pub const CHECKERBOARD_CELLS: u32 = 6;
pub const CHECKERBOARD_CELL: u32 = 16;

/// The real engine on the shipped classifier (`$SAYSO_MODEL` when set).
pub fn shipped_engine() -> Arc<sayso_session::JointCorrector> {
    Arc::new(
        sayso_session::JointCorrector::load(&sayso_perception::pipeline::model_path(None))
            .expect("classifier"),
    )
}

/// A 96x96 floor with a checkerboard of rug cells, registered by operator "odile" with its label map (no
/// classifier needed), and a conversation of hers opened on it.
pub fn register_checkerboard(
    coordinator: &Coordinator,
) -> (
    sayso_correction_log::SceneKey,
    sayso_correction_log::ConversationKey,
) {
    let side = CHECKERBOARD_CELLS * CHECKERBOARD_CELL;
    let mut labels = IndexImage::filled(side, side, CHECKERBOARD_FLOOR);
    for y in 0..labels.height {
        for x in 0..labels.width {
            if (x / CHECKERBOARD_CELL + y / CHECKERBOARD_CELL) % 2 == 1 {
                labels.set(x, y, CHECKERBOARD_RUG);
            }
        }
    }
    let created = coordinator
        .register_scene(
            sayso_session::SceneUpload {
                name: Some("juniper-lane-landing".into()),
                image_png: Some(raster::encode_rgb_png(&picture_of(&labels)).unwrap()),
                label_map_png: Some(raster::encode_index_png(&labels).unwrap()),
                ..Default::default()
            },
            "odile",
        )
        .expect("registered");
    let scene = sayso_correction_log::SceneKey(created.scene_id);
    let conversation = coordinator
        .open_conversation(scene, "odile")
        .expect("opened");
    (
        scene,
        sayso_correction_log::ConversationKey(conversation.conversation_id),
    )
}

/// Starts `sayso serve --port 0` followed by `arguments` (its log lines to `stderr`), and reads the address
/// it listens on from the first line it prints. The caller stops the process.
pub fn start_serve(arguments: &[&dyn AsRef<OsStr>], stderr: Stdio) -> (Child, SocketAddr) {
    let mut child = Command::new(env!("CARGO_BIN_EXE_sayso"))
        .args(["serve", "--port", "0"])
        .args(arguments.iter().map(|argument| argument.as_ref()))
        .stdout(Stdio::piped())
        .stderr(stderr)
        .spawn()
        .expect("spawn sayso serve");
    let stdout = child.stdout.take().expect("stdout");
    let mut line = String::new();
    BufReader::new(stdout)
        .read_line(&mut line)
        .expect("read the listening line");
    let address = line
        .split("http://")
        .nth(1)
        .and_then(|rest| rest.split('/').next())
        .and_then(|address| address.parse().ok())
        .unwrap_or_else(|| panic!("sayso serve did not start: no address in {line:?}"));
    (child, address)
}

pub fn send(
    client: impl Client,
    method: &str,
    path: &str,
    headers: &[(&str, &str)],
    body: &[u8],
) -> std::io::Result<Reply> {
    client.exchange(method, path, headers, body)
}

/// Sends one request over a socket with `Connection: close` and reads the whole answer.
fn over_socket(
    address: SocketAddr,
    method: &str,
    path: &str,
    headers: &[(&str, &str)],
    body: &[u8],
) -> std::io::Result<Reply> {
    let mut stream = TcpStream::connect(address)?;
    stream.set_read_timeout(Some(Duration::from_secs(20)))?;
    let mut head = format!(
        "{method} {path} HTTP/1.1\r\nHost: {address}\r\nConnection: close\r\nContent-Length: {}\r\n",
        body.len()
    );
    for (name, value) in headers {
        head.push_str(&format!("{name}: {value}\r\n"));
    }
    head.push_str("\r\n");
    stream.write_all(head.as_bytes())?;
    // A server may answer (413) and close before reading a huge body; a broken pipe is then fine.
    let _ = stream.write_all(body);
    let mut raw = Vec::new();
    stream.read_to_end(&mut raw)?;
    parse_reply(&raw)
}

fn parse_reply(raw: &[u8]) -> std::io::Result<Reply> {
    let invalid =
        |what: &str| std::io::Error::new(std::io::ErrorKind::InvalidData, what.to_string());
    let split = raw
        .windows(4)
        .position(|window| window == b"\r\n\r\n")
        .ok_or_else(|| invalid("no end of headers"))?;
    let head = String::from_utf8_lossy(&raw[..split]).to_string();
    let mut lines = head.split("\r\n");
    let status_line = lines.next().ok_or_else(|| invalid("no status line"))?;
    let status: u16 = status_line
        .split(' ')
        .nth(1)
        .and_then(|code| code.parse().ok())
        .ok_or_else(|| invalid("bad status line"))?;
    let headers: Vec<(String, String)> = lines
        .filter_map(|line| line.split_once(':'))
        .map(|(name, value)| (name.trim().to_string(), value.trim().to_string()))
        .collect();
    let mut body = raw[split + 4..].to_vec();
    let chunked = headers.iter().any(|(name, value)| {
        name.eq_ignore_ascii_case("transfer-encoding") && value.contains("chunked")
    });
    if chunked {
        body = dechunk(&body).ok_or_else(|| invalid("bad chunked body"))?;
    }
    Ok(Reply {
        status,
        headers,
        body,
    })
}

fn dechunk(mut data: &[u8]) -> Option<Vec<u8>> {
    let mut out = Vec::new();
    loop {
        let line_end = data.windows(2).position(|window| window == b"\r\n")?;
        let size =
            usize::from_str_radix(std::str::from_utf8(&data[..line_end]).ok()?.trim(), 16).ok()?;
        data = &data[line_end + 2..];
        if size == 0 {
            return Some(out);
        }
        out.extend_from_slice(data.get(..size)?);
        data = data.get(size + 2..)?;
    }
}

/// A JSON request.
pub fn send_json(
    client: impl Client,
    method: &str,
    path: &str,
    token: Option<&str>,
    body: &serde_json::Value,
) -> Reply {
    let bearer = token.map(|token| format!("Bearer {token}"));
    let mut headers = vec![("Content-Type", "application/json")];
    if let Some(bearer) = &bearer {
        headers.push(("Authorization", bearer.as_str()));
    }
    send(client, method, path, &headers, body.to_string().as_bytes()).expect("request")
}

/// A GET request.
pub fn get(client: impl Client, path: &str, token: Option<&str>) -> Reply {
    let bearer = token.map(|token| format!("Bearer {token}"));
    let mut headers = Vec::new();
    if let Some(bearer) = &bearer {
        headers.push(("Authorization", bearer.as_str()));
    }
    send(client, "GET", path, &headers, b"").expect("request")
}

pub fn base64(bytes: &[u8]) -> String {
    base64::engine::general_purpose::STANDARD.encode(bytes)
}

/// A test picture: a `width` x `height` gradient.
pub fn picture(width: u32, height: u32) -> RgbImage {
    let mut image = RgbImage::filled(width, height, [0, 0, 0]);
    for y in 0..height {
        for x in 0..width {
            image.set(x, y, [(x * 7 % 256) as u8, (y * 5 % 256) as u8, 120]);
        }
    }
    image
}

/// A picture whose colour edges follow a label map (a different flat colour per label, a faint texture),
/// so superpixels can find the regions as they would on a real photograph.
pub fn picture_of(labels: &IndexImage) -> RgbImage {
    let mut image = RgbImage::filled(labels.width, labels.height, [0, 0, 0]);
    for y in 0..labels.height {
        for x in 0..labels.width {
            let label = labels.values[(y * labels.width + x) as usize] as u32;
            let texture = ((x + y) % 2) as u8 * 3;
            image.set(
                x,
                y,
                [
                    (label * 97 % 200) as u8 + texture,
                    (label * 57 % 200 + 30) as u8,
                    (label * 31 % 200 + 50) as u8,
                ],
            );
        }
    }
    image
}

pub fn png_base64(image: &RgbImage) -> String {
    base64(&raster::encode_rgb_png(image).unwrap())
}

pub fn index_png_base64(labels: &IndexImage) -> String {
    base64(&raster::encode_index_png(labels).unwrap())
}

/// The grid engine: every pixel is its own object. "paint <class>" with a pixel focus (or an object's, the
/// object's pixel) gives that pixel the class; a pixel of a safety class waits for confirmation; "which"
/// asks back; "either paint <class>" asks which of the first two pixels of the top row, and an answer
/// paints the one chosen; "sleep" takes 1.5 s; any other sentence is not understood.
pub struct GridEngine {
    pub taxonomy: Taxonomy,
}

impl GridEngine {
    pub fn new() -> GridEngine {
        GridEngine {
            taxonomy: Taxonomy::embedded(),
        }
    }
}

fn grid_summary(labels: &IndexImage) -> SceneSummary {
    let mut objects = Vec::new();
    for y in 0..labels.height {
        for x in 0..labels.width {
            objects.push(ObjectSummary {
                id: sayso_core::ids::ObjectId(y * labels.width + x + 1),
                class: ClassId(labels.get(x, y)),
                bbox: BoundingBox {
                    x0: x,
                    y0: y,
                    x1: x + 1,
                    y1: y + 1,
                },
                area: 1,
            });
        }
    }
    SceneSummary {
        objects,
        room: None,
        model: None,
    }
}

impl Corrector for GridEngine {
    fn taxonomy(&self) -> &Taxonomy {
        &self.taxonomy
    }

    /// Every pixel is its own object (as `grid_summary` reports them).
    fn object_regions(&self, _input: &SceneInput, state: &SceneState) -> Option<Vec<u32>> {
        Some((0..state.labels.values.len() as u32).collect())
    }

    fn register(&self, input: &SceneInput) -> Result<SceneState, CorrectorError> {
        if let Some(npy) = &input.scores_npy {
            if !npy.starts_with(b"\x93NUMPY") {
                return Err(CorrectorError::BadInput {
                    field: "scores_npy_base64".into(),
                    message: "not an NPY file".into(),
                });
            }
        }
        let labels = input
            .label_map
            .clone()
            .unwrap_or_else(|| IndexImage::filled(input.image.width, input.image.height, 0));
        Ok(SceneState {
            summary: grid_summary(&labels),
            labels,
            engine_state: b"grid-v1".to_vec(),
        })
    }

    fn apply(&self, request: &CorrectionRequest<'_>) -> Result<CorrectionOutcome, CorrectorError> {
        assert_eq!(
            request.state.engine_state, b"grid-v1",
            "engine state comes back unchanged"
        );
        let words: Vec<&str> = request.utterance.split_whitespace().collect();
        let outcome = |verdict, constraints, changes| CorrectionOutcome {
            constraints,
            changes,
            unmet: Vec::new(),
            solver_gap: Some(0.0),
            question: None,
            verdict,
        };
        if words.first() == Some(&"sleep") {
            std::thread::sleep(Duration::from_millis(1500));
        }
        if words.first() == Some(&"which") {
            return Ok(outcome(
                Verdict::NeedsClarification {
                    question: sayso_core::turn::OpenQuestion {
                        note: sayso_core::turn::Note {
                            text: request.utterance.to_string(),
                            focus: request.focus,
                            constraints: Vec::new(),
                        },
                        constraint: 0,
                        text: "which pixel?".into(),
                        candidates: Vec::new(),
                    },
                },
                Vec::new(),
                Vec::new(),
            ));
        }
        if words.first() == Some(&"either") {
            let note = sayso_core::turn::Note {
                text: words[1..].join(" "),
                focus: None,
                constraints: Vec::new(),
            };
            let candidate = |x: u32| sayso_core::turn::Candidate {
                object: sayso_core::ids::ObjectId(x + 1),
                class: Some(ClassId(request.state.labels.get(x, 0))),
                description: format!("the pixel at ({x}, 0)"),
                bbox: Some(BoundingBox {
                    x0: x,
                    y0: 0,
                    x1: x + 1,
                    y1: 1,
                }),
            };
            return Ok(outcome(
                Verdict::NeedsClarification {
                    question: sayso_core::turn::OpenQuestion {
                        note,
                        constraint: 0,
                        text: "which one: the pixel at (0, 0) or the pixel at (1, 0)?".into(),
                        candidates: vec![candidate(0), candidate(1)],
                    },
                },
                Vec::new(),
                Vec::new(),
            ));
        }
        let width = request.state.labels.width;
        let focus = match request.focus {
            Some(Focus::Object { id }) if id.0 >= 1 => Some(Focus::Pixel {
                x: (id.0 - 1) % width,
                y: (id.0 - 1) / width,
            }),
            other => other,
        };
        let class = match (words.first(), words.get(1)) {
            (Some(&"paint"), Some(name)) => self.taxonomy.class_by_name(name),
            _ => None,
        };
        let (Some(class), Some(Focus::Pixel { x, y })) = (class, focus) else {
            return Ok(outcome(
                Verdict::NotUnderstood {
                    reason: "say: paint <class>, with a pixel focus".into(),
                },
                Vec::new(),
                Vec::new(),
            ));
        };
        let constraint = Constraint {
            kind: ConstraintKind::Relabel {
                target: Referent::class(class.id, Span::new(6, request.utterance.len())),
                from: None,
                to: Some(class.id),
            },
            span: Span::new(0, request.utterance.chars().count()),
            confidence: 1.0,
            gloss: format!("pixel is {}", class.name),
        };
        let old = request.state.labels.get(x, y);
        if old == class.id.0 {
            return Ok(outcome(
                Verdict::NothingToChange,
                vec![constraint],
                Vec::new(),
            ));
        }
        let mut labels = request.state.labels.clone();
        labels.set(x, y, class.id.0);
        let change = ReportedChange {
            object: Some(sayso_core::ids::ObjectId(y * labels.width + x + 1)),
            from: Some(ClassId(old)),
            to: Some(class.id),
            pixels: 1,
            description: format!("({x}, {y}) -> {}", class.name),
        };
        let state = SceneState {
            summary: grid_summary(&labels),
            labels,
            engine_state: b"grid-v1".to_vec(),
        };
        let verdict = if self.taxonomy.is_safety_critical(ClassId(old)) {
            Verdict::NeedsConfirmation {
                proposed: state,
                reason: format!(
                    "pixel ({x}, {y}) is a {}",
                    self.taxonomy.class_name(ClassId(old))
                ),
            }
        } else {
            Verdict::Applied(state)
        };
        Ok(outcome(verdict, vec![constraint], vec![change]))
    }
}

/// Opens a coordinator with the grid engine on `data_dir`.
pub fn open_grid_coordinator(data_dir: &Path) -> Arc<Coordinator> {
    open_grid_coordinator_with(data_dir, sayso_core::raster::DEFAULT_PIXEL_LIMIT)
}

/// Opens a coordinator with the grid engine on `data_dir` and a pixel limit.
pub fn open_grid_coordinator_with(data_dir: &Path, pixel_limit: u64) -> Arc<Coordinator> {
    let config = ServiceConfig {
        data_dir: data_dir.to_path_buf(),
        pixel_limit,
        ..ServiceConfig::default()
    };
    Arc::new(
        Coordinator::open(
            Arc::new(GridEngine::new()),
            &CoordinatorSettings {
                log_path: config.log_path(),
                pixel_limit: config.pixel_limit,
                demo_dir: data_dir.join("demo_scenes"),
            },
        )
        .expect("open coordinator"),
    )
}

/// A running service on a loopback port; dropped, it shuts down and waits for the server thread.
pub struct RunningService {
    pub address: SocketAddr,
    pub coordinator: Arc<Coordinator>,
    stop: Option<tokio::sync::oneshot::Sender<()>>,
    thread: Option<std::thread::JoinHandle<()>>,
}

impl Drop for RunningService {
    fn drop(&mut self) {
        if let Some(stop) = self.stop.take() {
            let _ = stop.send(());
        }
        if let Some(thread) = self.thread.take() {
            let _ = thread.join();
        }
    }
}

/// Starts the service with the grid engine on port 0 over `data_dir`, with `config` (its data_dir and bind
/// are replaced).
pub fn start_service(data_dir: &Path, mut config: ServiceConfig) -> RunningService {
    config.data_dir = data_dir.to_path_buf();
    config.bind = SocketAddr::from(([127, 0, 0, 1], 0));
    config.validate().expect("test config is valid");
    let coordinator = open_grid_coordinator_with(data_dir, config.pixel_limit);
    serve_coordinator(coordinator, config)
}

/// Serves `coordinator` with `config` on a loopback port (port 0) from a thread of its own, until dropped.
pub fn serve_coordinator(coordinator: Arc<Coordinator>, config: ServiceConfig) -> RunningService {
    let state = AppState::new(coordinator.clone(), config);
    let (stop, stopped) = tokio::sync::oneshot::channel::<()>();
    let (ready, address) = std::sync::mpsc::channel();
    let thread = std::thread::spawn(move || {
        let runtime = tokio::runtime::Builder::new_multi_thread()
            .worker_threads(2)
            .enable_all()
            .build()
            .expect("runtime");
        runtime.block_on(async move {
            let listener = tokio::net::TcpListener::bind("127.0.0.1:0")
                .await
                .expect("bind");
            ready
                .send(listener.local_addr().expect("address"))
                .expect("ready");
            sayso_service::run(listener, state, async {
                let _ = stopped.await;
            })
            .await
            .expect("serve");
        });
    });
    let address = address.recv().expect("service started");
    RunningService {
        address,
        coordinator,
        stop: Some(stop),
        thread: Some(thread),
    }
}

/// Registers a `width` x `height` scene (labels all floor except as given) and opens a conversation.
pub fn scene_and_conversation(
    client: impl Client + Copy,
    token: Option<&str>,
    labels: &IndexImage,
) -> (i64, i64) {
    let created = send_json(
        client,
        "POST",
        "/v1/scenes",
        token,
        &serde_json::json!({
            "name": "juniper-lane-hall",
            "image_png_base64": png_base64(&picture_of(labels)),
            "label_map_png_base64": index_png_base64(labels),
        }),
    );
    assert_eq!(
        created.status,
        201,
        "{:?}",
        String::from_utf8_lossy(&created.body)
    );
    let scene_id = created.json()["scene_id"].as_i64().unwrap();
    let opened = send_json(
        client,
        "POST",
        "/v1/conversations",
        token,
        &serde_json::json!({ "scene_id": scene_id }),
    );
    assert_eq!(opened.status, 201);
    (scene_id, opened.json()["conversation_id"].as_i64().unwrap())
}

/// The router over a coordinator with `corrector` on `data_dir`, with `config` (its data_dir replaced);
/// called with `call`, no socket.
pub fn router_with(
    data_dir: &Path,
    mut config: ServiceConfig,
    corrector: Arc<dyn Corrector>,
) -> (axum::Router, Arc<Coordinator>) {
    config.data_dir = data_dir.to_path_buf();
    config.validate().expect("test config is valid");
    let coordinator = Arc::new(
        Coordinator::open(
            corrector,
            &CoordinatorSettings {
                log_path: config.log_path(),
                pixel_limit: config.pixel_limit,
                demo_dir: data_dir.join("demo_scenes"),
            },
        )
        .expect("open coordinator"),
    );
    let router = sayso_service::app(AppState::new(coordinator.clone(), config));
    (router, coordinator)
}

/// A request to the router as a test builds it.
pub struct Call<'a> {
    pub method: &'a str,
    pub path: &'a str,
    pub token: Option<&'a str>,
    pub body: Option<serde_json::Value>,
    /// The client's address, as the connection layer would hand it over.
    pub from: [u8; 4],
}

impl<'a> Call<'a> {
    pub fn new(method: &'a str, path: &'a str, token: Option<&'a str>) -> Call<'a> {
        Call {
            method,
            path,
            token,
            body: None,
            from: [127, 0, 0, 1],
        }
    }

    pub fn json(mut self, body: serde_json::Value) -> Call<'a> {
        self.body = Some(body);
        self
    }

    pub fn from(mut self, address: [u8; 4]) -> Call<'a> {
        self.from = address;
        self
    }

    /// The `http::Request` the router receives.
    pub fn request(&self) -> axum::http::Request<axum::body::Body> {
        let mut builder = axum::http::Request::builder()
            .method(axum::http::Method::from_bytes(self.method.as_bytes()).expect("a method token"))
            .uri(self.path);
        if let Some(token) = self.token {
            builder = builder.header("authorization", format!("Bearer {token}"));
        }
        let body = match &self.body {
            Some(value) => {
                builder = builder.header("content-type", "application/json");
                axum::body::Body::from(value.to_string())
            }
            None => axum::body::Body::empty(),
        };
        let mut request = builder.body(body).expect("request");
        request
            .extensions_mut()
            .insert(axum::extract::ConnectInfo(SocketAddr::from((
                self.from, 40000,
            ))));
        request
    }
}

/// Sends `request` through `router` (tower's `oneshot`) and reads the whole answer.
pub async fn call_request(
    router: &axum::Router,
    request: axum::http::Request<axum::body::Body>,
) -> Reply {
    use tower::ServiceExt;
    let response = router.clone().oneshot(request).await.expect("infallible");
    let status = response.status().as_u16();
    let headers = response
        .headers()
        .iter()
        .map(|(name, value)| {
            (
                name.as_str().to_string(),
                value.to_str().unwrap_or("").to_string(),
            )
        })
        .collect();
    let body = axum::body::to_bytes(response.into_body(), usize::MAX)
        .await
        .expect("body")
        .to_vec();
    Reply {
        status,
        headers,
        body,
    }
}

/// Sends `call` through `router`.
pub async fn call(router: &axum::Router, call: Call<'_>) -> Reply {
    call_request(router, call.request()).await
}

/// The body of a scene registration from labels (all floor except as given).
pub fn scene_body(labels: &IndexImage) -> serde_json::Value {
    serde_json::json!({
        "name": "juniper-lane-hall",
        "image_png_base64": png_base64(&picture_of(labels)),
        "label_map_png_base64": index_png_base64(labels),
    })
}
