//! A real PostgreSQL server for the correction log's tests: the one `SAYSO_TEST_POSTGRES` names (CI starts
//! a throwaway cluster with `.ci/postgres-cluster.sh` and sets it), or else a throwaway cluster this test
//! process starts with the same script and stops when it exits. Each test gets a database of its own.
//!
//! Without PostgreSQL the tests that need it fail, saying how to install it: they never pass silently.

#![allow(dead_code)]

use std::path::Path;
use std::process::{Command, Stdio};
use std::sync::atomic::{AtomicUsize, Ordering};
use std::sync::OnceLock;

const HOW_TO_INSTALL: &str = "the correction log's PostgreSQL tests need a PostgreSQL server: install \
    Debian's (`sudo apt-get install postgresql`; the tests start a throwaway cluster of their own on \
    loopback), or set SAYSO_TEST_POSTGRES=postgres://USER@HOST:PORT/postgres to a server where they may \
    create databases";

/// The address of the server's `postgres` database.
pub fn server() -> &'static str {
    static SERVER: OnceLock<String> = OnceLock::new();
    SERVER.get_or_init(|| match std::env::var("SAYSO_TEST_POSTGRES") {
        Ok(url) if !url.is_empty() => url,
        _ => start_cluster(),
    })
}

fn start_cluster() -> String {
    let script = Path::new(env!("CARGO_MANIFEST_DIR")).join(".ci/postgres-cluster.sh");
    let started = Command::new("bash")
        .arg(&script)
        .arg("start")
        .stdin(Stdio::null())
        .output()
        .unwrap_or_else(|error| {
            panic!("cannot run {}: {error}; {HOW_TO_INSTALL}", script.display())
        });
    let text = String::from_utf8_lossy(&started.stdout).to_string();
    assert!(
        started.status.success(),
        "starting a throwaway PostgreSQL cluster failed ({}): {HOW_TO_INSTALL}",
        String::from_utf8_lossy(&started.stderr).trim()
    );
    let value = |name: &str| {
        text.lines()
            .find_map(|line| line.strip_prefix(&format!("export {name}=")))
            .map(str::to_string)
            .unwrap_or_else(|| panic!("the cluster script printed no {name}: {text}"))
    };
    let (url, directory) = (
        value("SAYSO_TEST_POSTGRES"),
        value("SAYSO_TEST_POSTGRES_DIR"),
    );
    // Stops the cluster once this test process has gone (its own output goes nowhere, so cargo does not
    // wait for it).
    let watchdog = format!(
        "while [ -d /proc/{pid} ]; do sleep 1; done; bash '{script}' stop '{directory}'",
        pid = std::process::id(),
        script = script.display(),
    );
    // Never waited on: it must outlive this process, and its parent then becomes init, which reaps it.
    #[allow(clippy::zombie_processes)]
    Command::new("sh")
        .arg("-c")
        .arg(watchdog)
        .stdin(Stdio::null())
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .spawn()
        .expect("the cluster's watchdog starts");
    url
}

/// Runs `sql` on the database at `url`.
pub fn execute(url: &str, sql: &str) {
    let runtime = tokio::runtime::Builder::new_current_thread()
        .enable_all()
        .build()
        .unwrap();
    runtime.block_on(async {
        let (client, connection) = tokio_postgres::connect(url, tokio_postgres::NoTls)
            .await
            .unwrap_or_else(|error| panic!("cannot connect to {url}: {error}; {HOW_TO_INSTALL}"));
        let driver = tokio::spawn(connection);
        client
            .batch_execute(sql)
            .await
            .unwrap_or_else(|error| panic!("{sql}: {error}"));
        drop(client);
        let _ = driver.await;
    });
}

/// A new, empty database on the server; returns its address.
pub fn fresh_database() -> String {
    static COUNTER: AtomicUsize = AtomicUsize::new(0);
    let server = server();
    let name = format!(
        "sayso_test_{}_{}",
        std::process::id(),
        COUNTER.fetch_add(1, Ordering::SeqCst)
    );
    execute(server, &format!("CREATE DATABASE {name}"));
    let (base, _) = server
        .rsplit_once('/')
        .expect("the server address names a database");
    format!("{base}/{name}")
}

/// A new database on the server with the log's schema, migrated by `sayso migrate` as an operator would;
/// returns its address.
pub fn migrated_database() -> String {
    let url = fresh_database();
    let migrated = Command::new(env!("CARGO_BIN_EXE_sayso"))
        .args(["migrate", "--database", &url])
        .output()
        .expect("sayso migrate runs");
    assert!(migrated.status.success(), "{migrated:?}");
    url
}

/// The rows `sql` returns on the database at `url`.
pub fn query(url: &str, sql: &str) -> Vec<tokio_postgres::Row> {
    let runtime = tokio::runtime::Builder::new_current_thread()
        .enable_all()
        .build()
        .unwrap();
    runtime.block_on(async {
        let (client, connection) = tokio_postgres::connect(url, tokio_postgres::NoTls)
            .await
            .unwrap_or_else(|error| panic!("cannot connect to {url}: {error}; {HOW_TO_INSTALL}"));
        let driver = tokio::spawn(connection);
        let rows = client
            .query(sql, &[])
            .await
            .unwrap_or_else(|error| panic!("{sql}: {error}"));
        drop(client);
        let _ = driver.await;
        rows
    })
}
