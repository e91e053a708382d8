//! A run's outputs are one unit (README "What a run guarantees"): kill -9 at random moments of a
//! design and of a sweep leaves, once the next run into the folder has taken its lock, exactly the
//! old set or exactly the new set and no temporary files; concurrent runs into one folder never
//! pair one run's files with another's; a report's SHA-256 list detects a mixed set.
//!
//! Independent expectation: the old and new sets are produced by separate complete runs in their
//! own folders and compared byte for byte; SHA-256 is checked with the `sha2` crate's digest.

use sha2::{Digest, Sha256};
use std::collections::BTreeMap;
use std::path::Path;
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

fn bin() -> Command {
    Command::new(env!("CARGO_BIN_EXE_loopwright"))
}

fn run_ok(args: &[&str], dir: &Path) {
    let out = bin().args(args).current_dir(dir).output().unwrap();
    assert!(
        out.status.success(),
        "{args:?}: {}",
        String::from_utf8_lossy(&out.stderr)
    );
}

/// Every file of the folder but the lock, by name.
fn snapshot(dir: &Path) -> BTreeMap<String, Vec<u8>> {
    std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.file_name().unwrap() != ".loopwright.lock")
        .map(|p| {
            (
                p.file_name().unwrap().to_string_lossy().into_owned(),
                std::fs::read(&p).unwrap(),
            )
        })
        .collect()
}

/// A set compared by content: the DXF writer gives every drawing fresh random handles' GUIDs
/// (36-character lines) and dates ($TD...), so those and the report's digest lines that follow
/// from them are left out; the digests are checked on their own by [`consistent`].
fn comparable(set: &BTreeMap<String, Vec<u8>>) -> BTreeMap<String, Vec<u8>> {
    set.iter()
        .map(|(name, bytes)| {
            let text = String::from_utf8_lossy(bytes);
            let mut skip = 0;
            let kept: Vec<&str> = text
                .lines()
                .filter(|l| {
                    let l = l.trim();
                    if skip > 0 {
                        skip -= 1;
                        return false;
                    }
                    // Header dates ($TDCREATE ...): the group code and value after the name.
                    if l.starts_with("$TD") {
                        skip = 2;
                        return false;
                    }
                    let guid = l.len() == 36 && l.matches('-').count() == 4;
                    !guid && !l.starts_with("\"sha256\"") && !l.starts_with("\"bytes\"")
                })
                .collect();
            (name.clone(), kept.join("\n").into_bytes())
        })
        .collect()
}

fn copy_set(set: &BTreeMap<String, Vec<u8>>, dir: &Path) {
    let _ = std::fs::remove_dir_all(dir);
    std::fs::create_dir_all(dir).unwrap();
    for (name, bytes) in set {
        std::fs::write(dir.join(name), bytes).unwrap();
    }
}

/// A small deterministic generator (64-bit LCG, Knuth's MMIX constants) for the kill moments.
struct Lcg(u64);
impl Lcg {
    fn unit(&mut self) -> f64 {
        self.0 = self
            .0
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        (self.0 >> 11) as f64 / (1u64 << 53) as f64
    }
}

