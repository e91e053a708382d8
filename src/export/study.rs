//! Study tables: the compare table (CSV and JSON) and the sweep table (CSV), plus merging of
//! sweep shards.
//!
//! Numbers are written with fixed decimals ([`fixed`]) so that the same study gives the same bytes;
//! infeasible designs keep their row, with empty figures and the reason. A merged set of shard
//! CSVs is byte-identical to the unsharded CSV: merging only re-orders the shards' records by grid
//! index, it never re-formats them.

use serde::Serialize;

use super::ExportError;
use super::publish::OutputDigest;
use crate::brief::Brief;
use crate::compare::{Comparison, Entry, KeyFigures};
use crate::report::CAUTION;
use crate::sweep::SweepRow;

/// Decimals of every number in the study tables.
pub const DECIMALS: usize = 6;

/// A number with [`DECIMALS`] decimals; `-0.000000` is written as `0.000000` so signs of
/// rounding noise cannot differ between runs.
pub fn fixed(v: f64) -> String {
    let s = format!("{v:.DECIMALS$}");
    if s.starts_with('-') && s[1..].bytes().all(|b| b == b'0' || b == b'.') {
        s[1..].to_string()
    } else {
        s
    }
}

/// Figure columns shared by the compare and sweep tables.
pub const FIGURE_COLUMNS: [&str; 13] = [
    "loop_height_m",
    "rail_height_m",
    "path_length_m",
    "footprint_length_m",
    "top_radius_m",
    "min_radius_m",
    "peak_normal_g",
    "top_normal_g",
    "top_speed_m_s",
    "peak_onset_g_s",
    "max_load_step_g",
    "time_in_loop_s",
    "exit_speed_m_s",
];

fn figure_cells(f: Option<&KeyFigures>) -> Vec<String> {
    match f {
        None => vec![String::new(); FIGURE_COLUMNS.len()],
        Some(f) => [
            f.loop_height_m,
            f.rail_height_m,
            f.path_length_m,
            f.footprint_length_m,
            f.top_radius_m,
            f.min_radius_m,
            f.peak_normal_g,
            f.top_normal_g,
            f.top_speed_m_s,
            f.peak_onset_g_s,
            f.max_load_step_g,
            f.time_in_loop_s,
            f.exit_speed_m_s,
        ]
        .iter()
        .map(|v| fixed(*v))
        .collect(),
    }
}

fn encode_err(what: &'static str) -> impl Fn(csv::Error) -> ExportError {
    move |e| ExportError::Encode {
        what,
        message: e.to_string(),
    }
}

/// `<name>-compare.csv`: one row per family. An infeasible family's figures are those of its loop
/// sized at its binding limit (`sized_at`), with the limits it fails there (`fails`, brief field
/// names separated by `;`) and the reason; empty when no size meets even that limit.
pub fn compare_csv(c: &Comparison) -> Result<Vec<u8>, ExportError> {
    let enc = encode_err("compare table");
    let mut w = csv::Writer::from_writer(Vec::new());
    let mut header = vec!["shape", "feasible"];
    header.extend(FIGURE_COLUMNS);
    header.extend(["sized_at", "fails", "reason"]);
    w.write_record(&header).map_err(&enc)?;
    for e in &c.entries {
        let f = e.figures();
        let mut rec = vec![
            e.kind.name().to_string(),
            if f.is_ok() { "yes" } else { "no" }.to_string(),
        ];
        rec.extend(figure_cells(e.shown_figures().as_ref()));
        rec.push(
            e.failing
                .as_ref()
                .map_or(String::new(), |s| s.sized.clone()),
        );
        rec.push(fails_of(e).join(";"));
        rec.push(f.err().unwrap_or_default());
        w.write_record(&rec).map_err(&enc)?;
    }
    w.into_inner().map_err(|e| ExportError::Encode {
        what: "compare table",
        message: e.to_string(),
    })
}

/// The brief fields whose limits a family's shown loop fails (none for a feasible family).
fn fails_of(e: &Entry) -> Vec<&'static str> {
    e.failing
        .as_ref()
        .map_or_else(Vec::new, |s| s.fails.iter().map(|l| l.field()).collect())
}

