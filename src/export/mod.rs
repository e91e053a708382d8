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
//! - `<name>.json`: the report ([`json`]).
//!
//! A `check` run writes `<name>-check.json` and `<name>-check-loads.csv` ([`check`]).

pub mod check;
pub mod dxf;
pub mod json;
pub mod plot;
pub mod svg;
pub mod table;

use std::io::Write;
use std::path::{Path, PathBuf};

use crate::optimiser::Design;

/// A file could not be produced or written.
#[derive(Debug, thiserror::Error)]
pub enum ExportError {
    #[error("cannot write {path}: {source}")]
    Io { path: PathBuf, source: std::io::Error },
    #[error("cannot encode {what}: {message}")]
    Encode { what: &'static str, message: String },
}

/// Write `bytes` to `path` atomically: a temporary file in the same folder, then a rename.
pub fn write_atomic(path: &Path, bytes: &[u8]) -> Result<(), ExportError> {
    let io = |source| ExportError::Io { path: path.to_path_buf(), source };
    let dir = path.parent().filter(|p| !p.as_os_str().is_empty()).unwrap_or(Path::new("."));
    let mut tmp = tempfile::Builder::new().prefix(".loopwright-").suffix(".tmp").tempfile_in(dir).map_err(io)?;
    tmp.write_all(bytes).map_err(io)?;
    tmp.as_file().sync_all().map_err(io)?;
    tmp.persist(path).map_err(|e| io(e.error))?;
    Ok(())
}

/// Everything a design run writes, encoded in memory first so that nothing is written unless all
/// of it could be produced.
pub fn design_files(design: &Design) -> Result<Vec<(String, Vec<u8>)>, ExportError> {
    let name = &design.brief.name;
    Ok(vec![
        (format!("{name}.dxf"), dxf::dxf_bytes(design)?),
        (format!("{name}.svg"), svg::elevation_svg(design).into_bytes()),
        (format!("{name}-loads.svg"), plot::loads_svg(design).into_bytes()),
        (format!("{name}-loads.csv"), table::loads_csv(design)?),
        (format!("{name}.json"), json::report_json(design)?),
    ])
}

/// Write already-encoded files into `out_dir` (created if missing), each atomically.
pub fn write_files(files: Vec<(String, Vec<u8>)>, out_dir: &Path) -> Result<Vec<PathBuf>, ExportError> {
    std::fs::create_dir_all(out_dir).map_err(|source| ExportError::Io { path: out_dir.to_path_buf(), source })?;
    let mut written = Vec::new();
    for (name, bytes) in files {
        let path = out_dir.join(name);
        write_atomic(&path, &bytes)?;
        written.push(path);
    }
    Ok(written)
}

/// Encode and write every output of a design into `out_dir` (created if missing).
pub fn write_design(design: &Design, out_dir: &Path) -> Result<Vec<PathBuf>, ExportError> {
    let files = design_files(design)?;
    std::fs::create_dir_all(out_dir).map_err(|source| ExportError::Io { path: out_dir.to_path_buf(), source })?;
    let mut written = Vec::new();
    for (name, bytes) in files {
        let path = out_dir.join(name);
        write_atomic(&path, &bytes)?;
        written.push(path);
    }
    Ok(written)
}
