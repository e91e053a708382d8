//! Golden files: the outputs of fixed commands on the shipped briefs, fingerprinted by SHA-256.
//!
//! The redesign of the pipeline (one model for every command) must not change a single byte of
//! what `design`, `compare` and `sweep` write for the same brief. The reference is the output of
//! the version before the change (this file's manifest), not anything computed here, so a test
//! that passes means "same bytes as then". When a change to the outputs is intended, regenerate
//! with `LOOPWRIGHT_BLESS_GOLDEN=1 cargo test --release --test golden` and say why in the commit.
//!
//! Every output is hashed as written: the DXF carries fixed dates and GUIDs derived from the brief
//! (issue 11), so nothing is blanked.

use sha2::{Digest, Sha256};
use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

const MANIFEST: &str = "tests/golden/manifest.tsv";

fn sha256_hex(bytes: &[u8]) -> String {
    Sha256::digest(bytes)
        .iter()
        .map(|b| format!("{b:02x}"))
        .collect()
}

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

/// Run one command (in-process, as the binary does) into a fresh folder; fingerprint every file.
fn run_case(case: &str, args: &[&str]) -> BTreeMap<String, String> {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("out");
    let mut argv: Vec<String> = vec!["loopwright".into()];
    argv.extend(
        args.iter()
            .map(|a| a.replace("{root}", &root().display().to_string())),
    );
    argv.push("--out".into());
    argv.push(out.display().to_string());
    argv.push("--quiet".into());
    let code = loopwright::cli::main_with_args(argv.clone());
    assert_eq!(code, 0, "{case}: {argv:?} exited {code}");
    let mut files = BTreeMap::new();
    for entry in std::fs::read_dir(&out).unwrap() {
        let p = entry.unwrap().path();
        let name = p.file_name().unwrap().to_string_lossy().to_string();
        let bytes = std::fs::read(&p).unwrap();
        files.insert(format!("{case}\t{name}"), sha256_hex(&bytes));
    }
    files
}

fn cases() -> Vec<(&'static str, Vec<&'static str>)> {
    vec![
        ("demo", vec!["design"]),
        // Brief flags without a brief file start from the defaults, not the demo (issue 10), so
        // the demo variants name the demo brief file.
        (
            "demo-train",
            vec![
                "design",
                "{root}/examples/demo-brief.toml",
                "--cars",
                "7",
                "--car-pitch",
                "2.4",
            ],
        ),
        (
            "demo-spline",
            vec![
                "design",
                "{root}/examples/demo-brief.toml",
                "--shape",
                "spline",
            ],
        ),
        (
            "profile",
            vec!["design", "{root}/examples/profile-brief.toml"],
        ),
        ("compare", vec!["compare"]),
        (
            "sweep",
            vec![
                "sweep",
                "--entry-speed",
                "22..26:3",
                "--max-g",
                "4.5..6.5:2",
                "--shape",
                "circle,clothoid",
                "--spacing",
                "0.2",
            ],
        ),
    ]
}

#[test]
fn outputs_match_the_golden_manifest() {
    let mut got = BTreeMap::new();
    for (case, args) in cases() {
        got.extend(run_case(case, &args));
    }
    let manifest = root().join(MANIFEST);
    if std::env::var_os("LOOPWRIGHT_BLESS_GOLDEN").is_some() {
        let text: String = got.iter().map(|(k, v)| format!("{k}\t{v}\n")).collect();
        std::fs::create_dir_all(manifest.parent().unwrap()).unwrap();
        std::fs::write(&manifest, text).unwrap();
        return;
    }
    let text = std::fs::read_to_string(Path::new(&manifest))
        .expect("golden manifest missing: LOOPWRIGHT_BLESS_GOLDEN=1 cargo test --test golden");
    let want: BTreeMap<String, String> = text
        .lines()
        .filter_map(|l| {
            let (key, hash) = l.rsplit_once('\t')?;
            Some((key.to_string(), hash.to_string()))
        })
        .collect();
    let mut diffs = Vec::new();
    for (k, v) in &want {
        match got.get(k) {
            None => diffs.push(format!("missing {k}")),
            Some(h) if h != v => diffs.push(format!("changed {k}")),
            _ => {}
        }
    }
    for k in got.keys() {
        if !want.contains_key(k) {
            diffs.push(format!("new {k}"));
        }
    }
    assert!(
        diffs.is_empty(),
        "outputs differ from the golden manifest:\n{}",
        diffs.join("\n")
    );
}
