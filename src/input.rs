//! Bounded reading of every input file (briefs, limit tables, sweep files, drawings, shards).
//!
//! One reader for all of them, so that no input can exhaust memory or block the process:
//! - only regular files are read: a device (`/dev/zero`), a FIFO or a socket is refused by its
//!   type before it is opened (a FIFO opened for reading would block until a writer comes), and
//!   the file is opened non-blocking and checked again after opening, in case it was swapped;
//! - the cap is on the bytes actually read (`take(cap + 1)`), not on the size the file system
//!   reports, which is 0 for special files and can change while reading.
//!
//! Every refusal is an [`InputError`] naming the file; the command line maps [`InputError::Bad`]
//! (not a regular file, too large, not UTF-8) to exit code 2 and [`InputError::Io`] (missing or
//! unreadable) to 4.

use std::fs::{File, Metadata};
use std::io::Read;
use std::path::{Path, PathBuf};

/// Why an input file was not read.
#[derive(Debug, thiserror::Error)]
pub enum InputError {
    /// The file is not a regular file, too large or not text: the user's input is wrong.
    #[error("{what} {path}: {message}")]
    Bad {
        what: &'static str,
        path: PathBuf,
        message: String,
    },
    /// The file is missing or reading it failed.
    #[error("cannot read {what} {path}: {source}")]
    Io {
        what: &'static str,
        path: PathBuf,
        source: std::io::Error,
    },
}

impl InputError {
    /// Whether the input itself is at fault (exit 2), as opposed to reading it (exit 4).
    pub fn is_bad_input(&self) -> bool {
        matches!(self, InputError::Bad { .. })
    }
}

/// The kind of a non-regular file, for messages.
fn kind_of(meta: &Metadata) -> &'static str {
    #[cfg(unix)]
    {
        use std::os::unix::fs::FileTypeExt;
        let t = meta.file_type();
        if t.is_fifo() {
            return "a named pipe (FIFO)";
        }
        if t.is_char_device() || t.is_block_device() {
            return "a device";
        }
        if t.is_socket() {
            return "a socket";
        }
    }
    if meta.is_dir() {
        "a folder"
    } else {
        "not a regular file"
    }
}

/// Read at most `cap` bytes of the regular file `path`; `what` names it in messages ("brief",
/// "limits file", ...). A file longer than `cap`, a missing file and a non-regular file are
/// [`InputError::Bad`].
pub fn read_bounded(path: &Path, cap: u64, what: &'static str) -> Result<Vec<u8>, InputError> {
    let bad = |message: String| InputError::Bad {
        what,
        path: path.to_path_buf(),
        message,
    };
    let io = |source| InputError::Io {
        what,
        path: path.to_path_buf(),
        source,
    };
    // By type first, so that a FIFO is never opened (opening one for reading blocks).
    // A missing or unreadable file is an I/O error (exit 4), as it always was; callers for which
    // a missing file is a wrong argument (the limits table) map it themselves.
    let meta = std::fs::metadata(path).map_err(io)?;
    if !meta.is_file() {
        return Err(bad(format!(
            "is {}; give a regular file (loopwright reads only regular files, so that a device or pipe cannot fill memory or block)",
            kind_of(&meta)
        )));
    }
    let file = open_nonblocking(path).map_err(io)?;
    // The path may have been swapped between the check and the open: check what was opened.
    let opened = file.metadata().map_err(io)?;
    if !opened.is_file() {
        return Err(bad(format!("is {}; give a regular file", kind_of(&opened))));
    }
    let mut bytes = Vec::with_capacity(opened.len().min(cap) as usize + 1);
    file.take(cap + 1).read_to_end(&mut bytes).map_err(io)?;
    if bytes.len() as u64 > cap {
        return Err(bad(format!(
            "is larger than {} bytes, the most loopwright reads for a {what}",
            cap
        )));
    }
    Ok(bytes)
}

/// As [`read_bounded`], and the bytes must be UTF-8 text (a bad encoding is bad input, exit 2).
pub fn read_text_bounded(path: &Path, cap: u64, what: &'static str) -> Result<String, InputError> {
    let bytes = read_bounded(path, cap, what)?;
    String::from_utf8(bytes).map_err(|e| {
        let at = e.utf8_error().valid_up_to();
        InputError::Bad {
            what,
            path: path.to_path_buf(),
            message: format!("is not UTF-8 text (bad byte at offset {at}); save it as UTF-8"),
        }
    })
}

#[cfg(unix)]
fn open_nonblocking(path: &Path) -> std::io::Result<File> {
    use std::os::unix::fs::OpenOptionsExt;
    // O_NONBLOCK: should a FIFO appear at the path after the type check, opening it returns
    // at once instead of waiting for a writer. Regular files ignore the flag.
    std::fs::OpenOptions::new()
        .read(true)
        .custom_flags(libc::O_NONBLOCK)
        .open(path)
}

#[cfg(not(unix))]
fn open_nonblocking(path: &Path) -> std::io::Result<File> {
    File::open(path)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_cap_is_on_bytes_read_and_exact() {
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("f");
        std::fs::write(&p, vec![b'a'; 100]).unwrap();
        assert_eq!(read_bounded(&p, 100, "brief").unwrap().len(), 100);
        let e = read_bounded(&p, 99, "brief").unwrap_err();
        assert!(
            e.is_bad_input() && e.to_string().contains("larger than 99 bytes"),
            "{e}"
        );
    }

    #[cfg(unix)]
    #[test]
    fn devices_and_folders_are_refused_by_type() {
        for p in ["/dev/zero", "/dev/null", "/"] {
            let e = read_bounded(Path::new(p), 1 << 20, "brief").unwrap_err();
            assert!(e.is_bad_input(), "{p}: {e}");
            assert!(e.to_string().contains("regular file"), "{e}");
        }
    }

    #[test]
    fn non_utf8_text_is_bad_input_with_the_offset() {
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("f");
        std::fs::write(&p, b"ab\xffcd").unwrap();
        let e = read_text_bounded(&p, 100, "brief").unwrap_err();
        assert!(
            e.is_bad_input() && e.to_string().contains("offset 2"),
            "{e}"
        );
    }
}
