use pyo3::prelude::*;

#[pymodule]
fn _umbral(_m: &Bound<'_, PyModule>) -> PyResult<()> {
    Ok(())
}
