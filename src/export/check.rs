//! The files a `check` run writes: `<name>-check.json` (report) and `<name>-check-loads.csv`
//! (one row per station, the same columns as a design's loads table).

use serde::Serialize;

use super::ExportError;
use super::table::stations_csv;
use crate::brief::Brief;
use crate::checks::centreline::CheckedCentreline;
use crate::checks::{CheckLine, Summary};
use crate::geometry::fit::FitReport;
use crate::report::CAUTION;

/// The report written as `<name>-check.json`.
#[derive(Debug, Serialize)]
pub struct CheckReport<'a> {
    pub caution: &'static str,
    pub file: &'a str,
    pub source: &'a str,
    pub pass: bool,
    pub entry_speed_m_s: f64,
    pub fit: &'a FitReport,
    pub summary: &'a Summary,
    pub checks: &'a [CheckLine],
    pub brief: &'a Brief,
}

/// Pretty-printed JSON bytes of a check's report.
pub fn check_json(c: &CheckedCentreline) -> Result<Vec<u8>, ExportError> {
    let r = CheckReport {
        caution: CAUTION,
        file: &c.file,
        source: &c.source,
        pass: c.verdict.pass,
        entry_speed_m_s: c.brief.entry_speed_m_s,
        fit: &c.fit,
        summary: &c.summary,
        checks: &c.verdict.lines,
        brief: &c.brief,
    };
    let mut v = serde_json::to_vec_pretty(&r).map_err(|e| ExportError::Encode {
        what: "check report",
        message: e.to_string(),
    })?;
    v.push(b'\n');
    Ok(v)
}

/// Everything a check run writes, encoded first so that nothing is written unless all of it could be.
pub fn check_files(c: &CheckedCentreline) -> Result<Vec<(String, Vec<u8>)>, ExportError> {
    let name = &c.brief.name;
    Ok(vec![
        (format!("{name}-check.json"), check_json(c)?),
        (
            format!("{name}-check-loads.csv"),
            stations_csv(&c.path, &c.ride)?,
        ),
    ])
}
