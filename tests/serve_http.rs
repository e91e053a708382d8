//! The study page's HTTP side against hostile requests, and its brief parsing against the command
//! line's. The independent expectation for every brief is `loopwright design` itself: the page
//! must accept exactly what the CLI accepts, refuse what it refuses (CLI exit 2, page 400) with
//! the same reason, and answer anything else with a clear 4xx, never a panic or a dropped line.

use std::io::{Read, Write};
use std::net::TcpStream;
use std::path::Path;
use std::process::{Child, Command, Stdio};

use clap::Parser;
use loopwright::cli::{Cli, CliError, Command as CliCommand, run};
use loopwright::serve::fields;
use serde_json::{Value, json};

struct Server(Child, String);

impl Drop for Server {
    fn drop(&mut self) {
        let _ = self.0.kill();
        let _ = self.0.wait();
    }
}

fn start() -> Server {
    use std::io::BufRead;
    let mut child = Command::new(env!("CARGO_BIN_EXE_loopwright"))
        .args(["serve", "--port", "0"])
        .stdout(Stdio::piped())
        .spawn()
        .expect("start loopwright serve");
    let mut line = String::new();
    std::io::BufReader::new(child.stdout.take().unwrap())
        .read_line(&mut line)
        .unwrap();
    let host = line
        .split_whitespace()
        .find_map(|w| w.strip_prefix("http://"))
        .expect("URL printed")
        .trim_end_matches('/')
        .to_string();
    Server(child, host)
}

/// One raw HTTP/1.0 exchange (no chunked answers): status and body.
fn raw(s: &Server, head: &str, body: &[u8]) -> (u16, Vec<u8>) {
    let mut c = TcpStream::connect(&s.1).unwrap();
    c.write_all(head.as_bytes()).unwrap();
    c.write_all(body).unwrap();
    // Done sending (a body shorter than declared ends here too, so the server stops waiting).
    c.shutdown(std::net::Shutdown::Write).unwrap();
    let mut out = Vec::new();
    c.read_to_end(&mut out).unwrap();
    let split = out
        .windows(4)
        .position(|w| w == b"\r\n\r\n")
        .expect("an HTTP answer");
    let status: u16 = String::from_utf8_lossy(&out[9..12]).parse().unwrap();
    (status, out[split + 4..].to_vec())
}

fn post(s: &Server, path: &str, body: &[u8]) -> (u16, Vec<u8>) {
    let head = format!(
        "POST {path} HTTP/1.0\r\nHost: x\r\nContent-Type: application/json\r\nContent-Length: {}\r\n\r\n",
        body.len()
    );
    raw(s, &head, body)
}

fn post_json(s: &Server, path: &str, v: &Value) -> (u16, Value) {
    let (code, body) = post(s, path, &serde_json::to_vec(v).unwrap());
    let v = serde_json::from_slice(&body).unwrap_or_else(|e| {
        panic!(
            "{path} answered {code} with non-JSON ({e}): {:?}",
            String::from_utf8_lossy(&body)
        )
    });
    (code, v)
}

fn demo() -> String {
    std::fs::read_to_string(Path::new(env!("CARGO_MANIFEST_DIR")).join("examples/demo-brief.toml"))
        .unwrap()
}

/// `loopwright design DEMO --flag value ...` in-process: Ok(loop height) or the CLI's message and exit code.
fn cli_design(flags: &[(&str, &str)]) -> Result<f64, (String, i32)> {
    let dir = tempfile::tempdir().unwrap();
    let demo = Path::new(env!("CARGO_MANIFEST_DIR")).join("examples/demo-brief.toml");
    let mut argv = vec![
        "loopwright".to_string(),
        "design".into(),
        demo.display().to_string(),
    ];
    for (f, v) in flags {
        argv.push(format!("--{f}={v}"));
    }
    argv.extend([
        "--out".into(),
        dir.path().display().to_string(),
        "-q".into(),
    ]);
    let cli = Cli::try_parse_from(&argv).map_err(|e| (e.to_string(), 2))?;
    match run(&cli) {
        Ok(_) => {
            let json: Value = serde_json::from_slice(
                &std::fs::read(
                    std::fs::read_dir(dir.path())
                        .unwrap()
                        .find_map(|e| {
                            let p = e.unwrap().path();
                            (p.extension()? == "json").then_some(p)
                        })
                        .unwrap(),
                )
                .unwrap(),
            )
            .unwrap();
            Ok(json["loop_height_m"].as_f64().unwrap())
        }
        Err(e @ CliError::Infeasible(_)) => Err((e.to_string(), e.exit_code())),
        Err(e) => Err((e.to_string(), e.exit_code())),
    }
}

