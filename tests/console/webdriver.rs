//! A small W3C WebDriver client for the console test: starts Debian's `chromedriver`, opens one headless
//! Chromium session with a fresh profile, and offers the few commands the test needs.
//!
//! Owns: the chromedriver process, the session and its profile directory (all ended on drop).
//! Must not: know anything about the console's page; the test says what to click and what to read.
//!
//! It speaks WebDriver as plain JSON over HTTP/1.1 with a few lines of `std::net` instead of a WebDriver
//! crate: the test needs a dozen commands, and a client crate would add an async HTTP stack to compile on
//! a 2-core machine for no gain. chromedriver keeps a connection open after answering even when asked to
//! close it, so an answer is read up to its `Content-Length`.

use std::io::{Read, Write};
use std::net::{SocketAddr, TcpListener, TcpStream};
use std::path::{Path, PathBuf};
use std::process::{Child, Command, Stdio};
use std::time::{Duration, Instant};

use base64::Engine;
use serde_json::{json, Value};

/// One request; returns the status and the JSON body (`Null` when there is none).
fn send(
    address: SocketAddr,
    method: &str,
    path: &str,
    body: &[u8],
) -> std::io::Result<(u16, Value)> {
    let mut stream = TcpStream::connect(address)?;
    stream.set_read_timeout(Some(Duration::from_secs(60)))?;
    let head = format!(
        "{method} {path} HTTP/1.1\r\nHost: {address}\r\nContent-Type: application/json\r\n\
         Content-Length: {}\r\n\r\n",
        body.len()
    );
    stream.write_all(head.as_bytes())?;
    stream.write_all(body)?;
    let mut raw = Vec::new();
    let mut chunk = [0u8; 65536];
    let invalid =
        |what: &str| std::io::Error::new(std::io::ErrorKind::InvalidData, what.to_string());
    loop {
        let read = stream.read(&mut chunk)?;
        if read == 0 {
            return Err(invalid("the connection closed before a whole answer"));
        }
        raw.extend_from_slice(&chunk[..read]);
        let Some(split) = raw.windows(4).position(|window| window == b"\r\n\r\n") else {
            continue;
        };
        let head = String::from_utf8_lossy(&raw[..split]).to_string();
        let status: u16 = head
            .split(' ')
            .nth(1)
            .and_then(|code| code.parse().ok())
            .ok_or_else(|| invalid("no status line"))?;
        let length: usize = head
            .split("\r\n")
            .filter_map(|line| line.split_once(':'))
            .find(|(name, _)| name.trim().eq_ignore_ascii_case("content-length"))
            .and_then(|(_, value)| value.trim().parse().ok())
            .ok_or_else(|| invalid("no Content-Length"))?;
        if raw.len() < split + 4 + length {
            continue;
        }
        let body = &raw[split + 4..split + 4 + length];
        let value = if body.is_empty() {
            Value::Null
        } else {
            serde_json::from_slice(body).map_err(|error| invalid(&error.to_string()))?
        };
        return Ok((status, value));
    }
}

/// The key WebDriver uses for an element reference.
const ELEMENT: &str = "element-6066-11e4-a52e-4f735466cecf";

/// Finds a program: the environment variable when set, else the first of `names` on `PATH`.
fn find_program(variable: &str, names: &[&str]) -> Option<PathBuf> {
    if let Some(path) = std::env::var_os(variable) {
        return Some(PathBuf::from(path)).filter(|path| path.is_file());
    }
    let path = std::env::var_os("PATH")?;
    std::env::split_paths(&path)
        .flat_map(|directory| names.iter().map(move |name| directory.join(name)))
        .find(|candidate| candidate.is_file())
}

pub struct Browser {
    driver: Child,
    address: SocketAddr,
    session: String,
    _profile: tempfile::TempDir,
}

