//! The container: one-shot compress / decompress and the streaming
//! compressor and decompressor behind the `io.RawIOBase` classes.

use std::io::{Read, Write};

use pyo3::prelude::*;
use pyo3::types::PyBytes;

use subrange::preset::Preset;
use subrange::{Compressor, Decompressor, Options};

use crate::{invalid, io_to_py, to_py};

fn options(
    py: Python<'_>,
    preset: &str,
    block_size: Option<u64>,
    threads: Option<usize>,
) -> PyResult<Options> {
    let mut opts = Options::new();
    let preset = Preset::from_name(preset).map_err(|e| to_py(py, e))?;
    opts.preset(preset);
    if let Some(b) = block_size {
        opts.block_size(b).map_err(|e| to_py(py, e))?;
    }
    if let Some(t) = threads {
        if t == 0 {
            return Err(invalid(py, "threads must be at least 1"));
        }
        opts.threads(t);
    }
    Ok(opts)
}

/// The names of the presets, in the container's order.
#[pyfunction]
fn presets() -> Vec<&'static str> {
    Preset::names().collect()
}

/// Compresses `data` into a container.
#[pyfunction]
#[pyo3(signature = (data, preset, block_size=None, threads=None))]
fn compress<'py>(
    py: Python<'py>,
    data: &[u8],
    preset: &str,
    block_size: Option<u64>,
    threads: Option<usize>,
) -> PyResult<Bound<'py, PyBytes>> {
    let opts = options(py, preset, block_size, threads)?;
    let out = py
        .allow_threads(|| subrange::compress(data, &opts))
        .map_err(|e| to_py(py, e))?;
    Ok(PyBytes::new(py, &out))
}

/// Decompresses a whole container.
#[pyfunction]
fn decompress<'py>(py: Python<'py>, data: &[u8]) -> PyResult<Bound<'py, PyBytes>> {
    let out = py
        .allow_threads(|| subrange::decompress(data))
        .map_err(|e| to_py(py, e))?;
    Ok(PyBytes::new(py, &out))
}

/// A compressor writing into a buffer the Python side drains after each call.
#[pyclass(module = "subrange._native")]
struct NativeCompressor {
    inner: Option<Compressor<Vec<u8>>>,
}

#[pymethods]
impl NativeCompressor {
    #[new]
    #[pyo3(signature = (preset, block_size=None, threads=None))]
    fn new(
        py: Python<'_>,
        preset: &str,
        block_size: Option<u64>,
        threads: Option<usize>,
    ) -> PyResult<Self> {
        let opts = options(py, preset, block_size, threads)?;
        Ok(NativeCompressor {
            inner: Some(Compressor::new(Vec::new(), &opts)),
        })
    }

    /// Takes `data`; returns the container bytes that are ready.
    fn write<'py>(&mut self, py: Python<'py>, data: &[u8]) -> PyResult<Bound<'py, PyBytes>> {
        let c = self.inner.as_mut().ok_or_else(|| {
            pyo3::exceptions::PyValueError::new_err("write to a finished compressor")
        })?;
        py.allow_threads(|| c.write_all(data))
            .map_err(|e| io_to_py(py, e))?;
        let ready = std::mem::take(c.get_mut());
        Ok(PyBytes::new(py, &ready))
    }

    /// Ends the container; returns its last bytes.
    fn finish<'py>(&mut self, py: Python<'py>) -> PyResult<Bound<'py, PyBytes>> {
        let c = self
            .inner
            .take()
            .ok_or_else(|| pyo3::exceptions::PyValueError::new_err("the compressor is finished"))?;
        let rest = py
            .allow_threads(|| c.finish())
            .map_err(|e| io_to_py(py, e))?;
        Ok(PyBytes::new(py, &rest))
    }
}

/// An `io::Read` over a Python binary file object (its `readinto`); a
/// Python exception raised by it is kept and re-raised as it was.
struct PyFile {
    file: Py<PyAny>,
    error: Option<PyErr>,
}

impl Read for PyFile {
    fn read(&mut self, buf: &mut [u8]) -> std::io::Result<usize> {
        Python::with_gil(|py| {
            let result = self
                .file
                .bind(py)
                .call_method1("read", (buf.len(),))
                .and_then(|chunk| {
                    if chunk.is_none() {
                        return Ok(0);
                    }
                    let bytes = chunk.extract::<&[u8]>()?;
                    if bytes.len() > buf.len() {
                        return Err(pyo3::exceptions::PyValueError::new_err(
                            "read() returned more bytes than asked for",
                        ));
                    }
                    buf[..bytes.len()].copy_from_slice(bytes);
                    Ok(bytes.len())
                });
            result.map_err(|e| {
                let message = e.to_string();
                self.error = Some(e);
                std::io::Error::other(message)
            })
        })
    }
}

/// A decompressor reading a container from a Python binary file object.
#[pyclass(module = "subrange._native", unsendable)]
struct NativeDecompressor {
    inner: Decompressor<PyFile>,
}

#[pymethods]
impl NativeDecompressor {
    #[new]
    fn new(file: Py<PyAny>) -> Self {
        NativeDecompressor {
            inner: Decompressor::new(PyFile { file, error: None }),
        }
    }

    /// Up to `size` decoded bytes; empty at the end of the container.
    fn read<'py>(&mut self, py: Python<'py>, size: usize) -> PyResult<Bound<'py, PyBytes>> {
        let mut buf = vec![0u8; size.min(1 << 20)];
        match self.inner.read(&mut buf) {
            Ok(n) => Ok(PyBytes::new(py, &buf[..n])),
            Err(e) => match self.inner.get_mut().error.take() {
                Some(original) => Err(original),
                None => Err(io_to_py(py, e)),
            },
        }
    }
}

pub(crate) fn register(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add_function(wrap_pyfunction!(presets, m)?)?;
    m.add_function(wrap_pyfunction!(compress, m)?)?;
    m.add_function(wrap_pyfunction!(decompress, m)?)?;
    m.add_class::<NativeCompressor>()?;
    m.add_class::<NativeDecompressor>()?;
    Ok(())
}
