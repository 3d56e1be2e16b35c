//! The service's tests in one test binary: the HTTP router, the `sayso serve` binary, the correction log on
//! both backends, the conversation loop and the console in a browser. One binary links the HTTP stack, the
//! inference library and the database drivers once, not once per file.
//!
//! Owns: the module list and the helpers these modules share. Must not: hold tests of its own.

#[path = "../console/support.rs"]
mod console_support;
#[path = "../paths.rs"]
mod paths;
#[path = "../postgres_support/mod.rs"]
mod postgres_support;
#[path = "../service_support/mod.rs"]
mod service_support;
#[path = "../console/webdriver.rs"]
mod webdriver;

mod console_browser;
mod conversation_loop;
mod log_backends;
mod service_access;
mod service_bad_input;
mod service_concurrency;
mod service_crash;
mod service_fleet;
mod service_http;
mod service_limits;
mod service_postgres;
mod service_rebuild;
mod service_retrain;
mod service_versions;
