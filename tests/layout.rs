//! The shape of the source tree: no import circle between top-level modules, no source file
//! too long to read in one sitting, and the command-line crates kept in the binary.
//!
//! The checks read the files under `src/` as text. A module's references are the
//! `crate::NAME` paths (including `use crate::{a::…, b::…}` groups) in its files, outside
//! comments and outside the trailing `#[cfg(test)] mod tests { … }` block: tests may reach
//! anywhere, the library's data flow may not turn back on itself.

use std::collections::{BTreeMap, BTreeSet};
use std::path::{Path, PathBuf};

/// Longest non-test source file, in lines. source: common practice (a file a reviewer reads
/// in one sitting; the contributor guide's limit).
const MAX_LINES: usize = 600;

/// Crates that belong to the command line only. source: common practice (the library builds
/// without the `cli` feature).
const CLI_CRATES: [&str; 2] = ["clap", "indicatif"];

/// Every `.rs` file under `dir`, sorted.
fn rust_files(dir: &Path) -> Vec<PathBuf> {
    let mut out = Vec::new();
    let mut stack = vec![dir.to_path_buf()];
    while let Some(d) = stack.pop() {
        for entry in std::fs::read_dir(&d).unwrap() {
            let p = entry.unwrap().path();
            if p.is_dir() {
                stack.push(p);
            } else if p.extension().is_some_and(|e| e == "rs") {
                out.push(p);
            }
        }
    }
    out.sort();
    out
}

/// The source root and every file under it, as paths relative to the root.
fn sources() -> (PathBuf, Vec<PathBuf>) {
    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join("src");
    let files = rust_files(&root)
        .into_iter()
        .map(|p| p.strip_prefix(&root).unwrap().to_path_buf())
        .collect();
    (root, files)
}

/// The lines of a file before a trailing `#[cfg(test)]` + `mod tests {` block (all lines when
/// there is none).
fn code_lines(text: &str) -> Vec<&str> {
    let lines: Vec<&str> = text.lines().collect();
    let end = lines
        .windows(2)
        .position(|w| w[0].trim() == "#[cfg(test)]" && w[1].trim_start().starts_with("mod tests {"))
        .unwrap_or(lines.len());
    lines[..end].to_vec()
}

/// The top-level module a file under `src/` belongs to (`report` for `report/html/page.rs`);
/// `None` for the crate root and the binary.
fn top_module(rel: &Path) -> Option<String> {
    let first = rel.components().next()?.as_os_str().to_str()?;
    if first == "bin" || first == "lib.rs" {
        return None;
    }
    Some(first.trim_end_matches(".rs").to_string())
}

/// The names right after `crate::` on one line of code: `crate::a::b` gives `a`,
/// `crate::{a::x, b}` gives `a` and `b`.
fn crate_refs(line: &str) -> Vec<String> {
    let code = line.split("//").next().unwrap_or("");
    let ident = |s: &str| -> String {
        s.trim_start()
            .chars()
            .take_while(|c| c.is_alphanumeric() || *c == '_')
            .collect()
    };
    let mut out = Vec::new();
    for (i, _) in code.match_indices("crate::") {
        let rest = &code[i + "crate::".len()..];
        if let Some(group) = rest.strip_prefix('{') {
            let mut depth = 0usize;
            let mut item = String::new();
            for c in group.chars() {
                match c {
                    '{' => depth += 1,
                    '}' if depth == 0 => break,
                    '}' => depth -= 1,
                    ',' if depth == 0 => {
                        out.push(ident(&item));
                        item.clear();
                        continue;
                    }
                    _ => {}
                }
                item.push(c);
            }
            out.push(ident(&item));
        } else {
            out.push(ident(rest));
        }
    }
    out.retain(|n| !n.is_empty());
    out
}

/// Module graph: for each top-level module, the modules it references and where (first place).
type Graph = BTreeMap<String, BTreeMap<String, String>>;

fn module_graph(root: &Path, files: &[PathBuf]) -> Graph {
    let tops: BTreeSet<String> = files.iter().filter_map(|f| top_module(f)).collect();
    let mut graph = Graph::new();
    for rel in files {
        let Some(from) = top_module(rel) else {
            continue;
        };
        let text = std::fs::read_to_string(root.join(rel)).unwrap();
        let edges = graph.entry(from.clone()).or_default();
        for (n, line) in code_lines(&text).into_iter().enumerate() {
            if line.trim_start().starts_with("//") {
                continue;
            }
            for to in crate_refs(line) {
                if to != from && tops.contains(&to) {
                    edges
                        .entry(to)
                        .or_insert_with(|| format!("src/{}:{}", rel.display(), n + 1));
                }
            }
        }
    }
    graph
}

