//! Reading inputs and writing outputs, in one place for every command.
//!
//! Inputs are a path or `-` for standard input, read only from regular files and only up to a
//! size ([`MAX_INPUT_BYTES`]). Output directories are written as whole sets, all or nothing
//! ([`set`]); single files through [`write_atomically`].

pub mod set;

use crate::error::{Error, Result};
use std::io::{Read, Write};
use std::path::{Path, PathBuf};

/// The label of standard input in messages.
pub const STDIN_LABEL: &str = "<stdin>";

/// Largest input file the tool reads (1 GiB): a national network of a million sections is
/// about 150 MB. Larger files, and streams that do not end (`/dev/zero`), are refused with a
/// message instead of filling memory.
pub const MAX_INPUT_BYTES: u64 = 1 << 30;

/// Read a whole input: a file, or standard input for `-`. Only regular files are read (a FIFO
/// or a device could block forever or never end: pipe it on standard input with `-` instead),
/// and at most [`MAX_INPUT_BYTES`].
pub fn read_input(path: &str) -> std::io::Result<Vec<u8>> {
    if path == "-" {
        read_limited(std::io::stdin().lock())
    } else {
        read_file(Path::new(path))
    }
}

/// Read a regular file of at most [`MAX_INPUT_BYTES`] (see [`read_input`]).
pub fn read_file(path: &Path) -> std::io::Result<Vec<u8>> {
    let meta = std::fs::metadata(path)?;
    if !meta.is_file() {
        let what = if meta.is_dir() {
            "a directory"
        } else {
            "not a regular file (a FIFO, socket or device)"
        };
        return Err(std::io::Error::new(
            std::io::ErrorKind::InvalidInput,
            format!("{what}, which is not read (to read a stream, give `-` and pipe it on standard input)"),
        ));
    }
    if meta.len() > MAX_INPUT_BYTES {
        return Err(too_big(meta.len()));
    }
    read_limited(std::fs::File::open(path)?)
}

fn too_big(len: u64) -> std::io::Error {
    std::io::Error::new(
        std::io::ErrorKind::InvalidInput,
        format!(
            "{} bytes or more, beyond the largest input read ({} bytes, 1 GiB)",
            len, MAX_INPUT_BYTES
        ),
    )
}

fn read_limited(r: impl Read) -> std::io::Result<Vec<u8>> {
    let mut buf = Vec::new();
    r.take(MAX_INPUT_BYTES + 1).read_to_end(&mut buf)?;
    if buf.len() as u64 > MAX_INPUT_BYTES {
        return Err(too_big(buf.len() as u64));
    }
    Ok(buf)
}

/// How an input is named in messages.
pub fn input_label(path: &str) -> String {
    if path == "-" {
        STDIN_LABEL.to_owned()
    } else {
        path.to_owned()
    }
}

pub use set::{check_plan_set, recover, verify, Manifest, OutputSet, StreamSet};

/// `bytes` in a temporary file beside `path` (same directory, so it can be renamed over it),
/// on disk and readable as an ordinary file (0644), ready to persist.
pub(crate) fn stage_beside(path: &Path, bytes: &[u8]) -> Result<tempfile::NamedTempFile> {
    let fail = |source| Error::Write {
        path: path.to_owned(),
        source,
    };
    let dir = match path.parent() {
        Some(d) if !d.as_os_str().is_empty() => d.to_owned(),
        _ => PathBuf::from("."),
    };
    std::fs::create_dir_all(&dir).map_err(fail)?;
    let name = path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default();
    let mut tmp = tempfile::Builder::new()
        .prefix(&format!(".{name}."))
        .suffix(".tmp")
        .tempfile_in(&dir)
        .map_err(fail)?;
    // Noted for the signal handler until it is moved into place (or dropped, which removes it).
    set::staged_file(tmp.path());
    let mut fill = || -> std::io::Result<()> {
        tmp.write_all(bytes)?;
        tmp.as_file().sync_all()?;
        #[cfg(unix)]
        {
            use std::os::unix::fs::PermissionsExt;
            tmp.as_file()
                .set_permissions(std::fs::Permissions::from_mode(0o644))?;
        }
        Ok(())
    };
    match fill() {
        Ok(()) => Ok(tmp),
        Err(e) => {
            set::settled_file(tmp.path());
            Err(fail(e))
        }
    }
}

/// Write one file all or nothing: into a temporary file beside `path`, renamed over it when
/// complete (a failure leaves no partial file).
pub fn write_atomically(path: &Path, bytes: &[u8]) -> Result<()> {
    let tmp = stage_beside(path, bytes)?;
    let staged = tmp.path().to_owned();
    let moved = tmp.persist(path);
    set::settled_file(&staged);
    moved.map_err(|e| Error::Write {
        path: path.to_owned(),
        source: e.error,
    })?;
    Ok(())
}

/// Write text to standard output; a closed pipe (`| head`) is not an error.
pub fn print_stdout(text: &str) -> Result<()> {
    let mut out = std::io::stdout().lock();
    match out.write_all(text.as_bytes()).and_then(|_| out.flush()) {
        Ok(()) => Ok(()),
        Err(e) if e.kind() == std::io::ErrorKind::BrokenPipe => Ok(()),
        Err(source) => Err(Error::Write {
            path: PathBuf::from("<stdout>"),
            source,
        }),
    }
}
