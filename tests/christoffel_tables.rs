//! Christoffel symbols of the built-in metrics, and of a user-written spherical metric, against
//! a committed reference table.
//!
//! Source of the reference values: sympy symbolic differentiation, tests/generate_christoffel.py
//! (Γ^μ_{αβ} = ½ g^{μν}(∂_α g_{νβ} + ∂_β g_{να} − ∂_ν g_{αβ}) taken symbolically, evaluated
//! with sympy's adaptive-precision evalf at 40 digits, stored to 17 significant digits). The
//! Kerr–Newman line element is that of Newman et al. 1965, J. Math. Phys. 6, 918. CI re-runs
//! the generator with `--check` so the table cannot drift from the script.
//!
//! Tolerance: |Γ_umbral − Γ_sympy| ≤ 1e-12 · max(|Γ_sympy|, κ), where κ^μ_{αβ} =
//! ½ Σ_ν |g^{μν}| (|∂_α g_{νβ}| + |∂_β g_{να}| + |∂_ν g_{αβ}|) is the size of the largest terms of
//! the contraction, also tabulated by the script. κ ≥ |Γ|, with equality unless the sum cancels;
//! it cancels for a few components far out (e.g. Kerr Γ^t_{θφ} ≈ 1e-6 at r = 20 from terms
//! ≈ 1e-2), where no double-precision evaluation of the sum can reach 1e-12 of |Γ|. Using κ to scale the error
//! of a floating-point sum is common practice, no source. The worst plain relative error is
//! printed too.
//!
//! The catalogue part of the table (every alternative metric, built by registry name) comes from
//! the same script (Γ^μ_{αβ} = ½ g^{μν}(∂_α g_{νβ} + ∂_β g_{να} − ∂_ν g_{αβ}) with the derivatives taken
//! symbolically and the contraction evaluated by sympy's adaptive-precision evalf at 40 digits,
//! stored to 17 significant digits). The line elements were transcribed into that script from
//! the papers, independently of the Rust code:
//!
//! - "tidal-charge": Dadhich, Maartens, Papadopoulos & Rezania 2000, Phys. Lett. B 487, 1
//! - "bardeen": Bardeen 1968; Ayón-Beato & García 2000, Phys. Lett. B 493, 149
//! - "hayward": Hayward 2006, Phys. Rev. Lett. 96, 031103
//! - "dilaton": Garfinkle, Horowitz & Strominger 1991, Phys. Rev. D 43, 3140
//! - "simpson-visser": Simpson & Visser 2019, JCAP 02, 042
//! - "jnw": Janis, Newman & Winicour 1968, Phys. Rev. Lett. 20, 878 (Virbhadra 1997 form)
//! - "rezzolla-zhidenko": Rezzolla & Zhidenko 2014, Phys. Rev. D 90, 084009
//! - "johannsen-psaltis": Johannsen & Psaltis 2011, Phys. Rev. D 83, 124015
//! - "johannsen": Johannsen 2013, Phys. Rev. D 88, 044002
//! - "krz": Konoplya, Rezzolla & Zhidenko 2016, Phys. Rev. D 93, 064015 (δ form of Ni, Jiang &
//!   Bambi 2016, JCAP 09, 014)
//! - "kerr-sen": Sen 1992, Phys. Rev. Lett. 69, 1006
//! - "rotating-bardeen", "rotating-hayward": Bambi & Modesto 2013, Phys. Lett. B 721, 329
//!
//! The script also checks that every one of them reduces to Kerr (or Schwarzschild) at zero
//! deviation. CI re-runs it with `--check` so the table cannot drift from the script.
//!
//! Tolerance, as in tests/christoffel_tables.rs: |Γ_umbral − Γ_sympy| ≤ 1e-12 · max(|Γ_sympy|, κ)
//! with κ^μ_{αβ} = ½ Σ_ν |g^{μν}| (|∂_α g_{νβ}| + |∂_β g_{να}| + |∂_ν g_{αβ}|) the size of the
//! largest terms of the contraction (tabulated by the script; scaling a floating-point sum's
//! error by it is common practice, no source); components that are exactly zero must be within
//! 1e-14 absolute.