/// A cycle of the graph, as the modules along it with the place of each reference
/// (`a → b (src/a.rs:3) → a (src/b.rs:9)`), or `None`.
fn find_cycle(graph: &Graph) -> Option<String> {
    fn visit(
        graph: &Graph,
        node: &str,
        path: &mut Vec<String>,
        done: &mut BTreeSet<String>,
    ) -> Option<String> {
        if let Some(at) = path.iter().position(|n| n == node) {
            let mut text = path[at].clone();
            let ring: Vec<&String> = path[at..].iter().chain([&path[at]]).collect();
            for w in ring.windows(2) {
                let place = &graph[w[0].as_str()][w[1].as_str()];
                text.push_str(&format!(" → {} ({place})", w[1]));
            }
            return Some(text);
        }
        if done.contains(node) {
            return None;
        }
        path.push(node.to_string());
        for next in graph.get(node).into_iter().flat_map(|e| e.keys()) {
            if let Some(c) = visit(graph, next, path, done) {
                return Some(c);
            }
        }
        path.pop();
        done.insert(node.to_string());
        None
    }
    let mut done = BTreeSet::new();
    graph
        .keys()
        .find_map(|n| visit(graph, n, &mut Vec::new(), &mut done))
}

#[test]
fn no_module_imports_from_a_module_that_imports_it_back() {
    // source: common practice (data flows one way between modules)
    let (root, files) = sources();
    let graph = module_graph(&root, &files);
    assert!(
        graph.len() >= 10,
        "the scan found too few modules: {:?}",
        graph.keys()
    );
    if let Some(cycle) = find_cycle(&graph) {
        panic!("import circle: {cycle}; move what both sides need into a module below both");
    }
}

#[test]
fn the_cycle_finder_reports_direct_and_longer_circles_by_name() {
    // source: common practice (a graph with a back edge has a cycle; a tree has none)
    let edge = |pairs: &[(&str, &str)]| -> Graph {
        let mut g = Graph::new();
        for (a, b) in pairs {
            g.entry(a.to_string())
                .or_default()
                .insert(b.to_string(), format!("src/{a}.rs:1"));
        }
        g
    };
    assert_eq!(
        find_cycle(&edge(&[("a", "b"), ("b", "c"), ("a", "c")])),
        None
    );
    assert_eq!(
        find_cycle(&edge(&[("check", "report"), ("report", "check")])).as_deref(),
        Some("check → report (src/check.rs:1) → check (src/report.rs:1)")
    );
    let long = find_cycle(&edge(&[("a", "b"), ("b", "c"), ("c", "a"), ("c", "d")])).unwrap();
    assert!(
        long.starts_with("a → b") && long.contains("→ a (src/c.rs:1)"),
        "{long}"
    );
    // source: common practice (Rust path syntax: grouped imports name several modules)
    assert_eq!(
        crate_refs("use crate::{assess::Kind, robot::{Robot, MAX_DOF}, plan};"),
        ["assess", "robot", "plan"]
    );
    assert_eq!(
        crate_refs("let x = crate::rng::SplitMix64::new(1); // crate::plan"),
        ["rng"]
    );
    assert_eq!(
        code_lines("a\nb\n#[cfg(test)]\nmod tests {\nc\n}\n"),
        ["a", "b"]
    );
}

/// The module of a file under `src/` as its path (`report/html/page.rs` →
/// `report::html::page`, a `mod.rs` → its folder); `None` for the crate root, the binary and
/// test-only files.
fn module_of(rel: &Path) -> Option<Vec<String>> {
    top_module(rel)?;
    let mut parts: Vec<String> = rel
        .with_extension("")
        .components()
        .map(|c| c.as_os_str().to_string_lossy().into_owned())
        .collect();
    if parts.last().is_some_and(|p| p == "mod") {
        parts.pop();
    }
    if parts.iter().any(|p| p == "tests") {
        return None;
    }
    Some(parts)
}

/// The paths a line names through `crate::` or `super::` from inside `module`, as module
/// paths from the crate root (each `use …::{a, b}` item separately).
fn module_refs(line: &str, module: &[String]) -> Vec<Vec<String>> {
    let code = line.split("//").next().unwrap_or("");
    let idents = |s: &str| -> Vec<String> {
        s.split("::")
            .map(|p| {
                p.trim()
                    .chars()
                    .take_while(|c| c.is_alphanumeric() || *c == '_')
                    .collect::<String>()
            })
            .take_while(|p| !p.is_empty())
            .collect()
    };
    let mut out = Vec::new();
    let bytes = code.as_bytes();
    for (i, _) in code
        .match_indices("crate::")
        .chain(code.match_indices("super::"))
    {
        let before = i.checked_sub(1).map(|k| bytes[k]);
        if before.is_some_and(|b| b.is_ascii_alphanumeric() || b == b'_' || b == b':') {
            continue;
        }
        let rest = &code[i..];
        let path_end = rest
            .find(['{', ';', ',', ')', ' ', '(', '<', '>', '!', '}'])
            .unwrap_or(rest.len());
        let mut base = idents(&rest[..path_end]);
        // Resolve the leading `crate` / `super`s.
        let mut root: Vec<String> = module.to_vec();
        if base.first().is_some_and(|p| p == "crate") {
            root.clear();
            base.remove(0);
        }
        while base.first().is_some_and(|p| p == "super") {
            root.pop();
            base.remove(0);
        }
        root.extend(base);
        if rest[path_end..].starts_with('{') {
            for item in crate_refs(&format!("crate::{}", &rest[path_end..])) {
                let mut p = root.clone();
                p.push(item);
                out.push(p);
            }
        } else {
            out.push(root);
        }
    }
    out
}

