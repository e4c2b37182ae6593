//! The library reads one way: metric → geometry → geodesic → shadow → observables → inference →
//! run → cli (DEVELOPERS.md, "Layers"). This test reads every source file under `src/`, collects
//! the `crate::<module>` paths it names, and checks that no top-level module names one of a
//! higher layer and that the module graph has no cycle. A new top-level module must be given a
//! layer in `LAYERS` before this test passes.

use std::collections::{BTreeMap, BTreeSet};
use std::path::{Path, PathBuf};

/// Every top-level module of the library and its layer (lower layers never import higher ones).
const LAYERS: &[(&str, u8, &str)] = &[
    ("error", 0, "foundations"),
    ("numerics", 0, "foundations"),
    ("numfmt", 0, "foundations"),
    ("scalar", 0, "foundations"),
    ("input", 0, "foundations"),
    ("output", 0, "foundations"),
    ("metric", 1, "metric"),
    ("metric_file", 2, "metric"),
    ("metrics", 3, "metric"),
    ("geodesic", 4, "geodesic"),
    ("shadow", 5, "shadow"),
    ("observables", 6, "observables"),
    ("image", 6, "observables"),
    ("measurement", 7, "inference"),
    ("bounds", 8, "inference"),
    ("sampling", 7, "inference"),
    ("posterior", 8, "inference"),
    ("run", 9, "run"),
    ("scan", 10, "run"),
    ("verify", 10, "run"),
    ("cli", 11, "cli"),
];

fn layer_of(module: &str) -> Option<u8> {
    LAYERS
        .iter()
        .find(|(name, _, _)| *name == module)
        .map(|(_, layer, _)| *layer)
}

fn rust_files(dir: &Path, out: &mut Vec<PathBuf>) {
    for entry in std::fs::read_dir(dir).unwrap_or_else(|e| panic!("{}: {e}", dir.display())) {
        let path = entry.expect("directory entry").path();
        if path.is_dir() {
            rust_files(&path, out);
        } else if path.extension().is_some_and(|e| e == "rs") {
            out.push(path);
        }
    }
}

/// The top-level module a source file belongs to (`None` for the crate root and the binary).
fn top_module(src: &Path, file: &Path) -> Option<String> {
    let rel = file.strip_prefix(src).expect("file under src");
    let first = rel.components().next()?.as_os_str().to_str()?.to_string();
    let name = first.strip_suffix(".rs").unwrap_or(&first).to_string();
    (name != "lib" && name != "main").then_some(name)
}

/// The modules named as `crate::<name>` in `text` (comments included: a doc link to a higher
/// layer is a dependency in the reader's mind too).
fn named_modules(text: &str) -> BTreeSet<String> {
    let mut found = BTreeSet::new();
    let mut rest = text;
    while let Some(at) = rest.find("crate::") {
        let after = &rest[at + "crate::".len()..];
        let name: String = after
            .chars()
            .take_while(|c| c.is_ascii_lowercase() || c.is_ascii_digit() || *c == '_')
            .collect();
        if !name.is_empty() {
            found.insert(name);
        } else if after.starts_with('{') {
            found.extend(grouped_modules(after));
        }
        rest = after;
    }
    found
}

/// The first path segment of every item of a `crate::{a::X, b::{Y, Z}}` group (`text` starts
/// at the opening brace): `a` and `b`.
fn grouped_modules(text: &str) -> Vec<String> {
    let mut names = Vec::new();
    let mut depth = 0;
    let mut at_item_start = false;
    for (i, c) in text.char_indices() {
        match c {
            '{' => {
                depth += 1;
                at_item_start = depth == 1;
            }
            '}' => {
                depth -= 1;
                if depth == 0 {
                    break;
                }
            }
            ',' if depth == 1 => at_item_start = true,
            _ if at_item_start && !c.is_whitespace() => {
                at_item_start = false;
                let name: String = text[i..]
                    .chars()
                    .take_while(|c| c.is_ascii_lowercase() || c.is_ascii_digit() || *c == '_')
                    .collect();
                if !name.is_empty() && name != "self" {
                    names.push(name);
                }
            }
            _ => {}
        }
    }
    names
}

/// The macros `text` exports at the crate root (`#[macro_export]` then `macro_rules! NAME`):
/// `crate::NAME` names the module that defines them.
fn exported_macros(text: &str) -> Vec<String> {
    let mut found = Vec::new();
    let mut rest = text;
    while let Some(at) = rest.find("#[macro_export]") {
        rest = &rest[at + "#[macro_export]".len()..];
        let Some(rules) = rest.trim_start().strip_prefix("macro_rules!") else {
            continue;
        };
        let name: String = rules
            .trim_start()
            .chars()
            .take_while(|c| c.is_ascii_alphanumeric() || *c == '_')
            .collect();
        if !name.is_empty() {
            found.push(name);
        }
    }
    found
}