use serde_json::Value;
use umbral::metric::Christoffel;
use umbral::prelude::*;

/// Tolerance relative to max(|Γ|, κ) on every non-zero component.
const RELATIVE_TOLERANCE: f64 = 1e-12;
/// Absolute bound on components that are exactly zero in the table (f64 round-off only, e.g.
/// cos(π/2) ≈ 6e-17 on the equator).
const ZERO_TOLERANCE: f64 = 1e-14;

/// The generic spherical metric of tests/generate_christoffel.py:
/// A = 1 − 2/r + 3/(10 r²) + 1/(10 r³), B = (1 + 1/(5r))/A, C = r² + r/2.
struct GenericSpherical;

impl Declared for GenericSpherical {}

impl SphericalMetric for GenericSpherical {
    fn a<D: DualScalar>(&self, r: D) -> D {
        let x = r.recip();
        ((x * 0.1 + 0.3) * x - 2.0) * x + 1.0
    }
    fn b<D: DualScalar>(&self, r: D) -> D {
        (r.recip() * 0.2 + 1.0) / self.a(r)
    }
    fn c<D: DualScalar>(&self, r: D) -> D {
        r * r + r * 0.5
    }
}

fn table() -> Value {
    let path = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/tests/data/christoffel_tables.json"
    );
    let text = std::fs::read_to_string(path).expect("reference table is committed");
    serde_json::from_str(&text).expect("reference table is valid JSON")
}

fn number(entry: &Value, key: &str) -> f64 {
    entry[key]
        .as_f64()
        .unwrap_or_else(|| panic!("entry {} lacks number {key}", entry["exact"]))
}

/// A `[mu][alpha][beta]` array of the entry, `key` = "gamma" or "scale".
fn reference_array(entry: &Value, key: &str) -> Christoffel {
    let mut out = [[[f64::NAN; 4]; 4]; 4];
    let rows = entry[key].as_array().expect("a 4x4x4 array");
    assert_eq!(rows.len(), 4, "{key} has four upper indices");
    for (out_mu, row_mu) in out.iter_mut().zip(rows) {
        let row_mu = row_mu.as_array().expect("[mu] is an array");
        assert_eq!(row_mu.len(), 4);
        for (out_alpha, row_alpha) in out_mu.iter_mut().zip(row_mu) {
            let row_alpha = row_alpha.as_array().expect("[mu][alpha] is an array");
            assert_eq!(row_alpha.len(), 4);
            for (value, json) in out_alpha.iter_mut().zip(row_alpha) {
                *value = json.as_f64().expect("entries are numbers");
            }
        }
    }
    out
}

/// Running comparison: worst errors seen and the failures, by entry and component.
#[derive(Default)]
struct Comparison {
    points: usize,
    worst_relative: f64,
    worst_scaled: f64,
    worst_zero: f64,
    failures: Vec<String>,
}

impl Comparison {
    fn check(&mut self, label: &str, got: &Christoffel, entry: &Value) {
        let want = reference_array(entry, "gamma");
        let scale = reference_array(entry, "scale");
        self.points += 1;
        for mu in 0..4 {
            for alpha in 0..4 {
                for beta in 0..4 {
                    let (g, w) = (got[mu][alpha][beta], want[mu][alpha][beta]);
                    let ok = if w == 0.0 {
                        self.worst_zero = self.worst_zero.max(g.abs());
                        g.abs() <= ZERO_TOLERANCE
                    } else {
                        let error = (g - w).abs();
                        self.worst_relative = self.worst_relative.max(error / w.abs());
                        let scaled = error / w.abs().max(scale[mu][alpha][beta]);
                        self.worst_scaled = self.worst_scaled.max(scaled);
                        scaled <= RELATIVE_TOLERANCE
                    };
                    if !ok {
                        self.failures.push(format!(
                            "{label}: Gamma[{mu}][{alpha}][{beta}] = {g:e}, sympy {w:e}, kappa {:e}",
                            scale[mu][alpha][beta]
                        ));
                    }
                }
            }
        }
    }

