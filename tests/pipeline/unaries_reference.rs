//! Checks of the unaries stage against outside reference libraries, on committed fixtures written by the
//! scripts in tests/fixtures/unaries/ (numpy, scikit-learn, scipy, onnx and onnxruntime from PyPI).
//!
//! Owns: the four outside checks (NPY reader vs numpy, metrics vs scikit-learn, softmax-regression trainer
//! vs scikit-learn LogisticRegression, tract inference vs onnxruntime).
//! Must not: need Python or the network; only the committed outputs are read.

use std::path::PathBuf;

use ndarray::{Array2, Ix2, Ix4};
use sayso_core::raster::{read_index_png, read_rgb_png, DEFAULT_PIXEL_LIMIT};
use sayso_core::taxonomy::Taxonomy;
use sayso_perception::unaries::byo_npy::{read_npy, NpyError, NpyFloat};
use sayso_perception::unaries::byo_user_model::UserModel;
use sayso_perception::unaries::calibration::negative_log_likelihood;
use sayso_perception::unaries::contract::FeatureLayout;
use sayso_perception::unaries::dataset::read_feature_csv;
use sayso_perception::unaries::metrics::ConfusionMatrix;
use sayso_perception::unaries::trainer::{
    train, LabelledFeatures, Regularisation, TrainingConfig, TrainingMode,
};
use sayso_perception::unaries::Classifier;

fn fixture(name: &str) -> PathBuf {
    crate::paths::fixture("unaries").join(name)
}

fn json(name: &str) -> serde_json::Value {
    serde_json::from_str(&std::fs::read_to_string(fixture(name)).unwrap()).unwrap()
}

/// Reference: numpy 2.x `np.save` / `np.lib.format.write_array` (make_npy.py).
#[test]
fn npy_reader_matches_numpy_exactly() {
    let expected = json("npy_expected.json");
    let cases = expected.as_object().unwrap();
    assert_eq!(cases.len(), 7);
    for (name, case) in cases {
        let array = read_npy(&fixture(&format!("npy_{name}.npy"))).unwrap();
        let shape: Vec<usize> = case["shape"]
            .as_array()
            .unwrap()
            .iter()
            .map(|v| v.as_u64().unwrap() as usize)
            .collect();
        assert_eq!(array.values.shape(), &shape[..], "{name}");
        let dtype = if case["dtype"] == "float32" {
            NpyFloat::Float32
        } else {
            NpyFloat::Float64
        };
        assert_eq!(array.dtype, dtype, "{name}");
        let values: Vec<f64> = case["values"]
            .as_array()
            .unwrap()
            .iter()
            .map(|v| v.as_str().unwrap().parse().unwrap())
            .collect();
        let read: Vec<f64> = array.values.iter().copied().collect();
        assert_eq!(read.len(), values.len());
        for (index, (a, b)) in read.iter().zip(&values).enumerate() {
            assert_eq!(a.to_bits(), b.to_bits(), "{name} value {index}: {a} vs {b}");
        }
    }
    for (file, descr) in [("npy_int32.npy", "<i4"), ("npy_complex.npy", "<c16")] {
        assert_eq!(
            read_npy(&fixture(file)),
            Err(NpyError::UnsupportedDtype {
                descr: descr.to_string()
            })
        );
    }
}