#[test]
fn every_brief_field_is_accepted_or_refused_as_the_cli_does() {
    let s = start();
    let cases: &[(&str, &str)] = &[
        ("entry-speed", "90 km/h"),
        ("entry-speed", "56mph"),
        ("entry-speed", "fast"),
        ("entry-speed", "-3"),
        ("max-g", "abc"),
        ("max-g", "nan"),
        ("max-g", "-1"),
        ("max-g", "5.5"),
        ("max-g", " 5"),
        ("min-top-g", "9"),
        ("max-onset", "none"),
        ("max-onset", "off-ish"),
        ("max-height", "inf"),
        ("max-height", "3"),
        ("min-radius", "0"),
        ("height", "1e9"),
        ("shape", "oval"),
        ("shape", "spline"),
        ("heartline-height", "-0.5"),
        ("rolling-resistance", "2"),
        ("drag-area", "-1"),
        ("mass", "0"),
        ("air-density", "1e300"),
        ("lead-length", "-1"),
        ("spacing", "0"),
        ("spacing", "1e-9"),
        ("cars", "2.5"),
        ("cars", "99999999999"),
        ("cars", "3"),
        ("car-pitch", "0"),
        ("lateral-shift", "1e6"),
        ("name", "../escape"),
        ("name", "a/b"),
    ];
    for &(flag, text) in cases {
        let cli = cli_design(&[(flag, text)]);
        let (code, page) = post_json(
            &s,
            "/api/design",
            &json!({"seq": 7, "brief_toml": demo(), "fields": {flag: text}}),
        );
        assert_eq!(page["seq"], 7, "--{flag} {text}: sequence number echoed");
        match cli {
            Ok(height_m) => {
                assert_eq!(code, 200, "--{flag} {text}: CLI accepts, page said {page}");
                assert_eq!(
                    page["report"]["loop_height_m"].as_f64(),
                    Some(height_m),
                    "--{flag} {text}: same loop as the CLI"
                );
            }
            Err((msg, 3)) => {
                assert_eq!(code, 200, "--{flag} {text}: infeasible is an answer");
                assert_eq!(page["status"], "infeasible", "--{flag} {text}");
                assert!(msg.contains(page["infeasible"]["message"].as_str().unwrap()));
            }
            Err((msg, exit)) => {
                assert_eq!(exit, 2, "--{flag} {text}: {msg}");
                assert_eq!(
                    code, 400,
                    "--{flag} {text}: CLI refuses ({msg}), page said {page}"
                );
                let page_msg = page["error"].as_str().unwrap();
                // The reason: a brief field's message is the same text; a value the flag parser
                // rejects carries the same parser error (clap formats its own line around it).
                let reason = msg
                    .lines()
                    .next()
                    .unwrap()
                    .rsplit(": ")
                    .next()
                    .unwrap()
                    .trim();
                assert!(
                    page_msg.contains(reason),
                    "--{flag} {text}: CLI says {msg:?}, page says {page_msg:?}"
                );
            }
        }
    }
}

#[test]
fn the_page_flags_make_the_brief_the_cli_flags_make() {
    // In-process: the page's parse of each flag equals the CLI's `BriefArgs::as_input`.
    let flags = [
        ("shape", "circle"),
        ("entry-speed", "85 km/h"),
        ("max-g", "4.2"),
        ("min-top-g", "-0.5"),
        ("max-onset", "off"),
        ("max-height", "30"),
        ("min-radius", "5"),
        ("height", "20"),
        ("heartline-height", "1.2"),
        ("rolling-resistance", "0.02"),
        ("drag-area", "0.8"),
        ("mass", "4000"),
        ("air-density", "1.2"),
        ("lead-length", "12"),
        ("spacing", "0.3"),
        ("cars", "4"),
        ("car-pitch", "2.2"),
        ("lateral-shift", "-1.5"),
        ("name", "trial"),
    ];
    assert_eq!(
        flags.len(),
        fields::FLAGS.len(),
        "every page field is tried"
    );
    let mut argv = vec!["loopwright".to_string(), "design".into()];
    argv.extend(flags.iter().map(|(f, v)| format!("--{f}={v}")));
    let CliCommand::Design(args) = Cli::try_parse_from(&argv).unwrap().command else {
        panic!("design parsed as another command");
    };
    let map = flags
        .iter()
        .map(|(f, v)| (f.to_string(), v.to_string()))
        .collect();
    assert_eq!(fields::flags_input(&map).unwrap(), args.brief.as_input());
}

