//! The shape of the source tree, checked from the text of `src/`: no import
//! circle between files or between top-level modules, the top-level modules
//! in one order with at most two arrows pointing back up it, and no source
//! file over 600 lines. Imports are read from `crate::`, `super::` and
//! `self::` paths outside test code (`#[cfg(test)]` items and the files they
//! declare), after comments and literals are blanked.

use std::collections::{BTreeMap, BTreeSet};
use std::path::{Path, PathBuf};

/// The top-level modules from the bottom up: a module may use any module
/// before it. Arrows that point the other way are counted.
const LAYERS: &[&str] = &[
    "finding",
    "scale",
    "envelope",
    "alarm",
    "schemes",
    "parse",
    "detect",
    "readout",
    "demo",
    "blind",
    "source",
    "glob",
    "settings",
    "pipeline",
    "evaluate",
    "history",
    "report",
    "report_plot",
    "scan",
    "limits",
    "outfile",
    "act",
    "guard",
    "fleet",
    "metrics",
    "app",
    "ui",
    "tui",
    "cli",
    "commands",
];

/// Arrows up the order that are allowed, with why.
const BACK_UP: &[(&str, &str, &str)] = &[(
    "ui",
    "app",
    "the panels draw the dashboard's state, which the loop owns",
)];

/// The longest a source file may be.
const MAX_LINES: usize = 600;

/// Files over the limit today, each being split by the module's owner. A file
/// listed here that is back within the limit fails the test, so the list only
/// shrinks.
const OVER_LIMIT_NOW: &[&str] = &[];

/// A module path inside the crate, e.g. `["pipeline", "drive"]`.
type ModPath = Vec<String>;

/// Every `.rs` file under `dir`, sorted.
fn rust_files(dir: &Path) -> Vec<PathBuf> {
    let mut out = Vec::new();
    let mut stack = vec![dir.to_path_buf()];
    while let Some(d) = stack.pop() {
        for e in std::fs::read_dir(&d).unwrap() {
            let p = e.unwrap().path();
            if p.is_dir() {
                stack.push(p);
            } else if p.extension().is_some_and(|x| x == "rs") {
                out.push(p);
            }
        }
    }
    out.sort();
    out
}

/// The module a file under `src/` defines (`lib.rs` and `main.rs` are the root).
fn module_of(src: &Path, file: &Path) -> ModPath {
    let rel = file.strip_prefix(src).unwrap().with_extension("");
    let mut parts: ModPath = rel
        .components()
        .map(|c| c.as_os_str().to_string_lossy().into_owned())
        .collect();
    if matches!(
        parts.last().map(String::as_str),
        Some("mod" | "lib" | "main")
    ) {
        parts.pop();
    }
    parts
}

/// The text with comments, string, byte-string and char literals blanked
/// (replaced by spaces; newlines kept), so braces and paths in them are not
/// read as code.
fn blank(text: &str) -> String {
    let b = text.as_bytes();
    let mut out = b.to_vec();
    let mut i = 0;
    let wipe = |out: &mut Vec<u8>, from: usize, to: usize| {
        for c in &mut out[from..to.min(b.len())] {
            if *c != b'\n' {
                *c = b' ';
            }
        }
    };
    while i < b.len() {
        let rest = &b[i..];
        if rest.starts_with(b"//") {
            let end = rest
                .iter()
                .position(|&c| c == b'\n')
                .map_or(b.len(), |k| i + k);
            wipe(&mut out, i, end);
            i = end;
        } else if rest.starts_with(b"/*") {
            let mut depth = 0;
            let mut j = i;
            while j < b.len() {
                if b[j..].starts_with(b"/*") {
                    depth += 1;
                    j += 2;
                } else if b[j..].starts_with(b"*/") {
                    depth -= 1;
                    j += 2;
                    if depth == 0 {
                        break;
                    }
                } else {
                    j += 1;
                }
            }
            wipe(&mut out, i, j);
            i = j;
        } else if let Some(len) = raw_string_len(rest) {
            wipe(&mut out, i, i + len);
            i += len;
        } else if rest[0] == b'"' {
            let mut j = i + 1;
            while j < b.len() && b[j] != b'"' {
                j += if b[j] == b'\\' { 2 } else { 1 };
            }
            wipe(&mut out, i, j + 1);
            i = j + 1;
        } else if rest[0] == b'\'' {
            // A char literal ('x', '\n', '\u{..}', 'é') or a lifetime ('a).
            let close = if rest.get(1) == Some(&b'\\') {
                rest.iter().skip(2).position(|&c| c == b'\'').map(|k| k + 2)
            } else {
                let ch = text[i + 1..].chars().next().map_or(1, char::len_utf8);
                (rest.get(1 + ch) == Some(&b'\'')).then_some(1 + ch)
            };
            match close {
                Some(k) => {
                    wipe(&mut out, i, i + k + 1);
                    i += k + 1;
                }
                None => i += 1,
            }
        } else {
            i += 1;
        }
    }
    String::from_utf8_lossy(&out).into_owned()
}

