//! The operator console in a real browser (headless Chromium through chromedriver): with a token set, the
//! page asks for it; it loads a demo scene, relabels an object the operator points at, answers a question
//! by clicking a candidate on the picture, confirms a held safety change, takes it back and puts it back
//! with the keyboard, and every step changes the picture and the lists. Screenshots go to
//! `$CARGO_TARGET_TMPDIR/console/`.
//!
//! Needs Debian's `chromium` and `chromium-driver` (`.ci/run` installs them); without them it fails and
//! says so. The scene is the committed demo scene `dining_room_guests` on the real pipeline.

mod service_support;
#[path = "console/webdriver.rs"]
mod webdriver;

use std::net::SocketAddr;
use std::sync::Arc;
use std::time::Duration;

use sayso::config::{OperatorToken, Role, ServiceConfig};
use sayso::service::AppState;
use sayso::session::JointCorrector;
use sayso::session::{Coordinator, CoordinatorSettings};
use serde_json::Value;
use service_support::get;
use webdriver::Browser;

const TOKEN: &str = "wren-street-console-test";
const ENTER: &str = "\u{E007}";
const TURN: Duration = Duration::from_secs(20);

/// Runs the service on the real pipeline on a loopback port until dropped.
struct Service {
    address: SocketAddr,
    stop: Option<tokio::sync::oneshot::Sender<()>>,
    thread: Option<std::thread::JoinHandle<()>>,
}

impl Drop for Service {
    fn drop(&mut self) {
        if let Some(stop) = self.stop.take() {
            let _ = stop.send(());
        }
        if let Some(thread) = self.thread.take() {
            let _ = thread.join();
        }
    }
}

fn start_service(data: &std::path::Path) -> Service {
    let config = ServiceConfig {
        data_dir: data.to_path_buf(),
        bind: SocketAddr::from(([127, 0, 0, 1], 0)),
        request_timeout_ms: 60_000,
        operators: vec![OperatorToken {
            name: "tess".into(),
            token: TOKEN.into(),
            role: Role::Operator,
        }],
        ..ServiceConfig::default()
    };
    config.validate().expect("test config is valid");
    let engine = JointCorrector::load(&sayso::pipeline::model_path(None)).expect("classifier");
    let coordinator = Arc::new(
        Coordinator::open(
            Arc::new(engine),
            &CoordinatorSettings {
                log_path: config.log_path(),
                pixel_limit: config.pixel_limit,
                demo_dir: sayso::demo::demo_directory(None),
            },
        )
        .expect("open coordinator"),
    );
    let state = AppState::new(coordinator, config);
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
            sayso::service::run(listener, state, async {
                let _ = stopped.await;
            })
            .await
            .expect("serve");
        });
    });
    Service {
        address: address.recv().expect("service started"),
        stop: Some(stop),
        thread: Some(thread),
    }
}

/// The page's object list as (object id, class) pairs.
fn listed_objects(browser: &Browser) -> Vec<(u64, String)> {
    let listed = browser.script(
        "return [...document.querySelectorAll('#objects li')].map(li => [Number(li.dataset.object), li.dataset.class]);",
    );
    listed
        .as_array()
        .expect("object list")
        .iter()
        .map(|pair| {
            (
                pair[0].as_u64().unwrap(),
                pair[1].as_str().unwrap().to_string(),
            )
        })
        .collect()
}

fn digest(browser: &Browser) -> String {
    browser
        .script("return document.getElementById('stage').dataset.labelsDigest;")
        .as_str()
        .unwrap()
        .to_string()
}

fn texts(browser: &Browser, selector: &str) -> Vec<String> {
    browser
        .script(&format!(
            "return [...document.querySelectorAll('{selector}')].map(e => e.textContent);"
        ))
        .as_array()
        .expect("texts")
        .iter()
        .map(|text| text.as_str().unwrap_or("").to_string())
        .collect()
}

/// Sends a note by typing it and pressing Enter, and waits for the answer to a new turn.
fn send_note(browser: &Browser, text: &str) -> String {
    let turns_before = browser.script("return document.querySelectorAll('#history li').length;");
    browser.type_into("#note", &format!("{text}{ENTER}"));
    browser.wait_for(
        &format!("document.querySelectorAll('#history li').length > {turns_before} && !document.body.classList.contains('busy')"),
        TURN,
    );
    browser
        .script("return document.getElementById('verdict').dataset.status;")
        .as_str()
        .unwrap()
        .to_string()
}

