//! From the text of a metric file to a checked [`FileMetricSpec`]: TOML schema, names,
//! domains, helper order, symmetry and contexts, each error placed in the file.

use super::error::{closest, shown, Location, MetricFileError};
use super::metric::{CheckValue, FileMetricSpec, HorizonRule};
use super::parser::{is_identifier, parse_expression, Expr, ParseError, FUNCTION_NAMES};
use super::resolve::{is_reserved, names_in, Context, Node, ResolveError, Scope};
use super::schema::{FileSchema, LineElementSchema};
use super::strings::offset_map;
use crate::metric::{
    check_point, check_separation, Bound, Domain, MetricInfo, ParameterSpec, SeparationError,
    Symmetry,
};
use crate::numfmt::Num;
use std::collections::HashMap;
use std::ops::Range;
use toml::Spanned;

/// The file's text and the label errors show for it.
struct Source<'a> {
    label: &'a str,
    text: &'a str,
    /// Byte offset of the start of every line, for line numbers in O(log n).
    line_starts: Vec<usize>,
}

impl<'a> Source<'a> {
    fn new(label: &'a str, text: &'a str) -> Self {
        let line_starts = std::iter::once(0)
            .chain(text.match_indices('\n').map(|(i, _)| i + 1))
            .collect();
        Source {
            label,
            text,
            line_starts,
        }
    }

    fn at(&self, span: Range<usize>, field: &str) -> Box<Location> {
        Box::new(Location::at(
            self.label, self.text, span.start, span.end, field,
        ))
    }

    /// The 1-based line of a byte offset.
    fn line_of(&self, offset: usize) -> usize {
        self.line_starts.partition_point(|&start| start <= offset)
    }

    /// The bytes of the file that bytes `sub` of the decoded value of a string field came
    /// from (the start of the value if the decoding cannot be followed).
    fn string_span(&self, value: &Spanned<String>, sub: Range<usize>) -> Range<usize> {
        let span = value.span();
        let map = self
            .text
            .get(span.clone())
            .and_then(|raw| offset_map(raw, value.get_ref()));
        match map {
            Some(map) => {
                let last = map.len() - 1;
                let start = span.start + map[sub.start.min(last)];
                let end = span.start + map[sub.end.min(last)];
                start..end.max(start + 1)
            }
            None => span.start..span.start + 1,
        }
    }

    /// The location of bytes `sub` of the decoded value of a string field.
    fn in_string(&self, value: &Spanned<String>, sub: Range<usize>, field: &str) -> Box<Location> {
        self.at(self.string_span(value, sub), field)
    }

    fn parse_error(
        &self,
        value: &Spanned<String>,
        offset: usize,
        e: ParseError,
        field: &str,
    ) -> MetricFileError {
        let shift = |s: Range<usize>| s.start + offset..s.end + offset;
        match e {
            ParseError::Syntax {
                span,
                found,
                expected,
            } => MetricFileError::Syntax {
                at: self.in_string(value, shift(span), field),
                found,
                expected,
            },
            ParseError::UnknownFunction { span, name } => MetricFileError::UnknownFunction {
                at: self.in_string(value, shift(span), field),
                suggestion: closest(&name, FUNCTION_NAMES),
                name,
            },
            ParseError::ArgumentCount {
                span,
                function,
                expected,
                found,
            } => MetricFileError::ArgumentCount {
                at: self.in_string(value, shift(span), field),
                function,
                expected,
                found,
            },
        }
    }
}

/// A parsed expression field: the TOML value, where the expression starts in it, the tree.
struct Field<'s> {
    value: &'s Spanned<String>,
    offset: usize,
    expr: Expr,
    name: String,
}

fn parse_field<'s>(
    src: &Source,
    value: &'s Spanned<String>,
    offset: usize,
    name: &str,
) -> Result<Field<'s>, MetricFileError> {
    let text = value.get_ref().get(offset..).unwrap_or("");
    let expr = parse_expression(text).map_err(|e| src.parse_error(value, offset, e, name))?;
    Ok(Field {
        value,
        offset,
        expr,
        name: name.to_string(),
    })
}