impl Browser {
    /// Starts chromedriver and a headless Chromium of `width` x `height` CSS pixels. Panics with a clear
    /// message when either program is missing: the console test must not pass without a browser.
    pub fn start(width: u32, height: u32) -> Browser {
        let chromium = find_program("SAYSO_CHROMIUM", &["chromium", "chromium-browser"])
            .unwrap_or_else(|| {
                panic!(
                    "the console test needs Chromium and found none on PATH (nor SAYSO_CHROMIUM): \
                 install it with `apt-get install -y chromium chromium-driver` (.ci/run does)"
                )
            });
        let chromedriver = find_program("SAYSO_CHROMEDRIVER", &["chromedriver"]).unwrap_or_else(|| {
            panic!(
                "the console test needs chromedriver and found none on PATH (nor SAYSO_CHROMEDRIVER): \
                 install it with `apt-get install -y chromium-driver` (.ci/run does)"
            )
        });
        let port = TcpListener::bind("127.0.0.1:0")
            .and_then(|listener| listener.local_addr())
            .expect("a free port for chromedriver")
            .port();
        let driver = Command::new(&chromedriver)
            .arg(format!("--port={port}"))
            .stdout(Stdio::null())
            .stderr(Stdio::null())
            .spawn()
            .unwrap_or_else(|error| panic!("could not start {}: {error}", chromedriver.display()));
        let address = SocketAddr::from(([127, 0, 0, 1], port));
        let profile = tempfile::tempdir().expect("profile directory");
        let mut browser = Browser {
            driver,
            address,
            session: String::new(),
            _profile: profile,
        };
        browser.wait_for_driver();
        let arguments = [
            "--headless".to_string(),
            "--no-sandbox".to_string(),
            "--disable-gpu".to_string(),
            "--disable-quic".to_string(),
            "--no-first-run".to_string(),
            "--disable-background-networking".to_string(),
            "--disable-component-update".to_string(),
            "--disable-sync".to_string(),
            "--disable-dev-shm-usage".to_string(),
            format!("--window-size={width},{height}"),
            format!("--user-data-dir={}", browser._profile.path().display()),
        ];
        let created = browser.call(
            "POST",
            "/session",
            Some(json!({"capabilities": {"alwaysMatch": {
                "browserName": "chrome",
                "goog:chromeOptions": {"binary": chromium.to_string_lossy(), "args": arguments}
            }}})),
        );
        browser.session = created["sessionId"]
            .as_str()
            .unwrap_or_else(|| panic!("chromedriver made no session: {created}"))
            .to_string();
        browser
    }

    fn wait_for_driver(&self) {
        let started = Instant::now();
        while started.elapsed() < Duration::from_secs(20) {
            if let Ok((status, answer)) = send(self.address, "GET", "/status", b"") {
                if status == 200 && answer["value"]["ready"] == true {
                    return;
                }
            }
            std::thread::sleep(Duration::from_millis(100));
        }
        panic!(
            "chromedriver did not answer on {} within 20 s",
            self.address
        );
    }

    /// One WebDriver command; returns its `value` and panics on a WebDriver error.
    fn call(&self, method: &str, path: &str, body: Option<Value>) -> Value {
        let body = body.map(|value| value.to_string()).unwrap_or_default();
        let (status, answer) = send(self.address, method, path, body.as_bytes())
            .unwrap_or_else(|error| panic!("WebDriver {method} {path}: {error}"));
        if status != 200 {
            panic!("WebDriver {method} {path} answered {status}: {answer}");
        }
        answer["value"].clone()
    }

    fn session_call(&self, method: &str, path: &str, body: Option<Value>) -> Value {
        self.call(method, &format!("/session/{}{path}", self.session), body)
    }

    pub fn goto(&self, url: &str) {
        self.session_call("POST", "/url", Some(json!({ "url": url })));
    }

    pub fn set_window(&self, width: u32, height: u32) {
        self.session_call(
            "POST",
            "/window/rect",
            Some(json!({"width": width, "height": height})),
        );
    }

    /// The first element matching a CSS selector.
    pub fn find(&self, selector: &str) -> String {
        let found = self.session_call(
            "POST",
            "/element",
            Some(json!({"using": "css selector", "value": selector})),
        );
        found[ELEMENT]
            .as_str()
            .unwrap_or_else(|| panic!("no element {selector}: {found}"))
            .to_string()
    }

    pub fn click(&self, selector: &str) {
        let element = self.find(selector);
        self.session_call(
            "POST",
            &format!("/element/{element}/click"),
            Some(json!({})),
        );
    }

    /// Types text into an element (`\u{E007}` is the Enter key).
    pub fn type_into(&self, selector: &str, text: &str) {
        let element = self.find(selector);
        self.session_call(
            "POST",
            &format!("/element/{element}/value"),
            Some(json!({ "text": text })),
        );
    }

    /// Presses a key with Control held down.
    pub fn control_key(&self, key: &str) {
        self.session_call(
            "POST",
            "/actions",
            Some(
                json!({"actions": [{"type": "key", "id": "keyboard", "actions": [
                    {"type": "keyDown", "value": "\u{E009}"},
                    {"type": "keyDown", "value": key},
                    {"type": "keyUp", "value": key},
                    {"type": "keyUp", "value": "\u{E009}"}
                ]}]}),
            ),
        );
        self.session_call("DELETE", "/actions", None);
    }

