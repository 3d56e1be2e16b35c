//! Diagnostic: the correction service as the load bench starts it (`benches/service.rs`: the shipped
//! engine, the durable log, the bench's demo scenes registered by name, one conversation on each), then
//! `REQUESTS` notes sent one after another across the conversations through real HTTP on loopback, so a
//! profiler sees one correction at a time. `cargo run --release --example service_profile -- REQUESTS`
//! prints the median round trip; under `valgrind --tool=callgrind --instr-atstart=no` it switches
//! instrumentation on itself (`callgrind_control -i on`) once the scenes are registered and warmed up, so
//! the counts are those of the timed corrections alone (service and client together), to split per stage
//! with `callgrind_annotate --inclusive=yes`; under `perf record` it is a steady closed loop.
//!
//! Owns: nothing the crate uses.
//! Must not: tune anything; it prints figures for people to read.

/// The one request `conversations` sends, over a new loopback connection (as the tests' own helper does,
/// which also starts binaries this example has not got).
mod service_support {
    use std::io::{Read, Write};
    use std::net::{SocketAddr, TcpStream};

    pub struct Reply {
        pub status: u16,
        pub body: Vec<u8>,
    }

    impl Reply {
        pub fn json(&self) -> serde_json::Value {
            serde_json::from_slice(&self.body).expect("a JSON body")
        }
    }

    /// A JSON request with `Connection: close`; the whole answer (the service never chunks these).
    pub fn send_json(
        address: SocketAddr,
        method: &str,
        path: &str,
        _token: Option<&str>,
        body: &serde_json::Value,
    ) -> Reply {
        let body = body.to_string();
        let mut stream = TcpStream::connect(address).expect("connects");
        let head = format!(
            "{method} {path} HTTP/1.1\r\nHost: {address}\r\nConnection: close\r\nContent-Type: \
             application/json\r\nContent-Length: {}\r\n\r\n",
            body.len()
        );
        stream.write_all(head.as_bytes()).expect("writes");
        stream.write_all(body.as_bytes()).expect("writes");
        let mut raw = Vec::new();
        stream.read_to_end(&mut raw).expect("reads");
        let split = raw
            .windows(4)
            .position(|window| window == b"\r\n\r\n")
            .expect("an end of headers");
        let status = String::from_utf8_lossy(&raw[..split])
            .split(' ')
            .nth(1)
            .and_then(|code| code.parse().ok())
            .expect("a status");
        Reply {
            status,
            body: raw[split + 4..].to_vec(),
        }
    }
}

#[path = "../benches/support/demo_turns.rs"]
mod demo_turns;

#[path = "../benches/support/conversations.rs"]
#[allow(dead_code)]
mod conversations;

use std::sync::Arc;
use std::time::Duration;

use sayso_core::demo::demo_directory;
use sayso_perception::pipeline::{load_classifier, model_path};
use sayso_service::AppState;
use sayso_session::config::ServiceConfig;
use sayso_session::{Coordinator, CoordinatorSettings, JointCorrector};

fn main() {
    let requests: usize = std::env::args()
        .nth(1)
        .and_then(|text| text.parse().ok())
        .unwrap_or(40);
    let data = tempfile::tempdir().expect("a temporary directory");
    let config = ServiceConfig {
        data_dir: data.path().to_path_buf(),
        rate_per_second: 1e9,
        rate_burst: u32::MAX,
        ..ServiceConfig::default()
    };
    let settings = demo_turns::settings();
    let classifier =
        load_classifier(&model_path(None), settings.grammar.taxonomy()).expect("the classifier");
    let coordinator = Arc::new(
        Coordinator::open(
            Arc::new(JointCorrector::new(settings, classifier)),
            &CoordinatorSettings {
                log_path: config.log_path(),
                pixel_limit: config.pixel_limit,
                demo_dir: demo_directory(None),
            },
        )
        .expect("the coordinator opens"),
    );
    let runtime = tokio::runtime::Builder::new_multi_thread()
        .worker_threads(2)
        .enable_all()
        .build()
        .expect("a runtime");
    let listener = runtime
        .block_on(tokio::net::TcpListener::bind("127.0.0.1:0"))
        .expect("a listener");
    let address = listener.local_addr().expect("an address");
    runtime.spawn(sayso_service::run(
        listener,
        AppState::new(coordinator, config),
        std::future::pending(),
    ));
    let conversations = conversations::open_conversations(address);
    // Warm up: every scene's notes once.
    for step in 0..4 {
        for conversation in &conversations {
            conversations::utterance(address, conversation, step);
        }
    }
    if std::env::var_os("SAYSO_CALLGRIND").is_some() {
        // Switch callgrind's instrumentation on for this process, without waiting on the tool (it answers
        // while the program runs); the pause lets it take effect before the first timed request.
        let _ = std::process::Command::new("callgrind_control")
            .args(["-i", "on", &std::process::id().to_string()])
            .spawn();
        std::thread::sleep(Duration::from_secs(3));
    }
    let mut times: Vec<Duration> = (0..requests)
        .map(|index| {
            let conversation = &conversations[index % conversations.len()];
            conversations::utterance(address, conversation, 4 + index / conversations.len())
        })
        .collect();
    times.sort();
    println!(
        "{requests} corrections one at a time: median round trip {:.2} ms, p90 {:.2} ms; load average {}",
        demo_turns::percentile(&times, 0.5).as_secs_f64() * 1e3,
        demo_turns::percentile(&times, 0.9).as_secs_f64() * 1e3,
        demo_turns::load_average()
    );
}
