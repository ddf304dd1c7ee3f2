//! One direction: no import cycle among the modules of `src/`, and no core
//! module reaching into the front-ends (`app`).
//!
//! The test reads the source tree, finds every path that names a module of
//! the crate (`crate::…`, `super::…`, `self::…`, in `use` items with their
//! `{…}` groups and renames, and written inline in code), resolves each to
//! the file that defines it, and builds one graph per folder: the nodes are
//! the folder's own file (`mod.rs`, or `lib.rs` at the top) and each of its
//! direct children (a file, or a sub-folder taken as one), so `src/` gives
//! the graph between the stages, `src/fit/` the graph between the files of
//! `fit`, and so on. A folder's own file naming a child it declares
//! (`mod x;`) counts too (`use x::f;`, `x::f()`), except a re-export
//! (`pub use x::f;`): that is the folder's facade, not an import.

use std::collections::{BTreeMap, BTreeSet};
use std::path::Path;

/// A module path inside the crate: `["fit", "regimes"]`; the root is empty.
type ModPath = Vec<String>;

/// Every `.rs` file under `dir`, with its module path.
fn module_files(dir: &Path) -> Vec<(ModPath, String)> {
    fn walk(dir: &Path, prefix: &[String], out: &mut Vec<(ModPath, String)>) {
        let mut entries: Vec<_> = std::fs::read_dir(dir)
            .expect("src/ is readable")
            .map(|e| e.expect("entry").path())
            .collect();
        entries.sort();
        for path in entries {
            let name = path
                .file_name()
                .and_then(|n| n.to_str())
                .expect("UTF-8 name")
                .to_string();
            if path.is_dir() {
                let mut p = prefix.to_vec();
                p.push(name);
                walk(&path, &p, out);
            } else if let Some(stem) = name.strip_suffix(".rs") {
                let mut p = prefix.to_vec();
                if !(stem == "mod" || (prefix.is_empty() && (stem == "lib" || stem == "main"))) {
                    p.push(stem.to_string());
                }
                let text = std::fs::read_to_string(&path).expect("source is UTF-8");
                out.push((p, text));
            }
        }
    }
    let mut out = Vec::new();
    walk(dir, &[], &mut out);
    out
}

#[derive(Debug, Clone, PartialEq, Eq)]
enum Token {
    Ident(String),
    Path,        // `::`
    Punct(char), // `{`, `}`, `,`, `;`, `*`, `(`, `)`, …
}

/// Rust source without comments, strings and character literals, as tokens.
fn tokens(src: &str) -> Vec<Token> {
    let chars: Vec<char> = src.chars().collect();
    let mut out = Vec::new();
    let mut i = 0;
    while i < chars.len() {
        let c = chars[i];
        let next = chars.get(i + 1).copied();
        if c == '/' && next == Some('/') {
            while i < chars.len() && chars[i] != '\n' {
                i += 1;
            }
        } else if c == '/' && next == Some('*') {
            let mut depth = 0;
            while i < chars.len() {
                if chars[i] == '/' && chars.get(i + 1) == Some(&'*') {
                    depth += 1;
                    i += 2;
                } else if chars[i] == '*' && chars.get(i + 1) == Some(&'/') {
                    depth -= 1;
                    i += 2;
                    if depth == 0 {
                        break;
                    }
                } else {
                    i += 1;
                }
            }
        } else if c == '"' {
            i = skip_string(&chars, i + 1);
        } else if let Some(end) = (!after_ident(&chars, i))
            .then(|| raw_string_start(&chars, i))
            .flatten()
        {
            i = end;
        } else if c == '\'' {
            // A character literal ('x', '\n', '\u{..}') or a lifetime ('a).
            if next == Some('\\') {
                i += 3;
                while i < chars.len() && chars[i] != '\'' {
                    i += 1;
                }
                i += 1;
            } else if chars.get(i + 2) == Some(&'\'') {
                i += 3;
            } else {
                i += 1; // a lifetime: its name follows as an identifier
            }
        } else if c.is_alphabetic() || c == '_' {
            let start = i;
            while i < chars.len() && (chars[i].is_alphanumeric() || chars[i] == '_') {
                i += 1;
            }
            out.push(Token::Ident(chars[start..i].iter().collect()));
        } else if c == ':' && next == Some(':') {
            out.push(Token::Path);
            i += 2;
        } else if c.is_whitespace() {
            i += 1;
        } else {
            out.push(Token::Punct(c));
            i += 1;
        }
    }
    out
}

