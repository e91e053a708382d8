//! Peak memory of a long train (issue 12: "peak memory, 40-car brief < 100 MB"). Its own test
//! file, so that the process's only child is the design measured: `getrusage(RUSAGE_CHILDREN)`
//! reports the largest resident set of any waited-for child (Linux man page getrusage(2): ru_maxrss
//! in kilobytes).

use std::process::Command;

#[test]
fn forty_car_demo_design_stays_under_100_mb() {
    let out = tempfile::tempdir().unwrap();
    let brief = concat!(env!("CARGO_MANIFEST_DIR"), "/examples/demo-brief.toml");
    let status = Command::new(env!("CARGO_BIN_EXE_loopwright"))
        .args(["design", brief, "--cars", "40", "--quiet", "--out"])
        .arg(out.path())
        .status()
        .unwrap();
    assert!(status.success(), "the 40-car demo design failed: {status}");
    let json = std::fs::read_to_string(out.path().join("copperwing.json")).unwrap();
    assert!(json.contains("\"cars\": 40"), "not a 40-car design");
    // SAFETY: getrusage writes one plain struct that we own.
    let peak_kb = unsafe {
        let mut u: libc::rusage = std::mem::zeroed();
        assert_eq!(libc::getrusage(libc::RUSAGE_CHILDREN, &mut u), 0);
        u.ru_maxrss
    };
    // Measured 84 MB after the table of remembered places was capped (157 MB before).
    assert!(
        peak_kb > 1_000 && peak_kb < 100_000,
        "peak resident set {peak_kb} kB (target < 100 MB)"
    );
}
