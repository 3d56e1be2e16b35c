//! Reads a sayso segment classifier file back into an `Mlp`, so training can start from the model that is
//! served (fine-tuning) rather than from random weights.
//!
//! Owns: `read_mlp`, the inverse of `onnx_writer::build_model_proto` for the initializers it writes
//! (`feature_means`, `feature_stds`, `temperature`, `layer<i>_weights`, `layer<i>_bias`).
//! Must not: run models or check the contract against the taxonomy; `Classifier` does that.

use prost::Message;
use tract_onnx::pb;

use super::mlp::{DenseLayer, Mlp};

/// Why a model file could not be read as a network.
#[derive(Debug, thiserror::Error, PartialEq)]
pub enum OnnxReadError {
    #[error("{origin} is not an ONNX model: {message}")]
    Corrupt { origin: String, message: String },
    #[error("{origin} lacks the tensor {name} that sayso's model files hold")]
    Missing { origin: String, name: String },
    #[error("{origin}: tensor {name} has shape {dims:?} and {values} values")]
    Shape {
        origin: String,
        name: String,
        dims: Vec<i64>,
        values: usize,
    },
    #[error("{origin}: the layers read do not chain from the feature count")]
    Chain { origin: String },
}

/// The network stored in a sayso model file (`origin` names it in errors).
pub fn read_mlp(bytes: &[u8], origin: &str) -> Result<Mlp, OnnxReadError> {
    let proto = pb::ModelProto::decode(bytes).map_err(|error| OnnxReadError::Corrupt {
        origin: origin.to_string(),
        message: error.to_string(),
    })?;
    let graph = proto.graph.ok_or_else(|| OnnxReadError::Corrupt {
        origin: origin.to_string(),
        message: "the file holds no graph".to_string(),
    })?;
    let find = |name: &str| -> Result<(Vec<i64>, Vec<f32>), OnnxReadError> {
        let tensor = graph
            .initializer
            .iter()
            .find(|tensor| tensor.name == name)
            .ok_or_else(|| OnnxReadError::Missing {
                origin: origin.to_string(),
                name: name.to_string(),
            })?;
        let values = if tensor.float_data.is_empty() && !tensor.raw_data.is_empty() {
            tensor
                .raw_data
                .chunks_exact(4)
                .map(|chunk| f32::from_le_bytes([chunk[0], chunk[1], chunk[2], chunk[3]]))
                .collect()
        } else {
            tensor.float_data.clone()
        };
        let expected: i64 = tensor.dims.iter().product();
        if tensor.dims.iter().any(|&dim| dim < 0) || expected as usize != values.len() {
            return Err(OnnxReadError::Shape {
                origin: origin.to_string(),
                name: name.to_string(),
                dims: tensor.dims.clone(),
                values: values.len(),
            });
        }
        Ok((tensor.dims.clone(), values))
    };
    let (_, means) = find("feature_means")?;
    let (_, stds) = find("feature_stds")?;
    let (_, temperature) = find("temperature")?;
    let mut layers = Vec::new();
    while graph
        .initializer
        .iter()
        .any(|tensor| tensor.name == format!("layer{}_weights", layers.len()))
    {
        let index = layers.len();
        let name = format!("layer{index}_weights");
        let (dims, weights) = find(&name)?;
        let (_, bias) = find(&format!("layer{index}_bias"))?;
        let value_count = weights.len();
        let shape_error = || OnnxReadError::Shape {
            origin: origin.to_string(),
            name: name.clone(),
            dims: dims.clone(),
            values: value_count,
        };
        if dims.len() != 2 {
            return Err(shape_error());
        }
        let weights =
            ndarray::Array2::from_shape_vec((dims[0] as usize, dims[1] as usize), weights)
                .map_err(|_| shape_error())?;
        layers.push(DenseLayer {
            weights,
            bias: ndarray::Array1::from(bias),
        });
    }
    let mlp = Mlp {
        feature_means: ndarray::Array1::from(means),
        feature_stds: ndarray::Array1::from(stds),
        layers,
        temperature: temperature.first().copied().unwrap_or(1.0),
    };
    if !mlp.shapes_are_consistent() {
        return Err(OnnxReadError::Chain {
            origin: origin.to_string(),
        });
    }
    Ok(mlp)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::unaries::contract::{ModelContract, MODEL_FORMAT_VERSION};
    use crate::unaries::mlp::seeded_random_mlp;
    use crate::unaries::onnx_writer::encode_model;

    #[test]
    fn a_written_network_reads_back_unchanged() {
        let mlp = seeded_random_mlp(11, &[5, 7, 3]);
        let contract = ModelContract {
            format_version: MODEL_FORMAT_VERSION,
            class_names: vec!["a".into(), "b".into(), "c".into()],
            feature_layout_version: 0,
            feature_means: Vec::new(),
            feature_stds: Vec::new(),
            temperature: 1.0,
        };
        let bytes = encode_model(&mlp, &contract).unwrap();
        assert_eq!(read_mlp(&bytes, "written").unwrap(), mlp);
        assert!(matches!(
            read_mlp(&bytes[..bytes.len() / 2], "cut"),
            Err(OnnxReadError::Corrupt { .. })
        ));
    }

    #[test]
    fn the_shipped_model_reads_as_one_hidden_layer() {
        let bytes = std::fs::read(crate::pipeline::shipped_model_path()).unwrap();
        let mlp = read_mlp(&bytes, "shipped").unwrap();
        assert_eq!(mlp.hidden_layer_count(), 1);
        assert_eq!(mlp.feature_count(), crate::features::FEATURE_COUNT);
    }
}
