//! The layering rule of ARCHITECTURE.md, checked on the source tree.
//!
//! The test reads the ordered module list from ARCHITECTURE.md, then every
//! `src/**/*.rs` file's code (comments and strings left out) for paths that
//! start with `crate::`, `super::` or `self::`, and fails when
//!
//! - a module imports from a module that comes later in the list (a layer
//!   above it),
//! - the files' imports form a circle (names re-exported by a `mod.rs` are
//!   followed to the file that defines them), or
//! - the list and the tree disagree (a module missing from either).
//!
//! Common practice, no source: this is the "acyclic dependencies
//! principle" of layered designs, checked the cheap way, from `use` lines.

use std::collections::{BTreeMap, BTreeSet};
use std::path::{Path, PathBuf};

fn root() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).to_path_buf()
}

/// The ordered list of top-level modules: the rows of the table under
/// "## Layers" in ARCHITECTURE.md, each row's first cell a module name in
/// backticks (`data`, `fit`, ...), lowest layer first.
fn layer_list() -> Vec<String> {
    let text = std::fs::read_to_string(root().join("ARCHITECTURE.md")).expect("ARCHITECTURE.md");
    let section = text
        .split("## Layers")
        .nth(1)
        .expect("ARCHITECTURE.md has a \"## Layers\" section");
    let section = section.split("\n## ").next().unwrap_or(section);
    let mut out = Vec::new();
    for line in section.lines() {
        let Some(rest) = line.strip_prefix("| `") else {
            continue;
        };
        let name = rest.split('`').next().unwrap_or_default();
        out.push(name.to_string());
    }
    assert!(out.len() > 5, "no layer table found in ARCHITECTURE.md");
    out
}

/// Every source file, keyed by its module path (`fit::model`, `data`, ...).
fn source_files() -> BTreeMap<String, PathBuf> {
    fn walk(dir: &Path, out: &mut Vec<PathBuf>) {
        for entry in std::fs::read_dir(dir).unwrap() {
            let path = entry.unwrap().path();
            if path.is_dir() {
                walk(&path, out);
            } else if path.extension().is_some_and(|e| e == "rs") {
                out.push(path);
            }
        }
    }
    let src = root().join("src");
    let mut files = Vec::new();
    walk(&src, &mut files);
    files
        .into_iter()
        .map(|p| {
            let rel = p.strip_prefix(&src).unwrap().with_extension("");
            let mut parts: Vec<String> = rel
                .components()
                .map(|c| c.as_os_str().to_string_lossy().into_owned())
                .collect();
            if parts.last().is_some_and(|l| l == "mod") {
                parts.pop();
            }
            (parts.join("::"), p)
        })
        .collect()
}

/// The code of a file with comments, string and char literals blanked out.
fn code_only(text: &str) -> String {
    let b = text.as_bytes();
    let mut out = String::with_capacity(text.len());
    let mut i = 0;
    while i < b.len() {
        if b[i..].starts_with(b"//") {
            while i < b.len() && b[i] != b'\n' {
                i += 1;
            }
        } else if b[i..].starts_with(b"/*") {
            while i < b.len() && !b[i..].starts_with(b"*/") {
                i += 1;
            }
            i += 2;
        } else if b[i] == b'r' && (b[i..].starts_with(b"r#\"") || b[i..].starts_with(b"r\"")) {
            let hashes = b[i + 1..].iter().take_while(|&&c| c == b'#').count();
            let close: Vec<u8> = std::iter::once(b'"')
                .chain(std::iter::repeat_n(b'#', hashes))
                .collect();
            i += 2 + hashes;
            while i < b.len() && !b[i..].starts_with(&close) {
                i += 1;
            }
            i += close.len();
            out.push(' ');
        } else if b[i] == b'"' {
            i += 1;
            while i < b.len() && b[i] != b'"' {
                if b[i] == b'\\' {
                    i += 1;
                }
                i += 1;
            }
            i += 1;
            out.push(' ');
        } else if b[i] == b'\'' && i + 2 < b.len() && (b[i + 2] == b'\'' || b[i + 1] == b'\\') {
            // A char literal ('a', '\n', '\''); lifetimes ('a) are kept.
            i += 1;
            while i < b.len() && b[i] != b'\'' {
                if b[i] == b'\\' {
                    i += 1;
                }
                i += 1;
            }
            i += 1;
            out.push(' ');
        } else {
            out.push(b[i] as char);
            i += 1;
        }
    }
    out
}