/// Whether `chars[i]` continues an identifier (`br` in `abr"…"` is not a prefix).
fn after_ident(chars: &[char], i: usize) -> bool {
    i > 0 && (chars[i - 1].is_alphanumeric() || chars[i - 1] == '_')
}

/// Index just past the closing quote of a string whose body starts at `i`.
fn skip_string(chars: &[char], mut i: usize) -> usize {
    while i < chars.len() {
        match chars[i] {
            '\\' => i += 2,
            '"' => return i + 1,
            _ => i += 1,
        }
    }
    i
}

/// For `r"…"`, `r#"…"#`, `b"…"`, `br#"…"#` at `i`: the index past its end.
fn raw_string_start(chars: &[char], mut i: usize) -> Option<usize> {
    let byte = chars[i] == 'b';
    if byte {
        i += 1;
    }
    let raw = chars.get(i) == Some(&'r');
    if raw {
        i += 1;
    }
    if !byte && !raw {
        return None;
    }
    let mut hashes = 0;
    while chars.get(i) == Some(&'#') {
        hashes += 1;
        i += 1;
    }
    if chars.get(i) != Some(&'"') {
        return None;
    }
    if !raw {
        return Some(skip_string(chars, i + 1));
    }
    i += 1;
    while i < chars.len() {
        if chars[i] == '"' && (1..=hashes).all(|k| chars.get(i + k) == Some(&'#')) {
            return Some(i + 1 + hashes);
        }
        i += 1;
    }
    Some(i)
}

/// The paths of one `use` tree starting at `tokens[i]`, with the index past
/// it. `a::{b, c::{d, self}} as e` gives `a::b`, `a::c::d`, `a::c`.
fn use_tree(
    tokens: &[Token],
    mut i: usize,
    prefix: &[String],
    out: &mut Vec<Vec<String>>,
) -> usize {
    let mut path = prefix.to_vec();
    loop {
        match tokens.get(i) {
            Some(Token::Ident(name)) if name == "as" => {
                i += 2; // the new name
                out.push(path);
                return i;
            }
            Some(Token::Ident(name)) if name == "self" && !path.is_empty() => {
                i += 1;
            }
            Some(Token::Ident(name)) => {
                path.push(name.clone());
                i += 1;
            }
            Some(Token::Path) => i += 1,
            Some(Token::Punct('{')) => {
                i += 1;
                loop {
                    match tokens.get(i) {
                        Some(Token::Punct('}')) => return i + 1,
                        Some(Token::Punct(',')) => i += 1,
                        None => return i,
                        _ => i = use_tree(tokens, i, &path, out),
                    }
                }
            }
            Some(Token::Punct('*')) => {
                out.push(path);
                return i + 1;
            }
            _ => {
                out.push(path);
                return i;
            }
        }
    }
}

