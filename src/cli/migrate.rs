//! `sayso migrate`: bring the correction log's schema up to this build's version, on SQLite or PostgreSQL.
//!
//! Owns: the command's flags and the printed line (the versions applied, or that there was nothing to do).
//! Must not: hold migrations; the correction log does, the same numbered list for both backends.

use anyhow::Context;
use sayso_correction_log::{CorrectionLog, LOG_SCHEMA_VERSION};

use super::open_log::ServiceFlags;

/// Apply the correction log's pending schema migrations (a PostgreSQL database is never migrated by
/// `serve`: run this once before starting replicas of a new build).
#[derive(Debug, clap::Args)]
pub struct MigrateArgs {
    #[command(flatten)]
    pub service: ServiceFlags,
}

pub fn run(args: MigrateArgs) -> anyhow::Result<()> {
    let config = args.service.config()?;
    let location = config.log_location();
    let (log, applied) = CorrectionLog::migrate(&location)
        .with_context(|| format!("migrating the correction log {}", location.shown()))?;
    let version = log.schema_version()?;
    if applied.is_empty() {
        println!(
            "sayso: the correction log {} is at schema {version}; nothing to do",
            location.shown()
        );
    } else {
        let list: Vec<String> = applied.iter().map(i64::to_string).collect();
        println!(
            "sayso: migrated the correction log {} to schema {version} (applied {})",
            location.shown(),
            list.join(", ")
        );
    }
    anyhow::ensure!(
        version == LOG_SCHEMA_VERSION,
        "the correction log is at schema {version} after migrating; this build writes {LOG_SCHEMA_VERSION}"
    );
    Ok(())
}