#[test]
fn no_submodule_imports_from_a_sibling_that_imports_it_back() {
    // source: common practice (data flows one way between modules); a parent and its own
    // children may use each other (re-exports, shared helpers), cousins may not
    let (root, files) = sources();
    let modules: BTreeSet<Vec<String>> = files.iter().filter_map(|f| module_of(f)).collect();
    let name = |m: &[String]| m.join("::");
    let mut graph = Graph::new();
    for rel in &files {
        let Some(from) = module_of(rel) else {
            continue;
        };
        let text = std::fs::read_to_string(root.join(rel)).unwrap();
        let edges = graph.entry(name(&from)).or_default();
        for (n, line) in code_lines(&text).into_iter().enumerate() {
            if line.trim_start().starts_with("//") {
                continue;
            }
            for path in module_refs(line, &from) {
                let Some(to) = (1..=path.len())
                    .rev()
                    .map(|k| path[..k].to_vec())
                    .find(|p| modules.contains(p))
                else {
                    continue;
                };
                let related = from.starts_with(&to) || to.starts_with(&from);
                if !related {
                    edges
                        .entry(name(&to))
                        .or_insert_with(|| format!("src/{}:{}", rel.display(), n + 1));
                }
            }
        }
    }
    assert!(
        graph.keys().any(|k| k.contains("::")),
        "the scan found no submodules: {:?}",
        graph.keys()
    );
    if let Some(cycle) = find_cycle(&graph) {
        panic!("import circle: {cycle}; move what both sides need into a module of its own");
    }
}

#[test]
fn super_and_crate_paths_resolve_to_modules() {
    // source: The Rust Reference, "Paths" (`super` is the parent module, `crate` the root)
    let page: Vec<String> = ["report", "html", "page"].map(String::from).to_vec();
    let as_text = |v: Vec<Vec<String>>| v.iter().map(|p| p.join("::")).collect::<Vec<_>>();
    assert_eq!(
        as_text(module_refs("use super::markup::escape;", &page)),
        ["report::html::markup::escape"]
    );
    assert_eq!(
        as_text(module_refs(
            "use super::super::{count, kinematics::PoseReport};",
            &page
        )),
        ["report::count", "report::kinematics"]
    );
    assert_eq!(
        as_text(module_refs(
            "let x = crate::rng::SplitMix64::new(1);",
            &page
        )),
        ["rng::SplitMix64::new"]
    );
    assert!(module_refs("use nalgebra::Isometry3; // super::x", &page).is_empty());
}

#[test]
fn no_source_file_is_over_the_line_limit() {
    // source: common practice (see MAX_LINES)
    let (root, files) = sources();
    let mut long = Vec::new();
    for rel in &files {
        // test-only modules: `tests.rs` or `tests_<topic>.rs`
        let exempt_name = rel
            .file_name()
            .and_then(|n| n.to_str())
            .is_some_and(|n| n == "tests.rs" || n.starts_with("tests_"));
        let in_tests_dir = rel.components().any(|c| c.as_os_str() == "tests");
        if exempt_name || in_tests_dir {
            continue;
        }
        let text = std::fs::read_to_string(root.join(rel)).unwrap();
        let n = code_lines(&text).len();
        if n > MAX_LINES {
            long.push(format!("src/{} ({n} lines)", rel.display()));
        }
    }
    assert!(
        long.is_empty(),
        "over {MAX_LINES} lines before the tests: {}; split them by topic",
        long.join(", ")
    );
}

#[test]
fn command_line_crates_stay_in_the_binary() {
    // source: common practice (see CLI_CRATES)
    let (root, files) = sources();
    let mut found = Vec::new();
    for rel in files.iter().filter(|f| !f.starts_with("bin")) {
        let text = std::fs::read_to_string(root.join(rel)).unwrap();
        for (n, line) in text.lines().enumerate() {
            let words = line.split(|c: char| !(c.is_alphanumeric() || c == '_'));
            if let Some(w) = words.into_iter().find(|w| CLI_CRATES.contains(w)) {
                found.push(format!("src/{}:{} ({w})", rel.display(), n + 1));
            }
        }
    }
    assert!(
        found.is_empty(),
        "command-line crates outside src/bin: {}; keep them in the binary",
        found.join(", ")
    );
}
