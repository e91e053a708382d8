//! Outputs are written atomically: a run that fails (bad input, infeasible brief, unwritable
//! target) leaves the previous outputs intact and byte-identical.

use std::collections::BTreeMap;
use std::path::Path;
use std::process::Command;

fn run(args: &[&str], dir: &Path) -> i32 {
    Command::new(env!("CARGO_BIN_EXE_loopwright"))
        .args(args)
        .current_dir(dir)
        .output()
        .unwrap()
        .status
        .code()
        .unwrap()
}

fn snapshot(dir: &Path) -> BTreeMap<String, Vec<u8>> {
    std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        // The folder's lock file stays (see README "What a run guarantees"); it holds nothing.
        .filter(|p| p.is_file() && !p.ends_with(".loopwright.lock"))
        .map(|p| {
            (
                p.file_name().unwrap().to_string_lossy().into_owned(),
                std::fs::read(&p).unwrap(),
            )
        })
        .collect()
}

#[test]
fn failed_runs_leave_previous_outputs_byte_identical() {
    let dir = tempfile::tempdir().unwrap();
    let base = [
        "design",
        "--out",
        "out",
        "--name",
        "study",
        "--spacing",
        "0.2",
    ];
    assert_eq!(run(&base, dir.path()), 0);
    let out = dir.path().join("out");
    let before = snapshot(&out);
    assert_eq!(before.len(), 5, "{:?}", before.keys());

    // Bad input: usage error.
    assert_eq!(
        run(&[&base[..], &["--max-g", "NaN"]].concat(), dir.path()),
        2
    );
    // Infeasible brief with the same name: nothing is written.
    let infeasible = [&base[..], &["--shape", "circle", "--max-g", "3"]].concat();
    assert_eq!(run(&infeasible, dir.path()), 3);
    assert_eq!(snapshot(&out), before);

    // A feasible but different design whose last file cannot be replaced (a folder is in the way):
    // the run fails before any file is renamed, so even the files it could write stay old.
    std::fs::remove_file(out.join("study.json")).unwrap();
    std::fs::create_dir(out.join("study.json")).unwrap();
    let mut before_minus_json = before.clone();
    before_minus_json.remove("study.json");
    let different = [&base[..], &["--entry-speed", "22"]].concat();
    assert_eq!(run(&different, dir.path()), 4);
    assert_eq!(snapshot(&out), before_minus_json);
    // No temporary files are left behind.
    assert!(
        std::fs::read_dir(&out).unwrap().all(|e| !e
            .unwrap()
            .file_name()
            .to_string_lossy()
            .ends_with(".tmp"))
    );

    // With the folder gone the same run succeeds and does change the files (so the check above was real).
    std::fs::remove_dir(out.join("study.json")).unwrap();
    assert_eq!(run(&different, dir.path()), 0);
    let after = snapshot(&out);
    assert_ne!(after.get("study.svg"), before.get("study.svg"));

    // --out naming a regular file: I/O error, nothing else touched.
    std::fs::write(dir.path().join("plainfile"), b"x").unwrap();
    assert_eq!(
        run(
            &["design", "--out", "plainfile/sub", "--spacing", "0.2"],
            dir.path()
        ),
        4
    );
    assert_eq!(std::fs::read(dir.path().join("plainfile")).unwrap(), b"x");
}
