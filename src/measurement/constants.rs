//! Physical and astronomical constants for converting masses and distances to angles.
//!
//! * GM☉ = 1.327 124 4 × 10²⁰ m³ s⁻²: the nominal solar mass parameter of IAU 2015
//!   Resolution B3 (Prša et al. 2016, AJ 152, 41).
//! * c = 299 792 458 m s⁻¹: exact by the SI definition of the metre.
//! * 1 au = 149 597 870 700 m: exact by IAU 2012 Resolution B2.
//! * 1 pc = 1 au / tan(1″) = (648 000/π) au: IAU 2015 Resolution B2.

/// GM☉/c² in metres (IAU 2015 Resolution B3 nominal GM☉, exact SI c).
pub const GM_SUN_OVER_C2_M: f64 = 1.327_124_4e20 / (299_792_458.0 * 299_792_458.0);
/// The astronomical unit in metres (IAU 2012 Resolution B2, exact).
pub const AU_M: f64 = 149_597_870_700.0;
/// One parsec in metres: (648 000/π) au (IAU 2015 Resolution B2).
pub const PC_M: f64 = 648_000.0 / std::f64::consts::PI * AU_M;
/// One megaparsec in metres.
pub const MPC_M: f64 = 1e6 * PC_M;
/// One micro-arcsecond in radians.
pub const UAS_RAD: f64 = std::f64::consts::PI / (180.0 * 3600.0 * 1e6);

/// The angular gravitational radius θ_g = GM/(c²D) in micro-arcseconds, for a mass in solar
/// masses and a distance in megaparsecs.
///
/// ```
/// use umbral::measurement::constants::theta_g_uas;
/// // An invented black hole: 2e9 solar masses at 40 Mpc subtend about 0.4935 micro-arcseconds
/// // (the constants above written out by hand give 0.493531435688...).
/// let t = theta_g_uas(2.0e9, 40.0);
/// assert!((t - 0.493_531_435_688).abs() < 1e-9);
/// ```
pub fn theta_g_uas(mass_msun: f64, distance_mpc: f64) -> f64 {
    mass_msun * GM_SUN_OVER_C2_M / (distance_mpc * MPC_M) / UAS_RAD
}