    /// Presses keys one after another (WebDriver key values: `\u{E012}` left, `\u{E014}` right, `\u{E013}`
    /// up, `\u{E015}` down, `\u{E004}` Tab, `\u{E007}` Enter, `\u{E00C}` Escape), on whatever has the focus.
    pub fn press(&self, keys: &[&str]) {
        let actions: Vec<Value> = keys
            .iter()
            .flat_map(|key| {
                [
                    json!({"type": "keyDown", "value": key}),
                    json!({"type": "keyUp", "value": key}),
                ]
            })
            .collect();
        self.session_call(
            "POST",
            "/actions",
            Some(json!({"actions": [{"type": "key", "id": "keyboard", "actions": actions}]})),
        );
        self.session_call("DELETE", "/actions", None);
    }

    /// Drags an element with the mouse by `dx` CSS pixels sideways, in a few steps.
    pub fn drag_by(&self, selector: &str, dx: f64) {
        let element = self.find(selector);
        let mut actions = vec![
            json!({"type": "pointerMove", "origin": {ELEMENT: element}, "x": 0, "y": 0, "duration": 0}),
            json!({"type": "pointerDown", "button": 0}),
        ];
        for _ in 0..4 {
            actions.push(json!({"type": "pointerMove", "origin": "pointer",
                "x": (dx / 4.0).round() as i64, "y": 0, "duration": 20}));
        }
        actions.push(json!({"type": "pointerUp", "button": 0}));
        self.session_call(
            "POST",
            "/actions",
            Some(json!({"actions": [{"type": "pointer", "id": "mouse",
                "parameters": {"pointerType": "mouse"}, "actions": actions}]})),
        );
        self.session_call("DELETE", "/actions", None);
    }

    /// Clicks with the mouse at a point given in CSS pixels from an element's top left corner.
    pub fn click_at(&self, selector: &str, x: f64, y: f64) {
        let element = self.find(selector);
        let rect = self.session_call("GET", &format!("/element/{element}/rect"), None);
        let width = rect["width"].as_f64().expect("width");
        let height = rect["height"].as_f64().expect("height");
        // Pointer offsets from an element are measured from its centre, in whole CSS pixels.
        let dx = (x - width / 2.0).round() as i64;
        let dy = (y - height / 2.0).round() as i64;
        self.session_call(
            "POST",
            "/actions",
            Some(json!({"actions": [{"type": "pointer", "id": "mouse",
                "parameters": {"pointerType": "mouse"}, "actions": [
                {"type": "pointerMove", "origin": {ELEMENT: element}, "x": dx, "y": dy, "duration": 0},
                {"type": "pointerDown", "button": 0},
                {"type": "pointerUp", "button": 0}
            ]}]})),
        );
        self.session_call("DELETE", "/actions", None);
    }

    /// Runs a script in the page (`return ...;` gives the value).
    pub fn script(&self, source: &str) -> Value {
        self.session_call(
            "POST",
            "/execute/sync",
            Some(json!({"script": source, "args": []})),
        )
    }

    /// Waits until `expression` is truthy in the page and returns its value; panics after `limit`.
    pub fn wait_for(&self, expression: &str, limit: Duration) -> Value {
        let started = Instant::now();
        loop {
            let value = self.script(&format!("return ({expression});"));
            let truthy = match &value {
                Value::Null => false,
                Value::Bool(flag) => *flag,
                Value::String(text) => !text.is_empty(),
                Value::Number(number) => number.as_f64() != Some(0.0),
                _ => true,
            };
            if truthy {
                return value;
            }
            if started.elapsed() > limit {
                let problem = self.script(
                    "return [document.getElementById('problem').textContent, \
                     document.getElementById('chooser-problem').textContent];",
                );
                panic!("waited {limit:?} for `{expression}`; the page says {problem}");
            }
            std::thread::sleep(Duration::from_millis(100));
        }
    }

    /// Saves a PNG screenshot of the viewport.
    pub fn screenshot(&self, path: &Path) {
        let encoded = self.session_call("GET", "/screenshot", None);
        let bytes = base64::engine::general_purpose::STANDARD
            .decode(encoded.as_str().expect("base64 screenshot"))
            .expect("screenshot decodes");
        std::fs::write(path, bytes).expect("write screenshot");
    }
}

impl Drop for Browser {
    fn drop(&mut self) {
        if !self.session.is_empty() {
            let _ = send(
                self.address,
                "DELETE",
                &format!("/session/{}", self.session),
                b"",
            );
        }
        let _ = self.driver.kill();
        let _ = self.driver.wait();
    }
}