/// Splits code into identifier and punctuation tokens, leaving out inline
/// unit-test modules (`#[cfg(test)] mod tests { ... }`): they may use
/// anything in the crate, and their `super` is the file itself.
fn tokens(code: &str) -> Vec<String> {
    let mut toks = raw_tokens(code);
    let pattern = ["#", "[", "cfg", "(", "test", ")", "]", "mod"];
    let mut i = 0;
    while i + pattern.len() + 1 < toks.len() {
        let matches = pattern.iter().enumerate().all(|(k, p)| toks[i + k] == *p);
        if matches && toks[i + pattern.len() + 1] == "{" {
            let mut depth = 0;
            let mut j = i + pattern.len() + 1;
            while j < toks.len() {
                match toks[j].as_str() {
                    "{" => depth += 1,
                    "}" => {
                        depth -= 1;
                        if depth == 0 {
                            break;
                        }
                    }
                    _ => {}
                }
                j += 1;
            }
            toks.drain(i..(j + 1).min(toks.len()));
        } else {
            i += 1;
        }
    }
    toks
}

fn raw_tokens(code: &str) -> Vec<String> {
    let mut out = Vec::new();
    let chars: Vec<char> = code.chars().collect();
    let mut i = 0;
    while i < chars.len() {
        let c = chars[i];
        if c.is_alphanumeric() || c == '_' {
            let start = i;
            while i < chars.len() && (chars[i].is_alphanumeric() || chars[i] == '_') {
                i += 1;
            }
            out.push(chars[start..i].iter().collect());
        } else if c == ':' && chars.get(i + 1) == Some(&':') {
            out.push("::".into());
            i += 2;
        } else if c.is_whitespace() {
            i += 1;
        } else {
            out.push(c.to_string());
            i += 1;
        }
    }
    out
}

/// Every path a file names, expanded from use trees: each as its segments
/// (`["crate", "data", "Dataset"]`, `["super", "FitOptions"]`).
fn paths(toks: &[String]) -> Vec<Vec<String>> {
    // Parses `a::b::{c, d::e}` starting at `i`, appending full paths.
    fn tree(toks: &[String], i: &mut usize, prefix: Vec<String>, out: &mut Vec<Vec<String>>) {
        let mut path = prefix;
        loop {
            match toks.get(*i).map(String::as_str) {
                Some("{") => {
                    *i += 1;
                    loop {
                        tree(toks, i, path.clone(), out);
                        match toks.get(*i).map(String::as_str) {
                            Some(",") => {
                                *i += 1;
                                if toks.get(*i).map(String::as_str) == Some("}") {
                                    *i += 1;
                                    return;
                                }
                            }
                            Some("}") => {
                                *i += 1;
                                return;
                            }
                            _ => return,
                        }
                    }
                }
                Some(t) if t.chars().all(|c| c.is_alphanumeric() || c == '_') || t == "*" => {
                    path.push(t.to_string());
                    *i += 1;
                    if toks.get(*i).map(String::as_str) == Some("::") {
                        *i += 1;
                        continue;
                    }
                    out.push(path);
                    return;
                }
                _ => {
                    out.push(path);
                    return;
                }
            }
        }
    }
    let mut out = Vec::new();
    let mut i = 0;
    while i < toks.len() {
        let t = toks[i].as_str();
        let starts = matches!(t, "crate" | "super" | "self")
            && toks.get(i + 1).map(String::as_str) == Some("::")
            && (i == 0 || toks[i - 1] != "::");
        if starts {
            let mut j = i;
            let mut found = Vec::new();
            tree(toks, &mut j, Vec::new(), &mut found);
            out.extend(found.into_iter().filter(|p| p.len() > 1));
            i = j.max(i + 1);
        } else {
            i += 1;
        }
    }
    out
}

/// The module path (`fit::model`) a path from file `module` points into,
/// as far as it names modules that exist; `None` for the crate root.
fn resolve(
    module: &str,
    path: &[String],
    files: &BTreeMap<String, PathBuf>,
    reexports: &BTreeMap<(String, String), String>,
) -> Option<String> {
    let mut base: Vec<String> = if module.is_empty() || module == "lib" {
        Vec::new()
    } else {
        module.split("::").map(str::to_string).collect()
    };
    // A file that is not a folder's mod.rs lives inside its own module:
    // `super` from `fit/model.rs` is `fit`, `self` is `fit::model`.
    let mut rest = path;
    match path[0].as_str() {
        "crate" => {
            base.clear();
            rest = &path[1..];
        }
        "super" => {
            let mut k = 0;
            while path.get(k).map(String::as_str) == Some("super") {
                base.pop();
                k += 1;
            }
            rest = &path[k..];
        }
        "self" => rest = &path[1..],
        _ => {}
    }
    let mut current = base.join("::");
    for seg in rest {
        let next = if current.is_empty() {
            seg.clone()
        } else {
            format!("{current}::{seg}")
        };
        if files.contains_key(&next) {
            current = next;
            continue;
        }
        // A name re-exported by `current` from one of its submodules.
        if let Some(target) = reexports.get(&(current.clone(), seg.clone())) {
            current = target.clone();
        }
        break;
    }
    (!current.is_empty()).then_some(current)
}

