//! Probability vectors, adaptive models and table models over integer arrays.

use numpy::{PyArray1, PyReadonlyArray1, PyReadonlyArray2, PyUntypedArrayMethods};
use pyo3::prelude::*;
use pyo3::types::PyBytes;

use subrange::batch::{decode_probabilities, decode_symbols, encode_probabilities, encode_symbols};
use subrange::model::{Model, Probability, StepwiseModel, StepwiseParams, TableModel};

use crate::to_py;

fn encode_rows<'py, P: Probability + numpy::Element + Send + Sync>(
    py: Python<'py>,
    probabilities: PyReadonlyArray2<'_, P>,
    symbols: PyReadonlyArray1<'_, u32>,
    log2_total: u32,
) -> PyResult<Bound<'py, PyBytes>> {
    let alphabet = probabilities.shape()[1];
    let p = probabilities.as_slice()?;
    let s = symbols.as_slice()?;
    let bytes = py
        .allow_threads(|| encode_probabilities(p, alphabet, s, log2_total))
        .map_err(|e| to_py(py, e))?;
    Ok(PyBytes::new(py, &bytes))
}

fn decode_rows<'py, P: Probability + numpy::Element + Send + Sync>(
    py: Python<'py>,
    probabilities: PyReadonlyArray2<'_, P>,
    data: &[u8],
    log2_total: u32,
) -> PyResult<Bound<'py, PyArray1<u32>>> {
    let (count, alphabet) = (probabilities.shape()[0], probabilities.shape()[1]);
    let p = probabilities.as_slice()?;
    let mut out = vec![0u32; count];
    py.allow_threads(|| decode_probabilities(p, alphabet, data, log2_total, &mut out))
        .map_err(|e| to_py(py, e))?;
    Ok(PyArray1::from_vec(py, out))
}

/// Declares the two functions coding under probability rows of one float
/// type (a `#[pyfunction]` cannot be generic).
macro_rules! probability_functions {
    ($float:ty, $encode:ident, $encode_doc:literal, $decode:ident, $decode_doc:literal) => {
        #[doc = $encode_doc]
        #[pyfunction]
        fn $encode<'py>(
            py: Python<'py>,
            probabilities: PyReadonlyArray2<'_, $float>,
            symbols: PyReadonlyArray1<'_, u32>,
            log2_total: u32,
        ) -> PyResult<Bound<'py, PyBytes>> {
            encode_rows(py, probabilities, symbols, log2_total)
        }

        #[doc = $decode_doc]
        #[pyfunction]
        fn $decode<'py>(
            py: Python<'py>,
            probabilities: PyReadonlyArray2<'_, $float>,
            data: &[u8],
            log2_total: u32,
        ) -> PyResult<Bound<'py, PyArray1<u32>>> {
            decode_rows(py, probabilities, data, log2_total)
        }
    };
}

probability_functions!(
    f64,
    encode_probabilities_f64,
    "Codes symbols under per-symbol probability rows (float64).",
    decode_probabilities_f64,
    "Decodes symbols coded under per-symbol probability rows (float64)."
);
probability_functions!(
    f32,
    encode_probabilities_f32,
    "Codes symbols under per-symbol probability rows (float32).",
    decode_probabilities_f32,
    "Decodes symbols coded under per-symbol probability rows (float32)."
);

/// Codes `symbols` with `model`, the GIL released.
fn encode_with<'py, M: Model + Send>(
    py: Python<'py>,
    model: &mut M,
    symbols: PyReadonlyArray1<'_, u32>,
) -> PyResult<Bound<'py, PyBytes>> {
    let s = symbols.as_slice()?;
    let bytes = py
        .allow_threads(|| encode_symbols(model, s))
        .map_err(|e| to_py(py, e))?;
    Ok(PyBytes::new(py, &bytes))
}

/// Decodes `count` symbols from `data` with `model`, the GIL released.
fn decode_with<'py, M: Model + Send>(
    py: Python<'py>,
    model: &mut M,
    data: &[u8],
    count: usize,
) -> PyResult<Bound<'py, PyArray1<u32>>> {
    let mut out = vec![0u32; count];
    py.allow_threads(|| decode_symbols(model, data, &mut out))
        .map_err(|e| to_py(py, e))?;
    Ok(PyArray1::from_vec(py, out))
}