/// Parse and check a metric file's text. `label` names the file in error messages.
pub(crate) fn parse_spec(text: &str, label: &str) -> Result<FileMetricSpec, MetricFileError> {
    let src = Source::new(label, text);
    let file: FileSchema = toml::from_str(text).map_err(|e| MetricFileError::Toml {
        at: {
            let span = e.span().unwrap_or(0..0);
            src.at(span, "")
        },
        message: e.message().to_string(),
    })?;
    let name = file.name.get_ref();
    check_metric_name(&src, &file.name)?;
    let (symmetry, equatorial) = symmetry_of(&src, &file)?;
    let (parameters, param_index) = parameters_of(&src, &file)?;
    let param_names: Vec<String> = parameters.iter().map(|p| p.name.clone()).collect();
    let (scope, helpers, helper_lines) = helpers_of(&src, &file, &param_names, &param_index)?;
    let helper_names = scope.helpers.clone();
    let line_element = line_element(&src, &file.line_element, symmetry, &scope, &helper_lines)?;

    let horizon = match &file.horizon {
        None => HorizonRule::Numerical,
        Some(h) => {
            let f = parse_field(&src, h, 0, "horizon")?;
            HorizonRule::ClosedForm(
                resolve(&src, &scope, &f, Context::HORIZON, None, &helper_lines)?.0,
            )
        }
    };

    let separation = match &file.separation {
        None => None,
        Some(s) => {
            let s = s.get_ref();
            let radial = parse_field(&src, &s.radial, 0, "separation.radial")?;
            let polar = parse_field(&src, &s.polar, 0, "separation.polar")?;
            Some([
                resolve(&src, &scope, &radial, Context::RADIAL, None, &helper_lines)?.0,
                resolve(&src, &scope, &polar, Context::POLAR, None, &helper_lines)?.0,
            ])
        }
    };

    let checks = checks_of(&src, &file, &param_index, &param_names)?;

    let spec = FileMetricSpec {
        info: MetricInfo {
            name: name.clone(),
            title: file.title.clone(),
            reference: file.reference.clone(),
            parameters,
        },
        path: None,
        symmetry,
        equatorial,
        helper_names,
        helpers,
        line_element,
        horizon,
        separation,
        checks,
    };
    check_far_field(&src, file.line_element.span(), &spec)?;
    if let Some(table) = &file.separation {
        check_separation_data(&src, table.span(), &spec)?;
    }
    Ok(spec)
}

/// The metric's name: letters, digits, '-' or '_' (it is typed on the command line).
fn check_metric_name(src: &Source, field: &Spanned<String>) -> Result<(), MetricFileError> {
    let name = field.get_ref();
    if name.is_empty()
        || !name
            .chars()
            .all(|c| c.is_ascii_alphanumeric() || c == '-' || c == '_')
    {
        return Err(MetricFileError::Invalid {
            at: src.at(field.span(), "name"),
            problem: format!(
                "bad metric name '{}': expected letters, digits, '-' or '_' (it is typed on \
                 the command line)",
                shown(name)
            ),
        });
    }

    Ok(())
}

/// The symmetry and whether the metric is symmetric about the equator (always, if spherical).
fn symmetry_of(src: &Source, file: &FileSchema) -> Result<(Symmetry, bool), MetricFileError> {
    let symmetry = match file.symmetry.get_ref().as_str() {
        "spherical" => Symmetry::Spherical,
        "axisymmetric" => Symmetry::StationaryAxisymmetric,
        other => {
            let hint = closest(other, ["spherical", "axisymmetric"])
                .map(|s| format!("; did you mean '{s}'?"))
                .unwrap_or_default();
            return Err(MetricFileError::Invalid {
                at: src.at(file.symmetry.span(), "symmetry"),
                problem: format!(
                    "unknown symmetry '{}': expected 'spherical' or 'axisymmetric'{hint}",
                    shown(other)
                ),
            });
        }
    };
    let equatorial = match (&symmetry, &file.equatorial_symmetry) {
        (Symmetry::Spherical, Some(flag)) if !flag.get_ref() => {
            return Err(MetricFileError::Invalid {
                at: src.at(flag.span(), "equatorial_symmetry"),
                problem: "a spherical metric is always equatorially symmetric: expected true \
                          or no equatorial_symmetry key"
                    .into(),
            })
        }
        (Symmetry::Spherical, _) => true,
        (_, flag) => flag.as_ref().is_some_and(|f| *f.get_ref()),
    };
    Ok((symmetry, equatorial))
}

