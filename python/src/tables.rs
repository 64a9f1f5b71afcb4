//! Parametric tables and table sets with per-value indexes.

use numpy::{PyArray1, PyReadonlyArray1};
use pyo3::prelude::*;
use pyo3::types::PyBytes;

use subrange::batch::{decode_indexed, encode_indexed, IndexedTables};
use subrange::model::parametric::{Family, ParametricGrid, ParametricSpec, ParametricTable};

use crate::{invalid, to_py};

/// A real parameter in Q16, rounded to nearest: `x · 2^16` is exact in
/// binary floating point and rounding it is exact too, so every platform
/// gets the same integer.
fn q16(py: Python<'_>, name: &str, x: f64, min: f64) -> PyResult<i64> {
    let scaled = (x * 65536.0).round();
    if !x.is_finite() || x < min || scaled.abs() > f64::from(i32::MAX) {
        return Err(invalid(
            py,
            format!("{name} must be a finite number >= {min} below 32768, got {x}"),
        ));
    }
    Ok(scaled as i64)
}

fn family(py: Python<'_>, name: &str) -> PyResult<Family> {
    Family::from_name(name).ok_or_else(|| {
        invalid(
            py,
            format!("family must be 'gaussian', 'laplace' or 'logistic', got {name:?}"),
        )
    })
}

fn scale_q16(py: Python<'_>, scale: f64) -> PyResult<u32> {
    let s = q16(py, "scale", scale, 0.0)?;
    if s < 1 {
        return Err(invalid(
            py,
            format!("scale must be at least 2^-16, got {scale}"),
        ));
    }
    Ok(s as u32)
}

/// Builds one parametric table; returns `(frequencies, cumulative_q40,
/// max_deviation_units, relative_entropy_bits)`.
#[pyfunction]
#[pyo3(signature = (family_name, scale, mean, half_width, log2_total))]
#[allow(clippy::type_complexity)]
fn parametric_table<'py>(
    py: Python<'py>,
    family_name: &str,
    scale: f64,
    mean: f64,
    half_width: u32,
    log2_total: u32,
) -> PyResult<(
    Bound<'py, PyArray1<u32>>,
    Bound<'py, PyArray1<u64>>,
    f64,
    f64,
)> {
    let spec = ParametricSpec {
        family: family(py, family_name)?,
        scale_q16: scale_q16(py, scale)?,
        mean_q16: q16(py, "mean", mean, -32768.0)? as i32,
        half_width,
        log2_total,
    };
    let table = ParametricTable::new(spec).map_err(|e| to_py(py, e))?;
    let d = table.deviation();
    Ok((
        PyArray1::from_slice(py, table.model().frequencies()),
        PyArray1::from_slice(py, table.cumulative_q40()),
        d.max_units_q16 as f64 / 65536.0,
        d.relative_entropy_q32 as f64 / 4294967296.0,
    ))
}

/// A set of frequency tables for batch coding with per-value indexes.
#[pyclass(module = "subrange._native", frozen)]
struct NativeTableSet {
    set: IndexedTables,
}

#[pymethods]
impl NativeTableSet {
    /// A set from cumulative tables (a list of 1-D uint32 arrays) and origins.
    #[staticmethod]
    fn from_cumulative(
        py: Python<'_>,
        cumulative: Vec<PyReadonlyArray1<'_, u32>>,
        origins: Vec<i32>,
    ) -> PyResult<Self> {
        if cumulative.len() != origins.len() {
            return Err(invalid(py, "needs one origin per table"));
        }
        let mut set = IndexedTables::new();
        for (i, (c, &o)) in cumulative.iter().zip(&origins).enumerate() {
            let c = c.as_slice()?;
            set.push_cumulative(c, o)
                .map_err(|e| invalid(py, format!("table {i}: {e}")))?;
        }
        Ok(NativeTableSet { set })
    }

    /// A grid of parametric tables, one per scale.
    #[staticmethod]
    fn from_parametric(
        py: Python<'_>,
        family_name: &str,
        scales: Vec<f64>,
        mean: f64,
        tail: f64,
        max_half_width: u32,
        log2_total: u32,
    ) -> PyResult<Self> {
        let tail_q16 = q16(py, "tail", tail, 0.0)? as u32;
        let grid = ParametricGrid::new(
            family(py, family_name)?,
            log2_total,
            tail_q16,
            max_half_width,
        );
        let scales = scales
            .iter()
            .map(|&s| scale_q16(py, s))
            .collect::<PyResult<Vec<u32>>>()?;
        let mean = q16(py, "mean", mean, -32768.0)? as i32;
        let tables = py
            .allow_threads(|| grid.build(&scales, mean))
            .map_err(|e| to_py(py, e))?;
        let set = IndexedTables::from_parametric(&tables).map_err(|e| to_py(py, e))?;
        Ok(NativeTableSet { set })
    }

    fn __len__(&self) -> usize {
        self.set.len()
    }

    fn cumulative<'py>(
        &self,
        py: Python<'py>,
        index: usize,
    ) -> PyResult<Bound<'py, PyArray1<u32>>> {
        let c = self
            .set
            .cumulative(index)
            .ok_or_else(|| pyo3::exceptions::PyIndexError::new_err("no such table"))?;
        Ok(PyArray1::from_slice(py, c))
    }

    fn origin(&self, index: usize) -> PyResult<i32> {
        self.set
            .origin(index)
            .ok_or_else(|| pyo3::exceptions::PyIndexError::new_err("no such table"))
    }

    #[pyo3(signature = (values, indexes, offsets=None))]
    fn encode<'py>(
        &self,
        py: Python<'py>,
        values: PyReadonlyArray1<'_, i32>,
        indexes: PyReadonlyArray1<'_, u32>,
        offsets: Option<PyReadonlyArray1<'_, i32>>,
    ) -> PyResult<Bound<'py, PyBytes>> {
        let (v, i) = (values.as_slice()?, indexes.as_slice()?);
        let o = offsets.as_ref().map(|o| o.as_slice()).transpose()?;
        let set = &self.set;
        let bytes = py
            .allow_threads(|| encode_indexed(set, v, i, o))
            .map_err(|e| to_py(py, e))?;
        Ok(PyBytes::new(py, &bytes))
    }

    #[pyo3(signature = (data, indexes, offsets=None))]
    fn decode<'py>(
        &self,
        py: Python<'py>,
        data: &[u8],
        indexes: PyReadonlyArray1<'_, u32>,
        offsets: Option<PyReadonlyArray1<'_, i32>>,
    ) -> PyResult<Bound<'py, PyArray1<i32>>> {
        let i = indexes.as_slice()?;
        let o = offsets.as_ref().map(|o| o.as_slice()).transpose()?;
        let set = &self.set;
        let mut out = vec![0i32; i.len()];
        py.allow_threads(|| decode_indexed(set, data, i, o, &mut out))
            .map_err(|e| to_py(py, e))?;
        Ok(PyArray1::from_vec(py, out))
    }
}

pub(crate) fn register(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add_function(wrap_pyfunction!(parametric_table, m)?)?;
    m.add_class::<NativeTableSet>()?;
    Ok(())
}
