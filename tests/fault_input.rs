//! Hostile inputs and outputs (issue 13): devices, FIFOs, oversize and non-UTF-8 files are bad
//! input (exit 2) for every reader; a closed or full standard output ends with exit 4 and no
//! panic; TOML messages carry line and column and field names; merge refuses damaged shards
//! naming the file and row; a relative `limits_file` is read from the brief's folder; absurd
//! sweeps are refused naming the number. Exit codes: README "Exit codes".

use std::path::Path;
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

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

#[cfg(unix)]
#[test]
fn devices_are_refused_by_every_reader_without_reading_them() {
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(dir.path().join("p.csv"), "0,0,0\n1,0,0\n2,0,1\n").unwrap();
    let cases: &[&[&str]] = &[
        &["design", "/dev/zero"],
        &["design", "--limits", "/dev/zero"],
        &["sweep", "/dev/zero"],
        &["check", "/dev/zero"],
        &["check", "p.csv", "--limits", "/dev/zero"],
        &["merge", "/dev/zero", "--out", "m.csv"],
    ];
    for args in cases {
        let (code, text) = run(args, dir.path());
        assert_eq!(code, 2, "{args:?}: {text}");
        assert!(text.contains("is a device"), "{args:?}: {text}");
    }
}

#[cfg(unix)]
#[test]
fn a_fifo_is_refused_at_once_instead_of_blocking() {
    let dir = tempfile::tempdir().unwrap();
    let fifo = dir.path().join("brief.toml");
    let made = Command::new("mkfifo").arg(&fifo).status().unwrap();
    assert!(made.success());
    for args in [
        vec!["design", "brief.toml"],
        vec!["sweep", "brief.toml"],
        vec!["merge", "brief.toml", "--out", "m.csv"],
    ] {
        let mut child = Command::new(env!("CARGO_BIN_EXE_loopwright"))
            .args(&args)
            .current_dir(dir.path())
            .stderr(Stdio::piped())
            .spawn()
            .unwrap();
        // Not a timing check: a blocked reader never ends, so wait a generous while, then fail.
        let start = Instant::now();
        let status = loop {
            if let Some(s) = child.try_wait().unwrap() {
                break s;
            }
            if start.elapsed() > Duration::from_secs(20) {
                child.kill().unwrap();
                panic!("{args:?} blocked on a FIFO");
            }
            std::thread::sleep(Duration::from_millis(20));
        };
        assert_eq!(status.code(), Some(2), "{args:?}");
    }
}

#[test]
fn oversize_and_non_utf8_inputs_are_exit_2() {
    let dir = tempfile::tempdir().unwrap();
    // 1 MiB + 1 byte of comment: one byte over the brief cap (MAX_BRIEF_BYTES = 1 MiB).
    let mut big = b"# ".to_vec();
    big.resize((1 << 20) + 1, b'x');
    std::fs::write(dir.path().join("big.toml"), &big).unwrap();
    let (code, text) = run(&["design", "big.toml"], dir.path());
    assert_eq!(code, 2, "{text}");
    assert!(text.contains("larger than 1048576 bytes"), "{text}");
    std::fs::write(dir.path().join("bad.toml"), b"name = \"\xff\"\n").unwrap();
    for cmd in ["design", "sweep"] {
        let (code, text) = run(&[cmd, "bad.toml"], dir.path());
        assert_eq!(code, 2, "{cmd}: {text}");
        assert!(text.contains("not UTF-8"), "{text}");
    }
}

