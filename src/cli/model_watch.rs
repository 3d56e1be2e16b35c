//! The served model's file, watched: when `sayso train --corrections` (or anyone) replaces it, the running
//! service loads the new file, checks it against the taxonomy and the feature layout, and serves it from
//! the next turn on, without a restart. A file that does not load is reported and the model in service
//! stays.
//!
//! Owns: the polling thread and its interval. Must not: decide whether a model is good enough (the gate in
//! `sayso train` does that before it replaces the file).

use std::path::{Path, PathBuf};
use std::sync::Arc;
use std::time::{Duration, SystemTime};

use sayso_perception::unaries::{current_feature_layout, Classifier};
use sayso_session::Corrector;
use sayso_session::JointCorrector;

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
                if sayso_perception::unaries::classifier::model_id(&bytes) == corrector.model_id() {
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
                        let classifier = with_companion(classifier, &path, &corrector);
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

/// The replacement with the image-only companion beside its file, as `pipeline::load_classifier` loads
/// the served model at start-up (a companion that does not load is reported and left out).
fn with_companion(classifier: Classifier, path: &Path, corrector: &JointCorrector) -> Classifier {
    let Some(companion) = sayso_perception::pipeline::image_only_companion(path) else {
        return classifier;
    };
    match Classifier::load(&companion, corrector.taxonomy(), current_feature_layout()) {
        Ok(companion) => classifier.with_image_only(companion),
        Err(error) => {
            eprintln!(
                "sayso: the image-only model {} does not load ({error}); scenes without depth are scored by the new model",
                companion.display()
            );
            classifier
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use sayso_perception::unaries::classifier::model_id;
    use sayso_perception::unaries::onnx_reader::read_mlp;
    use sayso_perception::unaries::onnx_writer::encode_model;

    #[test]
    fn a_replaced_model_file_is_served_without_a_restart() {
        let shipped = std::fs::read(sayso_perception::pipeline::shipped_model_path()).unwrap();
        let directory = tempfile::tempdir().unwrap();
        let path = directory.path().join("served.onnx");
        std::fs::write(&path, &shipped).unwrap();
        let corrector = Arc::new(JointCorrector::load(&path).unwrap());
        spawn(corrector.clone(), path.clone());
        // A file that is not a model is reported and changes nothing.
        std::fs::write(&path, b"not a model").unwrap();
        std::thread::sleep(POLL_INTERVAL * 2);
        assert_eq!(corrector.model_id(), model_id(&shipped));
        // Another model (the shipped one at another temperature) is taken up within a few polls.
        let mut mlp = read_mlp(&shipped, "shipped").unwrap();
        mlp.temperature *= 2.0;
        let taxonomy = sayso_core::taxonomy::Taxonomy::embedded();
        let contract =
            Classifier::from_bytes(&shipped, "shipped", &taxonomy, current_feature_layout())
                .unwrap()
                .contract()
                .clone();
        let other = encode_model(&mlp, &contract).unwrap();
        std::fs::write(&path, &other).unwrap();
        let deadline = std::time::Instant::now() + POLL_INTERVAL * 5;
        while corrector.model_id() != model_id(&other) && std::time::Instant::now() < deadline {
            std::thread::sleep(Duration::from_millis(100));
        }
        assert_eq!(corrector.model_id(), model_id(&other));
    }
}