/// Reference: scikit-learn `confusion_matrix`, `accuracy_score`, `jaccard_score` (make_metrics.py).
#[test]
fn metrics_match_scikit_learn() {
    let expected = json("metrics_expected.json");
    let truth = read_index_png(&fixture("metrics_truth.png"), DEFAULT_PIXEL_LIMIT).unwrap();
    let predicted = read_index_png(&fixture("metrics_predicted.png"), DEFAULT_PIXEL_LIMIT).unwrap();
    let class_count = expected["class_count"].as_u64().unwrap() as usize;
    let mut matrix = ConfusionMatrix::new(class_count);
    matrix.add_maps(&truth.values, &predicted.values).unwrap();
    for (row, counts) in expected["confusion_matrix"]
        .as_array()
        .unwrap()
        .iter()
        .enumerate()
    {
        for (column, count) in counts.as_array().unwrap().iter().enumerate() {
            assert_eq!(
                matrix.count(row, column),
                count.as_u64().unwrap(),
                "cell ({row}, {column})"
            );
        }
    }
    assert!((matrix.pixel_accuracy() - expected["pixel_accuracy"].as_f64().unwrap()).abs() < 1e-12);
    assert!((matrix.mean_iou() - expected["mean_iou"].as_f64().unwrap()).abs() < 1e-12);
    for (class, (ours, theirs)) in matrix
        .per_class_iou()
        .iter()
        .zip(expected["per_class_iou"].as_array().unwrap())
        .enumerate()
    {
        match (ours, theirs.as_f64()) {
            (Some(a), Some(b)) => assert!((a - b).abs() < 1e-12, "class {class}: {a} vs {b}"),
            (None, None) => {}
            other => panic!("class {class}: {other:?}"),
        }
    }
}

fn labelled(name: &str) -> LabelledFeatures {
    let (features, labels) = read_feature_csv(&fixture(name)).unwrap();
    LabelledFeatures { features, labels }
}

/// Reference: scikit-learn `LogisticRegression(solver="lbfgs", C = 1 / (n * lambda))`, multinomial, on
/// standardised features; temperature fitted with scipy's bounded scalar minimiser (make_logistic.py).
#[test]
fn softmax_regression_matches_scikit_learn_logistic_regression() {
    let expected = json("logistic_expected.json");
    let training = labelled("logistic_train.csv");
    let validation = labelled("logistic_validation.csv");
    let test = labelled("logistic_test.csv");
    let class_count = expected["classes"].as_array().unwrap().len();
    let config = TrainingConfig {
        mode: TrainingMode::SoftmaxRegression,
        max_epochs: 400,
        batch_size: usize::MAX,
        learning_rate: 0.05,
        weight_decay: expected["lambda"].as_f64().unwrap() as f32,
        regularisation: Regularisation::L2,
        // Early stopping is effectively off so both reach the penalised optimum.
        patience: 400,
        class_balanced: false,
        seed: 1,
        show_progress: false,
    };
    let outcome = train(&training, &validation, class_count, &config).unwrap();
    let mut uncalibrated = outcome.mlp.clone();
    uncalibrated.temperature = 1.0;
    let normalised = uncalibrated.normalise(test.features.view());
    let logits: Array2<f32> = uncalibrated.logits_from_normalised(normalised.view());
    let correct = logits
        .rows()
        .into_iter()
        .zip(&test.labels)
        .filter(|(row, &label)| {
            row.iter()
                .enumerate()
                .max_by(|a, b| a.1.total_cmp(b.1))
                .unwrap()
                .0
                == label
        })
        .count();
    let accuracy = correct as f64 / test.len() as f64;
    let reference_accuracy = expected["test_accuracy"].as_f64().unwrap();
    assert!(
        (accuracy - reference_accuracy).abs() <= 0.01,
        "accuracy {accuracy} vs scikit-learn {reference_accuracy}"
    );
    let ours =
        negative_log_likelihood(logits.view(), &test.labels, outcome.calibration.temperature);
    let theirs = expected["test_log_loss_calibrated"].as_f64().unwrap();
    println!("sayso accuracy {accuracy:.4} vs scikit-learn {reference_accuracy:.4}; calibrated log-loss {ours:.5} vs {theirs:.5}; T {:.4} vs {:.4}", outcome.calibration.temperature, expected["temperature"]);
    assert!(
        (ours - theirs).abs() / theirs <= 0.02,
        "calibrated log-loss {ours} vs scikit-learn {theirs}"
    );
}

