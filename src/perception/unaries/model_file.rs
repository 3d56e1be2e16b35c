//! Reading model files safely: a bounded read of a regular file, and a guard that turns a panic inside the
//! inference library into an error.
//!
//! Owns: `MODEL_BYTES_LIMIT`, `read_model_bytes` and `guard_library`.
//! Must not: parse models (the classifier and the user-model loader do) or decide what a model means.
//!
//! Why: a path such as `/dev/zero` never ends, so reading it "to the end" would take all memory, and the
//! inference library panics on some malformed graphs (an output no node produces) instead of returning an
//! error; both must end in a clear error naming the file.

use std::io::Read;
use std::path::Path;

/// The largest model file read, in bytes (256 MiB; the built-in classifier is a few kilobytes).
pub const MODEL_BYTES_LIMIT: u64 = 256 * 1024 * 1024;

/// Reads a model file of at most `limit` bytes; refuses anything that is not a regular file (a device, a
/// pipe, a directory) and anything longer, without reading more than `limit + 1` bytes.
pub fn read_model_bytes(path: &Path, limit: u64) -> std::io::Result<Vec<u8>> {
    let file = std::fs::File::open(path)?;
    let metadata = file.metadata()?;
    if !metadata.is_file() {
        return Err(std::io::Error::new(
            std::io::ErrorKind::InvalidInput,
            "not a regular file (a model must be an .onnx file, not a device, pipe or directory)",
        ));
    }
    let mut bytes = Vec::with_capacity(metadata.len().min(limit) as usize);
    file.take(limit + 1).read_to_end(&mut bytes)?;
    if bytes.len() as u64 > limit {
        return Err(std::io::Error::new(
            std::io::ErrorKind::InvalidData,
            format!("larger than the model size limit of {limit} bytes"),
        ));
    }
    Ok(bytes)
}

/// Runs `work` (a call into the inference library), turning a panic into `Err` with the panic's message.
pub fn guard_library<T>(work: impl FnOnce() -> T) -> Result<T, String> {
    std::panic::catch_unwind(std::panic::AssertUnwindSafe(work)).map_err(|payload| {
        let message = payload
            .downcast_ref::<&str>()
            .map(|text| text.to_string())
            .or_else(|| payload.downcast_ref::<String>().cloned())
            .unwrap_or_else(|| "no message".to_string());
        format!("the inference library failed on this model ({message})")
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_device_and_an_oversized_file_are_refused_without_reading_them_whole() {
        #[cfg(unix)]
        {
            let error = read_model_bytes(Path::new("/dev/zero"), MODEL_BYTES_LIMIT).unwrap_err();
            assert!(error.to_string().contains("not a regular file"), "{error}");
        }
        let directory = tempfile::tempdir().unwrap();
        let path = directory.path().join("big.onnx");
        std::fs::write(&path, vec![7u8; 1001]).unwrap();
        let error = read_model_bytes(&path, 1000).unwrap_err();
        assert!(error.to_string().contains("size limit of 1000"), "{error}");
        assert_eq!(read_model_bytes(&path, 1001).unwrap().len(), 1001);
    }

    #[test]
    fn a_panic_becomes_an_error_with_its_message() {
        let outcome: Result<(), String> = guard_library(|| panic!("no node makes output 3"));
        assert!(outcome.unwrap_err().contains("no node makes output 3"));
        assert_eq!(guard_library(|| 7), Ok(7));
    }
}