/// Parameters: names, domains, defaults; and the index of each by name.
fn parameters_of(
    src: &Source,
    file: &FileSchema,
) -> Result<(Vec<ParameterSpec>, HashMap<String, usize>), MetricFileError> {
    let mut parameters = Vec::new();
    let mut param_index = HashMap::new();
    for (i, p) in file.parameters.iter().enumerate() {
        let field = format!("parameters[{i}].name");
        let pname = p.name.get_ref();
        check_new_name(src, &p.name, &field, &param_index)?;
        param_index.insert(pname.clone(), parameters.len());
        let domain = match &p.domain {
            None => Domain::REAL,
            Some(d) => parse_domain(d.get_ref()).ok_or_else(|| MetricFileError::BadDomain {
                at: src.at(d.span(), &format!("parameters[{i}].domain")),
                expected: "an interval such as \"[0, 1]\", \"(0, inf)\" or \"(-inf, inf)\", \
                           with lower end <= upper end"
                    .into(),
            })?,
        };
        let default = *p.default.get_ref();
        if !domain.contains(default) {
            return Err(MetricFileError::DefaultOutsideDomain {
                at: src.at(p.default.span(), &format!("parameters[{i}].default")),
                name: pname.clone(),
                default,
                domain: domain.to_string(),
            });
        }
        parameters.push(ParameterSpec::new(pname, default, domain, &p.meaning));
    }
    Ok((parameters, param_index))
}

/// The helpers resolved in order (a helper may use those before it), with the scope every
/// later expression is resolved in and the line of each helper's name.
fn helpers_of(
    src: &Source,
    file: &FileSchema,
    param_names: &[String],
    param_index: &HashMap<String, usize>,
) -> Result<(Scope, Vec<Node>, Vec<usize>), MetricFileError> {
    // Helpers: "NAME = expression", parsed first so that cycles can be named.
    let mut helper_fields = Vec::new();
    let mut helper_names: Vec<String> = Vec::new();
    let mut helper_lines = Vec::new();
    let mut helper_index = HashMap::new();
    for (i, h) in file.helpers.iter().enumerate() {
        let field = format!("helpers[{i}]");
        let text = h.get_ref();
        let Some(eq) = text.find('=') else {
            return Err(MetricFileError::Syntax {
                at: src.in_string(h, 0..text.len(), &field),
                found: format!("'{}'", shown(text)),
                expected: "a helper definition NAME = expression, as in \"Sigma = r^2 + 1\"".into(),
            });
        };
        let raw_name = &text[..eq];
        let lead = raw_name.len() - raw_name.trim_start().len();
        let hname = raw_name.trim();
        let name_span = lead..lead + hname.len();
        if !is_identifier(hname) {
            return Err(MetricFileError::BadName {
                at: src.in_string(h, name_span.start..name_span.end.max(eq), &field),
                problem: format!(
                    "bad helper name '{}': expected letters, digits and '_', not starting \
                     with a digit",
                    shown(hname)
                ),
            });
        }
        check_helper_name(
            src,
            h,
            name_span.clone(),
            &field,
            param_index,
            &helper_index,
        )?;
        helper_index.insert(hname.to_string(), helper_names.len());
        helper_names.push(hname.to_string());
        helper_lines.push(src.line_of(src.string_span(h, name_span).start));
        helper_fields.push(parse_field(src, h, eq + 1, &field)?);
    }
    let mut scope = Scope {
        params: param_names.to_vec(),
        param_index: param_index.clone(),
        helpers: helper_names.clone(),
        helper_index,
        helper_refs: helper_fields
            .iter()
            .map(|f| {
                let mut names = Vec::new();
                names_in(&f.expr, &mut names);
                names
            })
            .collect(),
        helper_vars: Vec::new(),
    };
    let mut helpers = Vec::new();
    for (i, f) in helper_fields.iter().enumerate() {
        let (node, vars) = resolve(src, &scope, f, Context::HELPER, Some(i), &helper_lines)?;
        helpers.push(node);
        scope.helper_vars.push(vars);
    }

    Ok((scope, helpers, helper_lines))
}