/// The length of a raw (byte) string literal starting `rest`, if one does.
fn raw_string_len(rest: &[u8]) -> Option<usize> {
    let start = if rest.starts_with(b"br") {
        2
    } else if rest.starts_with(b"r") {
        1
    } else {
        return None;
    };
    let hashes = rest[start..].iter().take_while(|&&c| c == b'#').count();
    if rest.get(start + hashes) != Some(&b'"') {
        return None;
    }
    let mut close = vec![b'"'];
    close.extend(std::iter::repeat_n(b'#', hashes));
    let body = start + hashes + 1;
    rest[body..]
        .windows(close.len())
        .position(|w| w == close.as_slice())
        .map(|k| body + k + close.len())
}

/// The end (exclusive) of the item that starts at or after `from`: through
/// its matching `}` if a `{` comes before any `;`, else through the `;`.
fn item_end(code: &[u8], from: usize) -> usize {
    let mut depth = 0usize;
    for (k, &c) in code.iter().enumerate().skip(from) {
        match c {
            b'{' => depth += 1,
            b'}' => {
                depth -= 1;
                if depth == 0 {
                    return k + 1;
                }
            }
            b';' if depth == 0 => return k + 1,
            _ => {}
        }
    }
    code.len()
}

/// Code without its `#[cfg(test)]` items, and the names of test-only
/// modules it declares as files (`#[cfg(test)] mod name;`).
fn without_tests(code: &str) -> (String, Vec<String>) {
    let mut out = code.as_bytes().to_vec();
    let mut test_files = Vec::new();
    let mut from = 0;
    while let Some(k) = code[from..].find("#[cfg(test)]") {
        let at = from + k;
        let after = at + "#[cfg(test)]".len();
        let end = item_end(code.as_bytes(), after);
        let item = code[after..end].trim();
        if let Some(name) = item
            .strip_prefix("mod ")
            .and_then(|r| r.strip_suffix(';'))
            .map(str::trim)
        {
            test_files.push(name.to_string());
        }
        for c in &mut out[at..end] {
            if *c != b'\n' {
                *c = b' ';
            }
        }
        from = end;
    }
    (String::from_utf8_lossy(&out).into_owned(), test_files)
}

/// Expand one `use` tree (`a::{b, c::{d, e}}`) into its paths.
fn expand(tree: &str) -> Vec<String> {
    let tree: String = tree.chars().filter(|c| !c.is_whitespace()).collect();
    let Some(open) = tree.find('{') else {
        return vec![tree];
    };
    let prefix = &tree[..open];
    let inner = &tree[open + 1..tree.len() - 1];
    let mut parts = Vec::new();
    let mut depth = 0;
    let mut start = 0;
    for (k, c) in inner.char_indices() {
        match c {
            '{' => depth += 1,
            '}' => depth -= 1,
            ',' if depth == 0 => {
                parts.push(&inner[start..k]);
                start = k + 1;
            }
            _ => {}
        }
    }
    parts.push(&inner[start..]);
    parts
        .into_iter()
        .filter(|p| !p.is_empty())
        .flat_map(|p| expand(p).into_iter().map(move |q| format!("{prefix}{q}")))
        .collect()
}