/// Reference: onnxruntime (PyPI) running the same sayso-written classifier file on the same features
/// (make_onnx_reference.py); tract must agree to 1e-5.
#[test]
fn tract_classifier_matches_onnxruntime() {
    let taxonomy = Taxonomy::embedded();
    let input = read_npy(&fixture("fixture_mlp_input.npy")).unwrap();
    let reference = read_npy(&fixture("fixture_mlp_onnxruntime.npy")).unwrap();
    let features = input
        .values
        .mapv(|v| v as f32)
        .into_dimensionality::<Ix2>()
        .unwrap();
    let layout = FeatureLayout {
        version: 0,
        count: features.ncols(),
    };
    let classifier = Classifier::load(&fixture("fixture_mlp.onnx"), &taxonomy, layout).unwrap();
    let ours = classifier.classify(features.view()).unwrap();
    let theirs = reference.values.into_dimensionality::<Ix2>().unwrap();
    assert_eq!(ours.shape(), theirs.shape());
    let worst = ours
        .iter()
        .zip(theirs.iter())
        .map(|(a, b)| (*a as f64 - b).abs())
        .fold(0.0, f64::max);
    println!("largest difference from onnxruntime: {worst:e}");
    assert!(worst < 1e-5, "largest difference from onnxruntime: {worst}");
}

/// Reference: onnxruntime (PyPI) running the committed default model on a fixed feature matrix
/// (make_onnx_reference.py); tract must agree to 1e-5.
#[test]
fn default_model_matches_onnxruntime() {
    let root = crate::paths::repo();
    let taxonomy = Taxonomy::embedded();
    let classifier = Classifier::load(
        &root.join("models/segment_classifier.onnx"),
        &taxonomy,
        sayso_perception::unaries::current_feature_layout(),
    )
    .unwrap();
    let features = read_npy(&fixture("default_model_input.npy"))
        .unwrap()
        .values
        .mapv(|v| v as f32)
        .into_dimensionality::<Ix2>()
        .unwrap();
    let theirs = read_npy(&fixture("default_model_onnxruntime.npy"))
        .unwrap()
        .values
        .into_dimensionality::<Ix2>()
        .unwrap();
    let ours = classifier.classify(features.view()).unwrap();
    assert_eq!(ours.shape(), theirs.shape());
    // Agreement to 1e-5, relative to the value once it exceeds 1 in magnitude: a log-probability of -300
    // has a float32 spacing of 3e-5, so an absolute 1e-5 would ask for more than float32 holds.
    let worst = ours
        .iter()
        .zip(theirs.iter())
        .map(|(a, b)| (*a as f64 - b).abs() / b.abs().max(1.0))
        .fold(0.0, f64::max);
    println!("default model, largest scaled difference from onnxruntime: {worst:e}");
    assert!(
        worst < 1e-5,
        "largest scaled difference from onnxruntime: {worst}"
    );
}

/// Reference: onnxruntime running a 1x1-conv + softmax per-pixel model built with the `onnx` package, on
/// the fixture image preprocessed as its TOML config declares (make_onnx_reference.py).
#[test]
fn user_pixel_model_matches_onnxruntime() {
    let model = UserModel::load(&fixture("pixel_model.toml")).unwrap();
    let image = read_rgb_png(&fixture("pixel_model_image.png"), DEFAULT_PIXEL_LIMIT).unwrap();
    let ours = model.run_tensor(model.preprocess(&image)).unwrap();
    let theirs = read_npy(&fixture("pixel_model_onnxruntime.npy"))
        .unwrap()
        .values
        .into_dimensionality::<Ix4>()
        .unwrap();
    assert_eq!(ours.shape(), theirs.shape());
    let worst = ours
        .iter()
        .zip(theirs.iter())
        .map(|(a, b)| (*a as f64 - b).abs())
        .fold(0.0, f64::max);
    println!("largest difference from onnxruntime: {worst:e}");
    assert!(worst < 1e-5, "largest difference from onnxruntime: {worst}");
}