    fn finish(self, what: &str, expected_points: usize) {
        assert_eq!(
            self.points, expected_points,
            "{what}: compared {} points, expected {expected_points}",
            self.points
        );
        println!(
            "{what}: {} points, worst error / max(|Gamma|, kappa) {:.3e}, worst plain relative \
             error {:.3e}, worst |Gamma| on zero entries {:.3e}",
            self.points, self.worst_scaled, self.worst_relative, self.worst_zero
        );
        assert!(
            self.failures.is_empty(),
            "{what}: {} components off:\n{}",
            self.failures.len(),
            self.failures.join("\n")
        );
    }
}

fn kerr_newman_entries() -> Vec<Value> {
    let table = table();
    let entries = table["kerr_newman"].as_array().expect("kerr_newman list");
    entries.clone()
}

/// Runs `build` on every Kerr–Newman entry it accepts (Some) and compares.
fn compare_kerr_newman<S: Spacetime>(
    what: &str,
    expected_points: usize,
    build: impl Fn(f64, f64) -> Option<S>,
) {
    let mut comparison = Comparison::default();
    for entry in kerr_newman_entries() {
        let (a, q) = (number(&entry, "a"), number(&entry, "q"));
        let Some(metric) = build(a, q) else { continue };
        let (r, theta) = (number(&entry, "r"), number(&entry, "theta"));
        let label = entry["exact"].as_str().unwrap_or("?").to_owned();
        comparison.check(&label, &metric.christoffel(r, theta), &entry);
    }
    comparison.finish(what, expected_points);
}

// 6 (a, q) pairs × 4 radii × 4 polar angles; 3 of the pairs have q = 0, 2 have a = 0.
const KERR_NEWMAN_POINTS: usize = 96;
const KERR_POINTS: usize = 48;
const REISSNER_NORDSTROM_POINTS: usize = 32;
const SCHWARZSCHILD_POINTS: usize = 16;

#[test]
fn kerr_newman_christoffel_symbols_match_sympy() {
    // Source: sympy symbolic differentiation, tests/generate_christoffel.py.
    compare_kerr_newman("KerrNewman", KERR_NEWMAN_POINTS, |a, q| {
        Some(KerrNewman::new(a, q).expect("valid parameters"))
    });
}

#[test]
fn kerr_christoffel_symbols_match_sympy_at_zero_charge() {
    // Source: sympy symbolic differentiation, tests/generate_christoffel.py.
    compare_kerr_newman("Kerr", KERR_POINTS, |a, q| {
        (q == 0.0).then(|| Kerr::new(a).expect("valid spin"))
    });
}

#[test]
fn reissner_nordstrom_christoffel_symbols_match_sympy_at_zero_spin() {
    // Source: sympy symbolic differentiation, tests/generate_christoffel.py.
    compare_kerr_newman("ReissnerNordstrom", REISSNER_NORDSTROM_POINTS, |a, q| {
        (a == 0.0).then(|| ReissnerNordstrom::new(q).expect("valid charge"))
    });
}

#[test]
fn schwarzschild_christoffel_symbols_match_sympy() {
    // Source: sympy symbolic differentiation, tests/generate_christoffel.py.
    compare_kerr_newman("Schwarzschild", SCHWARZSCHILD_POINTS, |a, q| {
        (a == 0.0 && q == 0.0).then_some(Schwarzschild)
    });
}

