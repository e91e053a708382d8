//! The study page: `loopwright serve` answers a browser on the local machine with one page that
//! designs the brief as it is typed (HTTP via `tiny_http`, every asset built into the binary).
//!
//! This module owns the HTTP side only: routes, the body cap, turning any failure into a clear 4xx
//! answer, and the page's assets. What a request means is in [`fields`] (the brief, parsed as the
//! command line parses it), [`api`] (designs, comparison, files, brief TOML) and [`sweep_job`].
//! It chains no stages itself: designs come from the one model's public functions.

pub mod api;
pub mod fields;
pub mod sweep_job;

use std::io::{Read, Write};
use std::net::{IpAddr, SocketAddr};
use std::sync::Arc;

use serde::de::DeserializeOwned;
use serde_json::json;
use tiny_http::{Header, Method, Request, Response, Server};

use crate::brief::DEMO_BRIEF_TOML;
use crate::report::CAUTION;
use api::Answer;

/// Largest request body accepted, bytes (a brief is a few hundred bytes).
pub const MAX_BODY_BYTES: usize = 128 * 1024;

/// Requests answered at once; designs run in parallel inside each (rayon).
const WORKERS: usize = 4;

const PAGE_HTML: &str = include_str!("page.html");
const PAGE_JS: &str = include_str!("page.js");
const PAGE_CSS: &str = include_str!("page.css");

/// A server that could not start.
#[derive(Debug, thiserror::Error)]
pub enum ServeError {
    #[error("--bind '{0}' is not an IP address (e.g. 127.0.0.1 or ::1)")]
    BadAddress(String),
    #[error(
        "cannot listen on {addr}: {message}\nhint: choose another --port, or 0 for any free port"
    )]
    Listen { addr: SocketAddr, message: String },
}

/// The address to listen on, checked.
pub fn address(bind: &str, port: u16) -> Result<SocketAddr, ServeError> {
    let ip: IpAddr = bind
        .trim()
        .parse()
        .map_err(|_| ServeError::BadAddress(bind.to_string()))?;
    Ok(SocketAddr::new(ip, port))
}

/// Start the server, print its URL, and answer requests until the process is stopped.
pub fn run(bind: &str, port: u16) -> Result<(), ServeError> {
    let addr = address(bind, port)?;
    let server = Server::http(addr).map_err(|e| ServeError::Listen {
        addr,
        message: e.to_string(),
    })?;
    let actual = server.server_addr().to_ip().unwrap_or(addr);
    let mut out = std::io::stdout().lock();
    if !addr.ip().is_loopback() {
        let _ = writeln!(
            out,
            "warning: --bind {} serves the page beyond this machine: anyone who can reach it can run designs here",
            addr.ip()
        );
    }
    let _ = writeln!(
        out,
        "loopwright study page: http://{actual}/ (Ctrl-C to stop)\n{CAUTION}"
    );
    let _ = out.flush();
    drop(out);
    let server = Arc::new(server);
    let sweeps = sweep_job::Sweeps::default();
    let workers: Vec<_> = (0..WORKERS)
        .map(|_| {
            let (server, sweeps) = (server.clone(), sweeps.clone());
            std::thread::spawn(move || {
                while let Ok(req) = server.recv() {
                    answer(req, &sweeps);
                }
            })
        })
        .collect();
    for w in workers {
        let _ = w.join();
    }
    Ok(())
}

fn header(name: &str, value: &str) -> Option<Header> {
    Header::from_bytes(name.as_bytes(), value.as_bytes()).ok()
}

/// Answer one request; a failure to send (the browser went away) is nobody's business.
fn answer(mut req: Request, sweeps: &sweep_job::Sweeps) {
    let body = read_body(&mut req);
    let method = req.method().clone();
    let url = req.url().to_string();
    let a = match body {
        Err(a) => a,
        Ok(body) => std::panic::catch_unwind(std::panic::AssertUnwindSafe(|| {
            route(&method, &url, &body, sweeps)
        }))
        .unwrap_or_else(|_| {
            Answer::json(
                500,
                &json!({"status": "error", "error": "internal error while answering; please report the request", "caution": CAUTION}),
            )
        }),
    };
    let mut resp = Response::from_data(a.body).with_status_code(a.status);
    let mut headers = vec![
        header("Content-Type", a.content_type),
        header("Cache-Control", "no-store"),
        header("X-Content-Type-Options", "nosniff"),
        header("Server-Timing", &format!("work;dur={:.2}", a.work_ms)),
    ];
    if let Some(name) = &a.file_name {
        headers.push(header(
            "Content-Disposition",
            &format!("attachment; filename=\"{name}\""),
        ));
    }
    for h in headers.into_iter().flatten() {
        resp.add_header(h);
    }
    let _ = req.respond(resp);
}

