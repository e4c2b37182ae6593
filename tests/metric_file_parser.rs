//! The metric-file parser: every error kind names its place with a caret and says what was
//! expected; no input, however mangled, makes parsing or evaluation panic.

use proptest::prelude::*;
use umbral::metric::Spacetime;
use umbral::metric_file::{parse_metric_file, MetricFileError};

/// A valid file exercising every section.
const BASE: &str = r#"name = "toy"
title = "Toy"
reference = "none"
symmetry = "axisymmetric"
equatorial_symmetry = true
helpers = [
  "Sigma = r^2 + a^2*cos(theta)^2",
  "Delta = r^2 - 2*r + a^2",
]
horizon = "1 + sqrt(1 - a^2)"

[[parameters]]
name = "a"
default = 0.5
domain = "[-1, 1]"
meaning = "spin"

[line_element]
g_tt = "-(1 - 2*r/Sigma)"
g_tphi = "-2*a*r*sin(theta)^2/Sigma"
g_rr = "Sigma/Delta"
g_thth = "Sigma"
g_phph = "(r^2 + a^2 + 2*r*a^2*sin(theta)^2/Sigma)*sin(theta)^2"

[separation]
radial = "(r^2 + a^2 - a*lambda)^2 - Delta*(eta + (lambda - a)^2)"
polar = "eta + a^2*cos(theta)^2 - lambda^2*cos(theta)^2/sin(theta)^2"

[[checks]]
quantity = "outer_horizon"
parameters = { a = 0.6 }
value = 1.8
tolerance = 1e-12
source = "Boyer & Lindquist 1967, J. Math. Phys. 8, 265"
"#;

fn error_of(text: &str) -> MetricFileError {
    match parse_metric_file(text, "toy.toml") {
        Ok(_) => panic!("expected an error for:\n{text}"),
        Err(e) => e,
    }
}

fn replace(from: &str, to: &str) -> String {
    assert!(BASE.contains(from), "{from}");
    BASE.replacen(from, to, 1)
}

#[test]
fn the_base_file_is_valid() {
    let spec = parse_metric_file(BASE, "toy.toml").unwrap();
    assert_eq!(spec.checks()[0].parameters, vec![("a".to_string(), 0.6)]);
    let m = spec.instantiate(&[]).unwrap();
    assert!((m.outer_horizon().unwrap() - (1.0 + 0.75f64.sqrt())).abs() < 1e-15);
    assert!(m.is_separable() && m.is_equatorially_symmetric());
}

#[test]
fn unknown_name_suggests_the_closest_known_name() {
    let e = error_of(&replace("g_rr = \"Sigma/Delta\"", "g_rr = \"Sigma/Delt\""));
    assert_eq!(
        e.to_string(),
        "error in metric file toy.toml, line 21, column 15 (in line_element.g_rr):\n  \
         21 | g_rr = \"Sigma/Delt\"\n     |               ^^^^\n\
         unknown name 'Delt': expected a parameter, a helper, a coordinate or pi; did you mean 'Delta'?"
    );
    assert_eq!(
        e.summary(),
        "toy.toml:21:15: unknown name 'Delt': expected a parameter, a helper, a coordinate or pi; \
         did you mean 'Delta'?"
    );
}

#[test]
fn syntax_errors_point_at_the_token() {
    let e = error_of(&replace("g_thth = \"Sigma\"", "g_thth = \"Sigma *\""));
    let text = e.to_string();
    assert!(text.contains("line 22, column 18"), "{text}");
    assert!(
        text.contains("  22 | g_thth = \"Sigma *\"\n     |                  ^\n"),
        "{text}"
    );
    assert!(text.ends_with(
        "syntax error: expected a number, a name, a function call, '(' or a unary minus, \
         found the end of the expression"
    ));
    let e = error_of(&replace("g_thth = \"Sigma\"", "g_thth = \"2 Sigma\""));
    assert!(e.to_string().contains("products need '*'"), "{e}");
    assert!(
        e.to_string()
            .contains("  22 | g_thth = \"2 Sigma\"\n     |             ^^^^^\n"),
        "{e}"
    );
    let e = error_of(&replace("g_thth = \"Sigma\"", "g_thth = \"(Sigma\""));
    assert!(
        e.to_string().contains("expected ')' to close the '('"),
        "{e}"
    );
    let e = error_of(&replace("g_thth = \"Sigma\"", "g_thth = \"Sigma $ 2\""));
    assert!(e.to_string().contains("found character '$'"), "{e}");
}

