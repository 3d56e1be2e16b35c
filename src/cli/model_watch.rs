//! The served model's file, watched: when `sayso train --corrections` (or anyone) replaces it, the running
//! service loads the new file, checks it against the taxonomy and the feature layout, and serves it from
//! the next turn on, without a restart. A file that does not load is reported and the model in service
//! stays.
//!
//! Owns: the polling thread and its interval. Must not: decide whether a model is good enough (the gate in
//! `sayso train` does that before it replaces the file).

use std::path::PathBuf;
use std::sync::Arc;
use std::time::{Duration, SystemTime};

use sayso::service::corrector::Corrector;
use sayso::service::joint::JointCorrector;
use sayso::unaries::{current_feature_layout, Classifier};

/// How often the file's size and modification time are looked at (a stat call: cheap).
pub const POLL_INTERVAL: Duration = Duration::from_secs(2);

fn stamp(path: &PathBuf) -> Option<(u64, SystemTime)> {
    let metadata = std::fs::metadata(path).ok()?;
    Some((metadata.len(), metadata.modified().ok()?))
}

/// Starts the watcher thread for `path`; it runs until the process ends.
pub fn spawn(corrector: Arc<JointCorrector>, path: PathBuf) {
    let spawned = std::thread::Builder::new()
        .name("model-watch".into())
        .spawn(move || {
            let mut seen = stamp(&path);
            loop {
                std::thread::sleep(POLL_INTERVAL);
                let now = stamp(&path);
                if now.is_none() || now == seen {
                    continue;
                }
                seen = now;
                let Ok(bytes) = std::fs::read(&path) else {
                    continue;
                };
                if sayso::unaries::classifier::model_id(&bytes) == corrector.model_id() {
                    continue;
                }
                match Classifier::from_bytes(
                    &bytes,
                    &path.display().to_string(),
                    corrector.taxonomy(),
                    current_feature_layout(),
                ) {
                    Ok(classifier) => {
                        let id = classifier.id().to_string();
                        corrector.replace_classifier(classifier);
                        eprintln!(
                            "sayso: now serving model {id} from {} (scenes are scored with it from the next turn)",
                            path.display()
                        );
                    }
                    Err(error) => eprintln!(
                        "sayso: {} changed but does not load ({error}); model {} stays in service",
                        path.display(),
                        corrector.model_id()
                    ),
                }
            }
        });
    if let Err(error) = spawned {
        eprintln!("sayso: cannot watch the model file for replacements: {error}");
    }
}
