//! The settings every command that opens the correction log shares (`serve`, `store`, `field-notes`,
//! `export`, `migrate`), and opening the session over the log.
//!
//! Owns: the flags and their environment variables (`SAYSO_*`), layered over the TOML config file
//! (`sayso_session::config`) over the defaults; building the joint corrector; opening the session's `Coordinator`
//! on a SQLite file or a PostgreSQL database.
//! Must not: reach into the HTTP service; `store` and `field-notes` work through the session layer alone.

use std::path::PathBuf;
use std::sync::Arc;

use anyhow::Context;
use sayso_core::language::Grammar;
use sayso_correction_log::LogLocation;
use sayso_perception::pipeline::{load_classifier, model_path, CorrectionSettings};
use sayso_session::config::ServiceConfig;
use sayso_session::{Coordinator, CoordinatorSettings, Corrector, JointCorrector};

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
pub fn open_coordinator_with(
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
        ),
        LogLocation::Postgres(url) => Coordinator::open_postgres(corrector, url, &settings),
    }
    .with_context(|| format!("opening the correction log {}", location.shown()))?
    .with_scene_cache(config.scenes_in_memory, config.scene_memory_bytes);
    if let Some(path) = &config.user_model {
        let model = sayso_perception::unaries::byo_user_model::UserModel::load(path)
            .with_context(|| format!("loading the user model {}", path.display()))?;
        coordinator = coordinator.with_user_model(Arc::new(model));
    }
    Ok(Arc::new(coordinator))
}