/// `pub use sub::{A, B}` (and `pub(crate) use`) in each module file:
/// (module, name) -> the submodule file that defines it.
fn reexport_map(files: &BTreeMap<String, PathBuf>) -> BTreeMap<(String, String), String> {
    let mut map = BTreeMap::new();
    for (module, path) in files {
        let toks = tokens(&code_only(&std::fs::read_to_string(path).unwrap()));
        let mut i = 0;
        while i < toks.len() {
            if toks[i] != "pub" {
                i += 1;
                continue;
            }
            let mut j = i + 1;
            if toks.get(j).map(String::as_str) == Some("(") {
                while j < toks.len() && toks[j] != ")" {
                    j += 1;
                }
                j += 1;
            }
            if toks.get(j).map(String::as_str) != Some("use") {
                i += 1;
                continue;
            }
            // The tree after `use`, read as relative to this module.
            let end = toks[j..]
                .iter()
                .position(|t| t == ";")
                .map_or(toks.len(), |k| j + k);
            let mut tree: Vec<String> = toks[j + 1..end].to_vec();
            if !matches!(
                tree.first().map(String::as_str),
                Some("self" | "super" | "crate")
            ) {
                tree.splice(0..0, ["self".to_string(), "::".to_string()]);
            }
            for p in paths(&tree) {
                let name = p.last().unwrap().clone();
                if let Some(target) = resolve(module, &p[..p.len() - 1], files, &BTreeMap::new()) {
                    if target != *module && files.contains_key(&target) {
                        let key = if module == "lib" {
                            String::new()
                        } else {
                            module.clone()
                        };
                        map.insert((key, name), target);
                    }
                }
            }
            i = end;
        }
    }
    map
}

fn top(module: &str) -> &str {
    module.split("::").next().unwrap_or(module)
}

#[test]
fn modules_import_only_from_layers_below_and_files_form_no_circle() {
    let layers = layer_list();
    let files = source_files();
    let reexports = reexport_map(&files);
    let rank = |m: &str| layers.iter().position(|l| l == top(m));

    // The list and the tree agree (the crate root, `main` and `prelude` are
    // the top: they may use anything).
    let tops: BTreeSet<&str> = files
        .keys()
        .map(|m| top(m))
        .filter(|m| !m.is_empty() && !matches!(*m, "lib" | "main" | "prelude"))
        .collect();
    for m in &tops {
        assert!(
            rank(m).is_some(),
            "src/{m} is not in the layer table of ARCHITECTURE.md; add it where it belongs"
        );
    }
    for l in &layers {
        assert!(
            tops.contains(l.as_str()),
            "ARCHITECTURE.md lists `{l}`, which is not a module under src/"
        );
    }

    let mut violations = Vec::new();
    let mut edges: BTreeMap<String, BTreeSet<String>> = BTreeMap::new();
    for (module, path) in &files {
        if matches!(module.as_str(), "lib" | "main" | "prelude") {
            continue;
        }
        let code = code_only(&std::fs::read_to_string(path).unwrap());
        let toks = tokens(&code);
        let mut found = paths(&toks);
        // Paths through a child module (`forward::Params`, `use csv::X`
        // in data/mod.rs) are relative paths too.
        for (k, t) in toks.iter().enumerate() {
            let child = format!("{module}::{t}");
            let after_colons = k > 0 && toks[k - 1] == "::";
            if files.contains_key(&child)
                && !after_colons
                && toks.get(k + 1).map(String::as_str) == Some("::")
                && (k == 0 || toks[k - 1] != "mod")
            {
                let mut rel: Vec<String> = vec!["self".into(), "::".into()];
                rel.extend(toks[k..].iter().take(64).cloned());
                if let Some(p) = paths(&rel).into_iter().next() {
                    found.push(p);
                }
            }
        }
        for p in found {
            let Some(target) = resolve(module, &p, &files, &reexports) else {
                continue;
            };
            if target == *module || top(&target) == "lib" {
                continue;
            }
            if top(&target) != top(module) {
                if let (Some(a), Some(b)) = (rank(module), rank(&target)) {
                    if b > a {
                        violations.push(format!(
                            "{} imports {} (`{}`): `{}` is a layer above `{}`",
                            path.strip_prefix(root()).unwrap().display(),
                            target,
                            p.join("::"),
                            top(&target),
                            top(module)
                        ));
                    }
                }
            }
            edges.entry(module.clone()).or_default().insert(target);
        }
    }
    assert!(
        violations.is_empty(),
        "imports that point up a layer:\n{}",
        violations.join("\n")
    );

    // No circle among files: every strongly connected component of the
    // import graph must be a single file (Tarjan, "Depth-first search and
    // linear graph algorithms", SIAM J. Computing 1972).
    let circles = circles(&edges);
    assert!(
        circles.is_empty(),
        "circles of imports among files:\n{}",
        circles
            .iter()
            .map(|c| c.join(" <-> "))
            .collect::<Vec<_>>()
            .join("\n")
    );
}