/// The crate modules one file names, as written (`crate::x`, `super::y`,
/// `self::z`, or a child module the file declares, `x::f()`), each with the
/// module it is written in (the file's own, or an inline `mod tests { … }`
/// inside it). A `pub use` of a child is the folder's facade and is skipped.
fn named_paths(file: &ModPath, src: &str) -> Vec<(ModPath, Vec<String>)> {
    let tokens = tokens(src);
    let mut out = Vec::new();
    // The file's child modules (`mod x;`), named by bare paths in it.
    let children: BTreeSet<&str> = tokens
        .windows(3)
        .filter_map(|w| match w {
            [Token::Ident(kw), Token::Ident(name), Token::Punct(';')] if kw == "mod" => {
                Some(name.as_str())
            }
            _ => None,
        })
        .collect();
    let child_path = |path: &[String]| -> Option<Vec<String>> {
        let first = path.first()?;
        children.contains(first.as_str()).then(|| {
            let mut p = vec!["self".to_string()];
            p.extend(path.iter().cloned());
            p
        })
    };
    // Inline modules open: (name, brace depth inside them).
    let mut inline: Vec<(String, usize)> = Vec::new();
    let mut depth = 0usize;
    let here = |inline: &[(String, usize)]| {
        let mut m = file.clone();
        m.extend(inline.iter().map(|(n, _)| n.clone()));
        m
    };
    let mut i = 0;
    while i < tokens.len() {
        match &tokens[i] {
            Token::Punct('{') => {
                depth += 1;
                i += 1;
            }
            Token::Punct('}') => {
                if inline.last().is_some_and(|(_, d)| *d == depth) {
                    inline.pop();
                }
                depth = depth.saturating_sub(1);
                i += 1;
            }
            Token::Ident(kw) if kw == "mod" => {
                if let (Some(Token::Ident(name)), Some(Token::Punct('{'))) =
                    (tokens.get(i + 1), tokens.get(i + 2))
                {
                    depth += 1;
                    inline.push((name.clone(), depth));
                    i += 3;
                } else {
                    i += 1;
                }
            }
            Token::Ident(kw) if kw == "use" => {
                let mut paths = Vec::new();
                let mut j = i + 1;
                if tokens.get(j) == Some(&Token::Path) {
                    j += 1; // `use ::std::…`
                }
                let end = use_tree(&tokens, j, &[], &mut paths);
                let m = here(&inline);
                let public = is_pub(&tokens, i);
                for p in paths {
                    if matches!(
                        p.first().map(String::as_str),
                        Some("crate" | "super" | "self")
                    ) {
                        out.push((m.clone(), p));
                    } else if let Some(p) = child_path(&p).filter(|_| !public && inline.is_empty())
                    {
                        out.push((m.clone(), p));
                    }
                }
                i = end.max(i + 1);
            }
            Token::Ident(start)
                if matches!(start.as_str(), "crate" | "super" | "self")
                    && tokens.get(i + 1) == Some(&Token::Path)
                    // `pub(in crate::x)` is a visibility, not an import.
                    && !matches!(i.checked_sub(1).and_then(|k| tokens.get(k)), Some(Token::Ident(w)) if w == "in") =>
            {
                let mut path = vec![start.clone()];
                let mut j = i + 1;
                while tokens.get(j) == Some(&Token::Path) {
                    match tokens.get(j + 1) {
                        Some(Token::Ident(n)) => {
                            path.push(n.clone());
                            j += 2;
                        }
                        _ => break,
                    }
                }
                out.push((here(&inline), path));
                i = j;
            }
            // `x::f()` with `x` a child module of this file, at the start of
            // a path (not `a::x::f`), outside inline modules (their scope
            // does not see the file's children by bare name).
            Token::Ident(name)
                if inline.is_empty()
                    && children.contains(name.as_str())
                    && tokens.get(i + 1) == Some(&Token::Path)
                    && !matches!(
                        i.checked_sub(1).and_then(|k| tokens.get(k)),
                        Some(Token::Path)
                    ) =>
            {
                let mut path = vec!["self".to_string(), name.clone()];
                let mut j = i + 1;
                while tokens.get(j) == Some(&Token::Path) {
                    match tokens.get(j + 1) {
                        Some(Token::Ident(n)) => {
                            path.push(n.clone());
                            j += 2;
                        }
                        _ => break,
                    }
                }
                out.push((file.clone(), path));
                i = j;
            }
            _ => i += 1,
        }
    }
    out
}

