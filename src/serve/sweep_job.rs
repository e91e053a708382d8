//! A sweep started from the page: one at a time, on its own thread, with progress the page polls.
//!
//! The grid is capped ([`MAX_SWEEP_DESIGNS`]) so that one request cannot ask for hours of work;
//! the command line has no cap because its user owns the machine. The CSV and picture are made by
//! the same functions `loopwright sweep` writes with.

use serde::Deserialize;
use serde_json::{Value, json};
use std::collections::BTreeMap;
use std::sync::atomic::{AtomicUsize, Ordering};
use std::sync::{Arc, Mutex};

use super::api::{Answer, content_type_of};
use super::fields::{self, BriefRequest, Refused};
use crate::export::{overlay, study};
use crate::report::CAUTION;
use crate::sweep::{self, AxisText, SweepInput, SweepSpec};

/// Most designs one sweep from the page may ask for (each takes up to a few tens of ms).
pub const MAX_SWEEP_DESIGNS: usize = 600;

/// A sweep request: the brief, and each axis as the `sweep` flags take it.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct SweepRequest {
    #[serde(default)]
    pub brief_toml: String,
    #[serde(default)]
    pub fields: BTreeMap<String, String>,
    /// `START..END:COUNT` or one value, as `--entry-speed` of `sweep` (units allowed).
    #[serde(default)]
    pub entry_speed: String,
    #[serde(default)]
    pub max_g: String,
    #[serde(default)]
    pub min_top_g: String,
    /// Families, comma-separated; empty: all.
    #[serde(default)]
    pub shapes: String,
}

/// Files by name, as the exporters give them.
type Files = Vec<(String, Vec<u8>)>;

/// What the page sees of the current sweep.
#[derive(Default)]
struct Job {
    id: u64,
    total: usize,
    done: Arc<AtomicUsize>,
    /// The CSV and SVG (file names and bytes) once finished, or why it failed.
    result: Option<Result<Files, String>>,
}

/// The one sweep the server runs at a time.
#[derive(Default, Clone)]
pub struct Sweeps {
    job: Arc<Mutex<Option<Job>>>,
}

fn axis(text: &str) -> Option<AxisText> {
    (!text.trim().is_empty()).then(|| AxisText::Text(text.to_string()))
}

/// The sweep a request asks for, checked and capped.
pub fn spec_of(req: &SweepRequest) -> Result<SweepSpec, Refused> {
    let base = fields::merged_input(&BriefRequest {
        brief_toml: req.brief_toml.clone(),
        fields: req.fields.clone(),
    })?;
    let input = SweepInput {
        entry_speed: axis(&req.entry_speed),
        max_g: axis(&req.max_g),
        min_top_g: axis(&req.min_top_g),
        shapes: (!req.shapes.trim().is_empty())
            .then(|| req.shapes.split(',').map(str::to_string).collect()),
    };
    let spec = SweepSpec::new(base, &input).map_err(|e| Refused(e.to_string()))?;
    if spec.len() > MAX_SWEEP_DESIGNS {
        return Err(Refused(format!(
            "the sweep asks for {} designs; the study page runs at most {MAX_SWEEP_DESIGNS} at a time\n\
             hint: use fewer steps, or run `loopwright sweep` on the command line for big grids",
            spec.len()
        )));
    }
    Ok(spec)
}

impl Sweeps {
    /// Start a sweep (409 if one is running).
    pub fn start(&self, req: &SweepRequest) -> Answer {
        let spec = match spec_of(req) {
            Ok(s) => s,
            Err(e) => return Answer::refused(0, &e.0),
        };
        let Ok(mut slot) = self.job.lock() else {
            return Answer::refused(0, "the sweep state is unavailable; restart the server");
        };
        if slot.as_ref().is_some_and(|j| j.result.is_none()) {
            return Answer::json(
                409,
                &json!({"status": "error", "error": "a sweep is already running; wait for it to finish", "caution": CAUTION}),
            );
        }
        let id = slot.as_ref().map_or(1, |j| j.id + 1);
        let total = spec.len();
        let done = Arc::new(AtomicUsize::new(0));
        *slot = Some(Job {
            id,
            total,
            done: done.clone(),
            result: None,
        });
        drop(slot);
        let me = self.clone();
        std::thread::spawn(move || {
            let rows = sweep::run(&spec, None, &|| {
                done.fetch_add(1, Ordering::Relaxed);
            });
            let name = &spec.base_brief.name;
            let files = study::sweep_csv(&rows, spec.len(), &spec.id())
                .map(|csv| {
                    vec![
                        (format!("{name}-sweep.csv"), csv),
                        (
                            format!("{name}-sweep.svg"),
                            overlay::sweep_summary_svg(
                                &rows,
                                &spec.base_brief.title,
                                spec.base_brief.objective,
                            )
                            .into_bytes(),
                        ),
                    ]
                })
                .map_err(|e| e.to_string());
            if let Ok(mut slot) = me.job.lock()
                && let Some(job) = slot.as_mut().filter(|j| j.id == id)
            {
                job.result = Some(files);
            }
        });
        Answer::json(
            200,
            &json!({"status": "started", "job": id, "total": total, "caution": CAUTION}),
        )
    }

    /// Progress of the current sweep, with the picture once it is finished.
    pub fn status(&self) -> Answer {
        let Ok(slot) = self.job.lock() else {
            return Answer::refused(0, "the sweep state is unavailable; restart the server");
        };
        let Some(job) = slot.as_ref() else {
            return Answer::json(
                404,
                &json!({"status": "error", "error": "no sweep has been started", "caution": CAUTION}),
            );
        };
        let mut v = json!({
            "job": job.id,
            "total": job.total,
            "done": job.done.load(Ordering::Relaxed),
            "caution": CAUTION,
        });
        match &job.result {
            None => v["status"] = json!("running"),
            Some(Err(e)) => {
                v["status"] = json!("failed");
                v["error"] = json!(e);
            }
            Some(Ok(files)) => {
                v["status"] = json!("finished");
                v["files"] = Value::from(files.iter().map(|(n, _)| n.clone()).collect::<Vec<_>>());
                if let Some((_, svg)) = files.iter().find(|(n, _)| n.ends_with(".svg")) {
                    v["svg"] = json!(String::from_utf8_lossy(svg));
                }
            }
        }
        Answer::json(200, &v)
    }

    /// One file of the finished sweep, by name.
    pub fn file(&self, wanted: &str) -> Answer {
        let Ok(slot) = self.job.lock() else {
            return Answer::refused(0, "the sweep state is unavailable; restart the server");
        };
        let found = slot
            .as_ref()
            .and_then(|j| j.result.as_ref())
            .and_then(|r| r.as_ref().ok())
            .and_then(|files| files.iter().find(|(n, _)| n == wanted));
        match found {
            Some((name, bytes)) => Answer {
                status: 200,
                content_type: content_type_of(name),
                body: bytes.clone(),
                file_name: Some(name.clone()),
                work_ms: 0.0,
            },
            None => Answer::json(
                404,
                &json!({"status": "error", "error": format!("no finished sweep file '{wanted}'"), "caution": CAUTION}),
            ),
        }
    }
}
