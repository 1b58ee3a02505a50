//! The layout rules of the source, read from `src/`:
//!
//! - no file in `src` over [`MAX_FILE_LINES`] lines;
//! - no function over [`MAX_FN_LINES`] lines (from the line of `fn` to the line of
//!   its closing brace);
//! - no import cycle between modules, at the granularity of top-level modules
//!   (`plan`, `simulate`, ...) and of files (`plan::validate`, `simulate::cohort`,
//!   ...), from every `crate::...` path (in `use` trees and in code) and every
//!   `super::...` path (a parent's relative paths to its own child files, such as
//!   `pub use validate::parse_plan` in `plan/mod.rs`, are the module tree itself and
//!   not counted; a path through an alias is not followed);
//! - the report layer (`src/report/`) neither touches files nor runs the simulation.
//!
//! The checkers are small scanners over the source with comments, strings and
//! character literals blanked out; each is tested on made-up inputs below so that
//! it can be seen to fail. The whole-`src` check runs on every `cargo test`.

use std::collections::{BTreeMap, BTreeSet};
use std::path::{Path, PathBuf};

const MAX_FILE_LINES: usize = 800;
const MAX_FN_LINES: usize = 120;

// ---------------------------------------------------------------------------
// Source text without comments, strings and character literals
// ---------------------------------------------------------------------------

/// `src` with every comment, string, byte string, raw string and character literal
/// replaced by spaces (line breaks kept), so that braces, `fn` and paths inside
/// them are not seen and line numbers stay right.
fn code_only(src: &str) -> String {
    let b: Vec<char> = src.chars().collect();
    let mut out = String::with_capacity(src.len());
    let blank = |c: char| if c == '\n' { '\n' } else { ' ' };
    let mut i = 0;
    while i < b.len() {
        let c = b[i];
        let next = b.get(i + 1).copied();
        // Line comment.
        if c == '/' && next == Some('/') {
            while i < b.len() && b[i] != '\n' {
                out.push(' ');
                i += 1;
            }
            continue;
        }
        // Block comment (nested).
        if c == '/' && next == Some('*') {
            let mut depth = 0;
            while i < b.len() {
                if b[i] == '/' && b.get(i + 1) == Some(&'*') {
                    depth += 1;
                    out.push_str("  ");
                    i += 2;
                } else if b[i] == '*' && b.get(i + 1) == Some(&'/') {
                    depth -= 1;
                    out.push_str("  ");
                    i += 2;
                    if depth == 0 {
                        break;
                    }
                } else {
                    out.push(blank(b[i]));
                    i += 1;
                }
            }
            continue;
        }
        let ident_before = i > 0 && (b[i - 1].is_alphanumeric() || b[i - 1] == '_');
        // Raw strings: r"..", r#".."#, br#".."#.
        if !ident_before && (c == 'r' || (c == 'b' && next == Some('r'))) {
            let mut j = i + if c == 'b' { 2 } else { 1 };
            let mut hashes = 0;
            while b.get(j) == Some(&'#') {
                hashes += 1;
                j += 1;
            }
            if b.get(j) == Some(&'"') {
                let mut end = j + 1;
                'find: while end < b.len() {
                    if b[end] == '"' && (0..hashes).all(|h| b.get(end + 1 + h) == Some(&'#')) {
                        end += 1 + hashes;
                        break 'find;
                    }
                    end += 1;
                }
                for &ch in &b[i..end.min(b.len())] {
                    out.push(blank(ch));
                }
                i = end;
                continue;
            }
        }
        // Strings and byte strings.
        if c == '"' || (c == 'b' && next == Some('"') && !ident_before) {
            let start = i;
            i += if c == 'b' { 2 } else { 1 };
            while i < b.len() && b[i] != '"' {
                if b[i] == '\\' {
                    i += 1;
                }
                i += 1;
            }
            i = (i + 1).min(b.len());
            for &ch in &b[start..i] {
                out.push(blank(ch));
            }
            continue;
        }
        // Character literals (not lifetimes): 'x', '\n', '\u{..}', b'x'.
        if c == '\'' {
            let close = if next == Some('\\') {
                (i + 2..b.len().min(i + 12)).find(|&j| b[j] == '\'')
            } else if b.get(i + 2) == Some(&'\'') {
                Some(i + 2)
            } else {
                None
            };
            if let Some(end) = close {
                for _ in i..=end {
                    out.push(' ');
                }
                i = end + 1;
                continue;
            }
        }
        out.push(c);
        i += 1;
    }
    out
}

