//! The model card written beside a trained classifier (`models/README.md`): what it was trained on, how big
//! it is, how well it does, and how well calibrated it is.
//!
//! Owns: `ModelCard` and its Markdown rendering.
//! Must not: compute any of the figures; callers measure them and fill the card in.

use std::fmt::Write;

use super::calibration::CalibrationReport;

/// Segmentation quality on an evaluation set.
#[derive(Clone, Debug, PartialEq)]
pub struct EvaluationFigures {
    pub description: String,
    pub pixel_accuracy: f64,
    pub mean_iou: f64,
    /// `(class name, IoU)` for classes present in the truth or the predictions.
    pub per_class_iou: Vec<(String, f64)>,
}

/// Everything the card states.
#[derive(Clone, Debug, PartialEq)]
pub struct ModelCard {
    pub command: String,
    pub training_data: String,
    pub mode: String,
    pub feature_layout_version: u32,
    pub feature_count: usize,
    pub class_count: usize,
    pub parameter_count: usize,
    pub file_bytes: usize,
    pub training_rows: usize,
    pub validation_rows: usize,
    pub epochs_run: usize,
    pub best_epoch: usize,
    pub training_seconds: f64,
    pub training_accuracy: f64,
    pub validation_accuracy: f64,
    pub calibration: CalibrationReport,
    pub evaluation: Option<EvaluationFigures>,
    /// What the validation rows are (e.g. "6 whole renders, seeds ..."); `None`: a share of the rows.
    pub validation_description: Option<String>,
    /// Further Markdown the caller writes (a fine-tuning run's data and before/after figures).
    pub appendix: Option<String>,
}

impl ModelCard {
    /// The card as Markdown.
    pub fn to_markdown(&self) -> String {
        let mut text = String::new();
        let _ = writeln!(text, "# sayso segment classifier\n");
        let _ = writeln!(text, "Reproduce with:\n\n```sh\n{}\n```\n", self.command);
        let _ = writeln!(text, "## Training data\n\n{}\n", self.training_data);
        let _ = writeln!(text, "- training rows (segments): {}", self.training_rows);
        let _ = writeln!(
            text,
            "- validation rows (early stopping and temperature fit): {}{}\n",
            self.validation_rows,
            self.validation_description
                .as_deref()
                .map(|what| format!(", {what}"))
                .unwrap_or_default()
        );
        let _ = writeln!(text, "## Model\n");
        let _ = writeln!(text, "- mode: {}", self.mode);
        let _ = writeln!(
            text,
            "- input: {} features, layout version {}",
            self.feature_count, self.feature_layout_version
        );
        let _ = writeln!(
            text,
            "- output: log-probabilities over {} classes",
            self.class_count
        );
        let _ = writeln!(
            text,
            "- parameters: {}; file size: {} bytes",
            self.parameter_count, self.file_bytes
        );
        let _ = writeln!(
            text,
            "- epochs run: {} (best {}); training time {:.1} s\n",
            self.epochs_run, self.best_epoch, self.training_seconds
        );
        let _ = writeln!(text, "## Accuracy\n");
        let _ = writeln!(
            text,
            "- segment accuracy, training split: {:.2}%",
            100.0 * self.training_accuracy
        );
        let _ = writeln!(
            text,
            "- segment accuracy, validation split: {:.2}%\n",
            100.0 * self.validation_accuracy
        );
        match &self.evaluation {
            Some(evaluation) => {
                let _ = writeln!(text, "On {}:\n", evaluation.description);
                let _ = writeln!(
                    text,
                    "- pixel accuracy: {:.2}%",
                    100.0 * evaluation.pixel_accuracy
                );
                let _ = writeln!(text, "- mean IoU: {:.3}\n", evaluation.mean_iou);
                let _ = writeln!(text, "| class | IoU |\n|---|---|");
                for (name, iou) in &evaluation.per_class_iou {
                    let _ = writeln!(text, "| {name} | {iou:.3} |");
                }
                text.push('\n');
            }
            None if self.appendix.is_none() => {
                let _ = writeln!(text, "No held-out scene set was evaluated for this run.\n");
            }
            None => {}
        }
        let c = &self.calibration;
        let _ = writeln!(
            text,
            "## Calibration (temperature scaling, validation split)\n"
        );
        let _ = writeln!(text, "| | NLL | ECE (15 bins) |\n|---|---|---|");
        let _ = writeln!(
            text,
            "| before (T = 1) | {:.4} | {:.4} |",
            c.nll_before, c.ece_before
        );
        let _ = writeln!(
            text,
            "| after (T = {:.3}) | {:.4} | {:.4} |",
            c.temperature, c.nll_after, c.ece_after
        );
        if let Some(appendix) = &self.appendix {
            text.push('\n');
            text.push_str(appendix);
        }
        text
    }
}