#[test]
fn positions_account_for_escapes_and_literal_strings() {
    // `\u0053` decodes to `S`: the caret must still sit under `Delt`, after the escape.
    let e = error_of(&replace(
        "g_rr = \"Sigma/Delta\"",
        "g_rr = \"\\u0053igma/Delt\"",
    ));
    assert!(e.to_string().contains("column 20"), "{e}");
    let e = error_of(&replace("g_rr = \"Sigma/Delta\"", "g_rr = 'Sigma/Delt'"));
    assert!(e.to_string().contains("column 15"), "{e}");
    let e = error_of(&replace(
        "g_rr = \"Sigma/Delta\"",
        "g_rr = \"\"\"\nSigma/\n  Delt\"\"\"",
    ));
    assert!(e.to_string().contains("line 23, column 3"), "{e}");
}

#[test]
fn unknown_function_and_argument_count() {
    let e = error_of(&replace("cos(theta)^2\",\n", "coss(theta)^2\",\n"));
    assert!(e.to_string().contains("unknown function 'coss'"), "{e}");
    assert!(e.to_string().contains("did you mean 'cos'?"), "{e}");
    assert!(
        e.to_string().contains(
            "  7 |   \"Sigma = r^2 + a^2*coss(theta)^2\",\n    |                      ^^^^"
        ),
        "{e}"
    );
    let e = error_of(&replace("g_thth = \"Sigma\"", "g_thth = \"pow(Sigma)\""));
    assert!(
        e.to_string()
            .ends_with("function 'pow' takes 2 arguments, found 1"),
        "{e}"
    );
}

#[test]
fn helper_used_before_definition_and_cycles() {
    let e = error_of(&replace(
        "\"Sigma = r^2 + a^2*cos(theta)^2\"",
        "\"Sigma = r^2 + a^2*cos(theta)^2 + 0*Delta\"",
    ));
    assert!(
        e.to_string().ends_with(
            "helper 'Delta' is used before it is defined (on line 8); helpers are evaluated \
             in order, so define it earlier"
        ),
        "{e}"
    );
    assert!(e.to_string().contains("line 7, column 39"), "{e}");
    let e = error_of(&replace(
        "\"Delta = r^2 - 2*r + a^2\",",
        "\"Delta = r^2 - 2*r + a^2 + Delta\",",
    ));
    assert!(
        e.to_string()
            .ends_with("helpers refer to each other in a cycle: Delta -> Delta"),
        "{e}"
    );
    let e = error_of(
        &replace(
            "\"Sigma = r^2 + a^2*cos(theta)^2\"",
            "\"Sigma = r^2 + a^2*cos(theta)^2 + Delta\"",
        )
        .replace(
            "\"Delta = r^2 - 2*r + a^2\"",
            "\"Delta = r^2 - 2*r + a^2 + Sigma\"",
        ),
    );
    assert!(
        e.to_string().ends_with("cycle: Sigma -> Delta -> Sigma"),
        "{e}"
    );
}

#[test]
fn coordinates_outside_their_context() {
    let e = error_of(&replace(
        "horizon = \"1 + sqrt(1 - a^2)\"",
        "horizon = \"r\"",
    ));
    assert!(
        e.to_string().ends_with(
            "'r' is not available in the horizon; expected an expression in the parameters (a \
         number, not a function of the coordinates)"
        ),
        "{e}"
    );
    let e = error_of(&replace("radial = \"(r^2", "radial = \"Sigma + (r^2"));
    assert!(
        e.to_string().ends_with(
            "helper 'Sigma' depends on 'theta', which is not available in the radial potential; \
         expected an expression in r, lambda, eta and the parameters"
        ),
        "{e}"
    );
    let e = error_of(&replace(
        "g_thth = \"Sigma\"",
        "g_thth = \"Sigma + lambda\"",
    ));
    assert!(
        e.to_string()
            .contains("'lambda' is not available in the line element"),
        "{e}"
    );
}

#[test]
fn default_outside_domain_and_bad_domain() {
    let e = error_of(&replace("default = 0.5", "default = 1.5"));
    assert_eq!(
        e.to_string(),
        "error in metric file toy.toml, line 14, column 11 (in parameters[0].default):\n  \
         14 | default = 1.5\n     |           ^^^\n\
         the default 1.5 of parameter 'a' is outside its domain [-1, 1]"
    );
    let e = error_of(&replace("domain = \"[-1, 1]\"", "domain = \"[1, -1]\""));
    assert!(
        e.to_string()
            .contains("bad parameter domain: expected an interval"),
        "{e}"
    );
}