/// Whether the `use` at `tokens[i]` is `pub` (also `pub(crate)` and the like).
fn is_pub(tokens: &[Token], i: usize) -> bool {
    let mut k = i;
    if k > 0 && tokens[k - 1] == Token::Punct(')') {
        while k > 0 && tokens[k - 1] != Token::Punct('(') {
            k -= 1;
        }
        k = k.saturating_sub(1);
    }
    k > 0 && matches!(&tokens[k - 1], Token::Ident(w) if w == "pub")
}

/// Resolves `path`, written in module `at`, to the file module that
/// defines its target (the longest known prefix), if any.
fn resolve(at: &ModPath, path: &[String], files: &BTreeSet<ModPath>) -> Option<ModPath> {
    let mut base: ModPath = at.clone();
    let mut rest = path;
    match path.first().map(String::as_str) {
        Some("crate") => {
            base.clear();
            rest = &path[1..];
        }
        Some("super" | "self") => {
            while let Some(first) = rest.first() {
                match first.as_str() {
                    "super" => {
                        base.pop();
                    }
                    "self" => {}
                    _ => break,
                }
                rest = &rest[1..];
            }
        }
        _ => return None,
    }
    base.extend(rest.iter().cloned());
    (0..=base.len())
        .rev()
        .map(|k| base[..k].to_vec())
        .find(|p| files.contains(p))
}

/// Edges between file modules: (from, to), from != to.
fn file_edges(tree: &[(ModPath, String)]) -> BTreeSet<(ModPath, ModPath)> {
    let files: BTreeSet<ModPath> = tree.iter().map(|(p, _)| p.clone()).collect();
    let mut edges = BTreeSet::new();
    for (file, src) in tree {
        for (at, path) in named_paths(file, src) {
            if let Some(target) = resolve(&at, &path, &files) {
                if &target != file {
                    edges.insert((file.clone(), target));
                }
            }
        }
    }
    edges
}

/// One graph per folder: the folder's own file and its direct children.
/// Returns (folder, node edges).
fn folder_graphs(
    edges: &BTreeSet<(ModPath, ModPath)>,
) -> BTreeMap<ModPath, BTreeSet<(String, String)>> {
    let mut graphs: BTreeMap<ModPath, BTreeSet<(String, String)>> = BTreeMap::new();
    for (from, to) in edges {
        let common = from.iter().zip(to).take_while(|(a, b)| a == b).count();
        // The deepest folder holding both is where they are different
        // nodes; in the folders above they are one node.
        let node = |m: &ModPath| {
            m.get(common)
                .cloned()
                .unwrap_or_else(|| OWN_FILE.to_string())
        };
        // The crate root (lib.rs, main.rs) only declares the stages.
        if common == 0 && (from.is_empty() || to.is_empty()) {
            continue;
        }
        graphs
            .entry(from[..common].to_vec())
            .or_default()
            .insert((node(from), node(to)));
    }
    graphs
}

/// Every cycle found by a depth-first search (one per back edge).
fn cycles(edges: &BTreeSet<(String, String)>) -> Vec<Vec<String>> {
    let mut next: BTreeMap<&str, Vec<&str>> = BTreeMap::new();
    for (a, b) in edges {
        next.entry(a).or_default().push(b);
        next.entry(b).or_default();
    }
    #[derive(Clone, Copy, PartialEq)]
    enum Mark {
        New,
        Open,
        Done,
    }
    let mut mark: BTreeMap<&str, Mark> = next.keys().map(|k| (*k, Mark::New)).collect();
    let mut found = Vec::new();
    fn visit<'a>(
        n: &'a str,
        next: &BTreeMap<&'a str, Vec<&'a str>>,
        mark: &mut BTreeMap<&'a str, Mark>,
        stack: &mut Vec<&'a str>,
        found: &mut Vec<Vec<String>>,
    ) {
        mark.insert(n, Mark::Open);
        stack.push(n);
        for &m in &next[n] {
            match mark[m] {
                Mark::New => visit(m, next, mark, stack, found),
                Mark::Open => {
                    let from = stack.iter().position(|s| *s == m).expect("on the stack");
                    let mut cycle: Vec<String> =
                        stack[from..].iter().map(|s| s.to_string()).collect();
                    cycle.push(m.to_string());
                    found.push(cycle);
                }
                Mark::Done => {}
            }
        }
        stack.pop();
        mark.insert(n, Mark::Done);
    }
    let keys: Vec<&str> = next.keys().copied().collect();
    for k in keys {
        if mark[k] == Mark::New {
            visit(k, &next, &mut mark, &mut Vec::new(), &mut found);
        }
    }
    found
}

