//! Priors on one parameter: their normalised log-densities, CDFs, quantile functions (the map
//! from the unit interval nested sampling works in) and draws, parsed from and printed as a
//! one-word spec (`uniform:LO:HI`, `log-uniform:LO:HI`, `normal:MU:SIGMA`,
//! `isotropic:LO:HI` in degrees, `fixed:V`).
//!
//! Densities and quantiles (each elementary; e.g. Gelman et al. 2013, "Bayesian Data
//! Analysis", 3rd ed., appendix A):
//! - uniform on [a, b]: p = 1/(b − a), x(u) = a + u (b − a);
//! - log-uniform on [a, b], 0 < a: p = 1/(x ln(b/a)), x(u) = a (b/a)ᵘ;
//! - normal: p = φ((x − μ)/σ)/σ, x(u) = μ + σ Φ⁻¹(u) ([`super::normal::quantile`]);
//! - isotropic on [a, b] ⊂ [0, π] (directions uniform on the sphere, θ the polar angle):
//!   p = sin θ/(cos a − cos b), F(θ) = (cos a − cos θ)/(cos a − cos b), solved for θ with
//!   1 − cos θ = 2 sin²(θ/2) to keep precision near the poles;
//! - fixed at v: a point mass (density 1 at v with respect to counting measure, so
//!   ln p = 0 there and −∞ elsewhere); samplers keep the coordinate at v.
//!
//! ```
//! use umbral::sampling::Prior;
//! let p = Prior::parse("isotropic:0:90").unwrap();
//! assert_eq!(p.to_string(), "isotropic:0:90");
//! // Half of the isotropic directions of a hemisphere lie within 60° of the pole.
//! assert!((p.from_unit(0.5) - 60f64.to_radians()).abs() < 1e-15);
//! assert_eq!(Prior::parse("uniform:2:1").unwrap_err().to_string(), "prior 'uniform:2:1': needs LO < HI");
//! ```

use super::normal;
use crate::numfmt::Num;
use rand_chacha::rand_core::Rng;
use rand_distr::{Distribution, Open01};
use std::fmt;

/// A prior on one parameter. Angles are in radians here; the spec of an isotropic prior is
/// in degrees.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Prior {
    /// Uniform on `[low, high]`.
    Uniform {
        /// Lower end.
        low: f64,
        /// Upper end.
        high: f64,
    },
    /// Uniform in the logarithm on `[low, high]`, `0 < low < high`.
    LogUniform {
        /// Lower end (positive).
        low: f64,
        /// Upper end.
        high: f64,
    },
    /// Normal with mean `mean` and standard deviation `sigma > 0`.
    Normal {
        /// Mean.
        mean: f64,
        /// Standard deviation.
        sigma: f64,
    },
    /// An inclination: density ∝ sin θ on `[low, high]` ⊂ [0, π] (radians).
    Isotropic {
        /// Lower end (radians).
        low: f64,
        /// Upper end (radians).
        high: f64,
    },
    /// The parameter is held at this value.
    Fixed(f64),
}

/// A prior spec that cannot be read, or a prior whose numbers do not make one.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error("prior '{spec}': {problem}")]
pub struct PriorError {
    /// The spec as given (or the prior's canonical spec).
    pub spec: String,
    /// What is wrong with it.
    pub problem: PriorProblem,
}

/// What is wrong with a prior.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum PriorProblem {
    /// The part before the first colon is not a known kind.
    #[error("unknown kind '{0}' (expected uniform, log-uniform, normal, isotropic or fixed)")]
    UnknownKind(String),
    /// The kind takes a different number of numbers.
    #[error("expected the form {0}")]
    Form(&'static str),
    /// A number is not a finite number.
    #[error("'{0}' is not a finite number")]
    NotANumber(String),
    /// The lower end is not below the upper end.
    #[error("needs LO < HI")]
    Order,
    /// A log-uniform prior with a lower end that is not positive.
    #[error("needs 0 < LO")]
    NotPositive,
    /// A normal prior whose standard deviation is not positive.
    #[error("needs SIGMA > 0")]
    Sigma,
    /// An isotropic prior outside [0°, 180°].
    #[error("needs 0 <= LO < HI <= 180 (degrees)")]
    Inclination,
}

