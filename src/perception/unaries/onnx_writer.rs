//! Writes the segment classifier as an ONNX model file, with its contract in `metadata_props`.
//!
//! Owns: building the ONNX `ModelProto` (the protobuf types tract-onnx exposes, encoded with prost) for an
//! `Mlp`: `Sub(mean) -> Div(std) -> [MatMul -> Add -> Relu]* -> MatMul -> Add -> Div(temperature) ->
//! log-softmax` (written out with ReduceMax, Exp, ReduceSum and Log so it never underflows). Normalisation and temperature are baked into the graph and also stored as metadata.
//! Must not: run models or train; it only serialises.

use prost::Message;
use tract_onnx::pb;

use super::contract::ModelContract;
use super::mlp::Mlp;

/// The graph input's name: raw (un-normalised) features, `segments x features`.
pub const INPUT_NAME: &str = "segment_features";
/// The graph output's name: calibrated log-probabilities, `segments x classes`.
pub const OUTPUT_NAME: &str = "class_log_probabilities";
/// The symbolic batch dimension's name.
pub const BATCH_DIMENSION: &str = "segments";
/// The ONNX operator set the graph uses (opset 13: `ReduceSum` takes its axes as an input).
pub const OPSET_VERSION: i64 = 13;
/// The ONNX IR version written (IR 8 pairs with opset 13 and is read by tract and onnxruntime).
pub const IR_VERSION: i64 = 8;

/// Why a model could not be written.
#[derive(Debug, thiserror::Error, PartialEq)]
pub enum OnnxWriteError {
    #[error("the network's layer shapes do not chain from {features} features")]
    Shapes { features: usize },
    #[error("the contract lists {contract} classes but the network outputs {network}")]
    ClassCount { contract: usize, network: usize },
    #[error("the network has a non-finite weight, bias or normalisation value")]
    NotFinite,
}

fn float_tensor(
    name: &str,
    dims: &[usize],
    values: impl IntoIterator<Item = f32>,
) -> pb::TensorProto {
    pb::TensorProto {
        name: name.to_string(),
        dims: dims.iter().map(|&dim| dim as i64).collect(),
        data_type: pb::tensor_proto::DataType::Float as i32,
        float_data: values.into_iter().collect(),
        ..Default::default()
    }
}

fn node(op_type: &str, name: &str, inputs: &[&str], output: &str) -> pb::NodeProto {
    pb::NodeProto {
        op_type: op_type.to_string(),
        name: name.to_string(),
        input: inputs.iter().map(|input| input.to_string()).collect(),
        output: vec![output.to_string()],
        ..Default::default()
    }
}

fn value_info(name: &str, width: usize) -> pb::ValueInfoProto {
    use pb::tensor_shape_proto::{dimension::Value, Dimension};
    let dimension = |value: Value| Dimension {
        value: Some(value),
        ..Default::default()
    };
    pb::ValueInfoProto {
        name: name.to_string(),
        r#type: Some(pb::TypeProto {
            value: Some(pb::type_proto::Value::TensorType(pb::type_proto::Tensor {
                elem_type: pb::tensor_proto::DataType::Float as i32,
                shape: Some(pb::TensorShapeProto {
                    dim: vec![
                        dimension(Value::DimParam(BATCH_DIMENSION.to_string())),
                        dimension(Value::DimValue(width as i64)),
                    ],
                }),
            })),
            ..Default::default()
        }),
        ..Default::default()
    }
}