/// The strongly connected components with more than one member.
fn circles(edges: &BTreeMap<String, BTreeSet<String>>) -> Vec<Vec<String>> {
    struct State<'a> {
        edges: &'a BTreeMap<String, BTreeSet<String>>,
        index: BTreeMap<&'a str, usize>,
        low: BTreeMap<&'a str, usize>,
        stack: Vec<&'a str>,
        on_stack: BTreeSet<&'a str>,
        next: usize,
        out: Vec<Vec<String>>,
    }
    fn connect<'a>(s: &mut State<'a>, v: &'a str) {
        s.index.insert(v, s.next);
        s.low.insert(v, s.next);
        s.next += 1;
        s.stack.push(v);
        s.on_stack.insert(v);
        if let Some(ws) = s.edges.get(v) {
            for w in ws {
                let w = w.as_str();
                if !s.index.contains_key(w) {
                    connect(s, w);
                    let lw = s.low[w];
                    let lv = s.low.get_mut(v).unwrap();
                    *lv = (*lv).min(lw);
                } else if s.on_stack.contains(w) {
                    let iw = s.index[w];
                    let lv = s.low.get_mut(v).unwrap();
                    *lv = (*lv).min(iw);
                }
            }
        }
        if s.low[v] == s.index[v] {
            let mut component = Vec::new();
            loop {
                let w = s.stack.pop().unwrap();
                s.on_stack.remove(w);
                component.push(w.to_string());
                if w == v {
                    break;
                }
            }
            if component.len() > 1 {
                component.sort();
                s.out.push(component);
            }
        }
    }
    let mut s = State {
        edges,
        index: BTreeMap::new(),
        low: BTreeMap::new(),
        stack: Vec::new(),
        on_stack: BTreeSet::new(),
        next: 0,
        out: Vec::new(),
    };
    for v in edges.keys() {
        if !s.index.contains_key(v.as_str()) {
            connect(&mut s, v);
        }
    }
    s.out
}

/// The checker itself: a hand-made tree with an upward import and a circle
/// must be caught (so the test above cannot pass vacuously).
#[test]
fn the_checker_sees_use_trees_and_relative_paths() {
    let toks = tokens("use crate::{data::Dataset, error::{Error, Result}}; let x = super::FitOptions::default(); // crate::cli::x");
    let found = paths(&toks);
    assert_eq!(
        found,
        vec![
            vec!["crate", "data", "Dataset"],
            vec!["crate", "error", "Error"],
            vec!["crate", "error", "Result"],
            vec!["super", "FitOptions", "default"],
            vec!["crate", "cli", "x"],
        ]
    );
    let code = code_only("let s = \"crate::cli::x\"; // crate::cli::y\nuse crate::data::X;");
    let found = paths(&tokens(&code));
    assert_eq!(found, vec![vec!["crate", "data", "X"]]);
    let mut files = BTreeMap::new();
    for m in ["fit", "fit::model", "fit::options", "data"] {
        files.insert(m.to_string(), PathBuf::from(format!("{m}.rs")));
    }
    let mut re = BTreeMap::new();
    re.insert(
        ("fit".to_string(), "FitOptions".to_string()),
        "fit::options".to_string(),
    );
    let p = |s: &str| s.split("::").map(str::to_string).collect::<Vec<_>>();
    assert_eq!(
        resolve("fit::model", &p("super::FitOptions"), &files, &re).as_deref(),
        Some("fit::options")
    );
    assert_eq!(
        resolve("fit::model", &p("crate::data::Dataset"), &files, &re).as_deref(),
        Some("data")
    );
    let mut edges: BTreeMap<String, BTreeSet<String>> = BTreeMap::new();
    for (a, b) in [("a", "b"), ("b", "c"), ("c", "a"), ("c", "d"), ("d", "e")] {
        edges.entry(a.into()).or_default().insert(b.into());
    }
    assert_eq!(circles(&edges), vec![vec!["a", "b", "c"]]);
}
