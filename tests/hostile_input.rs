//! Hostile input: every bad value or file gets a clear message and the documented exit code,
//! never a panic (exit codes: README "Exit codes"; 2 usage, 3 infeasible, 4 I/O).

use std::path::Path;
use std::process::Command;

fn run(args: &[&str], dir: &Path) -> (i32, String) {
    let out = Command::new(env!("CARGO_BIN_EXE_loopwright"))
        .args(args)
        .current_dir(dir)
        .output()
        .expect("binary runs");
    let text =
        String::from_utf8_lossy(&out.stderr).to_string() + &String::from_utf8_lossy(&out.stdout);
    assert!(!text.contains("panicked"), "panic for {args:?}: {text}");
    (out.status.code().unwrap_or(-1), text)
}

fn write(dir: &Path, name: &str, text: &str) -> String {
    let p = dir.join(name);
    std::fs::write(&p, text).unwrap();
    p.to_string_lossy().into_owned()
}

#[test]
fn bad_flag_values_are_usage_errors_naming_the_field() {
    let dir = tempfile::tempdir().unwrap();
    let cases: &[(&[&str], &str)] = &[
        (&["design", "--max-g", "NaN"], "max_g"),
        (&["design", "--max-g", "inf"], "max_g"),
        (&["design", "--max-g", "0.5"], "max_g"),
        (&["design", "--entry-speed", "-3"], "entry_speed"),
        (&["design", "--entry-speed", "0"], "entry_speed"),
        (
            &["design", "--entry-speed", "25furlongs"],
            "unknown speed unit",
        ),
        (&["design", "--entry-speed", "fast"], "entry_speed"),
        (
            &["design", "--min-top-g", "5", "--max-g", "4.5"],
            "min_top_g",
        ),
        (&["design", "--height", "-1"], "height_m"),
        (
            &["design", "--height", "30", "--max-height", "20"],
            "contradict",
        ),
        (&["design", "--min-radius", "0"], "min_radius_m"),
        (&["design", "--spacing", "1e-9"], "spacing_m"),
        (&["design", "--shape", "hexagon"], "unknown shape family"),
        (&["design", "--name", "../evil"], "file stem"),
        (
            &["design", "--heartline-height", "9", "--min-radius", "4"],
            "heartline_height_m",
        ),
        (&["design", "--mass", "-5"], "mass_kg"),
        (&["design", "--no-such-flag"], "unexpected argument"),
    ];
    for (args, needle) in cases {
        let (code, text) = run(args, dir.path());
        assert_eq!(code, 2, "{args:?}: {text}");
        assert!(
            text.contains(needle),
            "{args:?} should mention '{needle}': {text}"
        );
    }
}

#[test]
fn bad_brief_files_are_usage_errors() {
    let dir = tempfile::tempdir().unwrap();
    let cases = [
        ("typo.toml", "max_gee = 4.5\n", "max_gee"),
        (
            "empty-ok-but-bad.toml",
            "entry_speed = \"\"\n",
            "entry_speed",
        ),
        ("notoml.toml", "this is not toml ][", "not a valid brief"),
        ("wrongtype.toml", "max_g = \"lots\"\n", "not a valid brief"),
        ("nan.toml", "max_g = nan\n", "max_g"),
        ("binary.toml", "\u{0}\u{1}\u{2}", "not a valid brief"),
    ];
    for (name, text, needle) in cases {
        let p = write(dir.path(), name, text);
        let (code, out) = run(&["design", &p, "--out", "o"], dir.path());
        assert_eq!(code, 2, "{name}: {out}");
        assert!(
            out.contains(needle),
            "{name} should mention '{needle}': {out}"
        );
    }
    // A huge file is refused before it is parsed.
    let big = "# padding\n".repeat(200_000);
    let p = write(dir.path(), "huge.toml", &big);
    let (code, out) = run(&["design", &p], dir.path());
    assert_eq!(code, 2, "{out}");
    assert!(out.contains("larger than 1048576 bytes"), "{out}");
    // A missing file is an I/O error.
    let (code, out) = run(&["design", "no-such-brief.toml"], dir.path());
    assert_eq!(code, 4, "{out}");
}

#[test]
fn an_infeasible_brief_exits_3_with_the_binding_limit() {
    let dir = tempfile::tempdir().unwrap();
    let (code, text) = run(
        &[
            "design",
            "--shape",
            "circle",
            "--rolling-resistance",
            "0",
            "--drag-area",
            "0",
            "--out",
            "o",
        ],
        dir.path(),
    );
    assert_eq!(code, 3, "{text}");
    assert!(
        text.contains("6 + n_top") && text.contains("max_g"),
        "{text}"
    );
    assert!(
        text.contains("ASTM F2291"),
        "the caution is printed: {text}"
    );
}

/// An empty brief file is valid TOML with every field defaulted.
#[test]
fn an_empty_brief_file_uses_defaults() {
    let dir = tempfile::tempdir().unwrap();
    let p = write(dir.path(), "empty.toml", "");
    let (code, text) = run(
        &["design", &p, "--out", "o", "--spacing", "0.2"],
        dir.path(),
    );
    assert_eq!(code, 0, "{text}");
    assert!(dir.path().join("o/loop.json").exists());
}
