//! The project's structural rules, checked on its own source (DEVELOPERS.md, "Architecture"):
//! data flows one way, so no module uses one later in the flow; no source file grows past about
//! 600 lines. These are rules of this project (common practice, no source), not physics.

use std::path::{Path, PathBuf};

/// The flow, first to last. A module may use itself and the ones before it.
const FLOW: &[&str] = &[
    "input",
    "units",
    "numeric",
    "brief",
    "shape",
    "geometry",
    "import",
    "dynamics",
    "checks",
    "model",
    "optimiser",
    "compare",
    "sweep",
    "report",
    "export",
    "serve",
    "cli",
];

/// Largest source file, lines ("about 600": a little slack for a file that is one unit).
const MAX_LINES: usize = 650;

fn sources(dir: &Path, out: &mut Vec<PathBuf>) {
    for e in std::fs::read_dir(dir).unwrap() {
        let p = e.unwrap().path();
        if p.is_dir() {
            sources(&p, out);
        } else if p.extension().is_some_and(|x| x == "rs") {
            out.push(p);
        }
    }
}

fn rank(module: &str) -> Option<usize> {
    FLOW.iter().position(|m| *m == module)
}

/// The top-level module a file belongs to (`src/optimiser/size.rs` → `optimiser`).
fn module_of(src: &Path, file: &Path) -> String {
    let rel = file.strip_prefix(src).unwrap();
    let first = rel
        .components()
        .next()
        .unwrap()
        .as_os_str()
        .to_string_lossy();
    first.trim_end_matches(".rs").to_string()
}

#[test]
fn no_module_uses_a_later_stage() {
    let src = Path::new(env!("CARGO_MANIFEST_DIR")).join("src");
    let mut files = Vec::new();
    sources(&src, &mut files);
    let mut bad = Vec::new();
    for f in &files {
        let me = module_of(&src, f);
        if me == "lib" || me == "main" {
            continue;
        }
        let my_rank = rank(&me).unwrap_or_else(|| panic!("module {me} is not in FLOW"));
        let text = std::fs::read_to_string(f).unwrap();
        for (n, line) in text.lines().enumerate() {
            let code = line.trim_start();
            if code.starts_with("//") {
                continue; // documentation may point anywhere
            }
            for (i, _) in code.match_indices("crate::") {
                let used: String = code[i + 7..]
                    .chars()
                    .take_while(|c| c.is_ascii_alphanumeric() || *c == '_')
                    .collect();
                if rank(&used).is_some_and(|r| r > my_rank) {
                    bad.push(format!(
                        "{}:{} {me} uses later stage {used}",
                        f.display(),
                        n + 1
                    ));
                }
            }
        }
    }
    assert!(
        bad.is_empty(),
        "the flow runs backwards:\n{}",
        bad.join("\n")
    );
}

#[test]
fn no_source_file_is_too_long() {
    let src = Path::new(env!("CARGO_MANIFEST_DIR")).join("src");
    let mut files = Vec::new();
    sources(&src, &mut files);
    let long: Vec<String> = files
        .iter()
        .filter_map(|f| {
            let n = std::fs::read_to_string(f).unwrap().lines().count();
            (n > MAX_LINES).then(|| format!("{} has {n} lines", f.display()))
        })
        .collect();
    assert!(long.is_empty(), "split these files:\n{}", long.join("\n"));
}
