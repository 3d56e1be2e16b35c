//! The service's settings: where to listen, where the data lives, who may call, and the limits.
//!
//! Owns: `ServiceConfig` (read from a TOML file, with defaults that work out of the box), its validation
//! (most importantly: no non-loopback address without operator tokens), and `OperatorToken`.
//! Must not: read flags or the environment (the CLI layers those on top) or start anything.
//!
//! A complete file, every key optional:
//!
//! ```toml
//! bind = "127.0.0.1:8417"        # address and port; port 0 picks a free one
//! data_dir = "sayso-data"        # the correction log lives here
//! grammar_dir = "grammar"        # classes.toml and the lexicon
//! model = "models/segments.onnx" # the segment classifier (optional)
//! demo_dir = "demo_scenes"       # scenes registrable by name [default: the crate's demo_scenes/]
//! body_limit_bytes = 33554432
//! pixel_limit = 16777216
//! rate_per_second = 100.0        # per token (or per caller when no tokens are set)
//! rate_burst = 200
//! request_timeout_ms = 10000
//!
//! [[operators]]
//! name = "mira"
//! token = "a long random string"
//! ```

use std::net::SocketAddr;
use std::path::{Path, PathBuf};

use serde::{Deserialize, Serialize};

/// The port sayso listens on unless told otherwise.
pub const DEFAULT_PORT: u16 = 8417;

/// One operator and the bearer token they present.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct OperatorToken {
    pub name: String,
    pub token: String,
}

/// Every setting of the service.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(default, deny_unknown_fields)]
pub struct ServiceConfig {
    pub bind: SocketAddr,
    pub data_dir: PathBuf,
    pub grammar_dir: Option<PathBuf>,
    pub model: Option<PathBuf>,
    /// Where demo scenes are found; `None` is the crate's `demo_scenes/` (as for `sayso demo`, `fix` and
    /// `score`). The binary lays `--demo-dir` and `SAYSO_DEMO_DIR` over it.
    pub demo_dir: Option<PathBuf>,
    pub body_limit_bytes: usize,
    pub pixel_limit: u64,
    pub rate_per_second: f64,
    pub rate_burst: u32,
    pub request_timeout_ms: u64,
    pub operators: Vec<OperatorToken>,
}

impl Default for ServiceConfig {
    fn default() -> Self {
        ServiceConfig {
            bind: SocketAddr::from(([127, 0, 0, 1], DEFAULT_PORT)),
            data_dir: PathBuf::from("sayso-data"),
            grammar_dir: None,
            model: None,
            demo_dir: None,
            body_limit_bytes: 32 * 1024 * 1024,
            pixel_limit: crate::raster::DEFAULT_PIXEL_LIMIT,
            rate_per_second: 100.0,
            rate_burst: 200,
            request_timeout_ms: 10_000,
            operators: Vec::new(),
        }
    }
}

/// What is wrong with a configuration.
#[derive(Debug, thiserror::Error)]
pub enum ConfigError {
    #[error("cannot read {path}: {source}")]
    Read {
        path: PathBuf,
        source: std::io::Error,
    },
    #[error("{path}: {message}")]
    Parse { path: PathBuf, message: String },
    #[error(
        "refusing to listen on {bind} without operator tokens: add [[operators]] entries to the config \
         file or bind a loopback address such as 127.0.0.1"
    )]
    OpenToNetwork { bind: SocketAddr },
    #[error("{field} must be {expected}, got {found}")]
    OutOfRange {
        field: &'static str,
        expected: &'static str,
        found: String,
    },
    #[error("operator {name:?}: {problem}")]
    BadOperator { name: String, problem: &'static str },
}

impl ServiceConfig {
    /// Reads a TOML config file; keys left out keep their defaults.
    pub fn load(path: &Path) -> Result<ServiceConfig, ConfigError> {
        let text = std::fs::read_to_string(path).map_err(|source| ConfigError::Read {
            path: path.to_path_buf(),
            source,
        })?;
        ServiceConfig::parse(&text, path)
    }

