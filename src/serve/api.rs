//! The page's questions and their answers: one design, the family comparison, the files of a
//! design, the brief as TOML. Every answer is JSON (or the file's bytes) and carries the caution.
//!
//! Designs come only from the one model's public functions ([`design`], [`compare`]) and files
//! only from [`design_files`], the function `loopwright design` writes with, so a download is the
//! file the command line writes for the same brief, byte for byte.

use serde::{Deserialize, Serialize};
use serde_json::{Value, json};
use std::time::Instant;

use super::fields::{self, BriefRequest, FLAGS, Refused};
use crate::brief::{BriefInput, ShapeKind};
use crate::compare::compare;
use crate::export::{design_files, json::report, overlay, plot, svg};
use crate::optimiser::{Infeasible, design};
use crate::report::CAUTION;

/// An answer: HTTP status, content type, body, and a download file name if it is a file.
#[derive(Debug)]
pub struct Answer {
    pub status: u16,
    pub content_type: &'static str,
    pub body: Vec<u8>,
    pub file_name: Option<String>,
    /// Milliseconds of server work, for the `Server-Timing` header.
    pub work_ms: f64,
}

impl Answer {
    pub fn json(status: u16, v: &Value) -> Answer {
        Answer {
            status,
            content_type: "application/json",
            body: serde_json::to_vec(v).unwrap_or_else(|_| b"{}".to_vec()),
            file_name: None,
            work_ms: 0.0,
        }
    }

    /// A refused request: 400 with the message (and the request's sequence number if it had one).
    pub fn refused(seq: u64, message: &str) -> Answer {
        Answer::json(
            400,
            &json!({"seq": seq, "status": "error", "error": message, "caution": CAUTION}),
        )
    }
}

/// A request about one brief, with the page's sequence number (echoed so that the page can drop
/// an answer to a question it no longer asks).
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct StudyRequest {
    #[serde(default)]
    pub seq: u64,
    #[serde(default)]
    pub brief_toml: String,
    #[serde(default)]
    pub fields: std::collections::BTreeMap<String, String>,
    /// For `/api/file`: which of the design's files.
    #[serde(default)]
    pub file: Option<String>,
}

impl StudyRequest {
    /// The brief part of the request.
    pub fn brief(&self) -> BriefRequest {
        BriefRequest {
            brief_toml: self.brief_toml.clone(),
            fields: self.fields.clone(),
        }
    }
}

/// A hint the page can apply with a click: the field, its flag and the text to put there.
#[derive(Debug, Serialize)]
struct Hint {
    text: String,
    flag: &'static str,
    value: String,
}

fn infeasible_json(e: &Infeasible) -> Value {
    let hints: Vec<Hint> = e
        .nearest
        .iter()
        .filter_map(|n| {
            let (flag, value) = fields::hint_flag(n.field, n.value)?;
            Some(Hint {
                text: n.to_string(),
                flag,
                value,
            })
        })
        .collect();
    json!({"shape": e.shape.name(), "message": e.to_string(), "reasons": e.reasons, "hints": hints})
}

fn timed(seq: u64, work: impl FnOnce() -> Result<Value, Refused>) -> Answer {
    let started = Instant::now();
    let out = work();
    let work_ms = started.elapsed().as_secs_f64() * 1e3;
    let mut a = match out {
        Ok(mut v) => {
            v["seq"] = json!(seq);
            v["caution"] = json!(CAUTION);
            v["server_ms"] = json!(work_ms);
            Answer::json(200, &v)
        }
        Err(e) => Answer::refused(seq, &e.0),
    };
    a.work_ms = work_ms;
    a
}

/// `/api/design`: the brief's design — report figures and checks, elevation and loads drawings —
/// or why it is infeasible and the hints.
pub fn design_answer(req: &StudyRequest) -> Answer {
    timed(req.seq, || {
        let brief = fields::resolve(&req.brief())?;
        let started = Instant::now();
        let designed = design(&brief);
        // The model's own share of the answer (the rest is drawing and encoding).
        let design_ms = started.elapsed().as_secs_f64() * 1e3;
        Ok(match designed {
            Ok(d) => {
                let names: Vec<String> = file_names(&brief.name, d.best.train.cars.len());
                json!({
                    "status": "ok",
                    "shape": brief.shape.name(),
                    "report": report(&d),
                    "elevation_svg": svg::elevation_svg(&d),
                    "loads_svg": plot::loads_svg(&d),
                    "files": names,
                    "design_ms": design_ms,
                })
            }
            Err(e) => {
                json!({"status": "infeasible", "infeasible": infeasible_json(&e), "design_ms": design_ms})
            }
        })
    })
}