/// One family in the compare JSON.
#[derive(Debug, Serialize)]
pub struct CompareJsonEntry {
    pub shape: &'static str,
    pub feasible: bool,
    /// Key figures of the reported design; for an infeasible family those of its loop sized at
    /// its binding limit (see `sized_at`), null if no size meets even that.
    pub figures: Option<KeyFigures>,
    /// Shape parameters of the loop the figures describe (name, value).
    pub shape_parameters: Vec<(&'static str, f64)>,
    /// How an infeasible family's loop was sized (e.g. "largest size meeting min_top_g").
    pub sized_at: Option<String>,
    /// Brief fields whose limits that loop fails (empty when feasible).
    pub fails: Vec<&'static str>,
    /// Why no loop of this family meets the brief; null when feasible.
    pub reason: Option<String>,
}

/// `<name>-compare.json`.
#[derive(Debug, Serialize)]
pub struct CompareJson<'a> {
    pub caution: &'static str,
    pub brief: &'a Brief,
    pub families: Vec<CompareJsonEntry>,
    /// The files written with this report, with their SHA-256 (absent when it stands alone).
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub outputs: Vec<OutputDigest>,
}

/// Pretty-printed JSON of a comparison.
pub fn compare_json(c: &Comparison) -> Result<Vec<u8>, ExportError> {
    compare_json_with(c, Vec::new())
}

/// The compare JSON listing the files written with it.
pub fn compare_json_with(
    c: &Comparison,
    outputs: Vec<OutputDigest>,
) -> Result<Vec<u8>, ExportError> {
    let families = c
        .entries
        .iter()
        .map(|e| CompareJsonEntry {
            shape: e.kind.name(),
            feasible: e.result.is_ok(),
            figures: e.shown_figures(),
            shape_parameters: e.shown().map_or_else(Vec::new, |d| {
                d.shape_labels
                    .iter()
                    .copied()
                    .zip(d.best.shape().iter().copied())
                    .collect()
            }),
            sized_at: e.failing.as_ref().map(|s| s.sized.clone()),
            fails: fails_of(e),
            reason: e.result.as_ref().err().map(|why| why.to_string()),
        })
        .collect();
    let doc = CompareJson {
        caution: CAUTION,
        brief: &c.brief,
        families,
        outputs,
    };
    let mut v = serde_json::to_vec_pretty(&doc).map_err(|e| ExportError::Encode {
        what: "compare JSON",
        message: e.to_string(),
    })?;
    v.push(b'\n');
    Ok(v)
}

/// Leading columns of the sweep table, before the figures.
pub const SWEEP_KEY_COLUMNS: [&str; 8] = [
    "design",
    "designs",
    "sweep_id",
    "shape",
    "entry_speed_m_s",
    "max_g",
    "min_top_g",
    "feasible",
];

/// The sweep table's header.
pub fn sweep_header() -> Vec<&'static str> {
    let mut h = SWEEP_KEY_COLUMNS.to_vec();
    h.extend(FIGURE_COLUMNS);
    h.extend(["reason", "row_sha256"]);
    h
}

/// The digest a sweep row carries in its last column: the first 16 hex digits of the SHA-256 of
/// its other fields (sweep id included) joined by the unit separator. `merge` recomputes it, so a
/// shard edited, damaged or truncated inside a row is refused naming the row. It detects damage
/// and edits, not deliberate forgery (anyone can recompute it).
pub fn row_digest<'a>(fields: impl IntoIterator<Item = &'a str>) -> String {
    let mut joined = String::new();
    for (i, f) in fields.into_iter().enumerate() {
        if i > 0 {
            joined.push('\u{1f}');
        }
        joined.push_str(f);
    }
    super::publish::sha256_hex(joined.as_bytes())[..16].to_string()
}

/// The sweep CSV: one row per design in `rows` (already in grid order), for a grid of `designs`
/// designs with fingerprint `sweep_id`.
pub fn sweep_csv(
    rows: &[SweepRow],
    designs: usize,
    sweep_id: &str,
) -> Result<Vec<u8>, ExportError> {
    let enc = encode_err("sweep table");
    let mut w = csv::Writer::from_writer(Vec::new());
    w.write_record(sweep_header()).map_err(&enc)?;
    for r in rows {
        let p = &r.point;
        let mut rec = vec![
            p.index.to_string(),
            designs.to_string(),
            sweep_id.to_string(),
            p.kind.name().to_string(),
            fixed(p.entry_speed_m_s),
            fixed(p.max_g),
            fixed(p.min_top_g),
            if r.result.is_ok() { "yes" } else { "no" }.to_string(),
        ];
        rec.extend(figure_cells(r.result.as_ref().ok()));
        rec.push(r.result.as_ref().err().cloned().unwrap_or_default());
        rec.push(row_digest(rec.iter().map(String::as_str)));
        w.write_record(&rec).map_err(&enc)?;
    }
    w.into_inner().map_err(|e| ExportError::Encode {
        what: "sweep table",
        message: e.to_string(),
    })
}

