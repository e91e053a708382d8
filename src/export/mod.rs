//! Exports: the files a design run writes, each written atomically.
//!
//! Every file goes to a temporary file in the destination folder and is renamed over the target
//! only once complete, so a run that fails midway leaves earlier outputs intact.
//!
//! Files, for a design named `<name>`:
//! - `<name>.dxf`: rail centreline and heartline as 3D polylines on their own layers ([`dxf`]);
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
pub mod overlay;
pub mod plot;
pub mod study;
pub mod svg;
pub mod table;

use std::io::Write;
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
}

/// Write `bytes` to `path` atomically: a temporary file in the same folder, then a rename.
pub fn write_atomic(path: &Path, bytes: &[u8]) -> Result<(), ExportError> {
    write_all_atomic(&[(path.to_path_buf(), bytes.to_vec())])
}

fn staged(path: &Path, bytes: &[u8]) -> Result<tempfile::NamedTempFile, ExportError> {
    let io = |source| ExportError::Io {
        path: path.to_path_buf(),
        source,
    };
    let dir = path
        .parent()
        .filter(|p| !p.as_os_str().is_empty())
        .unwrap_or(Path::new("."));
    let mut tmp = tempfile::Builder::new()
        .prefix(".loopwright-")
        .suffix(".tmp")
        .tempfile_in(dir)
        .map_err(io)?;
    tmp.write_all(bytes).map_err(io)?;
    // Temporary files are created private (0600); outputs are ordinary documents for a team.
    #[cfg(unix)]
    {
        use std::os::unix::fs::PermissionsExt;
        tmp.as_file()
            .set_permissions(std::fs::Permissions::from_mode(0o644))
            .map_err(io)?;
    }
    tmp.as_file().sync_all().map_err(io)?;
    Ok(tmp)
}

/// Write several files as one step: every file is first written in full to a temporary file beside
/// its target (a full disk or unwritable folder fails here, and the temporaries are removed), the
/// targets are checked to be replaceable, and only then is each renamed over its target. A run that
/// fails therefore leaves every earlier output as it was.
pub fn write_all_atomic(files: &[(PathBuf, Vec<u8>)]) -> Result<(), ExportError> {
    let mut temps = Vec::with_capacity(files.len());
    for (path, bytes) in files {
        temps.push((path, staged(path, bytes)?));
    }
    for (path, _) in &temps {
        if path.is_dir() {
            return Err(ExportError::Io {
                path: path.to_path_buf(),
                source: std::io::Error::other("a folder of that name is in the way"),
            });
        }
    }
    for (path, tmp) in temps {
        tmp.persist(path).map_err(|e| ExportError::Io {
            path: path.to_path_buf(),
            source: e.error,
        })?;
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
                json::report_json(design)?,
            ))
        },
    );
    let (elevation, loads_plot, csv_bytes, json_bytes) = rest?;
    let mut files = vec![
        (format!("{name}.dxf"), dxf_bytes?),
        (format!("{name}.svg"), elevation),
        (format!("{name}-loads.svg"), loads_plot),
        (format!("{name}-loads.csv"), csv_bytes),
        (format!("{name}.json"), json_bytes),
    ];
    // One car is the point mass: its loads are the loads table already.
    if design.best.train.cars.len() > 1 {
        files.push((format!("{name}-cars.csv"), table::cars_csv(design)?));
    }
    Ok(files)
}

/// Write already-encoded files into `out_dir` (created if missing) as one atomic step
/// ([`write_all_atomic`]): a failed run leaves every earlier output as it was.
pub fn write_files(
    files: Vec<(String, Vec<u8>)>,
    out_dir: &Path,
) -> Result<Vec<PathBuf>, ExportError> {
    std::fs::create_dir_all(out_dir).map_err(|source| ExportError::Io {
        path: out_dir.to_path_buf(),
        source,
    })?;
    let files: Vec<(PathBuf, Vec<u8>)> = files
        .into_iter()
        .map(|(n, b)| (out_dir.join(n), b))
        .collect();
    write_all_atomic(&files)?;
    Ok(files.into_iter().map(|(p, _)| p).collect())
}

/// Encode and write every output of a design into `out_dir` (created if missing).
pub fn write_design(design: &Assessment, out_dir: &Path) -> Result<Vec<PathBuf>, ExportError> {
    write_files(design_files(design)?, out_dir)
}