#[test]
fn toml_messages_give_line_column_and_field_not_type_names() {
    let dir = tempfile::tempdir().unwrap();
    let cases = [
        (
            "max_g = 4\nmax_g = 5\n",
            "line 2, column 1",
            "duplicate key `max_g`",
        ),
        (
            "entry_speed = true\n",
            "line 1, column 15",
            "expected a speed",
        ),
        (
            "profile = 3\n",
            "`profile = 3`",
            "expected a [profile] table",
        ),
        ("max_onset_g_s = []\n", "`max_onset_g_s = []`", "\"none\""),
        (
            "name = \"a\"\nmax_g = \"x\"\n",
            "line 2, column 9",
            "expected a number",
        ),
    ];
    for (text, place, what) in cases {
        std::fs::write(dir.path().join("b.toml"), text).unwrap();
        let (code, out) = run(&["design", "b.toml"], dir.path());
        assert_eq!(code, 2, "{text}: {out}");
        assert!(out.contains(place) && out.contains(what), "{text}: {out}");
        for leak in [
            "SpeedText",
            "NumberOrWord",
            "ProfileInput",
            "untagged",
            "f64",
        ] {
            assert!(!out.contains(leak), "{text}: {out}");
        }
    }
    std::fs::write(dir.path().join("s.toml"), "[sweep]\nmax_g = true\n").unwrap();
    let (code, out) = run(&["sweep", "s.toml"], dir.path());
    assert_eq!(code, 2);
    assert!(
        out.contains("line 2, column 9") && !out.contains("AxisText"),
        "{out}"
    );
}

#[test]
fn huge_numbers_are_echoed_in_engineering_form() {
    let dir = tempfile::tempdir().unwrap();
    let (code, out) = run(&["design", "--max-g", "1e300"], dir.path());
    assert_eq!(code, 2);
    assert!(out.contains("1e300 g is out of range"), "{out}");
    assert!(out.len() < 400, "{out}");
    let (code, out) = run(&["sweep", "--max-g", "1e300"], dir.path());
    assert_eq!(code, 2);
    assert!(out.contains("value 1e300"), "{out}");
}

#[test]
fn out_at_a_file_and_compare_shape_errors_say_what_to_do() {
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(dir.path().join("f"), "x").unwrap();
    let (code, out) = run(&["design", "--out", "f", "--spacing", "0.5"], dir.path());
    assert_eq!(code, 2, "{out}");
    assert!(out.contains("is a file, not a folder"), "{out}");
    let (code, out) = run(&["compare", "--shape", "hexagon"], dir.path());
    assert_eq!(code, 2);
    assert!(
        out.contains("brief field 'shape'") && !out.contains("sweep shape"),
        "{out}"
    );
}

#[test]
fn a_closed_or_full_standard_output_ends_cleanly_with_exit_4() {
    let dir = tempfile::tempdir().unwrap();
    // A pipe whose reader is gone before anything is written (`loopwright demo-brief | true`).
    let mut child = Command::new(env!("CARGO_BIN_EXE_loopwright"))
        .arg("demo-brief")
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    drop(child.stdout.take());
    let out = child.wait_with_output().unwrap();
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(!err.contains("panicked"), "{err}");
    // The child may finish writing into the pipe buffer before the reader closes: 0 or 4.
    assert!(matches!(out.status.code(), Some(0 | 4)), "{err}");
    #[cfg(target_os = "linux")]
    {
        // `design --out x > /dev/full`: every write fails with ENOSPC.
        let full = std::fs::OpenOptions::new()
            .write(true)
            .open("/dev/full")
            .unwrap();
        let out = Command::new(env!("CARGO_BIN_EXE_loopwright"))
            .args(["design", "--out", "x", "--spacing", "0.5"])
            .current_dir(dir.path())
            .stdout(full)
            .output()
            .unwrap();
        let err = String::from_utf8_lossy(&out.stderr);
        assert_eq!(out.status.code(), Some(4), "{err}");
        assert!(err.contains("cannot write standard output") && !err.contains("panicked"));
        // And standard error full too (`2>&1 | head -1` after head exits): still the exit code.
        let full = std::fs::OpenOptions::new()
            .write(true)
            .open("/dev/full")
            .unwrap();
        let status = Command::new(env!("CARGO_BIN_EXE_loopwright"))
            .args(["design", "--entry-speed", "0", "-q"])
            .stderr(full)
            .status()
            .unwrap();
        assert_eq!(status.code(), Some(2));
    }
}

/// The sweep row in `csv` that holds `needle`, edited by `edit`.
fn edit_row(csv: &str, row: usize, edit: impl Fn(&str) -> String) -> String {
    csv.lines()
        .enumerate()
        .map(|(i, l)| if i == row { edit(l) } else { l.to_string() })
        .collect::<Vec<_>>()
        .join("\n")
        + "\n"
}