/// Builds the ONNX model for `mlp` with `contract` in its metadata. The contract's normalisation and
/// temperature are taken from the network so the two can never disagree.
pub fn build_model_proto(
    mlp: &Mlp,
    contract: &ModelContract,
) -> Result<pb::ModelProto, OnnxWriteError> {
    if !mlp.shapes_are_consistent() {
        return Err(OnnxWriteError::Shapes {
            features: mlp.feature_count(),
        });
    }
    if contract.class_names.len() != mlp.class_count() {
        return Err(OnnxWriteError::ClassCount {
            contract: contract.class_names.len(),
            network: mlp.class_count(),
        });
    }
    let finite = mlp
        .feature_means
        .iter()
        .chain(&mlp.feature_stds)
        .all(|v| v.is_finite())
        && mlp.layers.iter().all(|layer| {
            layer
                .weights
                .iter()
                .chain(&layer.bias)
                .all(|v| v.is_finite())
        })
        && mlp.temperature.is_finite()
        && mlp.temperature > 0.0;
    if !finite {
        return Err(OnnxWriteError::NotFinite);
    }
    let feature_count = mlp.feature_count();
    let mut initializers = vec![
        float_tensor(
            "feature_means",
            &[feature_count],
            mlp.feature_means.iter().copied(),
        ),
        float_tensor(
            "feature_stds",
            &[feature_count],
            mlp.feature_stds.iter().copied(),
        ),
        float_tensor("temperature", &[], [mlp.temperature]),
    ];
    let mut nodes = vec![
        node("Sub", "centre", &[INPUT_NAME, "feature_means"], "centred"),
        node("Div", "scale", &["centred", "feature_stds"], "normalised"),
    ];
    let mut current = "normalised".to_string();
    for (index, layer) in mlp.layers.iter().enumerate() {
        let weights = format!("layer{index}_weights");
        let bias = format!("layer{index}_bias");
        initializers.push(float_tensor(
            &weights,
            &[layer.weights.nrows(), layer.weights.ncols()],
            layer.weights.iter().copied(),
        ));
        initializers.push(float_tensor(
            &bias,
            &[layer.bias.len()],
            layer.bias.iter().copied(),
        ));
        let product = format!("layer{index}_product");
        let affine = format!("layer{index}_affine");
        nodes.push(node(
            "MatMul",
            &format!("layer{index}_matmul"),
            &[&current, &weights],
            &product,
        ));
        nodes.push(node(
            "Add",
            &format!("layer{index}_add"),
            &[&product, &bias],
            &affine,
        ));
        current = affine;
        if index + 1 < mlp.layers.len() {
            let activated = format!("layer{index}_relu_out");
            nodes.push(node(
                "Relu",
                &format!("layer{index}_relu"),
                &[&current],
                &activated,
            ));
            current = activated;
        }
    }
    nodes.push(node(
        "Div",
        "calibrate",
        &[&current, "temperature"],
        "calibrated_logits",
    ));
    // Log-softmax spelled out as x - max - ln(sum(exp(x - max))), so every output stays finite even for
    // classes the network has pushed far down (a fused LogSoftmax can underflow to -inf there).
    let int_attribute = |name: &str, value: i64| pb::AttributeProto {
        name: name.to_string(),
        r#type: pb::attribute_proto::AttributeType::Int as i32,
        i: value,
        ..Default::default()
    };
    let mut row_max = node(
        "ReduceMax",
        "row_max",
        &["calibrated_logits"],
        "row_max_value",
    );
    row_max.attribute.push(pb::AttributeProto {
        name: "axes".to_string(),
        r#type: pb::attribute_proto::AttributeType::Ints as i32,
        ints: vec![1],
        ..Default::default()
    });
    row_max.attribute.push(int_attribute("keepdims", 1));
    nodes.push(row_max);
    nodes.push(node(
        "Sub",
        "shift",
        &["calibrated_logits", "row_max_value"],
        "shifted_logits",
    ));
    nodes.push(node(
        "Exp",
        "exponentiate",
        &["shifted_logits"],
        "shifted_exponentials",
    ));
    initializers.push(pb::TensorProto {
        name: "class_axis".to_string(),
        dims: vec![1],
        data_type: pb::tensor_proto::DataType::Int64 as i32,
        int64_data: vec![1],
        ..Default::default()
    });
    let mut row_sum = node(
        "ReduceSum",
        "row_sum",
        &["shifted_exponentials", "class_axis"],
        "row_sum_value",
    );
    row_sum.attribute.push(int_attribute("keepdims", 1));
    nodes.push(row_sum);
    nodes.push(node("Log", "log_sum", &["row_sum_value"], "log_normaliser"));
    nodes.push(node(
        "Sub",
        "normalise_log",
        &["shifted_logits", "log_normaliser"],
        OUTPUT_NAME,
    ));
    let mut stored = contract.clone();
    stored.feature_means = mlp.feature_means.to_vec();
    stored.feature_stds = mlp.feature_stds.to_vec();
    stored.temperature = mlp.temperature;
    Ok(pb::ModelProto {
        ir_version: IR_VERSION,
        opset_import: vec![pb::OperatorSetIdProto {
            domain: String::new(),
            version: OPSET_VERSION,
        }],
        producer_name: "sayso".to_string(),
        producer_version: env!("CARGO_PKG_VERSION").to_string(),
        doc_string: "sayso segment classifier: raw segment features in, calibrated class log-probabilities out."
            .to_string(),
        graph: Some(pb::GraphProto {
            name: "segment_classifier".to_string(),
            node: nodes,
            initializer: initializers,
            input: vec![value_info(INPUT_NAME, feature_count)],
            output: vec![value_info(OUTPUT_NAME, mlp.class_count())],
            ..Default::default()
        }),
        metadata_props: stored
            .to_metadata()
            .into_iter()
            .map(|(key, value)| pb::StringStringEntryProto { key, value })
            .collect(),
        ..Default::default()
    })
}

/// The model file's bytes.
pub fn encode_model(mlp: &Mlp, contract: &ModelContract) -> Result<Vec<u8>, OnnxWriteError> {
    Ok(build_model_proto(mlp, contract)?.encode_to_vec())
}
