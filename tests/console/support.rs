//! What the console's browser test stands on: the service on the real pipeline on a loopback port, the
//! keys it presses, and what it reads off the page (the object list, label-map fingerprints, texts, turns).

use std::net::SocketAddr;
use std::sync::Arc;
use std::time::Duration;

use sayso_session::config::{OperatorToken, Role, ServiceConfig};
use sayso_session::JointCorrector;
use sayso_session::{Coordinator, CoordinatorSettings};
use serde_json::Value;

use super::service_support::{get, serve_coordinator, RunningService};
use super::webdriver::Browser;

pub const TOKEN: &str = "wren-street-console-test";
pub const ENTER: &str = "\u{E007}";
pub const TAB: &str = "\u{E004}";
pub const LEFT: &str = "\u{E012}";
pub const RIGHT: &str = "\u{E014}";
pub const DOWN: &str = "\u{E015}";
pub const ESCAPE: &str = "\u{E00C}";
pub const TURN: Duration = Duration::from_secs(20);

/// Runs the service on the real pipeline (the built-in classifier) on a loopback port until dropped.
pub fn start_service(data: &std::path::Path) -> RunningService {
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
    let engine =
        JointCorrector::load(&sayso_perception::pipeline::model_path(None)).expect("classifier");
    let coordinator = Arc::new(
        Coordinator::open(
            Arc::new(engine),
            &CoordinatorSettings {
                log_path: config.log_path(),
                pixel_limit: config.pixel_limit,
                demo_dir: sayso_core::demo::demo_directory(None),
            },
        )
        .expect("open coordinator"),
    );
    serve_coordinator(coordinator, config)
}

/// The page's object list as (object id, class) pairs.
pub fn listed_objects(browser: &Browser) -> Vec<(u64, String)> {
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

/// The page's fingerprint of a label map (FNV-1a over the class id of each pixel, as `picture.js` takes
/// them from the index PNG's one byte per pixel), for a map read from the API.
pub fn fingerprint(labels: &sayso_core::raster::IndexImage) -> String {
    let mut hash: u32 = 2166136261;
    for &value in &labels.values {
        hash ^= u32::from(value as u8);
        hash = hash.wrapping_mul(16777619);
    }
    format!("{hash:08x}")
}

pub fn label_map(address: SocketAddr, path: &str) -> sayso_core::raster::IndexImage {
    let reply = get(address, path, Some(TOKEN));
    assert_eq!(reply.status, 200, "{path}");
    sayso_core::raster::decode_index_png(&reply.body, std::path::Path::new("labels"), 1 << 24)
        .unwrap()
}

pub fn digest(browser: &Browser) -> String {
    browser
        .script("return document.getElementById('stage').dataset.labelsDigest;")
        .as_str()
        .unwrap()
        .to_string()
}

pub fn texts(browser: &Browser, selector: &str) -> Vec<String> {
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
pub fn send_note(browser: &Browser, text: &str) -> String {
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
pub fn wait_for_turns(browser: &Browser, count: usize) -> String {
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
pub fn pixel_of(object: &Value, labels: &sayso_core::raster::IndexImage) -> (u32, u32) {
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

/// One of the picture's data attributes (`data-split`, `data-cursor`, `data-before-digest`...), or "".
pub fn stage_data(browser: &Browser, what: &str) -> String {
    browser
        .script(&format!(
            "return document.getElementById('stage').dataset.{what};"
        ))
        .as_str()
        .unwrap_or("")
        .to_string()
}
