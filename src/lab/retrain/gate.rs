//! The gate between a fine-tuned candidate and the served model: the candidate is taken only when it is at
//! least as good on the held-out renders (pixel accuracy, mean IoU and ECE each within `TOLERANCE`) and
//! better on the corrected scenes (pixel accuracy against the corrected labels). Also the comparison as
//! table rows and as an SVG chart.
//!
//! Owns: `TOLERANCE`, `ModelFigures`, `Comparison`, `Verdict`, `Comparison::verdict`, `Comparison::rows`,
//! `Comparison::svg`.
//! Must not: measure anything or touch files; callers measure and install.

use std::fmt::Write;

use super::evaluate::{CorrectedFigures, SetFigures};

/// How much worse than the served model a candidate may be on the held-out renders: 0.5 points (of
/// accuracy, of mean IoU x 100, of ECE x 100).
pub const TOLERANCE: f64 = 0.005;

/// One model's figures.
#[derive(Clone, Copy, Debug, PartialEq, serde::Serialize)]
pub struct ModelFigures {
    pub held_out: SetFigures,
    pub corrected: CorrectedFigures,
}

/// The served model's figures and the candidate's, on the same scenes.
#[derive(Clone, Copy, Debug, PartialEq, serde::Serialize)]
pub struct Comparison {
    pub base: ModelFigures,
    pub candidate: ModelFigures,
}

/// What the gate decided, with every reason a candidate was refused.
#[derive(Clone, Debug, PartialEq, Eq, serde::Serialize)]
pub struct Verdict {
    pub accepted: bool,
    pub reasons: Vec<String>,
}

/// One row of the comparison: name, base, candidate, whether higher is better.
pub struct Row {
    pub name: &'static str,
    pub base: f64,
    pub candidate: f64,
    pub higher_is_better: bool,
}

impl Row {
    /// The candidate's change in points (x 100), signed so that positive is better.
    pub fn gain_points(&self) -> f64 {
        let difference = 100.0 * (self.candidate - self.base);
        if self.higher_is_better {
            difference
        } else {
            -difference
        }
    }
}

fn escape(text: &str) -> String {
    text.replace('&', "&amp;")
        .replace('<', "&lt;")
        .replace('>', "&gt;")
}

impl Comparison {
    /// The figures side by side, in the order the table and the chart show them.
    pub fn rows(&self) -> Vec<Row> {
        let (b, c) = (&self.base, &self.candidate);
        vec![
            Row {
                name: "held-out pixel accuracy",
                base: b.held_out.pixel_accuracy,
                candidate: c.held_out.pixel_accuracy,
                higher_is_better: true,
            },
            Row {
                name: "held-out mean IoU",
                base: b.held_out.mean_iou,
                candidate: c.held_out.mean_iou,
                higher_is_better: true,
            },
            Row {
                name: "held-out ECE",
                base: b.held_out.ece,
                candidate: c.held_out.ece,
                higher_is_better: false,
            },
            Row {
                name: "corrected scenes, pixel accuracy",
                base: b.corrected.pixel_accuracy,
                candidate: c.corrected.pixel_accuracy,
                higher_is_better: true,
            },
            Row {
                name: "corrected pixels, accuracy",
                base: b.corrected.changed_pixel_accuracy,
                candidate: c.corrected.changed_pixel_accuracy,
                higher_is_better: true,
            },
        ]
    }

    /// The gate's decision.
    pub fn verdict(&self) -> Verdict {
        let mut reasons = Vec::new();
        for row in self.rows().iter().take(3) {
            if row.gain_points() < -100.0 * TOLERANCE {
                reasons.push(format!(
                    "{} is {:.2} points worse than the served model's ({:.2} vs {:.2}; at most {:.1} allowed)",
                    row.name,
                    -row.gain_points(),
                    100.0 * row.candidate,
                    100.0 * row.base,
                    100.0 * TOLERANCE
                ));
            }
        }
        let corrected = &self.rows()[3];
        if corrected.candidate <= corrected.base {
            reasons.push(format!(
                "{} is not better than the served model's ({:.2} vs {:.2})",
                corrected.name,
                100.0 * corrected.candidate,
                100.0 * corrected.base
            ));
        }
        Verdict {
            accepted: reasons.is_empty(),
            reasons,
        }
    }

