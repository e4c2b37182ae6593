//! The native module `umbral._umbral` of the Python package: thin wrappers of the library's
//! calls. The package's Python layer (`python/umbral/`) gives them their documented
//! signatures, turns their results into numpy arrays and dicts, and defines the exceptions.
//!
//! Every long call runs off the GIL on a worker thread with the library's stop flag; the
//! calling thread checks for Python signals every 100 ms, and on Ctrl-C sets the flag, waits
//! for the items in progress and raises `KeyboardInterrupt` ([`interrupt`]).

mod compute;
mod errors;
mod interrupt;
mod metric;
mod scan;

/// The command-line tool's allocator, mimalloc, for the library's parallel loops (see the
/// command-line tool's `src/main.rs`).
#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;

use pyo3::prelude::*;

#[pymodule]
fn _umbral(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add_class::<metric::Metric>()?;
    m.add_function(wrap_pyfunction!(metric::metrics_json, m)?)?;
    m.add_function(wrap_pyfunction!(compute::shadow_json, m)?)?;
    m.add_function(wrap_pyfunction!(scan::scan, m)?)?;
    m.add_function(wrap_pyfunction!(compute::bound_json, m)?)?;
    m.add_function(wrap_pyfunction!(compute::infer, m)?)?;
    m.add_function(wrap_pyfunction!(compute::image, m)?)?;
    m.add("__version__", env!("CARGO_PKG_VERSION"))?;
    Ok(())
}
