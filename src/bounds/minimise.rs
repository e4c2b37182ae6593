//! Bounded one-dimensional minimisation and bisection used on the nuisance box.

/// Why a minimisation failed.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error("minimisation on [{lo}, {hi}] did not converge in {iterations} iterations")]
pub struct MinimiseError {
    pub lo: f64,
    pub hi: f64,
    pub iterations: usize,
}

/// Minimise `f` on `[lo, hi]` starting from `x0` with known value `f0`, by Brent's method
/// (golden section with parabolic steps; Brent 1973, "Algorithms for Minimization without
/// Derivatives", ch. 5). `f` may return `+inf` where it is undefined; such points are never
/// chosen. Stops when the bracket around the best point is below `tol` (absolute) plus
/// 1e-9 relative.
///
/// ```
/// use umbral::bounds::minimise::brent_minimise;
/// let (x, fx) = brent_minimise(|x| (x - 0.3f64).powi(2) + 1.0, 0.0, 1.0, 0.5, 1.04, 1e-10).unwrap();
/// assert!((x - 0.3).abs() < 1e-7 && (fx - 1.0).abs() < 1e-14);
/// ```
pub fn brent_minimise<F: FnMut(f64) -> f64>(
    mut f: F,
    lo: f64,
    hi: f64,
    x0: f64,
    f0: f64,
    tol: f64,
) -> Result<(f64, f64), MinimiseError> {
    const GOLDEN: f64 = 0.381_966_011_250_105_1; // (3 − √5)/2
    const MAX_ITER: usize = 200;
    let (mut a, mut b) = (lo.min(hi), lo.max(hi));
    let (mut x, mut w, mut v) = (x0, x0, x0);
    let (mut fx, mut fw, mut fv) = (f0, f0, f0);
    let (mut d, mut e) = (0.0f64, 0.0f64);
    for _ in 0..MAX_ITER {
        let m = 0.5 * (a + b);
        let tol1 = 1e-9 * x.abs() + tol / 3.0;
        let t2 = 2.0 * tol1;
        if (x - m).abs() <= t2 - 0.5 * (b - a) {
            return Ok((x, fx));
        }
        let mut golden = true;
        if e.abs() > tol1 {
            let r = (x - w) * (fx - fv);
            let mut q = (x - v) * (fx - fw);
            let mut p = (x - v) * q - (x - w) * r;
            q = 2.0 * (q - r);
            if q > 0.0 {
                p = -p;
            } else {
                q = -q;
            }
            let r = e;
            e = d;
            if p.is_finite()
                && q.is_finite()
                && p.abs() < (0.5 * q * r).abs()
                && p > q * (a - x)
                && p < q * (b - x)
            {
                d = p / q;
                let u = x + d;
                if u - a < t2 || b - u < t2 {
                    d = if x < m { tol1 } else { -tol1 };
                }
                golden = false;
            }
        }
        if golden {
            e = if x < m { b - x } else { a - x };
            d = GOLDEN * e;
        }
        let u = if d.abs() >= tol1 {
            x + d
        } else if d > 0.0 {
            x + tol1
        } else {
            x - tol1
        };
        let fu = f(u);
        if fu <= fx {
            if u < x {
                b = x;
            } else {
                a = x;
            }
            v = w;
            fv = fw;
            w = x;
            fw = fx;
            x = u;
            fx = fu;
        } else {
            if u < x {
                a = u;
            } else {
                b = u;
            }
            if fu <= fw || w == x {
                v = w;
                fv = fw;
                w = u;
                fw = fu;
            } else if fu <= fv || v == x || v == w {
                v = u;
                fv = fu;
            }
        }
    }
    Err(MinimiseError {
        lo,
        hi,
        iterations: MAX_ITER,
    })
}

/// Bisect between `good` (where `pred` holds) and `bad` (where it does not) until they are
/// within `tol`; returns the final (good, bad) pair.
pub fn bisect_predicate<P: FnMut(f64) -> bool>(
    mut pred: P,
    mut good: f64,
    mut bad: f64,
    tol: f64,
) -> (f64, f64) {
    while (good - bad).abs() > tol {
        let mid = 0.5 * (good + bad);
        if mid == good || mid == bad {
            break;
        }
        if pred(mid) {
            good = mid;
        } else {
            bad = mid;
        }
    }
    (good, bad)
}