/// Waits until the conversation shows `count` turns and returns the latest answer's status.
fn wait_for_turns(browser: &Browser, count: usize) -> String {
    browser.wait_for(
        &format!("document.querySelectorAll('#history li').length === {count} && !document.body.classList.contains('busy')"),
        TURN,
    );
    browser
        .script("return document.getElementById('verdict').dataset.status;")
        .as_str()
        .unwrap()
        .to_string()
}

/// A pixel of `object` that carries its class, as close to its frame's centre as there is one.
fn pixel_of(object: &Value, labels: &sayso::raster::IndexImage) -> (u32, u32) {
    let frame = &object["box"];
    let (x0, y0, x1, y1) = (
        frame["x0"].as_u64().unwrap() as u32,
        frame["y0"].as_u64().unwrap() as u32,
        frame["x1"].as_u64().unwrap() as u32,
        frame["y1"].as_u64().unwrap() as u32,
    );
    let class_id = object["class_id"].as_u64().unwrap() as u16;
    let (centre_x, centre_y) = ((x0 + x1) / 2, (y0 + y1) / 2);
    (y0..y1)
        .flat_map(|y| (x0..x1).map(move |x| (x, y)))
        .filter(|&(x, y)| labels.get(x, y) == class_id)
        .min_by_key(|&(x, y)| x.abs_diff(centre_x).pow(2) + y.abs_diff(centre_y).pow(2))
        .expect("an object has a pixel of its class")
}