/// The file's check values, each parameter name known.
fn checks_of(
    src: &Source,
    file: &FileSchema,
    param_index: &HashMap<String, usize>,
    param_names: &[String],
) -> Result<Vec<CheckValue>, MetricFileError> {
    let mut checks = Vec::new();
    for (i, c) in file.checks.iter().enumerate() {
        let mut assigned = Vec::new();
        for (pname, value) in &c.parameters {
            if !param_index.contains_key(pname) {
                return Err(MetricFileError::UnknownName {
                    at: src.at(value.span(), &format!("checks[{i}].parameters.{pname}")),
                    name: pname.clone(),
                    suggestion: closest(pname, param_names.iter().map(String::as_str)),
                });
            }
            assigned.push((pname.clone(), *value.get_ref()));
        }
        checks.push(CheckValue {
            quantity: c.quantity.clone(),
            parameters: assigned,
            inclination: c.inclination,
            value: c.value,
            tolerance: c.tolerance,
            source: c.source.clone(),
        });
    }
    Ok(checks)
}

/// Far from the centre (r = 10³, three polar angles) the line element at the defaults must be
/// a regular metric ([`check_point`]): finite components, inverse and Christoffel symbols and a
/// nondegenerate (t, φ) block. This refuses, whatever solver would be used, formulas such as
/// g_tt = 1/0 or sqrt(-1) that are not a metric anywhere.
fn check_far_field(
    src: &Source,
    table: Range<usize>,
    spec: &FileMetricSpec,
) -> Result<(), MetricFileError> {
    const R_FAR: f64 = 1.0e3;
    let defaults: Vec<f64> = spec.info.parameters.iter().map(|p| p.default).collect();
    let metric = spec.build(defaults.clone());
    for theta in [0.43, 1.21, 2.36] {
        if let Err(problem) = check_point(&metric, R_FAR, theta) {
            return Err(MetricFileError::Invalid {
                at: src.at(table.start..table.start + 1, "line_element"),
                problem: format!(
                    "the line element is not a regular metric at r = {R_FAR}, theta = {theta}, \
                     far from the centre: {problem}{}",
                    at_defaults(&spec.info, &defaults)
                ),
            });
        }
    }
    Ok(())
}

/// The separation data must reproduce the line element's null Hamiltonian
/// ([`check_separation`]): at the defaults (any failure, including a line element that is
/// not finite at the check points, refuses the file) and at a second point with every
/// parameter moved off its default inside its domain, so that terms vanishing at the
/// defaults (such as a = 0) are checked too (there only a mismatch refuses the file: the
/// moved point may legitimately be irregular). Every instantiation checks again
/// ([`FileMetricSpec::instantiate`]).
fn check_separation_data(
    src: &Source,
    table: Range<usize>,
    spec: &FileMetricSpec,
) -> Result<(), MetricFileError> {
    let at = || src.at(table.start..table.start + 1, "separation");
    let defaults: Vec<f64> = spec.info.parameters.iter().map(|p| p.default).collect();
    if let Err(e) = check_separation(&spec.build(defaults.clone())) {
        return Err(MetricFileError::Separation {
            at: at(),
            problem: format!("{e}{}", at_defaults(&spec.info, &defaults)),
        });
    }
    let moved: Vec<f64> = spec.info.parameters.iter().map(off_default).collect();
    if moved != defaults {
        if let Err(e @ SeparationError::Mismatch(_)) = check_separation(&spec.build(moved.clone()))
        {
            return Err(MetricFileError::Separation {
                at: at(),
                problem: format!(
                    "{e} (parameters{})",
                    parameter_list(&spec.info, &moved, ": ")
                ),
            });
        }
    }
    Ok(())
}

/// `" (parameters at their defaults: a = 0)"`, or nothing without parameters.
fn at_defaults(info: &MetricInfo, values: &[f64]) -> String {
    if info.parameters.is_empty() {
        String::new()
    } else {
        format!(
            " (parameters at their defaults{})",
            parameter_list(info, values, ": ")
        )
    }
}