#[test]
fn merge_refuses_edited_flipped_or_truncated_shards_naming_file_and_row() {
    let dir = tempfile::tempdir().unwrap();
    let sweep = |shard: &str| {
        let (code, out) = run(
            &[
                "sweep",
                "--shape",
                "circle,clothoid",
                "--entry-speed",
                "22..28:2",
                "--spacing",
                "0.5",
                "--shard",
                shard,
                "--out",
                ".",
                "-q",
            ],
            dir.path(),
        );
        assert_eq!(code, 0, "{out}");
    };
    sweep("1/2");
    sweep("2/2");
    let (a, b) = ("loop-sweep-shard-1-of-2.csv", "loop-sweep-shard-2-of-2.csv");
    let (code, out) = run(&["merge", a, b, "--out", "m.csv"], dir.path());
    assert_eq!(code, 0, "{out}");
    let text = std::fs::read_to_string(dir.path().join(a)).unwrap();
    // Row 1 is design 0 (circle at 22 m/s), row 2 design 2 (clothoid at 22 m/s, feasible).
    let feasible_row = text.lines().position(|l| l.contains(",yes,")).unwrap();
    let cases = [
        (
            "flipped.csv",
            edit_row(&text, feasible_row, |l| l.replacen(",yes,", ",no,", 1)),
            format!("row {feasible_row}"),
        ),
        (
            "edited.csv",
            edit_row(&text, feasible_row, |l| l.replacen(".", "9.", 1)),
            format!("row {feasible_row}"),
        ),
        (
            // Cut inside the last row's quoted reason or digest.
            "cut.csv",
            text[..text.len() - 30].to_string(),
            String::from("row"),
        ),
    ];
    for (name, bytes, row) in cases {
        std::fs::write(dir.path().join(name), bytes).unwrap();
        let (code, out) = run(&["merge", name, b, "--out", "m2.csv"], dir.path());
        assert_eq!(code, 2, "{name}: {out}");
        assert!(out.contains(name) && out.contains(&row), "{name}: {out}");
    }
}

#[test]
fn a_relative_limits_file_is_read_from_the_briefs_folder() {
    let dir = tempfile::tempdir().unwrap();
    let sub = dir.path().join("project");
    std::fs::create_dir(&sub).unwrap();
    // A table that any loop fails (at most 1.5 g for 0.01 s): the same brief must fail wherever
    // it is run from, which shows the table beside the brief is the one read.
    std::fs::write(
        sub.join("tight.toml"),
        "[normal]\nlevel = [{ duration_s = 0.01, max_g = 1.5, min_g = -1.5 }]\n",
    )
    .unwrap();
    std::fs::write(
        sub.join("brief.toml"),
        "limits_file = \"tight.toml\"\nspacing_m = 0.5\n",
    )
    .unwrap();
    // A different table of the same name in the working directory must not be picked up.
    std::fs::write(dir.path().join("tight.toml"), "not = [valid\n").unwrap();
    let (from_root, out_root) = run(&["design", "project/brief.toml", "--out", "o"], dir.path());
    let (from_sub, out_sub) = run(&["design", "brief.toml", "--out", "o"], &sub);
    assert_eq!(from_root, 3, "{out_root}");
    assert_eq!(from_sub, 3, "{out_sub}");
    let (code, out) = run(
        &[
            "sweep",
            "project/brief.toml",
            "--shape",
            "clothoid",
            "--out",
            "o",
            "-q",
        ],
        dir.path(),
    );
    assert_eq!(code, 0, "{out}");
}

#[test]
fn an_absurd_sweep_is_refused_naming_its_size() {
    let dir = tempfile::tempdir().unwrap();
    let (code, out) = run(
        &[
            "sweep",
            "--entry-speed",
            "20..30:1000",
            "--max-g",
            "4..6:1000",
            "--shape",
            "clothoid",
            "-q",
        ],
        dir.path(),
    );
    assert_eq!(code, 2, "{out}");
    assert!(
        out.contains("1000000 designs") && out.contains("hours of CPU"),
        "{out}"
    );
}