/// Run `args` into `dir` (holding `old`), kill -9 it `kills` times at random moments, and after
/// each kill let a cheap other run take the folder's lock; the set must then be `old` or `new`.
fn kill_at_random(
    args: &[&str],
    old: &BTreeMap<String, Vec<u8>>,
    new: &BTreeMap<String, Vec<u8>>,
    kills: usize,
    seed: u64,
) -> (usize, usize) {
    let tmp = tempfile::tempdir().unwrap();
    let dir = tmp.path().join("out");
    // How long one whole run takes here, to spread the kills over it.
    copy_set(old, &dir);
    let t0 = Instant::now();
    run_ok(args, tmp.path());
    let whole = t0.elapsed().as_secs_f64();
    let (old_c, new_c) = (&comparable(old), &comparable(new));
    let first = comparable(&snapshot(&dir));
    assert!(
        &first == new_c,
        "an uninterrupted run writes the new set; differing: {:?}",
        differing(&first, new_c)
    );
    let mut rng = Lcg(seed);
    let (mut saw_old, mut saw_new) = (0, 0);
    for _ in 0..kills {
        copy_set(old, &dir);
        let mut child = bin()
            .args(args)
            .current_dir(tmp.path())
            .stdout(Stdio::null())
            .stderr(Stdio::null())
            .spawn()
            .unwrap();
        std::thread::sleep(Duration::from_secs_f64(rng.unit() * whole * 1.1));
        let _ = child.kill(); // SIGKILL on Unix
        child.wait().unwrap();
        // The next run into the folder (another design name) recovers under the lock.
        run_ok(
            &[
                "design",
                "--out",
                "out",
                "--name",
                "other",
                "--spacing",
                "0.5",
                "-q",
            ],
            tmp.path(),
        );
        assert!(consistent_all(&dir), "every report matches its files");
        let mut now = comparable(&snapshot(&dir));
        for f in [
            "other.dxf",
            "other.svg",
            "other-loads.svg",
            "other-loads.csv",
            "other.json",
        ] {
            assert!(now.remove(f).is_some(), "{f} written");
        }
        if &now == old_c {
            saw_old += 1;
        } else if &now == new_c {
            saw_new += 1;
        } else {
            panic!(
                "a kill left neither the old nor the new set: differs from old in {:?}, from new in {:?}",
                differing(&now, old_c),
                differing(&now, new_c)
            );
        }
    }
    (saw_old, saw_new)
}

/// Names present in only one of the two sets or with different bytes.
fn differing(a: &BTreeMap<String, Vec<u8>>, b: &BTreeMap<String, Vec<u8>>) -> Vec<String> {
    a.keys()
        .chain(b.keys())
        .filter(|k| a.get(*k) != b.get(*k))
        .cloned()
        .collect::<std::collections::BTreeSet<_>>()
        .into_iter()
        .collect()
}

fn set_of(args: &[&str]) -> BTreeMap<String, Vec<u8>> {
    let tmp = tempfile::tempdir().unwrap();
    run_ok(args, tmp.path());
    snapshot(&tmp.path().join("out"))
}

#[test]
fn kill_9_during_design_and_sweep_leaves_the_old_or_the_new_set() {
    let design = |v: &'static str| {
        vec![
            "design",
            "--out",
            "out",
            "--name",
            "study",
            "--spacing",
            "0.5",
            "--entry-speed",
            v,
            "-q",
        ]
    };
    let (old, new) = (set_of(&design("25")), set_of(&design("26")));
    assert_eq!(old.len(), 5);
    let (a, b) = (comparable(&old), comparable(&new));
    assert!(
        a.iter().zip(&b).all(|(a, b)| a.1 != b.1),
        "every file differs"
    );
    let (o, n) = kill_at_random(&design("26"), &old, &new, 38, 7);
    eprintln!("design kills: {o} left the old set, {n} the new one");

    let sweep = |g: &'static str| {
        vec![
            "sweep",
            "--out",
            "out",
            "--name",
            "grid",
            "--shape",
            "clothoid",
            "--entry-speed",
            "22..28:2",
            "--max-g",
            g,
            "--spacing",
            "0.5",
            "-q",
        ]
    };
    let (old, new) = (set_of(&sweep("4.5")), set_of(&sweep("5")));
    assert_eq!(old.len(), 2);
    let (o2, n2) = kill_at_random(&sweep("5"), &old, &new, 14, 11);
    eprintln!("sweep kills: {o2} left the old set, {n2} the new one");
    assert_eq!(o + n + o2 + n2, 52, "at least 50 kills in all");
}