/// The module graph: module → (module it names → files that name it). A name that is an
/// exported macro counts as the module that defines the macro.
fn module_graph() -> Graph {
    let src = Path::new(env!("CARGO_MANIFEST_DIR")).join("src");
    let mut files = Vec::new();
    rust_files(&src, &mut files);
    let mut texts = Vec::new();
    let mut macro_home = BTreeMap::new();
    for file in files {
        let Some(from) = top_module(&src, &file) else {
            continue;
        };
        let text = std::fs::read_to_string(&file).expect("source file");
        for name in exported_macros(&text) {
            macro_home.insert(name, from.clone());
        }
        texts.push((file, from, text));
    }
    let mut graph = Graph::new();
    for (file, from, text) in texts {
        let entry = graph.entry(from.clone()).or_default();
        for name in named_modules(&text) {
            let to = macro_home.get(&name).cloned().unwrap_or(name);
            if to != from {
                let rel = file.strip_prefix(&src).unwrap().display().to_string();
                entry.entry(to).or_default().insert(rel);
            }
        }
    }
    graph
}

#[test]
fn every_module_has_a_layer() {
    let unplaced: Vec<String> = module_graph()
        .into_keys()
        .filter(|m| layer_of(m).is_none())
        .collect();
    assert!(
        unplaced.is_empty(),
        "top-level modules without a layer in tests/architecture.rs: {unplaced:?}"
    );
}

#[test]
fn no_module_imports_from_a_higher_layer() {
    let mut upward = Vec::new();
    for (from, targets) in module_graph() {
        let Some(lf) = layer_of(&from) else { continue };
        for (to, files) in targets {
            match layer_of(&to) {
                Some(lt) if lt > lf => upward.push(format!("{from} -> {to} (in {files:?})")),
                None => upward.push(format!("{from} -> unknown module {to} (in {files:?})")),
                _ => {}
            }
        }
    }
    assert!(
        upward.is_empty(),
        "imports against the layering: {upward:#?}"
    );
}

type Graph = BTreeMap<String, BTreeMap<String, BTreeSet<String>>>;

/// A cycle in `graph` (its nodes, first repeated at the end), if there is one.
fn find_cycle(graph: &Graph) -> Option<Vec<String>> {
    // Depth-first search with colours: 1 = on the current path, 2 = done.
    fn visit(
        node: &str,
        graph: &Graph,
        colour: &mut BTreeMap<String, u8>,
        path: &mut Vec<String>,
    ) -> Option<Vec<String>> {
        match colour.get(node) {
            Some(2) => return None,
            Some(1) => {
                let start = path.iter().position(|n| n == node).unwrap_or(0);
                let mut cycle = path[start..].to_vec();
                cycle.push(node.to_string());
                return Some(cycle);
            }
            _ => {}
        }
        colour.insert(node.to_string(), 1);
        path.push(node.to_string());
        if let Some(targets) = graph.get(node) {
            for next in targets.keys() {
                if let Some(cycle) = visit(next, graph, colour, path) {
                    return Some(cycle);
                }
            }
        }
        path.pop();
        colour.insert(node.to_string(), 2);
        None
    }
    let mut colour = BTreeMap::new();
    graph
        .keys()
        .find_map(|node| visit(node, graph, &mut colour, &mut Vec::new()))
}

#[test]
fn the_module_graph_has_no_cycle() {
    if let Some(cycle) = find_cycle(&module_graph()) {
        panic!("import cycle: {}", cycle.join(" -> "));
    }
}

/// The checker itself: it must see a planted upward import and a planted cycle.
#[test]
fn the_checker_sees_what_it_looks_for() {
    let names =
        named_modules("use crate::shadow::solve; // see [`crate::cli::run`]\nuse crate::x;");
    assert_eq!(
        names.into_iter().collect::<Vec<_>>(),
        vec!["cli".to_string(), "shadow".to_string(), "x".to_string()]
    );
    // A grouped import names each of its first segments.
    let grouped =
        named_modules("use crate::{\n    cli::run,\n    shadow::{solve, Observer},\n    Num};");
    assert_eq!(
        grouped.into_iter().collect::<Vec<_>>(),
        vec!["cli".to_string(), "shadow".to_string()]
    );
    assert!(layer_of("cli") > layer_of("shadow"));
    assert_eq!(
        exported_macros(
            "#[macro_export]\nmacro_rules! declare_x {}\n#[macro_export] // no\nfn f() {}"
        ),
        vec!["declare_x".to_string()]
    );
    assert_eq!(layer_of("no_such_module"), None);
    let edge = |from: &str, to: &str, g: &mut Graph| {
        g.entry(from.to_string())
            .or_default()
            .insert(to.to_string(), BTreeSet::new());
    };
    let mut g = Graph::new();
    edge("shadow", "metric", &mut g);
    edge("metric", "numerics", &mut g);
    assert_eq!(find_cycle(&g), None);
    edge("numerics", "shadow", &mut g);
    assert_eq!(
        find_cycle(&g),
        Some(
            vec!["metric", "numerics", "shadow", "metric"]
                .into_iter()
                .map(String::from)
                .collect()
        )
    );
}
