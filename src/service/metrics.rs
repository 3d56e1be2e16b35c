//! Counters and histograms, rendered in the Prometheus text exposition format (version 0.0.4).
//!
//! Owns: `Metrics` — requests by route, method and status; request latency histogram by route — and the text
//! rendering of those and of the session's counters (`crate::session::TurnCounters`: solver gap histogram,
//! turns and corrections logged).
//! Must not: time anything itself beyond what callers record, or depend on handler internals.
//!
//! Labels are bounded: callers pass route templates and a closed set of methods (`guard::method_label`),
//! and past `SERIES_LIMIT` label sets anything new is counted under `route="other"`, so no caller can make
//! the metrics, or the memory holding them, grow without end.

use std::collections::BTreeMap;
use std::fmt::Write;
use std::sync::{Arc, Mutex};

use crate::session::counters::{TurnCounters, GAP_BUCKETS};

/// Upper bounds (seconds) of the request latency buckets.
const LATENCY_BUCKETS: [f64; 12] = [
    0.001, 0.002, 0.005, 0.01, 0.02, 0.03, 0.05, 0.1, 0.25, 0.5, 1.0, 5.0,
];
/// The most request label sets (route, method, status) kept; later new ones count under `route="other"`.
pub const SERIES_LIMIT: usize = 512;

#[derive(Default, Clone)]
struct Histogram {
    counts: Vec<u64>,
    sum: f64,
    total: u64,
}

impl Histogram {
    fn observe(&mut self, bounds: &[f64], value: f64) {
        if self.counts.len() != bounds.len() {
            self.counts = vec![0; bounds.len()];
        }
        for (count, bound) in self.counts.iter_mut().zip(bounds) {
            if value <= *bound {
                *count += 1;
            }
        }
        self.sum += value;
        self.total += 1;
    }

    fn render(&self, out: &mut String, name: &str, labels: &str, bounds: &[f64]) {
        let separator = if labels.is_empty() { "" } else { "," };
        for (index, bound) in bounds.iter().enumerate() {
            let count = self.counts.get(index).copied().unwrap_or(0);
            let _ = writeln!(
                out,
                "{name}_bucket{{{labels}{separator}le=\"{bound}\"}} {count}"
            );
        }
        let _ = writeln!(
            out,
            "{name}_bucket{{{labels}{separator}le=\"+Inf\"}} {}",
            self.total
        );
        let braces = if labels.is_empty() {
            String::new()
        } else {
            format!("{{{labels}}}")
        };
        let _ = writeln!(out, "{name}_sum{braces} {}", self.sum);
        let _ = writeln!(out, "{name}_count{braces} {}", self.total);
    }
}

/// The service's measurements. Shared by every request.
#[derive(Default)]
pub struct Metrics {
    requests: Mutex<BTreeMap<(String, String, u16), u64>>,
    latency: Mutex<BTreeMap<String, Histogram>>,
    /// What the session counts (turns, corrections, solver gaps), rendered with the rest.
    session: Arc<TurnCounters>,
}

fn escape_label(value: &str) -> String {
    value
        .replace('\\', "\\\\")
        .replace('"', "\\\"")
        .replace('\n', "\\n")
}

impl Metrics {
    /// Metrics that also render the session's `counters`.
    pub fn over(counters: Arc<TurnCounters>) -> Metrics {
        Metrics {
            session: counters,
            ..Metrics::default()
        }
    }

    /// Records one finished request.
    pub fn record_request(&self, route: &str, method: &str, status: u16, seconds: f64) {
        let mut route = route;
        if let Ok(mut requests) = self.requests.lock() {
            let mut key = (route.to_string(), method.to_string(), status);
            if !requests.contains_key(&key) && requests.len() >= SERIES_LIMIT {
                route = "other";
                key = ("other".to_string(), "other".to_string(), status);
            }
            *requests.entry(key).or_insert(0) += 1;
        }
        if let Ok(mut latency) = self.latency.lock() {
            if !latency.contains_key(route) && latency.len() >= SERIES_LIMIT {
                route = "other";
            }
            latency
                .entry(route.to_string())
                .or_default()
                .observe(&LATENCY_BUCKETS, seconds);
        }
    }