/// `tree` without its renames (`d as e` → `d`).
fn drop_renames(tree: &str) -> String {
    let mut out = String::new();
    let mut rest = tree;
    while let Some(k) = rest.find(" as ") {
        out.push_str(&rest[..k]);
        rest = rest[k + 4..].trim_start();
        let name = rest
            .find(|c: char| !(c.is_alphanumeric() || c == '_'))
            .unwrap_or(rest.len());
        rest = &rest[name..];
    }
    out.push_str(rest);
    out
}

/// Every path the code names that starts with `crate`, `super` or `self`,
/// split at `::` (`use` trees expanded, renames dropped), `use` items first.
fn paths(code: &str) -> Vec<Vec<String>> {
    let mut out = Vec::new();
    let mut inline = code.as_bytes().to_vec();
    let bytes = code.as_bytes();
    let ident = |c: u8| c.is_ascii_alphanumeric() || c == b'_';
    let mut k = 0;
    while let Some(j) = code[k..].find("use ") {
        let at = k + j;
        if at > 0 && ident(bytes[at - 1]) {
            k = at + 4;
            continue;
        }
        let end = code[at..].find(';').map_or(code.len(), |e| at + e);
        for p in expand(&drop_renames(&code[at + 4..end])) {
            out.push(p.split("::").map(str::to_string).collect());
        }
        inline[at..end].fill(b' ');
        k = end;
    }
    // Paths written inline, e.g. `crate::schemes::names::choose(...)`.
    let inline = String::from_utf8_lossy(&inline).into_owned();
    let mut starts: Vec<usize> = ["crate::", "super::", "self::"]
        .iter()
        .flat_map(|w| inline.match_indices(w).map(|(i, _)| i))
        .collect();
    starts.sort_unstable();
    for i in starts {
        if i > 0 && (ident(bytes[i - 1]) || bytes[i - 1] == b':') {
            continue;
        }
        let tail: String = inline[i..]
            .chars()
            .take_while(|c| c.is_ascii_alphanumeric() || *c == '_' || *c == ':')
            .collect();
        out.push(
            tail.split("::")
                .filter(|s| !s.is_empty())
                .map(str::to_string)
                .collect(),
        );
    }
    out
}

/// The file module a path leads to from module `here`, among `modules`:
/// the longest known prefix after `crate`/`super`/`self` are resolved.
fn target(here: &ModPath, path: &[String], modules: &BTreeSet<ModPath>) -> Option<ModPath> {
    let (mut base, rest): (ModPath, &[String]) = match path.first().map(String::as_str) {
        Some("crate") => (Vec::new(), &path[1..]),
        Some("self") => (here.clone(), &path[1..]),
        Some("super") => {
            // In `a/b.rs` (module a::b) `super` is `a`; likewise in `a/b/mod.rs`.
            let mut m = here.clone();
            m.pop();
            let mut r = &path[1..];
            while r.first().map(String::as_str) == Some("super") {
                m.pop();
                r = &r[1..];
            }
            (m, r)
        }
        _ => return None,
    };
    let mut best = None;
    if modules.contains(&base) {
        best = Some(base.clone());
    }
    for seg in rest {
        base.push(seg.clone());
        if modules.contains(&base) {
            best = Some(base.clone());
        }
    }
    best
}

struct Tree {
    /// File module → the file modules it imports (itself and its ancestors excluded).
    edges: BTreeMap<ModPath, BTreeSet<ModPath>>,
}