// ---------------------------------------------------------------------------
// Long functions
// ---------------------------------------------------------------------------

/// One function: its name, the line of `fn` (from 1) and its length in lines.
#[derive(Debug, PartialEq)]
struct FnSpan {
    name: String,
    line: usize,
    lines: usize,
}

fn is_ident(c: char) -> bool {
    c.is_alphanumeric() || c == '_'
}

/// Every function with a body in `src` (nested ones too).
fn functions(src: &str) -> Vec<FnSpan> {
    let code: Vec<char> = code_only(src).chars().collect();
    let line_at = |pos: usize| code[..pos].iter().filter(|&&c| c == '\n').count() + 1;
    let mut out = Vec::new();
    let mut i = 0;
    while i + 2 < code.len() {
        let is_fn = code[i] == 'f'
            && code[i + 1] == 'n'
            && code[i + 2].is_whitespace()
            && (i == 0 || !is_ident(code[i - 1]));
        if !is_fn {
            i += 1;
            continue;
        }
        let mut j = i + 2;
        while j < code.len() && code[j].is_whitespace() {
            j += 1;
        }
        let name: String = code[j..].iter().take_while(|c| is_ident(**c)).collect();
        // The body opens at the first `{` before any `;` (a declaration has none),
        // outside the parentheses and angle brackets of the signature.
        let mut k = j + name.len();
        let mut paren = 0i32;
        let mut body = None;
        while k < code.len() {
            match code[k] {
                '(' | '[' => paren += 1,
                ')' | ']' => paren -= 1,
                ';' if paren == 0 => break,
                '{' if paren == 0 => {
                    body = Some(k);
                    break;
                }
                _ => {}
            }
            k += 1;
        }
        if let Some(open) = body {
            let mut depth = 0;
            let mut end = open;
            for (p, &c) in code.iter().enumerate().skip(open) {
                if c == '{' {
                    depth += 1;
                } else if c == '}' {
                    depth -= 1;
                    if depth == 0 {
                        end = p;
                        break;
                    }
                }
            }
            let (first, last) = (line_at(i), line_at(end));
            out.push(FnSpan {
                name,
                line: first,
                lines: last - first + 1,
            });
        }
        i += 2;
    }
    out
}

// ---------------------------------------------------------------------------
// The module graph
// ---------------------------------------------------------------------------

/// The module path of a file under `src` ("" for lib.rs and main.rs).
fn module_of(rel: &Path) -> String {
    let mut parts: Vec<String> = rel
        .iter()
        .map(|p| p.to_string_lossy().into_owned())
        .collect();
    let last = parts.pop().unwrap_or_default();
    let stem = last.trim_end_matches(".rs");
    if !(stem == "mod" || (parts.is_empty() && (stem == "lib" || stem == "main"))) {
        parts.push(stem.to_string());
    }
    parts.join("::")
}

/// Every path after `crate::` or `super::` in `code` (comments and strings already
/// blanked), with `use` trees expanded: `crate::{a::{b, c}, d}` gives `a::b`,
/// `a::c`, `d`. `super::` paths come as `("super", segments)`.
fn paths(code: &str) -> Vec<(String, Vec<String>)> {
    let c: Vec<char> = code.chars().collect();
    let mut out = Vec::new();
    let mut i = 0;
    while i < c.len() {
        let starts = |word: &str| {
            let w: Vec<char> = word.chars().collect();
            c.len() >= i + w.len()
                && c[i..i + w.len()] == w[..]
                && (i == 0 || !(is_ident(c[i - 1]) || c[i - 1] == '$' || c[i - 1] == ':'))
        };
        let root = if starts("crate::") {
            Some(("crate", 7))
        } else if starts("super::") {
            Some(("super", 7))
        } else {
            None
        };
        if let Some((root, len)) = root {
            let mut j = i + len;
            let mut found = Vec::new();
            parse_tree(&c, &mut j, Vec::new(), &mut found);
            for p in found {
                out.push((root.to_string(), p));
            }
            i = j.max(i + 1);
        } else {
            i += 1;
        }
    }
    out
}

