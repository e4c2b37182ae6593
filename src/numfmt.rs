//! Numbers in messages: short and readable at any magnitude.
//!
//! `format!("{}", 1e308)` prints 309 digits and `format!("{}", 1e-300)` more than 300; a message
//! that repeats a user's number should not. [`Num`] prints plain decimals for moderate
//! magnitudes and the shortest scientific form that reads back to the same `f64` otherwise, and
//! never a negative zero.
//!
//! ```
//! use umbral::numfmt::Num;
//! assert_eq!(Num(1e308).to_string(), "1e308");
//! assert_eq!(Num(-2.5e-300).to_string(), "-2.5e-300");
//! assert_eq!(Num(0.25).to_string(), "0.25");
//! assert_eq!(Num(123456.0).to_string(), "123456");
//! assert_eq!(Num(-0.0).to_string(), "0");
//! assert_eq!(Num(f64::NAN).to_string(), "NaN");
//! // Every form reads back to the same number.
//! for x in [1e308, 3.0e-7, 0.1 + 0.2, 1e15 + 1.0] {
//!     assert_eq!(Num(x).to_string().parse::<f64>().unwrap(), x);
//! }
//! ```

use std::fmt;

/// Magnitudes from this up are printed in scientific form.
const LARGE: f64 = 1e15;
/// Nonzero magnitudes below this are printed in scientific form.
const SMALL: f64 = 1e-5;

/// A number formatted for a message (see the module documentation).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Num(pub f64);

impl fmt::Display for Num {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let x = self.0;
        if x == 0.0 {
            // Also -0.0, which `{}` would print as "-0".
            return f.write_str("0");
        }
        if !x.is_finite() || (SMALL..LARGE).contains(&x.abs()) {
            // `{}` and `{:e}` print the shortest digits that read back to `x`.
            write!(f, "{x}")
        } else {
            write!(f, "{x:e}")
        }
    }
}

/// [`Num`] as a `String`.
pub fn num(x: f64) -> String {
    Num(x).to_string()
}

/// `x` to at most `digits` significant digits, trailing zeros dropped, never a negative
/// zero: for labels of values that were typed short (`0.27`, not `0.26999999999999996`).
///
/// ```
/// use umbral::numfmt::short;
/// assert_eq!(short(0.26999999999999996, 6), "0.27");
/// assert_eq!(short(-1e-20, 6), "-1e-20");
/// assert_eq!(short(-0.0, 6), "0");
/// assert_eq!(short(17.0, 6), "17");
/// assert_eq!(short(5.196152422706632, 4), "5.196");
/// ```
pub fn short(x: f64, digits: usize) -> String {
    if x == 0.0 || !x.is_finite() {
        return num(x);
    }
    let digits = digits.clamp(1, 17);
    let rounded: f64 = format!("{x:.*e}", digits - 1).parse().unwrap_or(x);
    num(rounded)
}
