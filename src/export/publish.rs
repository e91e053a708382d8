//! Publishing a run's files as one unit: staged, synced, then renamed in place under a lock, with
//! a journal so that a run killed while renaming is completed by the next run into the folder.
//!
//! The protocol, in one output folder:
//! 1. take the folder's lock (`.loopwright.lock`, an OS file lock released when the process ends,
//!    even by `kill -9`); a second run into the folder waits for it;
//! 2. recover: finish the renames a killed run had committed to (its journal), then remove every
//!    stale `.loopwright-*.tmp` and uncommitted journal (nobody else can be writing: we hold the
//!    lock);
//! 3. stage every file in full as `.loopwright-*.tmp` beside its target and sync the staged files
//!    (in parallel: one wait, not one per file), then commit: rename the journal naming every
//!    staged file and its target into place (`.loopwright-journal`);
//! 4. rename each staged file over its target, the report (JSON) last, so that a report always
//!    describes files at least as new as itself and carries their SHA-256 ([`verify_report`]);
//! 5. sync the folder once and remove the journal.
//!
//! A run killed before step 3's commit leaves the old set (its temporaries are removed by the next
//! run); one killed after it leaves a journal with which the next run completes the new set. A
//! reader between the two sees a mixed set it can detect: the report's digests do not match.

use sha2::{Digest, Sha256};
use std::fs::File;
use std::io::Write;
use std::path::{Path, PathBuf};

use super::ExportError;

/// The lock file in an output folder.
pub const LOCK_FILE: &str = ".loopwright.lock";
/// The committed journal: `<staged name>\t<target name>` lines.
pub const JOURNAL_FILE: &str = ".loopwright-journal";
/// The journal while it is written (not yet committed).
const JOURNAL_PARTIAL: &str = ".loopwright-journal.partial";

/// The SHA-256 of `bytes`, lower-case hex.
pub fn sha256_hex(bytes: &[u8]) -> String {
    Sha256::digest(bytes)
        .iter()
        .map(|b| format!("{b:02x}"))
        .collect()
}

/// A file of the set as the report lists it.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct OutputDigest {
    pub file: String,
    pub bytes: usize,
    pub sha256: String,
}

/// Digests of `files` (name, bytes), for the report written with them.
pub fn digests(files: &[(String, Vec<u8>)]) -> Vec<OutputDigest> {
    files
        .iter()
        .map(|(file, b)| OutputDigest {
            file: file.clone(),
            bytes: b.len(),
            sha256: sha256_hex(b),
        })
        .collect()
}

fn io_err(path: &Path) -> impl Fn(std::io::Error) -> ExportError + '_ {
    move |source| ExportError::Io {
        path: path.to_path_buf(),
        source,
    }
}

/// The folder's lock, held while it lives.
pub struct FolderLock {
    _file: File,
}

/// Take the lock of `dir` (which must exist), waiting for another run that holds it.
pub fn lock_folder(dir: &Path) -> Result<FolderLock, ExportError> {
    let path = dir.join(LOCK_FILE);
    let file = std::fs::OpenOptions::new()
        .create(true)
        .truncate(false)
        .write(true)
        .open(&path)
        .map_err(io_err(&path))?;
    match file.try_lock() {
        Ok(()) => {}
        Err(std::fs::TryLockError::WouldBlock) => {
            let mut err = std::io::stderr().lock();
            let _ = writeln!(
                err,
                "loopwright: another run is writing into {}; waiting for it to finish",
                dir.display()
            );
            file.lock().map_err(io_err(&path))?;
        }
        Err(std::fs::TryLockError::Error(e)) => return Err(io_err(&path)(e)),
    }
    Ok(FolderLock { _file: file })
}

/// Finish a committed publication and remove what killed runs left behind. Call with the lock.
/// Returns how many files a journal completed.
pub fn recover(dir: &Path) -> Result<usize, ExportError> {
    let journal = dir.join(JOURNAL_FILE);
    let mut completed = 0;
    if let Ok(text) = std::fs::read_to_string(&journal) {
        for line in text.lines() {
            let Some((staged, target)) = line.split_once('\t') else {
                continue;
            };
            // Only plain names in this folder: a damaged journal must not move files elsewhere.
            if [staged, target]
                .iter()
                .any(|n| n.contains('/') || n.contains('\\') || n.starts_with(".."))
            {
                continue;
            }
            let from = dir.join(staged);
            if from.is_file() {
                let to = dir.join(target);
                std::fs::rename(&from, &to).map_err(io_err(&to))?;
                completed += 1;
            }
        }
        sync_dir(dir)?;
        std::fs::remove_file(&journal).map_err(io_err(&journal))?;
    }
    for entry in std::fs::read_dir(dir).map_err(io_err(dir))? {
        let entry = entry.map_err(io_err(dir))?;
        let name = entry.file_name().to_string_lossy().into_owned();
        let stale =
            (name.starts_with(".loopwright-") && name.ends_with(".tmp")) || name == JOURNAL_PARTIAL;
        if stale && entry.file_type().is_ok_and(|t| t.is_file()) {
            let p = entry.path();
            std::fs::remove_file(&p).map_err(io_err(&p))?;
        }
    }
    Ok(completed)
}