fn read_tree() -> Tree {
    let src = Path::new(env!("CARGO_MANIFEST_DIR")).join("src");
    let mut texts = BTreeMap::new();
    let mut modules = BTreeSet::new();
    let mut test_only = BTreeSet::new();
    for f in rust_files(&src) {
        let m = module_of(&src, &f);
        let text = std::fs::read_to_string(&f).unwrap();
        let (code, tests) = without_tests(&blank(&text));
        for t in tests {
            let mut tm = m.clone();
            tm.push(t);
            test_only.insert(tm);
        }
        modules.insert(m.clone());
        texts.insert(m, code);
    }
    let mut edges: BTreeMap<ModPath, BTreeSet<ModPath>> = BTreeMap::new();
    for (m, code) in texts {
        if test_only.contains(&m) {
            continue;
        }
        let e = edges.entry(m.clone()).or_default();
        for p in paths(&code) {
            if let Some(t) = target(&m, &p, &modules)
                && !t.is_empty()
                && !m.starts_with(&t)
                && !test_only.contains(&t)
            {
                e.insert(t);
            }
        }
    }
    Tree { edges }
}

/// Every strongly connected set of more than one node (Tarjan).
fn circles<N: Ord + Clone>(edges: &BTreeMap<N, BTreeSet<N>>) -> Vec<Vec<N>> {
    struct St<N> {
        index: BTreeMap<N, usize>,
        low: BTreeMap<N, usize>,
        stack: Vec<N>,
        on: BTreeSet<N>,
        out: Vec<Vec<N>>,
    }
    fn visit<N: Ord + Clone>(v: &N, edges: &BTreeMap<N, BTreeSet<N>>, s: &mut St<N>) {
        let i = s.index.len();
        s.index.insert(v.clone(), i);
        s.low.insert(v.clone(), i);
        s.stack.push(v.clone());
        s.on.insert(v.clone());
        for w in edges.get(v).into_iter().flatten() {
            if !s.index.contains_key(w) {
                visit(w, edges, s);
                let lw = s.low[w];
                let lv = s.low.get_mut(v).unwrap();
                *lv = (*lv).min(lw);
            } else if s.on.contains(w) {
                let iw = s.index[w];
                let lv = s.low.get_mut(v).unwrap();
                *lv = (*lv).min(iw);
            }
        }
        if s.low[v] == s.index[v] {
            let mut comp = Vec::new();
            loop {
                let w = s.stack.pop().unwrap();
                s.on.remove(&w);
                comp.push(w.clone());
                if &w == v {
                    break;
                }
            }
            if comp.len() > 1 {
                comp.sort();
                s.out.push(comp);
            }
        }
    }
    let mut s = St {
        index: BTreeMap::new(),
        low: BTreeMap::new(),
        stack: Vec::new(),
        on: BTreeSet::new(),
        out: Vec::new(),
    };
    for v in edges.keys() {
        if !s.index.contains_key(v) {
            visit(v, edges, &mut s);
        }
    }
    s.out
}

fn show(m: &ModPath) -> String {
    if m.is_empty() {
        "crate".into()
    } else {
        m.join("::")
    }
}

#[test]
fn no_import_circle_between_files() {
    let tree = read_tree();
    let found: Vec<String> = circles(&tree.edges)
        .iter()
        .map(|c| c.iter().map(show).collect::<Vec<_>>().join(" ↔ "))
        .collect();
    assert!(
        found.is_empty(),
        "import circles between files:\n{}",
        found.join("\n")
    );
}

/// The top-level module graph: which module's files import which other module.
fn top_edges(tree: &Tree) -> BTreeMap<String, BTreeSet<String>> {
    let mut top: BTreeMap<String, BTreeSet<String>> = BTreeMap::new();
    for (from, tos) in &tree.edges {
        let Some(a) = from.first() else { continue };
        for to in tos {
            if let Some(b) = to.first()
                && a != b
            {
                top.entry(a.clone()).or_default().insert(b.clone());
            }
        }
    }
    top
}