#[test]
fn generic_spherical_christoffel_symbols_match_sympy() {
    // Source: sympy symbolic differentiation, tests/generate_christoffel.py.
    let table = table();
    // The table must describe the same A, B, C as GenericSpherical.
    let functions = &table["spherical_metric"];
    assert_eq!(functions["A"], "1 - 2/r + 3/(10*r**2) + 1/(10*r**3)");
    assert_eq!(
        functions["B"],
        "(1 + 1/(5*r))/(1 - 2/r + 3/(10*r**2) + 1/(10*r**3))"
    );
    assert_eq!(functions["C"], "r**2 + r/2");
    let entries = table["spherical"].as_array().expect("spherical list");
    let mut comparison = Comparison::default();
    for entry in entries {
        let (r, theta) = (number(entry, "r"), number(entry, "theta"));
        let label = entry["exact"].as_str().unwrap_or("?");
        comparison.check(label, &GenericSpherical.christoffel(r, theta), entry);
    }
    comparison.finish("GenericSpherical", 16);
}

/// Registry name and the number of table points for it: parameter points × radii × angles
/// (static metrics: 3 radii × 2 angles; rotating: 3 radii × 4 angles).
const EXPECTED_POINTS: [(&str, usize); 13] = [
    ("tidal-charge", 12),
    ("bardeen", 12),
    ("hayward", 12),
    ("dilaton", 12),
    ("simpson-visser", 18),
    ("jnw", 12),
    ("rezzolla-zhidenko", 12),
    ("johannsen-psaltis", 24),
    ("johannsen", 24),
    ("krz", 24),
    ("kerr-sen", 24),
    ("rotating-bardeen", 24),
    ("rotating-hayward", 24),
];

fn catalogue() -> Vec<Value> {
    table()["catalogue"]
        .as_array()
        .expect("the table has a catalogue list")
        .clone()
}

/// The entry's parameters as registry assignments.
fn assignments(entry: &Value) -> Vec<(String, f64)> {
    entry["parameters"]
        .as_object()
        .expect("parameters object")
        .iter()
        .map(|(k, v)| (k.clone(), v.as_f64().expect("parameter values are numbers")))
        .collect()
}

#[test]
fn catalogue_christoffel_symbols_match_sympy() {
    // Source: sympy symbolic differentiation, tests/generate_christoffel.py; the papers of the
    // line elements are listed per metric in the module comment and in each table entry.
    let entries = catalogue();
    let mut failures = Vec::new();
    for (name, expected) in EXPECTED_POINTS {
        let mut comparison = Comparison::default();
        for entry in entries.iter().filter(|e| e["metric"] == name) {
            let label = format!("{name} {}", entry["exact"].as_str().unwrap_or("?"));
            let given = assignments(entry);
            let metric = build_metric(name, &given)
                .unwrap_or_else(|e| panic!("{label}: build_metric failed: {e}"));
            // The registry must have taken every parameter as given.
            let info = metric.info();
            let values = metric.parameter_values();
            for (key, value) in &given {
                let index = info
                    .parameters
                    .iter()
                    .position(|p| &p.name == key)
                    .unwrap_or_else(|| panic!("{label}: no parameter {key}"));
                assert_eq!(values[index], *value, "{label}: parameter {key}");
            }
            let (r, theta) = (number(entry, "r"), number(entry, "theta"));
            comparison.check(&label, &metric.christoffel(r, theta), entry);
        }
        println!(
            "{name}: {} points, worst error / max(|Gamma|, kappa) {:.3e}, worst plain relative \
             error {:.3e}, worst |Gamma| on zero entries {:.3e}",
            comparison.points,
            comparison.worst_scaled,
            comparison.worst_relative,
            comparison.worst_zero
        );
        assert_eq!(
            comparison.points, expected,
            "{name}: compared {} points, expected {expected}",
            comparison.points
        );
        failures.extend(comparison.failures);
    }
    let listed: usize = EXPECTED_POINTS.iter().map(|(_, n)| n).sum();
    assert_eq!(entries.len(), listed, "every catalogue entry is compared");
    assert!(
        failures.is_empty(),
        "{} components off:\n{}",
        failures.len(),
        failures.join("\n")
    );
}