    /// The comparison as an SVG chart: one panel per figure, the served model's bar beside the
    /// candidate's, each with its value, and the verdict above.
    pub fn svg(&self, title: &str) -> String {
        let rows = self.rows();
        let verdict = self.verdict();
        let panel = 150.0;
        let left = 30.0;
        // One line per reason a candidate was refused, between the verdict and the legend.
        let reason_lines = 16.0 * verdict.reasons.len() as f64;
        let top = 90.0 + reason_lines;
        let plot_height = 240.0;
        let width = left * 2.0 + panel * rows.len() as f64;
        let height = top + plot_height + 90.0;
        let mut out = String::new();
        let _ = writeln!(
            out,
            r#"<svg xmlns="http://www.w3.org/2000/svg" width="{width:.0}" height="{height:.0}" font-family="sans-serif" font-size="12">"#
        );
        let _ = writeln!(out, r#"<rect width="100%" height="100%" fill="white"/>"#);
        let _ = writeln!(
            out,
            r#"<text x="{left}" y="24" font-size="15" font-weight="bold">{}</text>"#,
            escape(title)
        );
        let (verdict_text, verdict_colour) = if verdict.accepted {
            ("gate: candidate taken".to_string(), "#2b7a2b")
        } else {
            (
                format!("gate: candidate refused ({})", verdict.reasons.len()),
                "#b3261e",
            )
        };
        let _ = writeln!(
            out,
            r#"<text x="{left}" y="46" fill="{verdict_colour}" font-weight="bold">{}</text>"#,
            escape(&verdict_text)
        );
        for (index, reason) in verdict.reasons.iter().enumerate() {
            let _ = writeln!(
                out,
                r#"<text x="{left}" y="{:.0}" fill="{verdict_colour}">- {}</text>"#,
                62.0 + 16.0 * index as f64,
                escape(reason)
            );
        }
        let legend = [("served model", "#8a8f98"), ("candidate", "#1f5fa8")];
        for (index, (name, colour)) in legend.iter().enumerate() {
            let x = left + 140.0 * index as f64;
            let _ = writeln!(
                out,
                r#"<rect x="{x}" y="{:.0}" width="12" height="12" fill="{colour}"/><text x="{}" y="{:.0}">{name}</text>"#,
                58.0 + reason_lines,
                x + 16.0,
                69.0 + reason_lines
            );
        }
        let base_line = top + plot_height;
        for (index, row) in rows.iter().enumerate() {
            let x0 = left + panel * index as f64;
            let largest = (100.0 * row.base.max(row.candidate)).max(1e-9);
            // Each panel has its own scale, from 0 to a little above the larger value, so small figures
            // (ECE) are as readable as large ones; the numbers are written on the bars.
            let scale = plot_height * 0.85 / largest;
            for (bar, (value, colour)) in [(row.base, legend[0].1), (row.candidate, legend[1].1)]
                .into_iter()
                .enumerate()
            {
                let bar_height = 100.0 * value * scale;
                let x = x0 + 30.0 + 46.0 * bar as f64;
                let _ = writeln!(
                    out,
                    r#"<rect x="{x:.1}" y="{:.1}" width="40" height="{bar_height:.1}" fill="{colour}"/>"#,
                    base_line - bar_height
                );
                let _ = writeln!(
                    out,
                    r#"<text x="{:.1}" y="{:.1}" text-anchor="middle">{:.2}</text>"#,
                    x + 20.0,
                    base_line - bar_height - 4.0,
                    100.0 * value
                );
            }
            let _ = writeln!(
                out,
                r#"<line x1="{:.1}" y1="{base_line}" x2="{:.1}" y2="{base_line}" stroke="black"/>"#,
                x0 + 20.0,
                x0 + panel - 14.0
            );
            let words: Vec<&str> = row.name.split(", ").collect();
            for (line, text) in words.iter().enumerate() {
                let _ = writeln!(
                    out,
                    r#"<text x="{:.1}" y="{:.1}" text-anchor="middle">{}</text>"#,
                    x0 + panel / 2.0 + 3.0,
                    base_line + 18.0 + 15.0 * line as f64,
                    escape(text)
                );
            }
            let gain = row.gain_points();
            let _ = writeln!(
                out,
                r#"<text x="{:.1}" y="{:.1}" text-anchor="middle" fill="{}">{:+.2} points{}</text>"#,
                x0 + panel / 2.0 + 3.0,
                base_line + 18.0 + 15.0 * words.len() as f64,
                if gain < 0.0 { "#b3261e" } else { "#2b7a2b" },
                gain,
                if row.higher_is_better {
                    ""
                } else {
                    " (lower is better)"
                }
            );
        }
        let _ = writeln!(
            out,
            r##"<text x="{left}" y="{:.0}" fill="#555">values in percent; held-out renders within {:.1} points, corrected scenes better, to be taken</text>"##,
            height - 12.0,
            100.0 * TOLERANCE
        );
        out.push_str("</svg>\n");
        out
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn figures(accuracy: f64, iou: f64, ece: f64, corrected: f64) -> ModelFigures {
        ModelFigures {
            held_out: SetFigures {
                scenes: 4,
                pixel_accuracy: accuracy,
                mean_iou: iou,
                ece,
            },
            corrected: CorrectedFigures {
                scenes: 2,
                pixel_accuracy: corrected,
                changed_pixel_accuracy: corrected / 2.0,
                changed_pixels: 100,
            },
        }
    }

    #[test]
    fn the_gate_takes_a_candidate_within_tolerance_that_learned_the_corrections() {
        let base = figures(0.940, 0.780, 0.020, 0.900);
        let comparison = Comparison {
            base,
            candidate: figures(0.936, 0.776, 0.024, 0.910),
        };
        assert_eq!(
            comparison.verdict(),
            Verdict {
                accepted: true,
                reasons: vec![]
            }
        );
        // 0.6 points of held-out accuracy lost, and no gain on the corrected scenes: two reasons.
        let refused = Comparison {
            base,
            candidate: figures(0.934, 0.780, 0.020, 0.900),
        }
        .verdict();
        assert!(!refused.accepted);
        assert_eq!(refused.reasons.len(), 2, "{:?}", refused.reasons);
        assert!(refused.reasons[0].starts_with("held-out pixel accuracy is 0.60 points worse"));
        // A calibration error 0.6 points higher is worse, though the number grew.
        let worse_calibrated = Comparison {
            base,
            candidate: figures(0.940, 0.780, 0.026, 0.950),
        }
        .verdict();
        assert!(!worse_calibrated.accepted);
        assert!(worse_calibrated.reasons[0].contains("ECE"));
    }

    #[test]
    fn the_chart_names_every_figure_and_the_verdict() {
        let comparison = Comparison {
            base: figures(0.940, 0.780, 0.020, 0.900),
            candidate: figures(0.930, 0.780, 0.020, 0.950),
        };
        let svg = comparison.svg("fine-tuning");
        assert!(svg.starts_with("<svg"));
        assert!(svg.trim_end().ends_with("</svg>"));
        for row in comparison.rows() {
            assert!(svg.contains(row.name.split(", ").next().unwrap()));
        }
        assert!(svg.contains("candidate refused"));
        assert!(svg.contains("- held-out pixel accuracy is 1.00 points worse"));
        assert!(svg.contains("-1.00 points"));
    }
}