fn sync_dir(dir: &Path) -> Result<(), ExportError> {
    #[cfg(unix)]
    File::open(dir)
        .and_then(|d| d.sync_all())
        .map_err(io_err(dir))?;
    #[cfg(not(unix))]
    let _ = dir;
    Ok(())
}

fn stage(dir: &Path, target: &Path, bytes: &[u8]) -> Result<tempfile::TempPath, ExportError> {
    let io = io_err(target);
    let mut tmp = tempfile::Builder::new()
        .prefix(".loopwright-")
        .suffix(".tmp")
        .tempfile_in(dir)
        .map_err(&io)?;
    tmp.write_all(bytes).map_err(&io)?;
    // Temporary files are created private (0600); outputs are ordinary documents for a team.
    #[cfg(unix)]
    {
        use std::os::unix::fs::PermissionsExt;
        tmp.as_file()
            .set_permissions(std::fs::Permissions::from_mode(0o644))
            .map_err(&io)?;
    }
    Ok(tmp.into_temp_path())
}

/// Publish `files` (name in `dir`, bytes; the report last) into `dir` as one unit (module docs).
/// On failure the error says whether the earlier set is untouched.
pub fn publish(dir: &Path, files: &[(String, Vec<u8>)]) -> Result<(), ExportError> {
    let _lock = lock_folder(dir)?;
    recover(dir)?;
    for (name, _) in files {
        let target = dir.join(name);
        if target.is_dir() {
            return Err(ExportError::Io {
                path: target,
                source: std::io::Error::other("a folder of that name is in the way"),
            });
        }
    }
    // Staged temporaries are removed when dropped, so any failure before the commit leaves
    // nothing behind.
    let mut staged = Vec::with_capacity(files.len());
    for (name, bytes) in files {
        staged.push(stage(dir, &dir.join(name), bytes)?);
    }
    let mut journal = String::new();
    for ((name, _), tmp) in files.iter().zip(&staged) {
        let staged_name = tmp.file_name().map(|n| n.to_string_lossy().into_owned());
        journal.push_str(&format!("{}\t{name}\n", staged_name.unwrap_or_default()));
    }
    let partial = dir.join(JOURNAL_PARTIAL);
    std::fs::write(&partial, journal).map_err(io_err(&partial))?;
    // One wait for the whole set: every staged file and the journal synced at once.
    let mut to_sync: Vec<&Path> = staged.iter().map(|t| t.as_ref()).collect();
    to_sync.push(&partial);
    use rayon::prelude::*;
    to_sync
        .par_iter()
        .try_for_each(|p| File::open(p).and_then(|f| f.sync_all()).map_err(io_err(p)))
        .inspect_err(|_| {
            let _ = std::fs::remove_file(&partial);
        })?;
    // Commit: from here the next run completes this set if we are killed.
    let journal_path = dir.join(JOURNAL_FILE);
    std::fs::rename(&partial, &journal_path).map_err(io_err(&journal_path))?;
    let kept: Vec<PathBuf> = staged
        .into_iter()
        .map(|t| t.keep().map_err(|e| io_err(dir)(e.error)))
        .collect::<Result<_, _>>()?;
    for (i, ((name, _), from)) in files.iter().zip(&kept).enumerate() {
        let to = dir.join(name);
        if let Err(source) = std::fs::rename(from, &to) {
            // Leave the folder without a journal: an honest mixed set, reported as such.
            for rest in &kept[i..] {
                let _ = std::fs::remove_file(rest);
            }
            let _ = std::fs::remove_file(&journal_path);
            return Err(ExportError::Partial {
                path: to,
                replaced: i,
                total: files.len(),
                source,
            });
        }
    }
    sync_dir(dir)?;
    std::fs::remove_file(&journal_path).map_err(io_err(&journal_path))?;
    Ok(())
}

/// Largest output file [`verify_report`] reads.
const MAX_VERIFY_BYTES: u64 = 1 << 30;

/// Check the files a JSON report lists (`outputs`: file, sha256) against the files beside it.
/// Returns the names of those that are missing or differ; an empty list means a consistent set.
/// A report without `outputs` (written by an older loopwright) lists nothing.
pub fn verify_report(report_path: &Path, report: &[u8]) -> Vec<String> {
    let dir = report_path.parent().unwrap_or(Path::new("."));
    let Ok(v) = serde_json::from_slice::<serde_json::Value>(report) else {
        return Vec::new();
    };
    let Some(list) = v.get("outputs").and_then(|o| o.as_array()) else {
        return Vec::new();
    };
    let mut bad = Vec::new();
    for entry in list {
        let Ok(d) = serde_json::from_value::<OutputDigest>(entry.clone()) else {
            continue;
        };
        if d.file.contains('/') || d.file.contains('\\') {
            continue;
        }
        let same = crate::input::read_bounded(&dir.join(&d.file), MAX_VERIFY_BYTES, "output")
            .is_ok_and(|b| sha256_hex(&b) == d.sha256);
        if !same {
            bad.push(d.file);
        }
    }
    bad
}
