//! The `subrange._native` extension module: thin bindings of the crate's
//! public API for the Python package `subrange` (see `subrange/__init__.py`,
//! which validates arguments and re-exports everything).
//!
//! Every binding converts its arguments, releases the GIL around the crate
//! call when the work is proportional to the input, and maps the crate's
//! [`subrange::Error`] to the exception of `subrange.errors` named after its
//! kind.

use pyo3::prelude::*;
use pyo3::types::PyType;

mod arrays;
mod container;
mod tables;

/// The `subrange.errors` class for a crate error kind.
fn error_class(kind: &subrange::ErrorKind) -> &'static str {
    use subrange::ErrorKind as K;
    match kind {
        K::Truncated { .. } => "TruncatedError",
        K::UncodableSymbol { .. } => "UncodableSymbolError",
        K::InvalidModel { .. } => "InvalidModelError",
        K::InvalidParameter { .. } => "InvalidParameterError",
        K::CorruptStream { .. } => "CorruptStreamError",
        K::CorruptTable { .. } => "CorruptTableError",
        K::BadMagic => "BadMagicError",
        K::UnsupportedVersion { .. } => "UnsupportedVersionError",
        K::UnknownPreset { .. } => "UnknownPresetError",
        K::CorruptHeader { .. } => "CorruptHeaderError",
        K::CorruptFrame { .. } => "CorruptFrameError",
        K::CorruptBlock { .. } => "CorruptBlockError",
        K::CorruptEnd { .. } => "CorruptEndError",
        K::CorruptIndex { .. } => "CorruptIndexError",
        K::RangeOutsideData { .. } => "RangeOutsideDataError",
        K::ChecksumMismatch { .. } => "ChecksumMismatchError",
        K::LimitExceeded { .. } => "LimitExceededError",
        K::TrailingBytes { .. } => "TrailingBytesError",
        K::Snapshot { .. } => "SnapshotError",
        K::Mq(_) => "MqError",
        K::Io(_) => "IoError",
        _ => "SubrangeError",
    }
}

/// Raises `subrange.errors.<name>(message)`.
pub(crate) fn raise(py: Python<'_>, name: &str, message: String) -> PyErr {
    let class = py
        .import("subrange.errors")
        .and_then(|m| m.getattr(name))
        .and_then(|c| c.downcast_into::<PyType>().map_err(PyErr::from));
    match class {
        Ok(class) => PyErr::from_type(class, message),
        Err(e) => e,
    }
}

/// The Python exception for a crate error.
pub(crate) fn to_py(py: Python<'_>, err: subrange::Error) -> PyErr {
    raise(py, error_class(err.kind()), err.to_string())
}

/// The Python exception for an I/O error of the stream adapters: the crate
/// error it carries, or an `IoError`.
pub(crate) fn io_to_py(py: Python<'_>, err: std::io::Error) -> PyErr {
    match std::error::Error::source(&err).and_then(|e| e.downcast_ref::<subrange::Error>()) {
        Some(inner) => raise(py, error_class(inner.kind()), inner.to_string()),
        None => raise(py, "IoError", err.to_string()),
    }
}

/// An `InvalidParameterError` with a message of the binding's own.
pub(crate) fn invalid(py: Python<'_>, message: impl Into<String>) -> PyErr {
    raise(py, "InvalidParameterError", message.into())
}

#[pymodule]
fn _native(m: &Bound<'_, PyModule>) -> PyResult<()> {
    tables::register(m)?;
    arrays::register(m)?;
    container::register(m)?;
    m.add("CDF_BITS", subrange::model::parametric::CDF_BITS)?;
    m.add("CDF_ERROR", subrange::model::parametric::CDF_ERROR)?;
    m.add(
        "MAX_HALF_WIDTH",
        subrange::model::parametric::MAX_HALF_WIDTH,
    )?;
    Ok(())
}