/// The body, at most [`MAX_BODY_BYTES`], or the 4xx answer to a body that is too big or broken.
fn read_body(req: &mut Request) -> Result<Vec<u8>, Answer> {
    let too_big = || {
        Answer::json(
            413,
            &json!({"status": "error", "error": format!("request body larger than {MAX_BODY_BYTES} bytes; a brief is a small TOML file"), "caution": CAUTION}),
        )
    };
    if req.body_length().is_some_and(|n| n > MAX_BODY_BYTES) {
        return Err(too_big());
    }
    let mut body = Vec::new();
    req.as_reader()
        .take(MAX_BODY_BYTES as u64 + 1)
        .read_to_end(&mut body)
        .map_err(|e| Answer::refused(0, &format!("cannot read the request body: {e}")))?;
    if body.len() > MAX_BODY_BYTES {
        return Err(too_big());
    }
    Ok(body)
}

fn parse<T: DeserializeOwned>(body: &[u8]) -> Result<T, Answer> {
    serde_json::from_slice(body).map_err(|e| {
        Answer::refused(
            0,
            &format!("the request is not the JSON this page sends: {e}"),
        )
    })
}

fn asset(content_type: &'static str, text: &str) -> Answer {
    Answer {
        status: 200,
        content_type,
        body: text.as_bytes().to_vec(),
        file_name: None,
        work_ms: 0.0,
    }
}

fn route(method: &Method, url: &str, body: &[u8], sweeps: &sweep_job::Sweeps) -> Answer {
    let (path, query) = url.split_once('?').unwrap_or((url, ""));
    let study = |f: fn(&api::StudyRequest) -> Answer| match parse(body) {
        Ok(r) => f(&r),
        Err(a) => a,
    };
    match (method, path) {
        (Method::Get, "/" | "/index.html") => asset("text/html; charset=utf-8", PAGE_HTML),
        (Method::Get, "/page.js") => asset("text/javascript; charset=utf-8", PAGE_JS),
        (Method::Get, "/page.css") => asset("text/css; charset=utf-8", PAGE_CSS),
        (Method::Get, "/api/demo") => Answer::json(
            200,
            &json!({"brief_toml": DEMO_BRIEF_TOML, "flags": fields::FLAGS, "caution": CAUTION}),
        ),
        (Method::Post, "/api/design") => study(api::design_answer),
        (Method::Post, "/api/compare") => study(api::compare_answer),
        (Method::Post, "/api/file") => study(api::file_answer),
        (Method::Post, "/api/brief") => study(api::brief_answer),
        (Method::Post, "/api/sweep") => match parse(body) {
            Ok(r) => sweeps.start(&r),
            Err(a) => a,
        },
        (Method::Get, "/api/sweep/status") => sweeps.status(),
        (Method::Get, "/api/sweep/file") => {
            let name = query
                .split('&')
                .find_map(|kv| kv.strip_prefix("name="))
                .unwrap_or("");
            sweeps.file(name)
        }
        (
            _,
            "/" | "/index.html" | "/page.js" | "/page.css" | "/api/demo" | "/api/sweep/status"
            | "/api/sweep/file",
        ) => Answer::json(
            405,
            &json!({"status": "error", "error": format!("{path} answers GET only"), "caution": CAUTION}),
        ),
        (_, p)
            if p.starts_with("/api/")
                && [
                    "/api/design",
                    "/api/compare",
                    "/api/file",
                    "/api/brief",
                    "/api/sweep",
                ]
                .contains(&p) =>
        {
            Answer::json(
                405,
                &json!({"status": "error", "error": format!("{path} answers POST only"), "caution": CAUTION}),
            )
        }
        _ => Answer::json(
            404,
            &json!({"status": "error", "error": format!("no page or question at {path}"), "caution": CAUTION}),
        ),
    }
}