/// Parse a path or a use tree at `c[*j..]` whose segments so far are `prefix`.
fn parse_tree(c: &[char], j: &mut usize, prefix: Vec<String>, out: &mut Vec<Vec<String>>) {
    let skip_ws = |j: &mut usize| {
        while *j < c.len() && c[*j].is_whitespace() {
            *j += 1;
        }
    };
    let mut segs = prefix;
    loop {
        skip_ws(j);
        if *j < c.len() && c[*j] == '{' {
            *j += 1;
            loop {
                skip_ws(j);
                if *j >= c.len() || c[*j] == '}' {
                    *j += 1;
                    break;
                }
                parse_tree(c, j, segs.clone(), out);
                skip_ws(j);
                if *j < c.len() && c[*j] == ',' {
                    *j += 1;
                }
            }
            return;
        }
        let ident: String = c[*j..].iter().take_while(|ch| is_ident(**ch)).collect();
        if ident.is_empty() {
            // `*` or the end of the path.
            if *j < c.len() && c[*j] == '*' {
                *j += 1;
            }
            break;
        }
        *j += ident.chars().count();
        if ident != "self" {
            segs.push(ident);
        }
        skip_ws(j);
        if c.len() >= *j + 2 && c[*j] == ':' && c[*j + 1] == ':' {
            *j += 2;
            continue;
        }
        // `x as y`: the alias is not a path segment.
        let rest: String = c[*j..].iter().take(3).collect();
        if rest == "as " {
            *j += 3;
            skip_ws(j);
            *j += c[*j..].iter().take_while(|ch| is_ident(**ch)).count();
        }
        break;
    }
    out.push(segs);
}

/// The file modules each file refers to, from its source: `files` maps each file's
/// module path to its source text. A path resolves to the longest file module that
/// is a prefix of it; references to the file itself are dropped.
fn file_graph(files: &BTreeMap<String, String>) -> BTreeMap<String, BTreeSet<String>> {
    let known: BTreeSet<&str> = files.keys().map(String::as_str).collect();
    let mut g = BTreeMap::new();
    for (module, src) in files {
        let mut edges = BTreeSet::new();
        for (root, segs) in paths(&code_only(src)) {
            let mut full: Vec<String> = if root == "super" {
                // In `a::b` (a file a/b.rs) super is `a`; in `a` (a/mod.rs or a.rs)
                // it is the crate root.
                let mut m: Vec<String> = module.split("::").map(String::from).collect();
                m.pop();
                m
            } else {
                Vec::new()
            };
            full.extend(segs);
            let target = (1..=full.len())
                .rev()
                .map(|n| full[..n].join("::"))
                .find(|p| known.contains(p.as_str()));
            if let Some(t) = target
                && t != *module
                && !t.is_empty()
            {
                edges.insert(t);
            }
        }
        g.insert(module.clone(), edges);
    }
    g
}

/// The same graph between top-level modules.
fn top_graph(files: &BTreeMap<String, BTreeSet<String>>) -> BTreeMap<String, BTreeSet<String>> {
    let top = |m: &str| m.split("::").next().unwrap_or("").to_string();
    let mut g: BTreeMap<String, BTreeSet<String>> = BTreeMap::new();
    for (from, tos) in files {
        let entry = g.entry(top(from)).or_default();
        for to in tos {
            if top(to) != top(from) {
                entry.insert(top(to));
            }
        }
    }
    g
}

/// The strongly connected components of more than one node (or a node with an edge
/// to itself): every set of modules that import each other in a cycle, sorted.
fn cycles(g: &BTreeMap<String, BTreeSet<String>>) -> Vec<Vec<String>> {
    // Tarjan's algorithm.
    struct T<'a> {
        g: &'a BTreeMap<String, BTreeSet<String>>,
        index: BTreeMap<&'a str, usize>,
        low: BTreeMap<&'a str, usize>,
        stack: Vec<&'a str>,
        on: BTreeSet<&'a str>,
        next: usize,
        out: Vec<Vec<String>>,
    }
    fn visit<'a>(t: &mut T<'a>, v: &'a str) {
        t.index.insert(v, t.next);
        t.low.insert(v, t.next);
        t.next += 1;
        t.stack.push(v);
        t.on.insert(v);
        let g = t.g;
        for w in g.get(v).into_iter().flatten() {
            let w = w.as_str();
            if !t.index.contains_key(w) {
                visit(t, w);
                let lw = t.low[w];
                let lv = t.low.get_mut(v).unwrap();
                *lv = (*lv).min(lw);
            } else if t.on.contains(w) {
                let iw = t.index[w];
                let lv = t.low.get_mut(v).unwrap();
                *lv = (*lv).min(iw);
            }
        }
        if t.low[v] == t.index[v] {
            let mut comp = Vec::new();
            loop {
                let w = t.stack.pop().unwrap();
                t.on.remove(w);
                comp.push(w.to_string());
                if w == v {
                    break;
                }
            }
            let self_loop = g.get(v).is_some_and(|e| e.contains(v));
            if comp.len() > 1 || self_loop {
                comp.sort();
                t.out.push(comp);
            }
        }
    }
    let mut t = T {
        g,
        index: BTreeMap::new(),
        low: BTreeMap::new(),
        stack: Vec::new(),
        on: BTreeSet::new(),
        next: 0,
        out: Vec::new(),
    };
    let nodes: BTreeSet<&str> = g
        .iter()
        .flat_map(|(k, v)| std::iter::once(k.as_str()).chain(v.iter().map(String::as_str)))
        .collect();
    for v in nodes {
        if !t.index.contains_key(v) {
            visit(&mut t, v);
        }
    }
    t.out.sort();
    t.out
}

