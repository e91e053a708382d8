//! Exports: the files a run writes, published together as one unit.
//!
//! Every run's files are staged in full, then published under a lock on the output folder, the
//! report last, with a journal that lets the next run complete a publication a kill interrupted
//! ([`publish`]). A run that fails before publishing leaves the earlier set as it was.
//!
//! Files, for a design named `<name>`:
//! - `<name>.dxf`: a 2D elevation (XY, dimensioned) beside the 3D model (rail centreline, heartline,
//!   running rails as cubic SPLINEs, or polylines by brief field) ([`dxf`]);
//! - `<name>.svg`: elevation drawing ([`svg`]);
//! - `<name>-loads.svg`: loads against arc length with the limits ([`plot`]);
//! - `<name>-loads.csv`: one row per station ([`table`]);
//! - `<name>-cars.csv`: one row per car per station, for trains of two or more cars ([`table::cars_csv`]);
//! - `<name>.json`: the report ([`json`]).
//!
//! Studies: `<name>-compare.{csv,json}` and `<name>-sweep.csv` ([`study`]); the compare overlays
//! `<name>-compare-elevation.svg`, `<name>-compare-loads.svg` and the sweep summary
//! `<name>-sweep.svg` ([`overlay`]).
//! A `check` run writes `<name>-check.json` and `<name>-check-loads.csv` ([`check`]).
//!
//! Every SVG drawing is built from one chart kit, [`chart`] (frame, ticks, text, legend, caution).

pub mod chart;
pub mod dxf;
pub mod json;
pub mod number;
pub mod overlay;
pub mod plot;
pub mod publish;
pub mod study;
pub mod svg;
pub mod table;

use std::path::{Path, PathBuf};

use crate::model::Assessment;

/// A file could not be produced or written.
#[derive(Debug, thiserror::Error)]
pub enum ExportError {
    #[error("cannot write {path}: {source}")]
    Io {
        path: PathBuf,
        source: std::io::Error,
    },
    #[error("cannot encode {what}: {message}")]
    Encode { what: &'static str, message: String },
    /// Publishing failed after some files were replaced: the folder holds a mixed set.
    #[error(
        "cannot write {path}: {source}; {replaced} of {total} files had already been replaced, so the folder holds a mixed set (the report's sha256 list shows which files are new)"
    )]
    Partial {
        path: PathBuf,
        replaced: usize,
        total: usize,
        source: std::io::Error,
    },
    /// The output path is not usable as given (a file where a folder is wanted).
    #[error("--out {path} {message}")]
    NotAFolder { path: PathBuf, message: String },
}

impl ExportError {
    /// Whether the earlier outputs are as they were (nothing was replaced).
    pub fn left_earlier_outputs(&self) -> bool {
        !matches!(self, ExportError::Partial { .. })
    }
}

/// Write `bytes` to `path` as a set of one ([`publish`]).
pub fn write_atomic(path: &Path, bytes: &[u8]) -> Result<(), ExportError> {
    write_all_atomic(&[(path.to_path_buf(), bytes.to_vec())])
}

/// A file's name in its folder and its bytes.
type NamedBytes = (String, Vec<u8>);

/// Write files given by full path, each folder's files as one set ([`publish`]), in the order
/// given (put a report last).
pub fn write_all_atomic(files: &[(PathBuf, Vec<u8>)]) -> Result<(), ExportError> {
    let mut by_dir: Vec<(PathBuf, Vec<NamedBytes>)> = Vec::new();
    for (path, bytes) in files {
        let dir = path
            .parent()
            .filter(|p| !p.as_os_str().is_empty())
            .unwrap_or(Path::new("."))
            .to_path_buf();
        let name = path
            .file_name()
            .ok_or_else(|| ExportError::NotAFolder {
                path: path.clone(),
                message: "names no file".into(),
            })?
            .to_string_lossy()
            .into_owned();
        match by_dir.iter_mut().find(|(d, _)| *d == dir) {
            Some((_, list)) => list.push((name, bytes.clone())),
            None => by_dir.push((dir, vec![(name, bytes.clone())])),
        }
    }
    for (dir, list) in by_dir {
        publish::publish(&dir, &list)?;
    }
    Ok(())
}

/// Everything a design run writes, encoded in memory first so that nothing is written unless all
/// of it could be produced.
pub fn design_files(design: &Assessment) -> Result<Vec<(String, Vec<u8>)>, ExportError> {
    let name = &design.brief.name;
    // The DXF takes as long as all the rest together; encode it on another core meanwhile.
    let (dxf_bytes, rest) = rayon::join(
        || dxf::dxf_bytes(design),
        || -> Result<_, ExportError> {
            Ok((
                svg::elevation_svg(design).into_bytes(),
                plot::loads_svg(design).into_bytes(),
                table::loads_csv(design)?,
            ))
        },
    );
    let (elevation, loads_plot, csv_bytes) = rest?;
    let mut files = vec![
        (format!("{name}.dxf"), dxf_bytes?),
        (format!("{name}.svg"), elevation),
        (format!("{name}-loads.svg"), loads_plot),
        (format!("{name}-loads.csv"), csv_bytes),
    ];
    // One car is the point mass: its loads are the loads table already.
    if design.best.train.cars.len() > 1 {
        files.push((format!("{name}-cars.csv"), table::cars_csv(design)?));
    }
    // The report goes last and carries every sibling's SHA-256 (see [`publish`]).
    let report = json::report_json_with(design, publish::digests(&files))?;
    files.push((format!("{name}.json"), report));
    Ok(files)
}

/// Write already-encoded files into `out_dir` (created if missing) as one unit ([`publish`]);
/// the report, if any, is last in `files`.
pub fn write_files(
    files: Vec<(String, Vec<u8>)>,
    out_dir: &Path,
) -> Result<Vec<PathBuf>, ExportError> {
    if out_dir.exists() && !out_dir.is_dir() {
        return Err(ExportError::NotAFolder {
            path: out_dir.to_path_buf(),
            message: "is a file, not a folder; --out names the folder the outputs go into (several files): give a new or existing folder".into(),
        });
    }
    std::fs::create_dir_all(out_dir).map_err(|source| ExportError::Io {
        path: out_dir.to_path_buf(),
        source,
    })?;
    publish::publish(out_dir, &files)?;
    Ok(files.into_iter().map(|(n, _)| out_dir.join(n)).collect())
}

/// Encode and write every output of a design into `out_dir` (created if missing).
pub fn write_design(design: &Assessment, out_dir: &Path) -> Result<Vec<PathBuf>, ExportError> {
    write_files(design_files(design)?, out_dir)
}
