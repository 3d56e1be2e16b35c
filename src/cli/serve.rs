//! `sayso serve`: start the correction service; also the settings shared by commands that open the log.
//!
//! Owns: the service flags and their environment variables (`SAYSO_*`), layered over the TOML config file
//! over the defaults, and the process's runtime and shutdown signal.
//! Must not: handle requests; `sayso::service` does.

use std::net::{IpAddr, SocketAddr};
use std::path::PathBuf;
use std::sync::Arc;

use anyhow::Context;
use sayso::correction_log::LogLocation;
use sayso::language::Grammar;
use sayso::pipeline::{load_classifier, model_path, CorrectionSettings};
use sayso::service::config::ServiceConfig;
use sayso::service::coordinator::{Coordinator, CoordinatorSettings};
use sayso::service::corrector::Corrector;
use sayso::service::joint::JointCorrector;
use sayso::service::metrics::Metrics;
use sayso::service::AppState;

/// Where the service's settings come from: flags, then `SAYSO_*` variables, then the config file.
#[derive(Debug, Clone, clap::Args)]
pub struct ServiceFlags {
    /// A TOML config file (see the service docs for every key).
    #[arg(long, env = "SAYSO_CONFIG")]
    pub config: Option<PathBuf>,
    /// The data directory holding the correction log [default: sayso-data].
    #[arg(long, env = "SAYSO_DATA_DIR")]
    pub data_dir: Option<PathBuf>,
    /// Where the correction log lives: a `postgres://` address or a SQLite file path [default:
    /// corrections.sqlite in the data directory].
    #[arg(long, env = "SAYSO_DATABASE")]
    pub database: Option<String>,
    /// The grammar directory (classes.toml) [default: the embedded one].
    #[arg(long, env = "SAYSO_GRAMMAR_DIR")]
    pub grammar_dir: Option<PathBuf>,
    /// The segment classifier model (ONNX).
    #[arg(long, env = "SAYSO_MODEL")]
    pub model: Option<PathBuf>,
    /// Demo scenes registrable by name [default: the crate's demo_scenes/, as for demo, fix and score].
    #[arg(long, env = "SAYSO_DEMO_DIR")]
    pub demo_dir: Option<PathBuf>,
}

impl ServiceFlags {
    /// The config file (or defaults) with these flags on top.
    pub fn config(&self) -> anyhow::Result<ServiceConfig> {
        let mut config = match &self.config {
            Some(path) => ServiceConfig::load(path)?,
            None => ServiceConfig::default(),
        };
        if let Some(directory) = &self.data_dir {
            config.data_dir = directory.clone();
        }
        if let Some(database) = &self.database {
            config.database = Some(database.clone());
        }
        if let Some(directory) = &self.grammar_dir {
            config.grammar_dir = Some(directory.clone());
        }
        if let Some(model) = &self.model {
            config.model = Some(model.clone());
        }
        if let Some(directory) = &self.demo_dir {
            config.demo_dir = Some(directory.clone());
        }
        Ok(config)
    }
}

/// The corrector the binary runs: the joint pipeline with the configured grammar and classifier.
pub fn corrector(config: &ServiceConfig) -> anyhow::Result<Arc<dyn Corrector>> {
    Ok(joint_corrector(config)?)
}

/// The joint corrector itself (the service keeps a handle to swap its model).
pub fn joint_corrector(config: &ServiceConfig) -> anyhow::Result<Arc<JointCorrector>> {
    let mut settings = CorrectionSettings::embedded()?;
    if let Some(directory) = &config.grammar_dir {
        settings.grammar = Grammar::load(directory)
            .with_context(|| format!("loading the grammar from {}", directory.display()))?;
    }
    let model = model_path(config.model.as_deref());
    let classifier = load_classifier(&model, settings.grammar.taxonomy())
        .with_context(|| format!("loading the segment classifier {}", model.display()))?;
    Ok(Arc::new(JointCorrector::new(settings, classifier)))
}

/// Opens the coordinator (and with it the correction log) for a configuration.
pub fn open_coordinator(config: &ServiceConfig) -> anyhow::Result<Arc<Coordinator>> {
    open_coordinator_with(config, corrector(config)?)
}

/// Opens the coordinator with a corrector the caller made.
fn open_coordinator_with(
    config: &ServiceConfig,
    corrector: Arc<dyn Corrector>,
) -> anyhow::Result<Arc<Coordinator>> {
    let location = config.log_location();
    let settings = CoordinatorSettings {
        log_path: config.log_path(),
        pixel_limit: config.pixel_limit,
        demo_dir: config.demo_directory(),
    };
    let mut coordinator = match &location {
        LogLocation::Sqlite(path) => Coordinator::open(
            corrector,
            &CoordinatorSettings {
                log_path: path.clone(),
                ..settings
            },
            Arc::new(Metrics::default()),
        ),
        LogLocation::Postgres(url) => {
            Coordinator::open_postgres(corrector, url, &settings, Arc::new(Metrics::default()))
        }
    }
    .with_context(|| format!("opening the correction log {}", location.shown()))?;
    if let Some(path) = &config.user_model {
        let model = sayso::unaries::byo_user_model::UserModel::load(path)
            .with_context(|| format!("loading the user model {}", path.display()))?;
        coordinator = coordinator.with_user_model(Arc::new(model));
    }
    Ok(Arc::new(coordinator))
}

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
        sayso::service::run(listener, state, shutdown_signal()).await?;
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