// ---------------------------------------------------------------------------
// The report layer
// ---------------------------------------------------------------------------

/// What a renderer must not do, as code to look for: touch the file system or run
/// the simulation.
const REPORT_FORBIDDEN: &[&str] = &[
    "std::fs",
    "File::create",
    "File::open",
    "OpenOptions",
    "fs::write",
    "fs::rename",
    "create_dir",
    "crate::simulate::run",
    "simulate::run(",
    "simulate(",
    "simulate_",
];

/// The forbidden uses in one renderer's source: (line, the first thing found there).
fn report_violations(src: &str) -> Vec<(usize, &'static str)> {
    let code = code_only(src);
    let mut out = Vec::new();
    'lines: for (n, line) in code.lines().enumerate() {
        for pat in REPORT_FORBIDDEN {
            let mut from = 0;
            while let Some(p) = line[from..].find(pat) {
                let at = from + p;
                let before = line[..at].chars().next_back();
                // Whole words only: `presimulate(` or `fn simulate(` are not calls.
                let word_start = before.is_none_or(|c| !is_ident(c));
                let defines = line[..at].trim_end().ends_with("fn");
                if word_start && !defines {
                    out.push((n + 1, *pat));
                    continue 'lines;
                }
                from = at + pat.len();
            }
        }
    }
    out
}

// ---------------------------------------------------------------------------
// Reading src/
// ---------------------------------------------------------------------------

/// Every `.rs` file under `dir`, by its path relative to `dir`.
fn rust_files(dir: &Path) -> BTreeMap<PathBuf, String> {
    fn walk(root: &Path, dir: &Path, out: &mut BTreeMap<PathBuf, String>) {
        let mut entries: Vec<PathBuf> = std::fs::read_dir(dir)
            .unwrap_or_else(|e| panic!("list {}: {e}", dir.display()))
            .map(|e| e.unwrap().path())
            .collect();
        entries.sort();
        for p in entries {
            if p.is_dir() {
                walk(root, &p, out);
            } else if p.extension().is_some_and(|x| x == "rs") {
                let text = std::fs::read_to_string(&p)
                    .unwrap_or_else(|e| panic!("read {}: {e}", p.display()));
                out.insert(p.strip_prefix(root).unwrap().to_path_buf(), text);
            }
        }
    }
    let mut out = BTreeMap::new();
    walk(dir, dir, &mut out);
    out
}

/// Every breach of the layout rules in the files of a source tree.
fn layout_problems(files: &BTreeMap<PathBuf, String>) -> Vec<String> {
    let mut problems = Vec::new();
    for (rel, src) in files {
        let n = src.lines().count();
        if n > MAX_FILE_LINES {
            problems.push(format!(
                "{}: {n} lines (at most {MAX_FILE_LINES})",
                rel.display()
            ));
        }
        for f in functions(src) {
            if f.lines > MAX_FN_LINES {
                problems.push(format!(
                    "{}:{}: fn {} is {} lines (at most {MAX_FN_LINES})",
                    rel.display(),
                    f.line,
                    f.name,
                    f.lines
                ));
            }
        }
        if rel.starts_with("report") {
            for (line, what) in report_violations(src) {
                problems.push(format!(
                    "{}:{line}: the report layer uses `{what}` (renderers neither touch files nor simulate)",
                    rel.display()
                ));
            }
        }
    }
    // lib.rs and main.rs only declare and call the modules; the graph is between
    // the modules themselves.
    let modules: BTreeMap<String, String> = files
        .iter()
        .map(|(rel, src)| (module_of(rel), src.clone()))
        .filter(|(m, _)| !m.is_empty())
        .collect();
    let fg = file_graph(&modules);
    for c in cycles(&top_graph(&fg)) {
        problems.push(format!(
            "import cycle between top-level modules: {}",
            c.join(", ")
        ));
    }
    for c in cycles(&fg) {
        problems.push(format!("import cycle between files: {}", c.join(", ")));
    }
    problems
}

