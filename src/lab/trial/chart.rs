//! The picture `sayso trial` writes: per scene, what the notes changed against the no-note solve (object
//! accuracy, mean IoU and pixel accuracy, in points) as grouped bars about a zero line, with the summary
//! figures written above. Plain SVG text, readable in any browser.
//!
//! Owns: the chart layout. Must not: compute any figure; it draws what `TrialSummary` and `SceneTrial` hold.

use std::fmt::Write;

use super::{SceneTrial, TrialSummary};

/// Bar colours (our own picks, far apart in hue and lightness so they read in grey too).
const COLOURS: [(&str, &str); 3] = [
    ("object F1", "#1f5fa8"),
    ("mean IoU", "#e0912b"),
    ("pixel accuracy", "#6aa84f"),
];

fn escape(text: &str) -> String {
    text.replace('&', "&amp;")
        .replace('<', "&lt;")
        .replace('>', "&gt;")
}

/// The chart as SVG text.
pub fn svg(trials: &[SceneTrial], summary: &TrialSummary, title: &str) -> String {
    let group = 3.0 * 9.0 + 8.0;
    let left = 60.0;
    let plot_width = (trials.len().max(1) as f64) * group;
    let width = left + plot_width + 90.0;
    let top = 96.0;
    let plot_height = 300.0;
    let height = top + plot_height + 150.0;
    let gains: Vec<[f64; 3]> = trials
        .iter()
        .map(|t| {
            let g = t.gain();
            [100.0 * g.object, 100.0 * g.mean_iou, 100.0 * g.pixel]
        })
        .collect();
    let extent = gains
        .iter()
        .flatten()
        .fold(5.0f64, |m, v| m.max(v.abs()))
        .ceil();
    let y_of = |value: f64| top + plot_height / 2.0 - value / extent * (plot_height / 2.0);
    let mut out = String::new();
    let _ = writeln!(
        out,
        r#"<svg xmlns="http://www.w3.org/2000/svg" width="{width:.0}" height="{height:.0}" font-family="sans-serif" font-size="12">"#
    );
    let _ = writeln!(out, r#"<rect width="100%" height="100%" fill="white"/>"#);
    let _ = writeln!(
        out,
        r#"<text x="{left}" y="20" font-size="15" font-weight="bold">{}</text>"#,
        escape(title)
    );
    let headline = format!(
        "after the notes vs the no-note solve: object {:+.1}, mIoU {:+.1}, pixel {:+.1} points over {} scenes; worse: {}",
        summary.gain_all.object,
        summary.gain_all.mean_iou,
        summary.gain_all.pixel,
        summary.scenes,
        summary.worse.len()
    );
    let second = format!(
        "notes not met: {} of {}; pixels wrong->right {}, right->wrong {}; solve median {:.0} ms, max {:.0} ms",
        summary.failed,
        summary.notes,
        summary.wrong_to_right,
        summary.right_to_wrong,
        summary.median_millis,
        summary.max_millis
    );
    let _ = writeln!(
        out,
        r#"<text x="{left}" y="40">{}</text>"#,
        escape(&headline)
    );
    let _ = writeln!(out, r#"<text x="{left}" y="58">{}</text>"#, escape(&second));
    for (index, (name, colour)) in COLOURS.iter().enumerate() {
        let x = left + index as f64 * 140.0;
        let _ = writeln!(
            out,
            r#"<rect x="{x}" y="68" width="12" height="12" fill="{colour}"/><text x="{}" y="79">{name}</text>"#,
            x + 16.0
        );
    }
    // Grid lines and the axis labels, in points.
    for step in [-1.0, -0.5, 0.0, 0.5, 1.0] {
        let value = step * extent;
        let y = y_of(value);
        let stroke = if step == 0.0 { "#000" } else { "#ddd" };
        let _ = writeln!(
            out,
            r#"<line x1="{left}" x2="{:.1}" y1="{y:.1}" y2="{y:.1}" stroke="{stroke}"/><text x="{:.1}" y="{:.1}" text-anchor="end">{value:+.0}</text>"#,
            left + plot_width,
            left - 6.0,
            y + 4.0
        );
    }
    for (index, (trial, values)) in trials.iter().zip(&gains).enumerate() {
        let x0 = left + index as f64 * group + 4.0;
        for (bar, value) in values.iter().enumerate() {
            let x = x0 + bar as f64 * 9.0;
            let (y, h) = if *value >= 0.0 {
                (y_of(*value), y_of(0.0) - y_of(*value))
            } else {
                (y_of(0.0), y_of(*value) - y_of(0.0))
            };
            let _ = writeln!(
                out,
                r#"<rect x="{x:.1}" y="{y:.1}" width="8" height="{:.1}" fill="{}"><title>{}: {value:+.1}</title></rect>"#,
                h.max(0.5),
                COLOURS[bar].1,
                escape(&trial.name)
            );
        }
        let label_x = x0 + 13.0;
        let label_y = top + plot_height + 8.0;
        let _ = writeln!(
            out,
            r#"<text x="{label_x:.1}" y="{label_y:.1}" transform="rotate(60 {label_x:.1} {label_y:.1})" font-size="10">{}</text>"#,
            escape(&trial.name)
        );
    }
    let _ = writeln!(
        out,
        r#"<text x="14" y="{:.1}" transform="rotate(-90 14 {:.1})">points vs no-note solve</text>"#,
        top + plot_height / 2.0 + 60.0,
        top + plot_height / 2.0 + 60.0
    );
    out.push_str("</svg>\n");
    out
}
