//! Thin wrappers over general-purpose numerical crates, with the tolerances umbral uses.

use roots::{find_root_brent, Convergency};

/// Why a one-dimensional root search failed.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum RootError {
    /// The function has the same sign at both ends of the bracket.
    #[error("no sign change between {lo} and {hi}")]
    NotBracketed { lo: f64, hi: f64 },
    /// The iteration limit was reached.
    #[error("root search between {lo} and {hi} did not converge")]
    NoConvergence { lo: f64, hi: f64 },
}

/// Stop when the bracket is as small as the spacing of doubles allows (plus `xtol`).
struct FullPrecision {
    xtol: f64,
    max_iter: usize,
}

impl Convergency<f64> for FullPrecision {
    fn is_root_found(&mut self, y: f64) -> bool {
        y == 0.0
    }
    fn is_converged(&mut self, x1: f64, x2: f64) -> bool {
        (x1 - x2).abs() <= 4.0 * f64::EPSILON * x1.abs().max(x2.abs()) + self.xtol
    }
    fn is_iteration_limit_reached(&mut self, iter: usize) -> bool {
        iter >= self.max_iter
    }
}

/// Root of `f` in `[lo, hi]` by Brent's method (the `roots` crate), to `xtol` absolute
/// plus a few units in the last place.
///
/// ```
/// let r = umbral::numerics::brent_root(|x| x * x - 2.0, 0.0, 2.0, 0.0).unwrap();
/// assert!((r - 2f64.sqrt()).abs() < 1e-15);
/// ```
pub fn brent_root<F: FnMut(f64) -> f64>(
    f: F,
    lo: f64,
    hi: f64,
    xtol: f64,
) -> Result<f64, RootError> {
    let mut conv = FullPrecision {
        xtol,
        max_iter: 200,
    };
    find_root_brent(lo, hi, f, &mut conv).map_err(|e| match e {
        roots::SearchError::NoBracketing => RootError::NotBracketed { lo, hi },
        _ => RootError::NoConvergence { lo, hi },
    })
}