/// Shard CSVs that cannot be merged, and why.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error("cannot merge {file}: {message}")]
pub struct MergeError {
    pub file: String,
    pub message: String,
}

/// Merge shard CSVs (name, bytes) into the CSV the unsharded sweep writes. Every shard must come
/// from the same sweep (same `sweep_id` and grid size), no design may appear twice and together
/// they must cover the whole grid.
pub fn merge_sweep_csv(shards: &[(String, Vec<u8>)]) -> Result<Vec<u8>, MergeError> {
    let header = sweep_header();
    let mut rows: Vec<(usize, csv::StringRecord)> = Vec::new();
    let mut grid: Option<(usize, String, String)> = None; // (designs, sweep_id, first file)
    for (file, bytes) in shards {
        let bad = |m: String| MergeError {
            file: file.clone(),
            message: m,
        };
        let mut r = csv::ReaderBuilder::new()
            .has_headers(true)
            .from_reader(bytes.as_slice());
        let got = r
            .headers()
            .map_err(|e| bad(format!("not a CSV file ({e})")))?
            .clone();
        if got.iter().ne(header.iter().copied()) {
            return Err(bad(
                "its header is not that of a loopwright sweep table".into()
            ));
        }
        for (line, rec) in r.records().enumerate() {
            let rec = rec.map_err(|e| bad(format!("row {}: {e}", line + 1)))?;
            let last = rec.len() - 1;
            if row_digest(rec.iter().take(last)) != rec[last] {
                return Err(bad(format!(
                    "row {} (design '{}'): its fields do not match its row_sha256; the shard was edited, damaged or cut short — run that shard again",
                    line + 1,
                    &rec[0]
                )));
            }
            let index: usize = rec[0].parse().map_err(|_| {
                bad(format!(
                    "row {}: design '{}' is not an index",
                    line + 1,
                    &rec[0]
                ))
            })?;
            let designs: usize = rec[1].parse().map_err(|_| {
                bad(format!(
                    "row {}: designs '{}' is not a count",
                    line + 1,
                    &rec[1]
                ))
            })?;
            match &grid {
                None => grid = Some((designs, rec[2].to_string(), file.clone())),
                Some((n, id, first)) if *n != designs || id != &rec[2] => {
                    return Err(bad(format!(
                        "it comes from a different sweep than {first} (sweep_id {} of {designs} designs, not {id} of {n})",
                        &rec[2]
                    )));
                }
                Some(_) => {}
            }
            if index >= designs {
                return Err(bad(format!(
                    "row {}: design {index} is outside a grid of {designs}",
                    line + 1
                )));
            }
            rows.push((index, rec));
        }
    }
    let Some((designs, _, _)) = grid else {
        return Err(MergeError {
            file: "(all)".into(),
            message: "the shards hold no rows".into(),
        });
    };
    rows.sort_by_key(|(i, _)| *i);
    if let Some(w) = rows.windows(2).find(|w| w[0].0 == w[1].0) {
        return Err(MergeError {
            file: "(all)".into(),
            message: format!("design {} appears in more than one shard", w[0].0),
        });
    }
    if rows.len() != designs {
        let have: std::collections::HashSet<usize> = rows.iter().map(|(i, _)| *i).collect();
        let missing: Vec<String> = (0..designs)
            .filter(|i| !have.contains(i))
            .take(5)
            .map(|i| i.to_string())
            .collect();
        return Err(MergeError {
            file: "(all)".into(),
            message: format!(
                "{} of {designs} designs are missing (first: {}); is a shard absent?",
                designs - rows.len(),
                missing.join(", ")
            ),
        });
    }
    let mut w = csv::Writer::from_writer(Vec::new());
    let io = |e: csv::Error| MergeError {
        file: "(merged)".into(),
        message: e.to_string(),
    };
    w.write_record(&header).map_err(io)?;
    for (_, rec) in &rows {
        w.write_record(rec).map_err(io)?;
    }
    w.into_inner().map_err(|e| MergeError {
        file: "(merged)".into(),
        message: e.to_string(),
    })
}