impl Prior {
    /// Read a spec: `uniform:LO:HI`, `log-uniform:LO:HI`, `normal:MU:SIGMA`,
    /// `isotropic:LO:HI` (degrees, within 0..180) or `fixed:V`.
    pub fn parse(spec: &str) -> Result<Prior, PriorError> {
        let error = |problem| PriorError {
            spec: spec.to_string(),
            problem,
        };
        let mut parts = spec.trim().split(':');
        let kind = parts.next().unwrap_or("");
        let words: Vec<&str> = parts.collect();
        let (form, count) = match kind {
            "uniform" => ("uniform:LO:HI", 2),
            "log-uniform" => ("log-uniform:LO:HI", 2),
            "normal" => ("normal:MU:SIGMA", 2),
            "isotropic" => ("isotropic:LO:HI (degrees)", 2),
            "fixed" => ("fixed:V", 1),
            other => return Err(error(PriorProblem::UnknownKind(other.to_string()))),
        };
        if words.len() != count {
            return Err(error(PriorProblem::Form(form)));
        }
        let mut numbers = Vec::with_capacity(count);
        for word in words {
            match word.trim().parse::<f64>() {
                Ok(x) if x.is_finite() => numbers.push(x),
                _ => return Err(error(PriorProblem::NotANumber(word.to_string()))),
            }
        }
        let prior = match kind {
            "uniform" => Prior::Uniform {
                low: numbers[0],
                high: numbers[1],
            },
            "log-uniform" => Prior::LogUniform {
                low: numbers[0],
                high: numbers[1],
            },
            "normal" => Prior::Normal {
                mean: numbers[0],
                sigma: numbers[1],
            },
            "isotropic" => {
                if !(0.0 <= numbers[0] && numbers[0] < numbers[1] && numbers[1] <= 180.0) {
                    return Err(error(PriorProblem::Inclination));
                }
                Prior::Isotropic {
                    low: numbers[0].to_radians(),
                    high: numbers[1].to_radians().min(std::f64::consts::PI),
                }
            }
            _ => Prior::Fixed(numbers[0]),
        };
        prior.problem().map_or(Ok(prior), |p| Err(error(p)))
    }

    /// Check a prior built directly (what [`Prior::parse`] checks).
    ///
    /// ```
    /// use umbral::sampling::Prior;
    /// assert!(Prior::Normal { mean: 0.0, sigma: 1.0 }.validate().is_ok());
    /// let e = Prior::LogUniform { low: 0.0, high: 1.0 }.validate().unwrap_err();
    /// assert_eq!(e.to_string(), "prior 'log-uniform:0:1': needs 0 < LO");
    /// ```
    pub fn validate(&self) -> Result<(), PriorError> {
        self.problem().map_or(Ok(()), |problem| {
            Err(PriorError {
                spec: self.to_string(),
                problem,
            })
        })
    }

    fn problem(&self) -> Option<PriorProblem> {
        let numbers = match *self {
            Prior::Uniform { low, high }
            | Prior::LogUniform { low, high }
            | Prior::Isotropic { low, high } => vec![low, high],
            Prior::Normal { mean, sigma } => vec![mean, sigma],
            Prior::Fixed(v) => vec![v],
        };
        if let Some(x) = numbers.iter().find(|x| !x.is_finite()) {
            return Some(PriorProblem::NotANumber(Num(*x).to_string()));
        }
        match *self {
            Prior::Uniform { low, high } if low >= high => Some(PriorProblem::Order),
            Prior::LogUniform { low, .. } if low <= 0.0 => Some(PriorProblem::NotPositive),
            Prior::LogUniform { low, high } if low >= high => Some(PriorProblem::Order),
            Prior::Normal { sigma, .. } if sigma <= 0.0 => Some(PriorProblem::Sigma),
            Prior::Isotropic { low, high }
                if !(0.0 <= low && low < high && high <= std::f64::consts::PI) =>
            {
                Some(PriorProblem::Inclination)
            }
            _ => None,
        }
    }

