//! The architecture's invariants, read from the source: no import runs up a layer of the
//! geometry crate, and the module graphs of the three crates have no circles.
//!
//! A module's imports are the `crate::...` paths in its code (use lines and qualified paths),
//! test modules excluded (tests may set up a case through any layer).

use std::collections::{BTreeMap, BTreeSet};
use std::path::{Path, PathBuf};

/// Module path ("file::design") -> the modules it names.
type Graph = BTreeMap<String, BTreeSet<String>>;

fn rust_files(dir: &Path, out: &mut Vec<PathBuf>) {
    for entry in std::fs::read_dir(dir).unwrap() {
        let path = entry.unwrap().path();
        if path.is_dir() {
            if path.file_name().is_some_and(|n| n != "assets") {
                rust_files(&path, out);
            }
        } else if path.extension().is_some_and(|e| e == "rs") {
            out.push(path);
        }
    }
}

/// Module path of a source file under `root`: `file/design.rs` -> `file::design`,
/// `file/mod.rs` -> `file`, `lib.rs` / `main.rs` -> `` (the crate root).
fn module_of(root: &Path, file: &Path) -> String {
    let rel = file.strip_prefix(root).unwrap().with_extension("");
    let parts: Vec<String> = rel
        .components()
        .map(|c| c.as_os_str().to_string_lossy().into_owned())
        .filter(|p| p != "mod" && p != "lib" && p != "main")
        .collect();
    parts.join("::")
}

/// The code of a file without its `#[cfg(test)]` module (it is the last item by convention).
fn code_without_tests(text: &str) -> &str {
    text.find("#[cfg(test)]").map_or(text, |i| &text[..i])
}

/// Every `crate::a::b::...` path in `code`, as the longest prefix that is a known module.
fn imports(code: &str, modules: &BTreeSet<String>) -> BTreeSet<String> {
    let mut out = BTreeSet::new();
    let mut rest = code;
    while let Some(i) = rest.find("crate::") {
        // Skip `coilfield_geometry::...`-like names that merely end in "crate".
        let before = rest[..i].chars().next_back();
        rest = &rest[i + "crate::".len()..];
        if before.is_some_and(|c| c.is_alphanumeric() || c == '_') {
            continue;
        }
        let path: String = rest
            .chars()
            .take_while(|c| c.is_alphanumeric() || *c == '_' || *c == ':')
            .collect();
        let parts: Vec<&str> = path.split("::").filter(|p| !p.is_empty()).collect();
        // A `use crate::x::{a, b}` names modules inside the braces too.
        let braces = rest[path.len()..].starts_with('{');
        let mut best = None;
        for k in (1..=parts.len()).rev() {
            let candidate = parts[..k].join("::");
            if modules.contains(&candidate) {
                best = Some(candidate);
                break;
            }
        }
        if braces {
            let inner: String = rest[path.len() + 1..]
                .chars()
                .take_while(|c| *c != '}')
                .collect();
            let prefix = parts.join("::");
            for item in inner.split(',') {
                let name = item.split_whitespace().next().unwrap_or("");
                let name = name.split("::").next().unwrap_or("");
                let candidate = if prefix.is_empty() {
                    name.to_string()
                } else {
                    format!("{prefix}::{name}")
                };
                if modules.contains(&candidate) {
                    out.insert(candidate);
                }
            }
        }
        if let Some(m) = best {
            out.insert(m);
        }
    }
    out
}

fn graph_of(src: &str) -> Graph {
    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join(src);
    let mut files = Vec::new();
    rust_files(&root, &mut files);
    let modules: BTreeSet<String> = files.iter().map(|f| module_of(&root, f)).collect();
    let mut graph = Graph::new();
    for f in &files {
        let text = std::fs::read_to_string(f).unwrap();
        let me = module_of(&root, f);
        // Comments (doc links included) are not imports.
        let code: String = code_without_tests(&text)
            .lines()
            .filter(|l| !l.trim_start().starts_with("//"))
            .collect::<Vec<_>>()
            .join("\n");
        let mut uses = imports(&code, &modules);
        uses.remove(&me);
        // A module naming its own parent (`super`-like paths) or its children is structure, not
        // a dependency between peers: only edges between modules that are not ancestors of one
        // another count.
        uses.retain(|m| !me.starts_with(&format!("{m}::")) && !m.starts_with(&format!("{me}::")));
        uses.remove("");
        graph.insert(me, uses);
    }
    graph
}