#[test]
fn missing_and_foreign_components() {
    let e = error_of(&replace("g_rr = \"Sigma/Delta\"\n", ""));
    assert!(
        e.to_string().ends_with(
            "missing component 'g_rr': the axisymmetric line element needs g_tt, g_tphi, \
             g_rr, g_thth and g_phph"
        ),
        "{e}"
    );
    assert!(
        e.to_string().contains("  18 | [line_element]\n     | ^\n"),
        "{e}"
    );
    let e = error_of(&replace("g_rr = \"Sigma/Delta\"", "A = \"Sigma/Delta\""));
    assert!(
        e.to_string()
            .contains("component 'A' does not belong to the axisymmetric line element"),
        "{e}"
    );
}

#[test]
fn unknown_keys_and_toml_syntax() {
    let e = error_of(&replace(
        "meaning = \"spin\"",
        "meaning = \"spin\"\nunit = \"M\"",
    ));
    let text = e.to_string();
    assert!(text.contains("unknown field `unit`"), "{text}");
    assert!(text.contains("line 17, column 1"), "{text}");
    assert!(text.contains("  17 | unit = \"M\"\n     | ^^^^"), "{text}");
    let e = error_of(&replace("title = \"Toy\"", "title = \"Toy"));
    assert!(e.to_string().contains("line 2"), "{e}");
    let e = error_of(&replace("name = \"toy\"\n", ""));
    assert!(e.to_string().contains("missing field `name`"), "{e}");
}

#[test]
fn names_are_checked() {
    let e = error_of(&replace("name = \"a\"", "name = \"theta\""));
    assert!(e.to_string().contains("'theta' is reserved"), "{e}");
    let e = error_of(&replace("\"Delta = ", "\"Sigma = "));
    assert!(
        e.to_string().ends_with("helper 'Sigma' is defined twice"),
        "{e}"
    );
    let e = error_of(&replace("\"Delta = r^2", "\"Delta r^2"));
    assert!(
        e.to_string()
            .contains("expected a helper definition NAME = expression"),
        "{e}"
    );
    let e = error_of(&replace(
        "symmetry = \"axisymmetric\"",
        "symmetry = \"axisymetric\"",
    ));
    assert!(
        e.to_string().contains("did you mean 'axisymmetric'?"),
        "{e}"
    );
    let e = error_of(&replace("a = 0.6 }", "b = 0.6 }"));
    assert!(e.to_string().contains("unknown name 'b'"), "{e}");
}

/// Evaluate a file metric where it may be singular: values may be NaN, but nothing panics.
fn exercise(text: &str) {
    if let Ok(spec) = parse_metric_file(text, "fuzz.toml") {
        let m = spec.instantiate_defaults();
        for (r, th) in [(3.0, 1.0), (0.0, 0.0), (-1.0, 3.0), (1e300, 1e-300)] {
            let _ = m.christoffel(r, th);
            let _ = m.hamiltonian_gradient(r, th, &[-1.0, 0.1, 0.2, 0.3]);
            let _ = m.radial_potential_jet(r, 1.0, 2.0);
            let _ = m.polar_potential_jet(th, 1.0, 2.0);
            let _ = m.spherical_jet(r);
        }
        let _ = m.outer_horizon();
    }
}

/// Random characters drawn from the expression alphabet, put into the g_tt field.
fn expression_text() -> impl Strategy<Value = String> {
    prop::collection::vec(
        prop::sample::select(vec![
            "r", "theta", "a", "Sigma", "Delta", "pi", "lambda", "1", "2.5", "1e-3", "e", ".", "+",
            "-", "*", "/", "^", "(", ")", ",", " ", "sqrt", "pow", "ln", "abs", "tanh", "x", "é",
            "\\", "\"", "\n",
        ]),
        0..24,
    )
    .prop_map(|parts| parts.concat())
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(256))]

    #[test]
    fn random_expressions_never_panic(expr in expression_text()) {
        let text = replace("g_tt = \"-(1 - 2*r/Sigma)\"", &format!("g_tt = \"{expr}\""));
        exercise(&text);
    }

    #[test]
    fn arbitrary_strings_never_panic(text in "\\PC{0,200}") {
        exercise(&text);
    }

    #[test]
    fn mutated_files_never_panic(
        edits in prop::collection::vec((0usize..10_000, 0u8..3, prop::char::any()), 1..6)
    ) {
        let mut chars: Vec<char> = BASE.chars().collect();
        for (at, kind, c) in edits {
            let i = at % (chars.len() + 1);
            match kind {
                0 if i < chars.len() => { chars.remove(i); }
                1 => chars.insert(i, c),
                _ if i < chars.len() => chars[i] = c,
                _ => chars.push(c),
            }
        }
        let text: String = chars.into_iter().collect();
        exercise(&text);
        // Any error renders in full and in one line without panicking.
        if let Err(e) = parse_metric_file(&text, "fuzz.toml") {
            let full = e.to_string();
            prop_assert!(!e.summary().contains('\n') || full.contains('\n'));
        }
    }
}