    /// The normalised log-density at `x`; −∞ outside the support.
    ///
    /// ```
    /// use umbral::sampling::Prior;
    /// let p = Prior::Uniform { low: 0.0, high: 4.0 };
    /// assert_eq!(p.log_density(1.0), -(4f64.ln()));
    /// assert_eq!(p.log_density(5.0), f64::NEG_INFINITY);
    /// ```
    pub fn log_density(&self, x: f64) -> f64 {
        let (low, high) = self.support();
        if !(x >= low && x <= high) {
            return f64::NEG_INFINITY;
        }
        match *self {
            Prior::Uniform { low, high } => -(high - low).ln(),
            Prior::LogUniform { low, high } => -x.ln() - (high / low).ln().ln(),
            Prior::Normal { mean, sigma } => {
                let z = (x - mean) / sigma;
                -0.5 * z * z - sigma.ln() - 0.5 * (2.0 * std::f64::consts::PI).ln()
            }
            Prior::Isotropic { low, high } => x.sin().ln() - cos_difference(low, high).ln(),
            Prior::Fixed(_) => 0.0,
        }
    }

    /// The cumulative distribution function at `x`.
    ///
    /// ```
    /// use umbral::sampling::Prior;
    /// assert_eq!(Prior::Normal { mean: 1.0, sigma: 2.0 }.cdf(1.0), 0.5);
    /// ```
    pub fn cdf(&self, x: f64) -> f64 {
        let (low, high) = self.support();
        if x < low {
            return 0.0;
        }
        if x >= high {
            return 1.0;
        }
        match *self {
            Prior::Uniform { low, high } => (x - low) / (high - low),
            Prior::LogUniform { low, high } => (x / low).ln() / (high / low).ln(),
            Prior::Normal { mean, sigma } => normal::cdf((x - mean) / sigma),
            Prior::Isotropic { low, high } => cos_difference(low, x) / cos_difference(low, high),
            Prior::Fixed(_) => 1.0,
        }
    }

    /// The quantile function: the parameter value below which a fraction `u` ∈ (0, 1) of
    /// the prior lies (the map from nested sampling's unit interval).
    ///
    /// ```
    /// use umbral::sampling::Prior;
    /// let p = Prior::LogUniform { low: 1.0, high: 100.0 };
    /// assert!((p.from_unit(0.5) - 10.0).abs() < 1e-14);
    /// ```
    pub fn from_unit(&self, u: f64) -> f64 {
        match *self {
            Prior::Uniform { low, high } => (low + u * (high - low)).clamp(low, high),
            Prior::LogUniform { low, high } => {
                (low * (u * (high / low).ln()).exp()).clamp(low, high)
            }
            Prior::Normal { mean, sigma } => mean + sigma * normal::quantile(u),
            Prior::Isotropic { low, high } => {
                // 1 − cos θ = (1 − cos a) + u (cos a − cos b), with 1 − cos x = 2 sin²(x/2).
                let half = (low / 2.0).sin();
                let one_minus_cos = 2.0 * half * half + u * cos_difference(low, high);
                (2.0 * (0.5 * one_minus_cos).sqrt().min(1.0).asin()).clamp(low, high)
            }
            Prior::Fixed(v) => v,
        }
    }

    /// One draw: [`Prior::from_unit`] of a uniform number in (0, 1).
    ///
    /// ```
    /// use rand_chacha::{rand_core::SeedableRng, ChaCha8Rng};
    /// use umbral::sampling::Prior;
    /// let mut rng = ChaCha8Rng::seed_from_u64(1);
    /// let x = Prior::Uniform { low: 2.0, high: 3.0 }.sample(&mut rng);
    /// assert!((2.0..=3.0).contains(&x));
    /// ```
    pub fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> f64 {
        let u: f64 = Open01.sample(rng);
        self.from_unit(u)
    }

    /// The closed support `(low, high)` (infinite ends for a normal prior; `(v, v)` fixed).
    pub fn support(&self) -> (f64, f64) {
        match *self {
            Prior::Uniform { low, high }
            | Prior::LogUniform { low, high }
            | Prior::Isotropic { low, high } => (low, high),
            Prior::Normal { .. } => (f64::NEG_INFINITY, f64::INFINITY),
            Prior::Fixed(v) => (v, v),
        }
    }