    /// Parses TOML text; `origin` names it in errors.
    pub fn parse(text: &str, origin: &Path) -> Result<ServiceConfig, ConfigError> {
        toml::from_str(text).map_err(|error| ConfigError::Parse {
            path: origin.to_path_buf(),
            message: error.to_string(),
        })
    }

    /// Checks the settings fit together; call before serving.
    pub fn validate(&self) -> Result<(), ConfigError> {
        if !self.bind.ip().is_loopback() && self.operators.is_empty() {
            return Err(ConfigError::OpenToNetwork { bind: self.bind });
        }
        if self.body_limit_bytes < 1024 {
            return Err(ConfigError::OutOfRange {
                field: "body_limit_bytes",
                expected: "at least 1024",
                found: self.body_limit_bytes.to_string(),
            });
        }
        if self.pixel_limit == 0 {
            return Err(ConfigError::OutOfRange {
                field: "pixel_limit",
                expected: "at least 1",
                found: "0".into(),
            });
        }
        if !(self.rate_per_second > 0.0 && self.rate_per_second.is_finite()) || self.rate_burst == 0
        {
            return Err(ConfigError::OutOfRange {
                field: "rate_per_second / rate_burst",
                expected: "a positive rate and a burst of at least 1",
                found: format!("{} / {}", self.rate_per_second, self.rate_burst),
            });
        }
        if self.request_timeout_ms == 0 {
            return Err(ConfigError::OutOfRange {
                field: "request_timeout_ms",
                expected: "at least 1",
                found: "0".into(),
            });
        }
        let mut seen = std::collections::HashSet::new();
        for operator in &self.operators {
            if operator.name.trim().is_empty() {
                return Err(ConfigError::BadOperator {
                    name: operator.name.clone(),
                    problem: "the name is empty",
                });
            }
            if operator.token.len() < 16 {
                return Err(ConfigError::BadOperator {
                    name: operator.name.clone(),
                    problem: "the token must be at least 16 characters",
                });
            }
            if !seen.insert(operator.token.as_str()) {
                return Err(ConfigError::BadOperator {
                    name: operator.name.clone(),
                    problem: "the token is used by another operator",
                });
            }
        }
        Ok(())
    }

    /// Where demo scenes are found: `demo_dir`, else the crate's `demo_scenes/`.
    pub fn demo_directory(&self) -> PathBuf {
        self.demo_dir
            .clone()
            .unwrap_or_else(|| PathBuf::from(crate::demo::COMPILED_DEMO_DIR))
    }

    /// The correction log's file inside the data directory.
    pub fn log_path(&self) -> PathBuf {
        self.data_dir.join("corrections.sqlite")
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn defaults_bind_loopback_and_validate() {
        let config = ServiceConfig::default();
        assert!(config.bind.ip().is_loopback());
        config.validate().unwrap();
    }

    #[test]
    fn a_public_address_without_tokens_is_refused() {
        let config =
            ServiceConfig::parse("bind = \"0.0.0.0:8417\"", Path::new("sayso.toml")).unwrap();
        assert!(matches!(
            config.validate(),
            Err(ConfigError::OpenToNetwork { .. })
        ));
        let with_tokens = ServiceConfig::parse(
            "bind = \"0.0.0.0:8417\"\n[[operators]]\nname = \"mira\"\ntoken = \"juniper-lane-0123456789\"\n",
            Path::new("sayso.toml"),
        )
        .unwrap();
        with_tokens.validate().unwrap();
    }

    #[test]
    fn unknown_keys_and_short_tokens_are_named() {
        let error = ServiceConfig::parse("bnd = \"x\"", Path::new("sayso.toml")).unwrap_err();
        assert!(error.to_string().contains("bnd"), "{error}");
        let config = ServiceConfig::parse(
            "[[operators]]\nname = \"ola\"\ntoken = \"short\"\n",
            Path::new("sayso.toml"),
        )
        .unwrap();
        assert!(matches!(
            config.validate(),
            Err(ConfigError::BadOperator { .. })
        ));
    }
}
