//! The study page in a real browser: Debian's chromium, headless, driven by selenium through
//! chromium-driver (tests/py/browser_study.py says what it checks and against what).
//!
//! CI installs chromium and chromium-driver (`.ci/run`), so there a missing browser FAILS this
//! test. On a machine without them the test fails too, unless `LOOPWRIGHT_SKIP_BROWSER=1` says to
//! skip, and then it prints why. Screenshots go to a temporary folder, or to `gallery/` with
//! `LOOPWRIGHT_GALLERY=1` (the command that made the gallery's pictures, see gallery/README.md).

mod common;

use std::io::{BufRead, BufReader};
use std::path::{Path, PathBuf};
use std::process::{Child, Command, Stdio};

/// The server, stopped when the test ends however it ends.
struct Server(Child);

impl Drop for Server {
    fn drop(&mut self) {
        let _ = self.0.kill();
        let _ = self.0.wait();
    }
}

/// Start `loopwright serve --port 0` and read the URL it prints.
fn start_server() -> (Server, String) {
    let mut child = Command::new(env!("CARGO_BIN_EXE_loopwright"))
        .args(["serve", "--port", "0"])
        .stdout(Stdio::piped())
        .spawn()
        .expect("start loopwright serve");
    let stdout = child.stdout.take().expect("server stdout");
    let server = Server(child);
    let mut first = String::new();
    BufReader::new(stdout)
        .read_line(&mut first)
        .expect("server prints its URL");
    let url = first
        .split_whitespace()
        .find(|w| w.starts_with("http://"))
        .unwrap_or_else(|| panic!("no URL in the server's first line: {first:?}"))
        .to_string();
    (server, url)
}

fn browser_present() -> Result<(), String> {
    let chromium = std::env::var("LOOPWRIGHT_CHROMIUM").unwrap_or("/usr/bin/chromium".into());
    let driver = std::env::var("LOOPWRIGHT_CHROMEDRIVER").unwrap_or("/usr/bin/chromedriver".into());
    for p in [&chromium, &driver] {
        if !Path::new(p).exists() {
            return Err(format!(
                "{p} is missing: apt-get install chromium chromium-driver (as .ci/run does)"
            ));
        }
    }
    Ok(())
}

#[test]
fn study_page_in_chromium_matches_the_command_line() {
    if let Err(why) = browser_present() {
        if std::env::var("LOOPWRIGHT_SKIP_BROWSER").as_deref() == Ok("1") {
            eprintln!("SKIPPED (LOOPWRIGHT_SKIP_BROWSER=1): {why}");
            return;
        }
        panic!("{why}\n(set LOOPWRIGHT_SKIP_BROWSER=1 to skip on a machine without a browser)");
    }
    let root = PathBuf::from(env!("CARGO_MANIFEST_DIR"));
    let work = tempfile::tempdir().unwrap();
    let gallery = if std::env::var("LOOPWRIGHT_GALLERY").as_deref() == Ok("1") {
        root.join("gallery")
    } else {
        work.path().join("gallery")
    };
    let (_server, url) = start_server();
    let out = common::python(
        "browser_study.py",
        &[
            Path::new(&url),
            Path::new(env!("CARGO_BIN_EXE_loopwright")),
            &root,
            work.path(),
            &gallery,
        ],
        &[],
    );
    print!("{out}");
    // The script asserts each check; these lines say that every one of them ran.
    for line in [
        "demo brief designed on load",
        "height shown",
        "DXF download",
        "applied: feasible",
        "sweep of 18 designs finished",
    ] {
        assert!(out.contains(line), "missing check '{line}' in:\n{out}");
    }
    for shot in [
        "study-page-demo.png",
        "study-page-23ms-5g.png",
        "study-page-infeasible.png",
        "study-page-sweep.png",
    ] {
        let len = std::fs::metadata(gallery.join(shot)).map_or(0, |m| m.len());
        assert!(
            len > 10_000,
            "screenshot {shot} missing or empty ({len} bytes)"
        );
    }
}