    /// Whether the parameter is held fixed (not sampled).
    pub fn is_fixed(&self) -> bool {
        matches!(self, Prior::Fixed(_))
    }
}

/// A parameter vector seen from the unit cube of its sampled (not fixed) parameters, each
/// mapped through its prior's quantile function ([`Prior::from_unit`]); fixed ones hold their
/// value. Nested sampling and quadrature both work in this cube.
pub(crate) struct Transform<'a> {
    /// Every parameter's prior.
    pub(crate) priors: &'a [Prior],
    /// The indices of the sampled ones, in order.
    pub(crate) free: Vec<usize>,
}

impl<'a> Transform<'a> {
    /// The cube of `priors`' sampled parameters.
    pub(crate) fn new(priors: &'a [Prior]) -> Self {
        Transform {
            priors,
            free: (0..priors.len())
                .filter(|&i| !priors[i].is_fixed())
                .collect(),
        }
    }

    /// Every parameter at the unit-cube point `u` (one coordinate per sampled parameter).
    pub(crate) fn parameters(&self, u: &[f64]) -> Vec<f64> {
        let mut theta: Vec<f64> = self.priors.iter().map(|p| p.from_unit(0.5)).collect();
        for (&i, &ui) in self.free.iter().zip(u) {
            theta[i] = self.priors[i].from_unit(ui);
        }
        theta
    }
}

/// cos a − cos b = 2 sin((a + b)/2) sin((b − a)/2), without cancellation for close a, b.
fn cos_difference(a: f64, b: f64) -> f64 {
    2.0 * (0.5 * (a + b)).sin() * (0.5 * (b - a)).sin()
}

/// The shortest decimal number of degrees that reads back to the angle `radians`.
pub(crate) fn degrees(radians: f64) -> Num {
    let exact = radians.to_degrees();
    for digits in 0..17 {
        let d: f64 = format!("{exact:.digits$e}").parse().unwrap_or(exact);
        if d.to_radians() == radians {
            return Num(d);
        }
    }
    Num(exact)
}

/// The canonical spec, which [`Prior::parse`] reads back to the same prior.
impl fmt::Display for Prior {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match *self {
            Prior::Uniform { low, high } => write!(f, "uniform:{}:{}", Num(low), Num(high)),
            Prior::LogUniform { low, high } => {
                write!(f, "log-uniform:{}:{}", Num(low), Num(high))
            }
            Prior::Normal { mean, sigma } => write!(f, "normal:{}:{}", Num(mean), Num(sigma)),
            Prior::Isotropic { low, high } => {
                write!(f, "isotropic:{}:{}", degrees(low), degrees(high))
            }
            Prior::Fixed(v) => write!(f, "fixed:{}", Num(v)),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::f64::consts::{FRAC_PI_2, PI};

    /// ∫ f over [a, b] by the composite Simpson rule with `n` (even) intervals.
    fn simpson(f: impl Fn(f64) -> f64, a: f64, b: f64, n: usize) -> f64 {
        let h = (b - a) / n as f64;
        let inner: f64 = (1..n)
            .map(|i| f(a + i as f64 * h) * if i % 2 == 1 { 4.0 } else { 2.0 })
            .sum();
        (f(a) + f(b) + inner) * h / 3.0
    }

    fn priors() -> Vec<Prior> {
        [
            "uniform:-2:5",
            "log-uniform:0.001:1000",
            "normal:3:0.5",
            "isotropic:0:90",
        ]
        .iter()
        .chain(&["isotropic:20:160", "isotropic:0:180"])
        .map(|s| Prior::parse(s).unwrap())
        .collect()
    }

    #[test]
    fn each_density_integrates_to_one() {
        for p in priors() {
            let total = match p {
                // x = eᵗ: ∫ p(x) dx = ∫ p(eᵗ) eᵗ dt, smooth in t.
                Prior::LogUniform { low, high } => simpson(
                    |t| (p.log_density(t.exp().clamp(low, high)) + t).exp(),
                    low.ln(),
                    high.ln(),
                    2000,
                ),
                Prior::Normal { mean, sigma } => simpson(
                    |x| p.log_density(x).exp(),
                    mean - 12.0 * sigma,
                    mean + 12.0 * sigma,
                    2000,
                ),
                _ => {
                    let (a, b) = p.support();
                    simpson(|x| p.log_density(x).exp(), a, b, 2000)
                }
            };
            assert!((total - 1.0).abs() < 1e-10, "{p}: {total}");
        }
    }