/// Folders whose own file (`mod.rs`) both reaches its children by bare
/// name and is used by them: cycles through that file are tolerated there,
/// cycles among the children are not. The test fails when one no longer
/// has such a cycle, so that the list only shrinks.
const KNOWN_FACADE_CYCLES: &[(&str, &str)] = &[];

const OWN_FILE: &str = "(folder's own file)";

/// The problems of a source tree: every cycle (except those through the
/// own file of a folder in `tolerated`), and every core module that names
/// `app`. Also returns the tolerated folders that had such a cycle.
fn problems_tolerating(
    tree: &[(ModPath, String)],
    tolerated: &[&str],
) -> (Vec<String>, BTreeSet<String>) {
    let edges = file_edges(tree);
    let mut out = Vec::new();
    let mut seen = BTreeSet::new();
    for (folder, graph) in folder_graphs(&edges) {
        let place = if folder.is_empty() {
            "src/".to_string()
        } else {
            format!("src/{}/", folder.join("/"))
        };
        let facade_ok = tolerated.contains(&place.as_str());
        // Without the own file's edges, what is left must be acyclic there.
        let graph: BTreeSet<(String, String)> = if facade_ok {
            if !cycles(&graph).is_empty() {
                seen.insert(place.clone());
            }
            graph
                .into_iter()
                .filter(|(a, b)| a != OWN_FILE && b != OWN_FILE)
                .collect()
        } else {
            graph
        };
        for cycle in cycles(&graph) {
            out.push(format!("import cycle in {place}: {}", cycle.join(" → ")));
        }
    }
    for (from, to) in &edges {
        let front = |m: &ModPath| m.first().is_some_and(|s| s == "app");
        if !from.is_empty() && !front(from) && front(to) {
            out.push(format!(
                "core module `{}` imports the front-end module `{}`",
                from.join("::"),
                to.join("::")
            ));
        }
    }
    (out, seen)
}

/// The problems of a source tree, nothing tolerated.
fn problems(tree: &[(ModPath, String)]) -> Vec<String> {
    problems_tolerating(tree, &[]).0
}

#[test]
fn src_has_no_import_cycle_and_the_core_never_imports_app() {
    let src = Path::new(env!("CARGO_MANIFEST_DIR")).join("src");
    let tree = module_files(&src);
    assert!(tree.len() > 50, "read {} files from {src:?}", tree.len());
    let folders: Vec<&str> = KNOWN_FACADE_CYCLES.iter().map(|(f, _)| *f).collect();
    let (problems, seen) = problems_tolerating(&tree, &folders);
    assert!(problems.is_empty(), "{}", problems.join("\n"));
    for folder in folders {
        assert!(
            seen.contains(folder),
            "{folder} has no cycle through its own file any more: remove it from KNOWN_FACADE_CYCLES"
        );
    }
}

#[test]
fn the_stage_graph_is_read_from_the_tree() {
    // Guard against a reader that finds nothing: edges every layout keeps.
    let src = Path::new(env!("CARGO_MANIFEST_DIR")).join("src");
    let edges = file_edges(&module_files(&src));
    let has = |from: &str, to: &str| {
        edges
            .iter()
            .any(|(a, b)| a.join("::") == from && b.join("::") == to)
    };
    assert!(has("file::runner::sink", "check"), "{edges:?}");
    assert!(has("notation::parse", "notation"), "{edges:?}");
}

