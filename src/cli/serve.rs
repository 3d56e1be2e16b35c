//! `sayso serve`: start the correction service.
//!
//! Owns: the serve-only flags (address, port, user model) and the process's runtime and shutdown signal;
//! the settings shared with other commands are `super::open_log`'s.
//! Must not: handle requests; `sayso_service` does.

use std::net::{IpAddr, SocketAddr};
use std::path::PathBuf;

use anyhow::Context;
use sayso_perception::pipeline::model_path;
use sayso_service::AppState;

use super::open_log::{joint_corrector, open_coordinator_with, ServiceFlags};

/// Start the correction service (HTTP, JSON, OpenAPI at /v1/openapi.json).
///
/// A corrected scene is advisory: never a substitute for the robot's own safety sensors.
#[derive(Debug, clap::Args)]
pub struct ServeArgs {
    #[command(flatten)]
    pub service: ServiceFlags,
    /// The address to listen on [default: 127.0.0.1]; other addresses need operator tokens.
    #[arg(long, env = "SAYSO_ADDRESS")]
    pub address: Option<IpAddr>,
    /// The port [default: 8417]; 0 picks a free one (printed on standard output).
    #[arg(long, env = "SAYSO_PORT")]
    pub port: Option<u16>,
    /// A user per-pixel ONNX model's config file (docs/perception.md) that scores every scene registered
    /// without scores or a label map [default: the built-in classifier].
    #[arg(long, env = "SAYSO_USER_MODEL")]
    pub user_model: Option<PathBuf>,
}

pub fn run(args: ServeArgs) -> anyhow::Result<()> {
    let mut config = args.service.config()?;
    if let Some(address) = args.address {
        config.bind = SocketAddr::new(address, config.bind.port());
    }
    if let Some(port) = args.port {
        config.bind.set_port(port);
    }
    if let Some(path) = args.user_model {
        config.user_model = Some(path);
    }
    config.validate()?;
    let joint = joint_corrector(&config)?;
    super::model_watch::spawn(joint.clone(), model_path(config.model.as_deref()));
    let coordinator = open_coordinator_with(&config, joint)?;
    let runtime = tokio::runtime::Builder::new_multi_thread()
        .enable_all()
        .build()
        .context("starting the async runtime")?;
    runtime.block_on(async move {
        let listener = tokio::net::TcpListener::bind(config.bind)
            .await
            .with_context(|| format!("binding {}", config.bind))?;
        let address = listener.local_addr()?;
        println!(
            "sayso: listening on http://{address}/v1 (correction log {})",
            config.log_location().shown()
        );
        eprintln!(
            "sayso: a corrected scene is advisory; it never replaces the robot's own safety sensors"
        );
        let state = AppState::new(coordinator, config);
        sayso_service::run(listener, state, shutdown_signal()).await?;
        Ok(())
    })
}

async fn shutdown_signal() {
    let interrupt = async {
        let _ = tokio::signal::ctrl_c().await;
    };
    #[cfg(unix)]
    let terminate = async {
        match tokio::signal::unix::signal(tokio::signal::unix::SignalKind::terminate()) {
            Ok(mut signal) => {
                signal.recv().await;
            }
            Err(_) => std::future::pending::<()>().await,
        }
    };
    #[cfg(not(unix))]
    let terminate = std::future::pending::<()>();
    tokio::select! {
        _ = interrupt => {},
        _ = terminate => {},
    }
}