    #[test]
    fn the_quantile_function_inverts_the_cdf() {
        for p in priors() {
            for i in 1..100 {
                let u = i as f64 / 100.0;
                let x = p.from_unit(u);
                assert!((p.cdf(x) - u).abs() < 1e-13, "{p} at u = {u}");
                assert!(p.log_density(x).is_finite());
            }
            // And the other way: the quantile of the CDF is the identity on the support.
            for i in 1..20 {
                let x = p.from_unit(0.05 * i as f64);
                let back = p.from_unit(p.cdf(x));
                assert!(
                    (back - x).abs() < 1e-12 * x.abs().max(1.0),
                    "{p} at x = {x}"
                );
            }
            assert_eq!(p.log_density(p.support().0 - 1.0), f64::NEG_INFINITY);
        }
    }

    #[test]
    fn isotropic_mean_of_cosine_on_a_hemisphere_is_one_half() {
        // ∫₀^{π/2} cos θ sin θ dθ / ∫₀^{π/2} sin θ dθ = (1/2)/1 (closed form).
        let p = Prior::parse("isotropic:0:90").unwrap();
        let mean = simpson(|t| t.cos() * p.log_density(t).exp(), 0.0, FRAC_PI_2, 2000);
        assert!((mean - 0.5).abs() < 1e-12, "{mean}");
        // The same from draws: the standard error of the mean of cos θ, uniform on [0, 1],
        // is 1/√(12 n); allow 4 of them.
        use rand_chacha::{rand_core::SeedableRng, ChaCha8Rng};
        let mut rng = ChaCha8Rng::seed_from_u64(3);
        let n = 100_000;
        let drawn = (0..n).map(|_| p.sample(&mut rng).cos()).sum::<f64>() / n as f64;
        assert!(
            (drawn - 0.5).abs() < 4.0 / (12.0 * n as f64).sqrt(),
            "{drawn}"
        );
    }

    #[test]
    fn specs_read_back_to_the_same_prior() {
        for spec in [
            "uniform:-2:5",
            "log-uniform:0.001:1000",
            "normal:3:0.5",
            "isotropic:0:180",
            "isotropic:17.5:63",
            "fixed:0.25",
            "uniform:1e-300:1e300",
        ] {
            let p = Prior::parse(spec).unwrap();
            assert_eq!(p.to_string(), spec);
            assert_eq!(Prior::parse(&p.to_string()).unwrap(), p);
        }
        assert_eq!(Prior::parse("isotropic:0:180").unwrap().support().1, PI);
    }

    #[test]
    fn bad_specs_name_the_problem() {
        let cases = [
            ("uniform:2:1", "prior 'uniform:2:1': needs LO < HI"),
            ("gauss:0:1", "prior 'gauss:0:1': unknown kind 'gauss' (expected uniform, log-uniform, normal, isotropic or fixed)"),
            ("normal:0", "prior 'normal:0': expected the form normal:MU:SIGMA"),
            ("normal:0:-1", "prior 'normal:0:-1': needs SIGMA > 0"),
            ("log-uniform:-1:2", "prior 'log-uniform:-1:2': needs 0 < LO"),
            ("fixed:abc", "prior 'fixed:abc': 'abc' is not a finite number"),
            ("uniform:0:inf", "prior 'uniform:0:inf': 'inf' is not a finite number"),
            ("isotropic:0:200", "prior 'isotropic:0:200': needs 0 <= LO < HI <= 180 (degrees)"),
            ("", "prior '': unknown kind '' (expected uniform, log-uniform, normal, isotropic or fixed)"),
        ];
        for (spec, message) in cases {
            assert_eq!(Prior::parse(spec).unwrap_err().to_string(), message);
        }
    }
}