fn tree(files: &[(&str, &str)]) -> Vec<(ModPath, String)> {
    files
        .iter()
        .map(|(path, text)| {
            let p = if path.is_empty() {
                Vec::new()
            } else {
                path.split("::").map(str::to_string).collect()
            };
            (p, text.to_string())
        })
        .collect()
}

#[test]
fn a_cycle_through_a_use_group_is_found_and_printed() {
    let t = tree(&[
        ("", "pub mod a; pub mod b; pub mod c;"),
        ("a", "use crate::{b::{self, Thing as T}, c};"),
        ("b", "pub struct Thing;"),
        ("c", "fn f() { let x = crate::a::g(); }"),
    ]);
    let found = problems(&t);
    assert_eq!(found, ["import cycle in src/: a → c → a"], "{found:?}");
}

#[test]
fn a_cycle_between_sibling_files_is_found_through_super() {
    let t = tree(&[
        ("fit", "pub mod regimes; pub mod from_model;"),
        ("fit::regimes", "fn g() -> u8 { super::from_model::h() }"),
        ("fit::from_model", "use super::regimes::{self};"),
    ]);
    let found = problems(&t);
    assert_eq!(found.len(), 1, "{found:?}");
    assert!(found[0].contains("src/fit/"), "{found:?}");
    assert!(found[0].contains("regimes") && found[0].contains("from_model"));
}

#[test]
fn a_folder_file_calling_a_child_that_uses_it_is_a_cycle() {
    // `balance/mod.rs` declares `explain` and calls into it; `explain` uses
    // a type of `balance`: a cycle, though no `crate::` path is written. A
    // re-export (`pub use explain::f;`) alone is the folder's facade.
    let cyclic = tree(&[
        (
            "balance",
            "mod explain;\nuse explain::signed;\npub struct System;",
        ),
        ("balance::explain", "use super::System;\npub fn signed() {}"),
    ]);
    let found = problems(&cyclic);
    assert_eq!(found.len(), 1, "{found:?}");
    assert!(found[0].contains("src/balance/"), "{found:?}");
    let call = tree(&[
        (
            "balance",
            "mod explain;\nfn f() { explain::signed(); }\npub struct System;",
        ),
        ("balance::explain", "use super::System;\npub fn signed() {}"),
    ]);
    assert_eq!(problems(&call).len(), 1);
    let facade = tree(&[
        (
            "balance",
            "mod explain;\npub use explain::signed;\npub struct System;",
        ),
        ("balance::explain", "use super::System;\npub fn signed() {}"),
    ]);
    assert!(problems(&facade).is_empty(), "{:?}", problems(&facade));
}

#[test]
fn a_tolerated_facade_still_refuses_cycles_among_its_children() {
    let t = tree(&[
        (
            "cli",
            "mod a; mod b; fn main() { a::run(); b::run(); }\npub fn fail() {}",
        ),
        (
            "cli::a",
            "use super::fail; use super::b::X; pub fn run() {}",
        ),
        (
            "cli::b",
            "use super::fail; use super::a::run; pub struct X;",
        ),
    ]);
    let (found, seen) = problems_tolerating(&t, &["src/cli/"]);
    assert!(seen.contains("src/cli/"));
    assert_eq!(found, ["import cycle in src/cli/: a → b → a"], "{found:?}");
}

#[test]
fn comments_strings_and_test_modules_do_not_mislead() {
    let t = tree(&[
        ("", "pub mod a; pub mod b;"),
        (
            "a",
            r##"
            // use crate::b;
            /* crate::b::x /* nested */ crate::b */
            const S: &str = "crate::b::x";
            const R: &str = r#"use crate::b;"#;
            const C: char = '"';
            fn f<'a>(x: &'a str) -> &'a str { x }
            "##,
        ),
        (
            "b",
            "use crate::a::f;\n#[cfg(test)]\nmod tests {\n    use super::*;\n    use self::inner::X;\n}",
        ),
    ]);
    let edges = file_edges(&t);
    let names: Vec<(String, String)> = edges
        .iter()
        .map(|(a, b)| (a.join("::"), b.join("::")))
        .collect();
    assert_eq!(names, [("b".to_string(), "a".to_string())]);
    assert!(problems(&t).is_empty());
}