#[test]
fn src_keeps_the_layout_rules() {
    let src = Path::new(env!("CARGO_MANIFEST_DIR")).join("src");
    let files = rust_files(&src);
    assert!(files.len() > 10, "read {} files from src", files.len());
    let problems = layout_problems(&files);
    assert!(
        problems.is_empty(),
        "{} breach(es) of the layout rules:\n{}",
        problems.len(),
        problems.join("\n")
    );
}

// ---------------------------------------------------------------------------
// The checkers on made-up inputs
// ---------------------------------------------------------------------------

fn tree(files: &[(&str, &str)]) -> BTreeMap<PathBuf, String> {
    files
        .iter()
        .map(|(p, s)| (PathBuf::from(p), s.to_string()))
        .collect()
}

/// A function of `n` lines in all (signature and closing brace included).
fn fn_of_lines(name: &str, n: usize) -> String {
    let mut s = format!("fn {name}() {{\n");
    for i in 0..n - 2 {
        s.push_str(&format!("    let _x{i} = {i};\n"));
    }
    s.push_str("}\n");
    s
}

#[test]
fn comments_strings_and_chars_are_blanked_with_lines_kept() {
    let src = "let a = \"{ fn x() {\"; // fn y() {\nlet b = '{'; /* } \n fn z */ let c = r#\"}\"#;\nlet l: &'static str = \"\\\"}\";";
    let code = code_only(src);
    assert_eq!(code.lines().count(), src.lines().count());
    assert!(!code.contains('{') && !code.contains('}'), "{code}");
    assert!(!code.contains("fn"), "{code}");
    assert!(
        code.contains("'static"),
        "a lifetime is not a character: {code}"
    );
    assert!(functions(src).is_empty());
}

#[test]
fn a_long_function_is_caught_and_a_short_one_is_not() {
    let src = format!(
        "{}\nimpl X {{\n{}}}\ntrait T {{ fn declared(&self) -> u8; }}\n",
        fn_of_lines("short", MAX_FN_LINES),
        fn_of_lines("long", MAX_FN_LINES + 1)
    );
    let fns = functions(&src);
    let spans: Vec<(&str, usize)> = fns.iter().map(|f| (f.name.as_str(), f.lines)).collect();
    assert_eq!(
        spans,
        [("short", MAX_FN_LINES), ("long", MAX_FN_LINES + 1)],
        "a declaration without a body is no function"
    );
    let problems = layout_problems(&tree(&[("a.rs", &src)]));
    assert_eq!(problems.len(), 1, "{problems:?}");
    assert!(problems[0].contains("fn long is 121 lines"), "{problems:?}");
    // A brace in a string inside the function does not end it early.
    let tricky = "fn f() {\n    let s = \"}\";\n    let c = '}';\n    g();\n}\n";
    assert_eq!(functions(tricky)[0].lines, 5);
}

#[test]
fn a_long_file_is_caught() {
    let long = "// a line\n".repeat(MAX_FILE_LINES + 1);
    let ok = "// a line\n".repeat(MAX_FILE_LINES);
    let problems = layout_problems(&tree(&[("long.rs", &long), ("ok.rs", &ok)]));
    assert_eq!(problems, ["long.rs: 801 lines (at most 800)"]);
}

#[test]
fn use_trees_expand_into_paths() {
    let code = code_only(
        "use crate::{a::{b, c::D as E}, f::*, g::{self, h}};\nfn x() { crate::k::l(); super::m::N; $crate::no; }\npub(crate) fn y() {}",
    );
    let found: Vec<String> = paths(&code)
        .into_iter()
        .map(|(r, s)| format!("{r}:{}", s.join("::")))
        .collect();
    assert_eq!(
        found,
        [
            "crate:a::b",
            "crate:a::c::D",
            "crate:f",
            "crate:g",
            "crate:g::h",
            "crate:k::l",
            "super:m::N"
        ]
    );
}