#[test]
fn a_committed_journal_is_completed_and_stale_temporaries_removed_by_the_next_run() {
    let tmp = tempfile::tempdir().unwrap();
    let out = tmp.path().join("out");
    std::fs::create_dir(&out).unwrap();
    // What a run killed after its commit leaves: staged files and the journal naming them.
    std::fs::write(out.join(".loopwright-aaaa.tmp"), b"new a").unwrap();
    std::fs::write(out.join(".loopwright-bbbb.tmp"), b"new b").unwrap();
    std::fs::write(out.join("a.csv"), b"old a").unwrap();
    std::fs::write(
        out.join(".loopwright-journal"),
        ".loopwright-aaaa.tmp\ta.csv\n.loopwright-bbbb.tmp\tb.csv\n",
    )
    .unwrap();
    // And what a run killed while staging leaves: an uncommitted temporary.
    std::fs::write(out.join(".loopwright-cccc.tmp"), vec![0u8; 4096]).unwrap();
    run_ok(
        &[
            "design",
            "--out",
            "out",
            "--name",
            "x",
            "--spacing",
            "0.5",
            "-q",
        ],
        tmp.path(),
    );
    let now = snapshot(&out);
    assert_eq!(now["a.csv"], b"new a");
    assert_eq!(now["b.csv"], b"new b");
    let stray: Vec<_> = now.keys().filter(|n| n.starts_with('.')).collect();
    assert!(stray.is_empty(), "{stray:?}");
}

/// Every report in the folder matches the files it lists.
fn consistent_all(dir: &Path) -> bool {
    std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .filter(|n| n.ends_with(".json"))
        .all(|n| consistent(dir, &n))
}

fn sha256_hex(b: &[u8]) -> String {
    Sha256::digest(b)
        .iter()
        .map(|x| format!("{x:02x}"))
        .collect()
}

/// Whether every file the report lists has the listed SHA-256.
fn consistent(dir: &Path, report: &str) -> bool {
    let v: serde_json::Value = serde_json::from_slice(&std::fs::read(dir.join(report)).unwrap())
        .unwrap_or_else(|e| panic!("{report}: {e}"));
    let list = v["outputs"].as_array().unwrap();
    assert!(!list.is_empty());
    list.iter().all(|o| {
        let bytes = std::fs::read(dir.join(o["file"].as_str().unwrap())).unwrap();
        sha256_hex(&bytes) == o["sha256"].as_str().unwrap()
    })
}

#[test]
fn concurrent_runs_into_one_folder_never_mix_their_files() {
    let tmp = tempfile::tempdir().unwrap();
    for round in 0..3 {
        let children: Vec<_> = ["22", "27"]
            .iter()
            .map(|v| {
                bin()
                    .args([
                        "design",
                        "--out",
                        "out",
                        "--name",
                        "same",
                        "--spacing",
                        "0.2",
                        "--entry-speed",
                        v,
                        "-q",
                    ])
                    .current_dir(tmp.path())
                    .stderr(Stdio::piped())
                    .spawn()
                    .unwrap()
            })
            .collect();
        for c in children {
            let out = c.wait_with_output().unwrap();
            assert!(out.status.success(), "round {round}");
        }
        assert!(
            consistent(&tmp.path().join("out"), "same.json"),
            "round {round}"
        );
    }
}

#[test]
fn the_report_digests_detect_a_mixed_set_and_check_says_so() {
    let tmp = tempfile::tempdir().unwrap();
    run_ok(
        &[
            "design",
            "--out",
            "a",
            "--spacing",
            "0.2",
            "--entry-speed",
            "25",
            "-q",
        ],
        tmp.path(),
    );
    run_ok(
        &[
            "design",
            "--out",
            "b",
            "--spacing",
            "0.2",
            "--entry-speed",
            "26",
            "-q",
        ],
        tmp.path(),
    );
    let (a, b) = (tmp.path().join("a"), tmp.path().join("b"));
    assert!(consistent(&a, "loop.json"));
    // Pair b's loads table with a's report: a mixed set.
    std::fs::copy(b.join("loop-loads.csv"), a.join("loop-loads.csv")).unwrap();
    assert!(!consistent(&a, "loop.json"));
    let out = bin()
        .args(["check", "a/loop-loads.csv", "--out", "c"])
        .current_dir(tmp.path())
        .output()
        .unwrap();
    let text = String::from_utf8_lossy(&out.stdout) + String::from_utf8_lossy(&out.stderr);
    assert!(
        text.contains("loop-loads.csv differ from the SHA-256 listed in"),
        "{text}"
    );
}