/// `"a = 0.5, q = 0.1"`-style list after `lead`, or nothing without parameters.
pub(crate) fn parameter_list(info: &MetricInfo, values: &[f64], lead: &str) -> String {
    if info.parameters.is_empty() {
        return String::new();
    }
    let list: Vec<String> = info
        .parameters
        .iter()
        .zip(values)
        .map(|(p, v)| format!("{} = {}", p.name, Num(*v)))
        .collect();
    format!("{lead}{}", list.join(", "))
}

/// A value inside the parameter's domain, moved off the default by 0.1234·max(|default|, 1)
/// (halved until it fits a narrow domain); the default if nothing fits.
fn off_default(p: &ParameterSpec) -> f64 {
    let mut step = 0.1234 * p.default.abs().max(1.0);
    for _ in 0..40 {
        for x in [p.default + step, p.default - step] {
            if p.domain.contains(x) {
                return x;
            }
        }
        step /= 2.0;
    }
    p.default
}

/// Resolve a field, turning resolution errors into located file errors.
fn resolve(
    src: &Source,
    scope: &Scope,
    f: &Field,
    context: Context,
    current: Option<usize>,
    helper_lines: &[usize],
) -> Result<(Node, u8), MetricFileError> {
    let at = |span: Range<usize>| {
        src.in_string(f.value, span.start + f.offset..span.end + f.offset, &f.name)
    };
    scope
        .resolve(&f.expr, context, current)
        .map_err(|e| match e {
            ResolveError::UnknownName {
                span,
                name,
                suggestion,
            } => MetricFileError::UnknownName {
                at: at(span),
                name,
                suggestion,
            },
            ResolveError::UsedBeforeDefined { span, name, helper } => {
                MetricFileError::UsedBeforeDefined {
                    at: at(span),
                    name,
                    defined_at: helper_lines.get(helper).copied().unwrap_or(0),
                }
            }
            ResolveError::Cycle { span, cycle } => MetricFileError::Cycle {
                at: at(span),
                cycle,
            },
            ResolveError::NotAvailable {
                span,
                name,
                variable,
            } => MetricFileError::NotAvailable {
                at: at(span),
                name,
                variable: variable.name().to_string(),
                context: context.label.to_string(),
                allowed: context.allowed_text.to_string(),
            },
        })
}

/// The line-element trees, checked against the symmetry.
fn line_element(
    src: &Source,
    le: &Spanned<LineElementSchema>,
    symmetry: Symmetry,
    scope: &Scope,
    helper_lines: &[usize],
) -> Result<Vec<Node>, MetricFileError> {
    let s = le.get_ref();
    let spherical = [("A", &s.a), ("B", &s.b), ("C", &s.c)];
    let axisymmetric = [
        ("g_tt", &s.g_tt),
        ("g_tphi", &s.g_tphi),
        ("g_rr", &s.g_rr),
        ("g_thth", &s.g_thth),
        ("g_phph", &s.g_phph),
    ];
    let (wanted, foreign, symmetry_name, needed, context): (&[_], &[_], _, _, _) = match symmetry {
        Symmetry::Spherical => (
            &spherical[..],
            &axisymmetric[..],
            "spherical",
            "A, B and C (ds^2 = -A dt^2 + B dr^2 + C dOmega^2)",
            Context::SPHERICAL,
        ),
        Symmetry::StationaryAxisymmetric => (
            &axisymmetric[..],
            &spherical[..],
            "axisymmetric",
            "g_tt, g_tphi, g_rr, g_thth and g_phph",
            Context::AXISYMMETRIC,
        ),
    };
    if let Some((key, Some(value))) = foreign.iter().find(|(_, v)| v.is_some()) {
        return Err(MetricFileError::ForeignComponent {
            at: src.at(value.span(), &format!("line_element.{key}")),
            component: key.to_string(),
            symmetry: symmetry_name.into(),
            needed: needed.into(),
        });
    }
    let mut nodes = Vec::new();
    for (key, value) in wanted {
        let Some(value) = value else {
            let span = le.span();
            return Err(MetricFileError::MissingComponent {
                at: src.at(span.start..span.start + 1, "line_element"),
                component: key.to_string(),
                symmetry: symmetry_name.into(),
                needed: needed.into(),
            });
        };
        let f = parse_field(src, value, 0, &format!("line_element.{key}"))?;
        nodes.push(resolve(src, scope, &f, context, None, helper_lines)?.0);
    }
    Ok(nodes)
}