    /// The text exposition.
    pub fn render(&self) -> String {
        let mut out = String::new();
        out.push_str("# HELP sayso_http_requests_total HTTP requests answered, by route, method and status.\n");
        out.push_str("# TYPE sayso_http_requests_total counter\n");
        if let Ok(requests) = self.requests.lock() {
            for ((route, method, status), count) in requests.iter() {
                let _ = writeln!(
                    out,
                    "sayso_http_requests_total{{route=\"{}\",method=\"{}\",status=\"{status}\"}} {count}",
                    escape_label(route),
                    escape_label(method)
                );
            }
        }
        out.push_str(
            "# HELP sayso_http_request_duration_seconds Time from request to response, by route.\n",
        );
        out.push_str("# TYPE sayso_http_request_duration_seconds histogram\n");
        if let Ok(latency) = self.latency.lock() {
            for (route, histogram) in latency.iter() {
                histogram.render(
                    &mut out,
                    "sayso_http_request_duration_seconds",
                    &format!("route=\"{}\"", escape_label(route)),
                    &LATENCY_BUCKETS,
                );
            }
        }
        out.push_str(
            "# HELP sayso_solver_gap Relative gap between solution energy and lower bound.\n",
        );
        out.push_str("# TYPE sayso_solver_gap histogram\n");
        let gaps = self.session.solver_gaps();
        Histogram {
            counts: gaps.cumulative.to_vec(),
            sum: gaps.sum,
            total: gaps.total,
        }
        .render(&mut out, "sayso_solver_gap", "", &GAP_BUCKETS);
        out.push_str(
            "# HELP sayso_turns_logged_total Conversation turns committed to the correction log.\n",
        );
        out.push_str("# TYPE sayso_turns_logged_total counter\n");
        let _ = writeln!(
            out,
            "sayso_turns_logged_total {}",
            self.session.turns_logged()
        );
        out.push_str("# HELP sayso_corrections_logged_total Corrections (new scene versions) committed to the log.\n");
        out.push_str("# TYPE sayso_corrections_logged_total counter\n");
        let _ = writeln!(
            out,
            "sayso_corrections_logged_total {}",
            self.session.corrections_logged()
        );
        out
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn label_sets_stop_growing_at_the_limit() {
        let metrics = Metrics::default();
        for index in 0..(SERIES_LIMIT * 3) {
            metrics.record_request(&format!("/made/up/{index}"), "GET", 404, 0.001);
        }
        let series = metrics
            .render()
            .matches("sayso_http_requests_total{")
            .count();
        assert_eq!(series, SERIES_LIMIT + 1);
        assert!(metrics.render().contains(
            "sayso_http_requests_total{route=\"other\",method=\"other\",status=\"404\"}"
        ));
    }

    #[test]
    fn histogram_buckets_are_cumulative_and_counted() {
        let metrics = Metrics::default();
        metrics.record_request("/v1/health", "GET", 200, 0.0015);
        metrics.record_request("/v1/health", "GET", 200, 0.2);
        let text = metrics.render();
        // Exposition format: cumulative `le` buckets ending in +Inf equal to _count.
        assert!(text.contains(
            "sayso_http_request_duration_seconds_bucket{route=\"/v1/health\",le=\"0.001\"} 0"
        ));
        assert!(text.contains(
            "sayso_http_request_duration_seconds_bucket{route=\"/v1/health\",le=\"0.002\"} 1"
        ));
        assert!(text.contains(
            "sayso_http_request_duration_seconds_bucket{route=\"/v1/health\",le=\"+Inf\"} 2"
        ));
        assert!(text.contains("sayso_http_request_duration_seconds_count{route=\"/v1/health\"} 2"));
        assert!(text.contains(
            "sayso_http_requests_total{route=\"/v1/health\",method=\"GET\",status=\"200\"} 2"
        ));
    }
}