#[test]
fn hostile_requests_get_clear_4xx_answers() {
    let s = start();
    let demo = demo();
    let limits = Path::new(env!("CARGO_MANIFEST_DIR")).join("examples/limits-illustrative.toml");
    // A limit table named over HTTP is never opened, even one that exists.
    let brief = format!("{demo}\nlimits_file = \"{}\"\n", limits.display());
    let (code, v) = post_json(&s, "/api/design", &json!({"brief_toml": brief}));
    assert_eq!(code, 400);
    assert!(v["error"].as_str().unwrap().contains("limits_file"), "{v}");
    let (code, v) = post_json(
        &s,
        "/api/design",
        &json!({"brief_toml": demo, "fields": {"limits": limits.display().to_string()}}),
    );
    assert_eq!(code, 400);
    assert!(v["error"].as_str().unwrap().contains("--limits"), "{v}");
    // Unknown field, unknown key, not JSON, not UTF-8, not TOML.
    for (body, what) in [
        (
            json!({"fields": {"speed": "3"}}).to_string().into_bytes(),
            "unknown brief field",
        ),
        (
            json!({"brief": "x"}).to_string().into_bytes(),
            "unknown field",
        ),
        (b"{not json".to_vec(), "not the JSON"),
        (vec![0xff, 0xfe, 0x00, 0x7b], "not the JSON"),
        (
            json!({"brief_toml": "max_g = [1,"})
                .to_string()
                .into_bytes(),
            "not a valid brief",
        ),
        (
            json!({"brief_toml": "[sweep]\nmax_g = 3"})
                .to_string()
                .into_bytes(),
            "not a valid brief",
        ),
    ] {
        let (code, body) = post(&s, "/api/design", &body);
        let text = String::from_utf8_lossy(&body);
        assert_eq!(code, 400, "{what}: {text}");
        assert!(text.contains(what), "{what}: {text}");
    }
    // Body over the cap, declared or not.
    let big = vec![b' '; loopwright::serve::MAX_BODY_BYTES + 1];
    assert_eq!(post(&s, "/api/design", &big).0, 413);
    let head = "POST /api/design HTTP/1.0\r\nHost: x\r\nContent-Length: 99999999999\r\n\r\n";
    assert_eq!(raw(&s, head, b"{}").0, 413);
    // tiny_http 0.12 aborted the whole server here (it allocated the declared length when
    // dropping the unread body); the vendored fix drains through a fixed buffer.
    assert_eq!(
        raw(&s, head, b"{}").0,
        413,
        "server survived a huge Content-Length"
    );
    // A file the design does not have; a path in the file name is just a name that is not there.
    let (code, v) = post_json(
        &s,
        "/api/file",
        &json!({"brief_toml": demo, "file": "../../etc/passwd"}),
    );
    assert_eq!(code, 400);
    assert!(v["error"].as_str().unwrap().contains("has no file"), "{v}");
    // Sweep grid cap: 30 × 30 × 3 families = 2700 designs > 600.
    let (code, v) = post_json(
        &s,
        "/api/sweep",
        &json!({"brief_toml": demo, "entry_speed": "15..35:30", "max_g": "3..6:30"}),
    );
    assert_eq!(code, 400);
    assert!(v["error"].as_str().unwrap().contains("at most 600"), "{v}");
    let (code, v) = post_json(
        &s,
        "/api/sweep",
        &json!({"brief_toml": demo, "max_g": "6..3:x"}),
    );
    assert_eq!(code, 400, "{v}");
    // Wrong method, unknown path, sweep file before any sweep.
    let get = |p: &str| raw(&s, &format!("GET {p} HTTP/1.0\r\nHost: x\r\n\r\n"), b"").0;
    assert_eq!(get("/api/design"), 405);
    assert_eq!(get("/etc/passwd"), 404);
    assert_eq!(get("/api/sweep/file?name=../../Cargo.toml"), 404);
    assert_eq!(post(&s, "/page.js", b"{}").0, 405);
    // Still answering after all that.
    assert_eq!(get("/"), 200);
}

#[test]
fn downloads_are_the_files_design_writes() {
    // Every file must be byte-identical to the CLI's, the DXF too (its dates and GUIDs are fixed
    // or derived from the brief, issue 11).
    let s = start();
    let dir = tempfile::tempdir().unwrap();
    let demo_path = Path::new(env!("CARGO_MANIFEST_DIR")).join("examples/demo-brief.toml");
    let code = loopwright::cli::main_with_args([
        "loopwright",
        "design",
        demo_path.to_str().unwrap(),
        "--cars=3",
        "--entry-speed=88 km/h",
        "--out",
        dir.path().to_str().unwrap(),
        "-q",
    ]);
    assert_eq!(code, 0);
    let mut names: Vec<String> = std::fs::read_dir(dir.path())
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().to_string())
        // The folder's lock file is the run's, not an output.
        .filter(|n| !n.starts_with('.'))
        .collect();
    names.sort();
    assert_eq!(names.len(), 6, "{names:?}");
    for name in &names {
        let (code, body) = post(
            &s,
            "/api/file",
            json!({"brief_toml": demo(), "fields": {"cars": "3", "entry-speed": "88 km/h"}, "file": name})
                .to_string()
                .as_bytes(),
        );
        assert_eq!(code, 200, "{name}");
        assert_eq!(
            body,
            std::fs::read(dir.path().join(name)).unwrap(),
            "{name}"
        );
    }
}