fn adaptive(py: Python<'_>, alphabet: u32, increment: u32, limit: u32) -> PyResult<StepwiseModel> {
    let mut params = StepwiseParams::default();
    params.increment = increment;
    params.limit = limit;
    StepwiseModel::with_params(alphabet, params).map_err(|e| to_py(py, e))
}

/// Codes symbols with an adaptive order-0 model over `alphabet` symbols.
#[pyfunction]
fn encode_adaptive<'py>(
    py: Python<'py>,
    symbols: PyReadonlyArray1<'_, u32>,
    alphabet: u32,
    increment: u32,
    limit: u32,
) -> PyResult<Bound<'py, PyBytes>> {
    encode_with(py, &mut adaptive(py, alphabet, increment, limit)?, symbols)
}

/// Decodes `count` symbols coded by `encode_adaptive` with the same parameters.
#[pyfunction]
fn decode_adaptive<'py>(
    py: Python<'py>,
    data: &[u8],
    count: usize,
    alphabet: u32,
    increment: u32,
    limit: u32,
) -> PyResult<Bound<'py, PyArray1<u32>>> {
    decode_with(
        py,
        &mut adaptive(py, alphabet, increment, limit)?,
        data,
        count,
    )
}

/// A static frequency table.
#[pyclass(module = "subrange._native", frozen)]
struct NativeTableModel {
    model: TableModel,
}

#[pymethods]
impl NativeTableModel {
    #[staticmethod]
    fn from_counts(
        py: Python<'_>,
        counts: PyReadonlyArray1<'_, u64>,
        log2_total: u32,
    ) -> PyResult<Self> {
        let model =
            TableModel::from_counts(counts.as_slice()?, log2_total).map_err(|e| to_py(py, e))?;
        Ok(NativeTableModel { model })
    }

    #[staticmethod]
    fn from_frequencies(py: Python<'_>, freq: PyReadonlyArray1<'_, u32>) -> PyResult<Self> {
        let model = TableModel::from_frequencies(freq.as_slice()?).map_err(|e| to_py(py, e))?;
        Ok(NativeTableModel { model })
    }

    #[staticmethod]
    fn from_bytes(py: Python<'_>, data: &[u8]) -> PyResult<(Self, usize)> {
        let (model, used) =
            TableModel::from_table_bytes(data, 1 << 16).map_err(|e| to_py(py, e))?;
        Ok((NativeTableModel { model }, used))
    }

    fn to_bytes<'py>(&self, py: Python<'py>) -> Bound<'py, PyBytes> {
        PyBytes::new(py, &self.model.to_bytes())
    }

    fn frequencies<'py>(&self, py: Python<'py>) -> Bound<'py, PyArray1<u32>> {
        PyArray1::from_slice(py, self.model.frequencies())
    }

    fn log2_total(&self) -> u32 {
        self.model.log2_total()
    }

    fn encode<'py>(
        &self,
        py: Python<'py>,
        symbols: PyReadonlyArray1<'_, u32>,
    ) -> PyResult<Bound<'py, PyBytes>> {
        encode_with(py, &mut self.model.clone(), symbols)
    }

    fn decode<'py>(
        &self,
        py: Python<'py>,
        data: &[u8],
        count: usize,
    ) -> PyResult<Bound<'py, PyArray1<u32>>> {
        decode_with(py, &mut self.model.clone(), data, count)
    }
}

pub(crate) fn register(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add_function(wrap_pyfunction!(encode_probabilities_f64, m)?)?;
    m.add_function(wrap_pyfunction!(encode_probabilities_f32, m)?)?;
    m.add_function(wrap_pyfunction!(decode_probabilities_f64, m)?)?;
    m.add_function(wrap_pyfunction!(decode_probabilities_f32, m)?)?;
    m.add_function(wrap_pyfunction!(encode_adaptive, m)?)?;
    m.add_function(wrap_pyfunction!(decode_adaptive, m)?)?;
    m.add_class::<NativeTableModel>()?;
    Ok(())
}