/// The names [`design_files`] gives a design's files (the page lists them before asking for one).
fn file_names(name: &str, cars: usize) -> Vec<String> {
    let mut v: Vec<String> = [
        "{}.dxf",
        "{}.svg",
        "{}-loads.svg",
        "{}-loads.csv",
        "{}.json",
    ]
    .iter()
    .map(|p| p.replace("{}", name))
    .collect();
    if cars > 1 {
        v.push(format!("{name}-cars.csv"));
    }
    v
}

/// `/api/compare`: every family on the brief; an infeasible family is shown at its binding limit
/// with the limits it fails there.
pub fn compare_answer(req: &StudyRequest) -> Answer {
    timed(req.seq, || {
        let brief = fields::resolve(&req.brief())?;
        let c = compare(&brief, &ShapeKind::ALL);
        let entries: Vec<Value> = c
            .entries
            .iter()
            .map(|e| {
                let fails: Vec<&str> = e
                    .failing
                    .as_ref()
                    .map(|f| f.fails.iter().map(|l| l.field()).collect())
                    .unwrap_or_default();
                json!({
                    "shape": e.kind.name(),
                    "colour": overlay::family_colour(e.kind),
                    "feasible": e.result.is_ok(),
                    "figures": e.shown_figures(),
                    "fails": fails,
                    "sized": e.failing.as_ref().map(|f| f.sized.clone()),
                    "reason": e.result.as_ref().err().map(|i| i.to_string()),
                })
            })
            .collect();
        Ok(json!({
            "status": "ok",
            "entries": entries,
            "elevation_svg": overlay::elevation_overlay_svg(&c),
        }))
    })
}

/// `/api/file`: one of the design's files, the bytes `loopwright design` writes for this brief.
pub fn file_answer(req: &StudyRequest) -> Answer {
    let started = Instant::now();
    let out = (|| -> Result<(String, Vec<u8>), Refused> {
        let wanted = req
            .file
            .as_deref()
            .ok_or_else(|| Refused("say which file: \"file\": \"<name>.dxf\"".into()))?;
        let brief = fields::resolve(&req.brief())?;
        let d = design(&brief).map_err(|e| {
            Refused(format!(
                "no files: {}",
                crate::report::infeasible_message(&e)
            ))
        })?;
        let files = design_files(&d).map_err(|e| Refused(e.to_string()))?;
        let names: Vec<String> = files.iter().map(|(n, _)| n.clone()).collect();
        files.into_iter().find(|(n, _)| n == wanted).ok_or_else(|| {
            Refused(format!(
                "this design has no file '{wanted}'; it has {}",
                names.join(", ")
            ))
        })
    })();
    match out {
        Ok((name, bytes)) => Answer {
            status: 200,
            content_type: content_type_of(&name),
            body: bytes,
            file_name: Some(name),
            work_ms: started.elapsed().as_secs_f64() * 1e3,
        },
        Err(e) => Answer::refused(req.seq, &e.0),
    }
}

/// The content type of a file by its extension.
pub fn content_type_of(name: &str) -> &'static str {
    match name.rsplit('.').next() {
        Some("svg") => "image/svg+xml",
        Some("csv") => "text/csv; charset=utf-8",
        Some("json") => "application/json",
        Some("toml") => "application/toml",
        _ => "application/dxf",
    }
}

/// `/api/brief`: the page's brief as one TOML file (the file overlaid with the fields), and the
/// field texts of that brief for the panel. The brief is checked first: only a brief `design`
/// accepts is offered for download.
pub fn brief_answer(req: &StudyRequest) -> Answer {
    timed(req.seq, || {
        let merged = fields::merged_input(&req.brief())?;
        fields::resolve(&req.brief())?;
        let file = fields::file_input(&req.brief_toml)?;
        Ok(json!({
            "status": "ok",
            "toml": brief_toml(&merged)?,
            "file_fields": field_texts(&file),
            "title": file.title,
        }))
    })
}

fn field_texts(input: &BriefInput) -> Value {
    let map: serde_json::Map<String, Value> = FLAGS
        .iter()
        .map(|f| (f.to_string(), json!(fields::field_text(input, f))))
        .collect();
    Value::Object(map)
}

/// A brief as a TOML file, the caution first (as comments, which the brief reader skips).
pub fn brief_toml(input: &BriefInput) -> Result<String, Refused> {
    let body = toml::to_string(input).map_err(|e| Refused(format!("cannot write TOML: {e}")))?;
    let mut out = String::from("# Brief written by the loopwright study page.\n");
    for line in CAUTION.split(". ") {
        out.push_str("# ");
        out.push_str(line.trim_end_matches('.'));
        out.push_str(".\n");
    }
    out.push_str(&body);
    Ok(out)
}