/// A circle in the graph, if any, as the list of modules along it.
fn find_cycle(graph: &Graph) -> Option<Vec<String>> {
    #[derive(Clone, Copy, PartialEq)]
    enum Mark {
        New,
        Open,
        Done,
    }
    fn visit(
        node: &str,
        graph: &Graph,
        marks: &mut BTreeMap<String, Mark>,
        stack: &mut Vec<String>,
    ) -> Option<Vec<String>> {
        marks.insert(node.to_string(), Mark::Open);
        stack.push(node.to_string());
        for next in graph.get(node).into_iter().flatten() {
            match marks.get(next.as_str()).copied().unwrap_or(Mark::New) {
                Mark::Open => {
                    let start = stack.iter().position(|n| n == next).unwrap();
                    let mut cycle = stack[start..].to_vec();
                    cycle.push(next.clone());
                    return Some(cycle);
                }
                Mark::New => {
                    if let Some(c) = visit(next, graph, marks, stack) {
                        return Some(c);
                    }
                }
                Mark::Done => {}
            }
        }
        stack.pop();
        marks.insert(node.to_string(), Mark::Done);
        None
    }
    let mut marks = BTreeMap::new();
    for node in graph.keys() {
        if marks.get(node.as_str()).copied().unwrap_or(Mark::New) == Mark::New {
            let mut stack = Vec::new();
            if let Some(c) = visit(node, graph, &mut marks, &mut stack) {
                return Some(c);
            }
        }
    }
    None
}

/// Layer of a geometry module: file (top) 3, query 2, model 1, error, constants and limits 0.
fn geometry_layer(module: &str) -> Option<u8> {
    match module.split("::").next().unwrap_or("") {
        "file" => Some(3),
        "query" => Some(2),
        "model" => Some(1),
        "error" | "constants" | "limits" => Some(0),
        _ => None,
    }
}

#[test]
fn no_import_runs_up_a_layer_of_the_geometry_crate() {
    let graph = graph_of("geometry/src");
    let mut up = Vec::new();
    for (from, uses) in &graph {
        let Some(lf) = geometry_layer(from) else {
            continue;
        };
        for to in uses {
            let lt = geometry_layer(to).unwrap_or_else(|| panic!("{to} has no layer"));
            if lt > lf {
                up.push(format!("{from} -> {to}"));
            }
        }
    }
    assert!(up.is_empty(), "imports up a layer: {up:?}");
    // The check can fail: the graph holds the edges it is meant to judge.
    assert!(graph["file::design"].contains("model::design"));
    assert!(graph["query::overlap"].contains("model::winding"));
}

#[test]
fn module_graphs_have_no_circles() {
    for src in ["geometry/src", "solver/src", "cli"] {
        let graph = graph_of(src);
        assert!(graph.len() > 5, "{src}: too few modules read: {graph:?}");
        if let Some(cycle) = find_cycle(&graph) {
            panic!(
                "{src}: modules import each other in a circle: {}",
                cycle.join(" -> ")
            );
        }
    }
}

#[test]
fn the_cycle_finder_finds_a_circle() {
    let mut g = Graph::new();
    g.insert("a".into(), ["b".to_string()].into());
    g.insert("b".into(), ["c".to_string()].into());
    g.insert("c".into(), ["a".to_string()].into());
    assert_eq!(find_cycle(&g).unwrap(), ["a", "b", "c", "a"]);
    g.insert("c".into(), BTreeSet::new());
    assert!(find_cycle(&g).is_none());
}