/// A parameter name must be a name of the language, not reserved and not repeated.
fn check_new_name(
    src: &Source,
    name: &Spanned<String>,
    field: &str,
    parameters: &HashMap<String, usize>,
) -> Result<(), MetricFileError> {
    let n = name.get_ref();
    let problem = if !is_identifier(n) {
        format!(
            "bad parameter name '{}': expected letters, digits and '_', not starting with a digit",
            shown(n)
        )
    } else if is_reserved(n) {
        format!("'{n}' is reserved (a coordinate, pi or a function): choose another name")
    } else if parameters.contains_key(n) {
        format!("parameter '{n}' is defined twice")
    } else {
        return Ok(());
    };
    Err(MetricFileError::BadName {
        at: src.at(name.span(), field),
        problem,
    })
}

fn check_helper_name(
    src: &Source,
    value: &Spanned<String>,
    span: Range<usize>,
    field: &str,
    params: &HashMap<String, usize>,
    helpers: &HashMap<String, usize>,
) -> Result<(), MetricFileError> {
    let n = &value.get_ref()[span.clone()];
    let problem = if is_reserved(n) {
        format!("'{n}' is reserved (a coordinate, pi or a function): choose another helper name")
    } else if params.contains_key(n) {
        format!("helper '{n}' has the name of a parameter")
    } else if helpers.contains_key(n) {
        format!("helper '{n}' is defined twice")
    } else {
        return Ok(());
    };
    Err(MetricFileError::BadName {
        at: src.in_string(value, span, field),
        problem,
    })
}

/// An interval `[lo, hi]`, `(lo, hi)` or mixed; `-inf` and `inf` for unbounded ends.
fn parse_domain(text: &str) -> Option<Domain> {
    let t = text.trim();
    let open = t.chars().next()?;
    let close = t.chars().last()?;
    if t.chars().count() < 2 {
        return None;
    }
    let inner = &t[open.len_utf8()..t.len() - close.len_utf8()];
    let (lo, hi) = inner.split_once(',')?;
    let end = |s: &str, inclusive: bool, infinite: &[&str]| -> Option<Bound> {
        let s = s.trim();
        if infinite.contains(&s) {
            return Some(Bound::Unbounded);
        }
        let x: f64 = s.parse().ok()?;
        if !x.is_finite() {
            return None;
        }
        Some(if inclusive {
            Bound::Inclusive(x)
        } else {
            Bound::Exclusive(x)
        })
    };
    let lower = match open {
        '[' => end(lo, true, &["-inf"])?,
        '(' => end(lo, false, &["-inf"])?,
        _ => return None,
    };
    let upper = match close {
        ']' => end(hi, true, &["inf", "+inf"])?,
        ')' => end(hi, false, &["inf", "+inf"])?,
        _ => return None,
    };
    let value = |b: Bound, inf: f64| match b {
        Bound::Unbounded => inf,
        Bound::Inclusive(x) | Bound::Exclusive(x) => x,
    };
    if value(lower, f64::NEG_INFINITY) > value(upper, f64::INFINITY) {
        return None;
    }
    Some(Domain { lower, upper })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn domains_in_interval_notation() {
        assert_eq!(parse_domain("[0, 1]"), Some(Domain::closed(0.0, 1.0)));
        assert_eq!(parse_domain("(0, inf)"), Some(Domain::greater_than(0.0)));
        assert_eq!(parse_domain(" (-inf, inf) "), Some(Domain::REAL));
        assert_eq!(parse_domain("[1e-3, inf)"), Some(Domain::at_least(1e-3)));
        assert_eq!(parse_domain("[2, 1]"), None);
        assert_eq!(parse_domain("0..1"), None);
        assert_eq!(parse_domain("[inf, 1]"), None);
    }
}