#[test]
fn top_modules_keep_their_order_with_at_most_two_arrows_back_up() {
    let tree = read_tree();
    let top = top_edges(&tree);
    let rank = |m: &str| LAYERS.iter().position(|l| *l == m);
    let mut unknown: Vec<&String> = top.keys().filter(|m| rank(m).is_none()).collect();
    unknown.extend(top.values().flatten().filter(|m| rank(m).is_none()));
    unknown.sort();
    unknown.dedup();
    assert!(
        unknown.is_empty(),
        "modules missing from LAYERS: {unknown:?}"
    );
    let mut up = Vec::new();
    for (a, bs) in &top {
        for b in bs {
            if rank(b) > rank(a) {
                up.push((a.as_str(), b.as_str()));
            }
        }
    }
    let unexplained: Vec<_> = up
        .iter()
        .filter(|(a, b)| !BACK_UP.iter().any(|(x, y, _)| x == a && y == b))
        .collect();
    assert!(
        unexplained.is_empty(),
        "imports pointing up the module order (a module may use those before it in LAYERS): {unexplained:?}"
    );
    assert!(up.len() <= 2, "more than two arrows back up: {up:?}");
    let round: Vec<String> = circles(&top).iter().map(|c| c.join(" ↔ ")).collect();
    assert!(
        round.iter().all(|c| BACK_UP
            .iter()
            .any(|(a, b, _)| c == &format!("{b} ↔ {a}") || c == &format!("{a} ↔ {b}"))),
        "circles between top-level modules: {round:?}"
    );
}

#[test]
fn no_source_file_is_over_the_line_limit() {
    let src = Path::new(env!("CARGO_MANIFEST_DIR")).join("src");
    let counted: Vec<(String, usize)> = rust_files(&src)
        .iter()
        .map(|f| {
            let name = f.strip_prefix(&src).unwrap().to_string_lossy().into_owned();
            (name, std::fs::read_to_string(f).unwrap().lines().count())
        })
        .collect();
    let long: Vec<String> = counted
        .iter()
        .filter(|(f, n)| *n > MAX_LINES && !OVER_LIMIT_NOW.contains(&f.as_str()))
        .map(|(f, n)| format!("src/{f} ({n} lines)"))
        .collect();
    assert!(
        long.is_empty(),
        "files over {MAX_LINES} lines:\n{}",
        long.join("\n")
    );
    let back_within: Vec<&&str> = OVER_LIMIT_NOW
        .iter()
        .filter(|f| counted.iter().any(|(g, n)| g == **f && *n <= MAX_LINES))
        .collect();
    assert!(
        back_within.is_empty(),
        "within the limit again, take them off OVER_LIMIT_NOW: {back_within:?}"
    );
}

#[test]
fn the_checker_reads_imports_as_the_compiler_would() {
    // A worked example of each form the checker must read.
    let code = blank(
        "use crate::a::{b::C, d as e};\nuse super::{f, g::{H, I}};\n\
         // use crate::ignored;\nlet s = \"crate::nor_this\";\nlet c = '{';\n\
         fn x() { crate::j::k(); super::l::m(); }\n#[cfg(test)]\nmod tests { use crate::only_tests; }\n",
    );
    let (code, _) = without_tests(&code);
    let got: Vec<String> = paths(&code).iter().map(|p| p.join("::")).collect();
    assert_eq!(
        got,
        [
            "crate::a::b::C",
            "crate::a::d",
            "super::f",
            "super::g::H",
            "super::g::I",
            "crate::j::k",
            "super::l::m"
        ]
    );
    let modules: BTreeSet<ModPath> = [vec!["a".to_string()], vec!["g".to_string()]].into();
    let here = vec!["x".to_string()];
    let t = |p: &str| {
        let p: Vec<String> = p.split("::").map(str::to_string).collect();
        target(&here, &p, &modules)
    };
    assert_eq!(t("crate::a::b::C"), Some(vec!["a".to_string()]));
    assert_eq!(t("super::g::H"), Some(vec!["g".to_string()]));
    assert_eq!(t("crate::j::k"), None);
    let mut g: BTreeMap<u8, BTreeSet<u8>> = BTreeMap::new();
    g.insert(1, [2].into());
    g.insert(2, [3].into());
    g.insert(3, [1].into());
    g.insert(4, [1].into());
    assert_eq!(circles(&g), vec![vec![1, 2, 3]]);
}