#[test]
fn a_cycle_between_files_and_between_top_level_modules_is_caught() {
    // plan/mod.rs -> activity/targets.rs -> plan (through crate::plan::Plan): a
    // cycle of files and of top-level modules. report/fit.rs -> app.rs -> report is
    // a second one, through super:: and a use tree.
    let files = tree(&[
        (
            "lib.rs",
            "pub mod plan; pub mod activity; pub mod report; pub mod app;",
        ),
        (
            "plan/mod.rs",
            "use crate::activity::targets::Target;\npub struct Plan;",
        ),
        ("plan/validate.rs", "use super::Plan;"),
        ("activity/mod.rs", "pub mod targets;"),
        (
            "activity/targets.rs",
            "pub struct Target(crate::plan::Plan);",
        ),
        ("report/mod.rs", "pub mod fit;"),
        ("report/fit.rs", "use crate::{app::run_fit, plan::Plan};"),
        ("app.rs", "fn go() { crate::report::fit::render(); }"),
        ("simulate.rs", "use crate::plan::validate::check;"),
    ]);
    let problems = layout_problems(&files);
    assert!(
        problems.contains(&"import cycle between top-level modules: activity, plan".to_string()),
        "{problems:?}"
    );
    assert!(
        problems.contains(&"import cycle between top-level modules: app, report".to_string()),
        "{problems:?}"
    );
    assert!(
        problems.contains(&"import cycle between files: activity::targets, plan".to_string()),
        "{problems:?}"
    );
    assert!(
        problems.contains(&"import cycle between files: app, report::fit".to_string()),
        "{problems:?}"
    );
    assert_eq!(problems.len(), 4, "{problems:?}");
    // The graph itself: a child using its parent through super:: is an edge, and a
    // path resolves to the longest file module it names.
    let modules: BTreeMap<String, String> = files
        .iter()
        .map(|(p, s)| (module_of(p), s.clone()))
        .filter(|(m, _)| !m.is_empty())
        .collect();
    let g = file_graph(&modules);
    assert_eq!(g["plan::validate"], BTreeSet::from(["plan".to_string()]));
    assert_eq!(
        g["simulate"],
        BTreeSet::from(["plan::validate".to_string()])
    );
    // Without the edge back, no cycle.
    let acyclic = tree(&[
        ("plan/mod.rs", "pub struct Plan;"),
        (
            "activity/targets.rs",
            "pub struct Target(crate::plan::Plan);",
        ),
    ]);
    assert!(layout_problems(&acyclic).is_empty());
}

#[test]
fn a_renderer_that_writes_files_or_simulates_is_caught() {
    let files = tree(&[
        (
            "report/chart.rs",
            "use std::fs;\npub fn write_charts() { std::fs::File::create(\"x\"); }",
        ),
        (
            "report/cohort.rs",
            "fn f(p: &Plan) { let s = crate::simulate::run(p); }\nfn g(p: &Plan) { simulate(p); }",
        ),
        (
            // Words in comments and strings, and a name that merely contains the
            // word, are not uses.
            "report/ok.rs",
            "// writes with std::fs elsewhere\nfn h() -> &'static str { \"simulate(\" }\nfn presimulate() {}",
        ),
        (
            "simulate/mod.rs",
            "pub fn simulate() { std::fs::write(\"a\", \"b\"); }",
        ),
    ]);
    let problems = layout_problems(&files);
    let lines: Vec<&str> = problems
        .iter()
        .map(|p| p.split(": the report layer").next().unwrap())
        .collect();
    assert_eq!(
        lines,
        [
            "report/chart.rs:1",
            "report/chart.rs:2",
            "report/cohort.rs:1",
            "report/cohort.rs:2"
        ],
        "{problems:?}"
    );
}

#[test]
fn the_scanner_reads_the_real_source() {
    // Not the rules (`src_keeps_the_layout_rules` holds those), but the scanner on every file of
    // src: each file's functions are found and none runs past the end of its file.
    let src = Path::new(env!("CARGO_MANIFEST_DIR")).join("src");
    let files = rust_files(&src);
    let mut total = 0;
    for (rel, text) in &files {
        let n = text.lines().count();
        for f in functions(text) {
            assert!(f.line + f.lines - 1 <= n.max(1), "{}: {f:?}", rel.display());
            total += 1;
        }
    }
    assert!(total > 100, "{total} functions found in src");
}
