//! Temperature scaling and calibration measures for the segment classifier.
//!
//! Owns: the mean negative log-likelihood of logits at a temperature, fitting the temperature on held-out
//! data (Guo, Pleiss, Sun and Weinberger 2017, "On Calibration of Modern Neural Networks": one scalar `T`,
//! softmax(logits / T), chosen to minimise held-out NLL), and expected calibration error with 15
//! equal-width confidence bins as defined in that paper.
//! Must not: train weights or read files.

use ndarray::{ArrayView2, Axis};

/// The number of confidence bins Guo et al. use for expected calibration error.
pub const ECE_BINS: usize = 15;

/// The temperature search interval (common practice: wide enough for any sane network).
pub const TEMPERATURE_RANGE: (f64, f64) = (0.05, 20.0);

/// Calibration figures before and after temperature scaling, on the held-out set.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct CalibrationReport {
    pub temperature: f64,
    pub nll_before: f64,
    pub nll_after: f64,
    pub ece_before: f64,
    pub ece_after: f64,
}

/// Per-row log-softmax of `logits / temperature`, in f64; returns one vector per row.
fn row_log_softmax(row: ndarray::ArrayView1<f32>, temperature: f64) -> Vec<f64> {
    let scaled: Vec<f64> = row
        .iter()
        .map(|&value| value as f64 / temperature)
        .collect();
    let maximum = scaled.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    let log_sum = scaled
        .iter()
        .map(|value| (value - maximum).exp())
        .sum::<f64>()
        .ln();
    scaled
        .iter()
        .map(|value| value - maximum - log_sum)
        .collect()
}

/// Mean negative log-likelihood of the true labels under `softmax(logits / temperature)`.
/// Rows whose label is out of range are skipped; an empty set gives 0.
pub fn negative_log_likelihood(logits: ArrayView2<f32>, labels: &[usize], temperature: f64) -> f64 {
    let mut total = 0.0;
    let mut count = 0usize;
    for (row, &label) in logits.axis_iter(Axis(0)).zip(labels) {
        if let Some(log_probability) = row_log_softmax(row, temperature).get(label) {
            total -= log_probability;
            count += 1;
        }
    }
    if count == 0 {
        0.0
    } else {
        total / count as f64
    }
}

/// The temperature minimising held-out NLL, by golden-section search on `ln T` over `TEMPERATURE_RANGE`.
/// The NLL of temperature-scaled logits is smooth and (in `1/T`) convex, so a 1-D bracketing search finds
/// its minimum.
pub fn fit_temperature(logits: ArrayView2<f32>, labels: &[usize]) -> f64 {
    let objective =
        |log_temperature: f64| negative_log_likelihood(logits, labels, log_temperature.exp());
    let ratio = (5f64.sqrt() - 1.0) / 2.0;
    let (mut low, mut high) = (TEMPERATURE_RANGE.0.ln(), TEMPERATURE_RANGE.1.ln());
    let mut left = high - ratio * (high - low);
    let mut right = low + ratio * (high - low);
    let (mut left_value, mut right_value) = (objective(left), objective(right));
    while high - low > 1e-6 {
        if left_value < right_value {
            high = right;
            right = left;
            right_value = left_value;
            left = high - ratio * (high - low);
            left_value = objective(left);
        } else {
            low = left;
            left = right;
            left_value = right_value;
            right = low + ratio * (high - low);
            right_value = objective(right);
        }
    }
    ((low + high) / 2.0).exp()
}

/// Expected calibration error of `softmax(logits / temperature)`: the confidence (top probability) range
/// [0, 1] is cut into `ECE_BINS` equal-width bins `((k-1)/15, k/15]`; ECE is the sum over bins of
/// `|bin| / n * |accuracy(bin) - mean confidence(bin)|`.
pub fn expected_calibration_error(
    logits: ArrayView2<f32>,
    labels: &[usize],
    temperature: f64,
) -> f64 {
    let mut counts = [0usize; ECE_BINS];
    let mut correct = [0usize; ECE_BINS];
    let mut confidence_sums = [0f64; ECE_BINS];
    let mut total = 0usize;
    for (row, &label) in logits.axis_iter(Axis(0)).zip(labels) {
        let log_probabilities = row_log_softmax(row, temperature);
        let Some((predicted, best)) = log_probabilities
            .iter()
            .enumerate()
            .max_by(|a, b| a.1.total_cmp(b.1))
        else {
            continue;
        };
        let confidence = best.exp();
        let bin = ((confidence * ECE_BINS as f64).ceil() as usize).clamp(1, ECE_BINS) - 1;
        counts[bin] += 1;
        confidence_sums[bin] += confidence;
        if predicted == label {
            correct[bin] += 1;
        }
        total += 1;
    }
    if total == 0 {
        return 0.0;
    }
    (0..ECE_BINS)
        .filter(|&bin| counts[bin] > 0)
        .map(|bin| {
            let size = counts[bin] as f64;
            let accuracy = correct[bin] as f64 / size;
            let confidence = confidence_sums[bin] / size;
            size / total as f64 * (accuracy - confidence).abs()
        })
        .sum()
}

/// Fits the temperature on held-out logits and reports NLL and ECE before (T = 1) and after.
pub fn calibrate(logits: ArrayView2<f32>, labels: &[usize]) -> CalibrationReport {
    let temperature = fit_temperature(logits, labels);
    CalibrationReport {
        temperature,
        nll_before: negative_log_likelihood(logits, labels, 1.0),
        nll_after: negative_log_likelihood(logits, labels, temperature),
        ece_before: expected_calibration_error(logits, labels, 1.0),
        ece_after: expected_calibration_error(logits, labels, temperature),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::random::SplitMix64;
    use ndarray::{array, Array2};

    #[test]
    fn ece_of_a_hand_made_case() {
        // Two rows with confidence 0.8 (one right, one wrong) share a bin: |0.5 - 0.8| = 0.3, weight 1.
        let logit = (0.8f32 / 0.2).ln();
        let logits = array![[logit, 0.0], [logit, 0.0]];
        let ece = expected_calibration_error(logits.view(), &[0, 1], 1.0);
        assert!((ece - 0.3).abs() < 1e-6, "{ece}");
    }

    #[test]
    fn overconfident_logits_get_a_temperature_above_one_and_lower_nll() {
        // Labels drawn from softmax(z); the reported logits are 3 z, so the true temperature is 3.
        let mut generator = SplitMix64::new(11);
        let rows = 4000;
        let mut logits = Array2::<f32>::zeros((rows, 3));
        let mut labels = Vec::new();
        for row in 0..rows {
            let z: Vec<f64> = (0..3).map(|_| generator.next_normal()).collect();
            let total: f64 = z.iter().map(|v| v.exp()).sum();
            let draw = generator.unit() * total;
            let mut cumulative = 0.0;
            let mut label = 2;
            for (class, value) in z.iter().enumerate() {
                cumulative += value.exp();
                if draw < cumulative {
                    label = class;
                    break;
                }
            }
            labels.push(label);
            for class in 0..3 {
                logits[[row, class]] = (3.0 * z[class]) as f32;
            }
        }
        let report = calibrate(logits.view(), &labels);
        assert!((report.temperature - 3.0).abs() < 0.3, "{report:?}");
        assert!(report.nll_after < report.nll_before);
        assert!(report.ece_after < report.ece_before);
    }
}
