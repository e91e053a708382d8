//! Helpers shared by integration tests.
#![allow(dead_code)]

use std::path::Path;
use std::process::Command;

/// Run a Python reference check; fail with the install hint if Python or its packages are missing.
pub fn python(script: &str, args: &[&Path], extra: &[&str]) -> String {
    let out = Command::new("python3")
        .arg(
            Path::new(env!("CARGO_MANIFEST_DIR"))
                .join("tests/py")
                .join(script),
        )
        .args(args)
        .args(extra)
        .output()
        .expect("python3 must be on PATH: pip install -r tests/requirements.txt");
    let stdout = String::from_utf8_lossy(&out.stdout).to_string();
    let stderr = String::from_utf8_lossy(&out.stderr).to_string();
    if stderr.contains("ModuleNotFoundError") {
        panic!(
            "a Python reference package is missing: pip install -r tests/requirements.txt\n{stderr}"
        );
    }
    assert!(out.status.success(), "{script} failed:\n{stdout}\n{stderr}");
    stdout
}