#[test]
fn an_operator_corrects_a_scene_in_the_console() {
    let data = tempfile::tempdir().unwrap();
    let service = start_service(data.path());
    let shots = std::path::PathBuf::from(env!("CARGO_TARGET_TMPDIR")).join("console");
    std::fs::create_dir_all(&shots).unwrap();
    let browser = Browser::start(1280, 900);

    // The console's files are served without a token; the page asks for one because the API wants it.
    let page = get(service.address, "/console", None);
    assert_eq!(page.status, 200);
    assert_eq!(
        page.header("content-type"),
        Some("text/html; charset=utf-8")
    );
    browser.goto(&format!("http://{}/console", service.address));
    browser.wait_for("document.getElementById('token-dialog').open", TURN);
    browser.screenshot(&shots.join("01-token.png"));
    browser.type_into("#token-input", TOKEN);
    browser.click("#token-send");
    browser.wait_for("document.body.dataset.ready === 'yes'", TURN);

    // A demo scene by name: the picture, its frames, legend and object list appear.
    browser.type_into("#demo-name", &format!("dining_room_guests{ENTER}"));
    browser.wait_for("document.body.dataset.conversation", TURN);
    let scene_id: i64 = 1;
    let graph = get(
        service.address,
        &format!("/v1/scenes/{scene_id}"),
        Some(TOKEN),
    )
    .json();
    let objects = graph["objects"].as_array().unwrap().clone();
    assert_eq!(listed_objects(&browser).len(), objects.len());
    assert_eq!(
        browser.script("return document.querySelectorAll('#frame-layer rect.frame').length;"),
        objects.len()
    );
    assert!(!texts(&browser, "#legend li").is_empty());
    let original = digest(&browser);
    browser.screenshot(&shots.join("02-scene.png"));

    // Point at an object and rename it.
    let labels_png = get(
        service.address,
        &format!("/v1/scenes/{scene_id}/labels.png"),
        Some(TOKEN),
    );
    let labels =
        sayso::raster::decode_index_png(&labels_png.body, std::path::Path::new("labels"), 1 << 24)
            .unwrap();
    let target = objects
        .iter()
        .filter(|object| object["safety"] == false)
        .filter(|object| {
            !["wall", "floor", "ceiling", "chair", "towel"]
                .contains(&object["class"].as_str().unwrap())
        })
        .max_by_key(|object| object["area_pixels"].as_u64().unwrap())
        .expect("an object to rename");
    let target_id = target["object_id"].as_u64().unwrap();
    let (x, y) = pixel_of(target, &labels);
    let shown_width = browser
        .script("return document.getElementById('base-layer').getBoundingClientRect().width;")
        .as_f64()
        .unwrap();
    let scale = shown_width / graph["width"].as_f64().unwrap();
    browser.click_at(
        "#base-layer",
        (f64::from(x) + 0.5) * scale,
        (f64::from(y) + 0.5) * scale,
    );
    let pointing = browser.wait_for(
        "document.getElementById('pointer-line').textContent.includes('Pointing at')",
        TURN,
    );
    assert!(pointing.as_bool().unwrap());
    let status = send_note(&browser, "that's a towel");
    browser.screenshot(&shots.join("03-pointed-and-renamed.png"));
    assert_eq!(
        status,
        "applied",
        "moved: {:?}",
        texts(&browser, "#moved li")
    );
    assert!(
        texts(&browser, "#moved li")
            .iter()
            .any(|line| line.contains("towel")),
        "{:?}",
        texts(&browser, "#moved li")
    );
    assert!(listed_objects(&browser)
        .iter()
        .any(|(_, class)| class == "towel"));
    assert!(!listed_objects(&browser)
        .iter()
        .any(|(id, class)| *id == target_id && class == target["class"].as_str().unwrap()));
    let renamed = digest(&browser);
    assert_ne!(renamed, original, "the picture's labels changed");
    let turn = browser.script("return document.querySelector('#history li').textContent;");
    assert!(turn.as_str().unwrap().contains("pointing at"), "{turn}");

    // A question: its candidates are framed on the picture; clicking one answers it.
    let status = send_note(&browser, "the chair is a sofa");
    assert_eq!(status, "needs_clarification");
    let candidates = browser.script("return [...document.querySelectorAll('#frame-layer g.candidate')].map(g => Number(g.dataset.candidate));");
    let candidates = candidates.as_array().unwrap();
    assert!(candidates.len() >= 2, "{candidates:?}");
    assert_eq!(texts(&browser, "#candidates li").len(), candidates.len());
    browser.screenshot(&shots.join("04-question.png"));
    let pick = candidates[0].as_u64().unwrap();
    browser.click(&format!(
        "#frame-layer g.candidate[data-candidate='{pick}'] rect"
    ));
    assert_eq!(wait_for_turns(&browser, 3), "applied");
    browser.wait_for("document.getElementById('question').hidden", TURN);
    assert!(listed_objects(&browser)
        .iter()
        .any(|(_, class)| class == "sofa"));
    assert!(!listed_objects(&browser).contains(&(pick, "chair".to_string())));
    let history = texts(&browser, "#history li");
    assert!(
        history[0].contains(&format!("object {pick}")),
        "{history:?}"
    );
    assert_eq!(
        browser.script("return document.querySelectorAll('#frame-layer g.candidate').length;"),
        0
    );
    browser.screenshot(&shots.join("05-answered.png"));

    // A safety hold stays on screen until answered, then applies.
    let people_before = listed_objects(&browser)
        .iter()
        .filter(|(_, class)| class == "person")
        .count();
    assert!(people_before > 0);
    let status = send_note(&browser, "there is no person");
    assert_eq!(status, "needs_confirmation");
    assert_eq!(
        browser.script("return document.getElementById('hold').hidden;"),
        false
    );
    let held = digest(&browser);
    browser.screenshot(&shots.join("06-held.png"));
    browser.set_window(820, 1180);
    browser.screenshot(&shots.join("06b-held-tablet.png"));
    browser.set_window(1280, 900);
    browser.click("#confirm");
    assert_eq!(wait_for_turns(&browser, 5), "confirmed");
    browser.wait_for("document.getElementById('hold').hidden", TURN);
    assert!(listed_objects(&browser)
        .iter()
        .all(|(_, class)| class != "person"));
    let confirmed = digest(&browser);
    assert_ne!(confirmed, held);
    assert!(
        browser
            .script("return Number(document.getElementById('stage').dataset.movedPixels);")
            .as_u64()
            .unwrap()
            > 0
    );
    browser.screenshot(&shots.join("07-confirmed.png"));

    // Take back with the button, put back with the keyboard.
    browser.click("#undo");
    assert_eq!(wait_for_turns(&browser, 6), "undone");
    assert_eq!(
        digest(&browser),
        held,
        "taking back restores the labels before the confirmation"
    );
    assert_eq!(
        listed_objects(&browser)
            .iter()
            .filter(|(_, class)| class == "person")
            .count(),
        people_before
    );
    browser.screenshot(&shots.join("08-undone.png"));
    browser.control_key("y");
    assert_eq!(wait_for_turns(&browser, 7), "redone");
    assert_eq!(digest(&browser), confirmed);
    let turns = texts(&browser, "#history li").len();
    assert_eq!(turns, 7, "{:?}", texts(&browser, "#history li"));
}