#[test]
fn the_core_importing_the_front_end_is_refused() {
    let t = tree(&[
        ("", "pub mod app; pub mod check;"),
        ("app", "pub mod cli;"),
        ("app::cli", "use crate::check;"),
        ("check", "fn f() { crate::app::cli::main(); }"),
    ]);
    let found = problems(&t);
    assert!(
        found
            .iter()
            .any(|p| p.contains("core module `check` imports the front-end module `app::cli`")),
        "{found:?}"
    );
}

/// The files of `app::cli` every command may use: the pieces they share
/// and the model input helper.
const CLI_SHARED: &[&str] = &["shared", "model_input"];

/// Front-end imports known to break the rule, each waiting for the library
/// to offer what it takes from the workbench. The test fails when one is
/// gone, so that the list only shrinks.
const KNOWN_CLI_EXCEPTIONS: &[(&str, &str)] = &[];

/// The imports of one command's file that reach another command or the
/// workbench (`repl`, which starts the workbench, excepted).
fn cli_problems(edges: &BTreeSet<(ModPath, ModPath)>) -> Vec<(String, String)> {
    let mut out = Vec::new();
    for (from, to) in edges {
        let (Some("app"), Some("cli"), Some(command)) = (
            from.first().map(String::as_str),
            from.get(1).map(String::as_str),
            from.get(2).map(String::as_str),
        ) else {
            continue;
        };
        if CLI_SHARED.contains(&command) {
            continue;
        }
        let other_command = to.len() > 2
            && to[0] == "app"
            && to[1] == "cli"
            && to[2] != command
            && !CLI_SHARED.contains(&to[2].as_str());
        let workbench = to.len() > 1 && to[0] == "app" && to[1] == "workbench" && command != "repl";
        if other_command || workbench {
            let target = if workbench {
                "app::workbench".to_string()
            } else {
                to[..3].join("::")
            };
            out.push((from[..3].join("::"), target));
        }
    }
    out.sort();
    out.dedup();
    out
}

#[test]
fn cli_commands_import_neither_each_other_nor_the_workbench() {
    let src = Path::new(env!("CARGO_MANIFEST_DIR")).join("src");
    let found = cli_problems(&file_edges(&module_files(&src)));
    let known = |p: &(String, String)| {
        KNOWN_CLI_EXCEPTIONS
            .iter()
            .any(|(a, b)| p.0 == *a && p.1 == *b)
    };
    let new: Vec<_> = found.iter().filter(|p| !known(p)).collect();
    assert!(
        new.is_empty(),
        "commands importing each other or the workbench: {new:?}"
    );
    for (a, b) in KNOWN_CLI_EXCEPTIONS {
        assert!(
            found.iter().any(|p| p.0 == *a && p.1 == *b),
            "`{a}` no longer imports `{b}`: remove it from KNOWN_CLI_EXCEPTIONS"
        );
    }
}

#[test]
fn a_command_importing_another_is_found() {
    let t = tree(&[
        ("app", "pub mod cli; pub mod workbench;"),
        (
            "app::cli",
            "mod dope; mod balance; mod model_input; mod repl;",
        ),
        ("app::cli::balance", "pub struct Shared;"),
        ("app::cli::model_input", "pub fn gather() {}"),
        (
            "app::cli::dope",
            "use super::balance::Shared; use super::model_input::gather; use super::fail;",
        ),
        ("app::cli::repl", "use crate::app::workbench::Session;"),
        ("app::workbench", "pub struct Session;"),
    ]);
    let found = cli_problems(&file_edges(&t));
    assert_eq!(
        found,
        [(
            "app::cli::dope".to_string(),
            "app::cli::balance".to_string()
        )]
    );
}
