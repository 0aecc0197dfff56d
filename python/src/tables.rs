//! A per-degree table (`kugel::spectral::SpectralTable`, what `kugel spectrum` and
//! `kugel compare` write) as Python values: the Python package turns it into an
//! `xarray.Dataset` over `degree`.

use numpy::PyArray1;
use pyo3::prelude::*;
use pyo3::types::{PyDict, PyList};

use kugel::spectral::table::SpectralTable;

/// `{"columns": [{"name", "units", "long_name", "values"}...], "attributes": {..}, "summary"}`.
pub fn table_dict<'py>(
    py: Python<'py>,
    table: SpectralTable,
    summary: String,
) -> PyResult<Bound<'py, PyDict>> {
    let columns = PyList::empty(py);
    for c in table.columns {
        let d = PyDict::new(py);
        d.set_item("name", c.name)?;
        d.set_item("units", c.units)?;
        d.set_item("long_name", c.long_name)?;
        d.set_item("values", PyArray1::from_vec(py, c.values))?;
        columns.append(d)?;
    }
    let attributes = PyDict::new(py);
    for (k, v) in table.attributes {
        attributes.set_item(k, v)?;
    }
    let out = PyDict::new(py);
    out.set_item("columns", columns)?;
    out.set_item("attributes", attributes)?;
    out.set_item("summary", summary)?;
    Ok(out)
}
