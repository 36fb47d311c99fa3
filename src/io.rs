//! Reading inputs and writing outputs, in one place for every command.
//!
//! Inputs are a path or `-` for standard input. Outputs are staged: every file is written to a
//! temporary name inside the target directory — all at once from memory ([`OutputSet`]) or
//! progressively as a long command goes ([`StreamSet`]) — and renamed into place only once all
//! were written. A run that fails — on bad input, or half-way through writing — leaves no partial
//! file behind.

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

/// Files to write into an output directory, all or none, built in memory first.
#[derive(Debug, Default)]
pub struct OutputSet {
    files: Vec<(String, Vec<u8>)>,
}

impl OutputSet {
    pub fn new() -> OutputSet {
        OutputSet::default()
    }

    /// Stage a file (a plain name, no directories).
    pub fn add(&mut self, name: impl Into<String>, contents: Vec<u8>) {
        self.files.push((name.into(), contents));
    }

    pub fn is_empty(&self) -> bool {
        self.files.is_empty()
    }

    /// Names staged so far.
    pub fn names(&self) -> impl Iterator<Item = &str> {
        self.files.iter().map(|f| f.0.as_str())
    }

    /// Write every staged file into `dir` (created if missing): first all to temporary names,
    /// then rename each into place. Returns the paths written.
    pub fn commit(self, dir: &Path) -> Result<Vec<PathBuf>> {
        let names: Vec<&str> = self.names().collect();
        let mut out = StreamSet::create(dir, &names)?;
        for (i, (_, contents)) in self.files.iter().enumerate() {
            out.write(i, contents)?;
        }
        out.commit()
    }
}

/// Files written progressively into an output directory, all or none: each is written under a
/// temporary name inside the directory as the command goes, and renamed into place only by
/// [`StreamSet::commit`]. Dropped without a commit (an error, a panic), the temporaries are
/// removed, and so is the directory if this created it and it is empty.
#[derive(Debug)]
pub struct StreamSet {
    dir: PathBuf,
    created: bool,
    files: Vec<(std::io::BufWriter<tempfile::NamedTempFile>, PathBuf)>,
    committed: bool,
}

impl StreamSet {
    /// Create `dir` if missing and one temporary file for each name (plain names, no
    /// directories), to be written by index in the order given.
    pub fn create(dir: &Path, names: &[&str]) -> Result<StreamSet> {
        let created = !dir.exists();
        std::fs::create_dir_all(dir).map_err(|source| Error::Write {
            path: dir.to_owned(),
            source,
        })?;
        let mut set = StreamSet {
            dir: dir.to_owned(),
            created,
            files: Vec::with_capacity(names.len()),
            committed: false,
        };
        for name in names {
            let target = dir.join(name);
            let tmp = tempfile::Builder::new()
                .prefix(&format!(".{name}."))
                .suffix(".tmp")
                .tempfile_in(dir)
                .map_err(|source| Error::Write {
                    path: target.clone(),
                    source,
                })?;
            set.files
                .push((std::io::BufWriter::with_capacity(1 << 20, tmp), target));
        }
        Ok(set)
    }

    /// Append `bytes` to file `i`.
    pub fn write(&mut self, i: usize, bytes: &[u8]) -> Result<()> {
        let (w, target) = &mut self.files[i];
        w.write_all(bytes).map_err(|source| Error::Write {
            path: target.clone(),
            source,
        })
    }

    /// Flush every file to disk, then rename each into place. Returns the paths written.
    pub fn commit(mut self) -> Result<Vec<PathBuf>> {
        let mut staged = Vec::with_capacity(self.files.len());
        for (w, target) in std::mem::take(&mut self.files) {
            let fail = |source| Error::Write {
                path: target.clone(),
                source,
            };
            let tmp = w.into_inner().map_err(|e| fail(e.into_error()))?;
            tmp.as_file().sync_all().map_err(fail)?;
            // Temporary files are private (0600); an output is an ordinary file.
            #[cfg(unix)]
            {
                use std::os::unix::fs::PermissionsExt;
                tmp.as_file()
                    .set_permissions(std::fs::Permissions::from_mode(0o644))
                    .map_err(fail)?;
            }
            staged.push((tmp, target));
        }
        // Every file is on disk under a temporary name; now move them into place. If this loop
        // fails, the remaining temporaries are removed when dropped.
        let mut written = Vec::with_capacity(staged.len());
        for (tmp, target) in staged {
            tmp.persist(&target).map_err(|e| Error::Write {
                path: target.clone(),
                source: e.error,
            })?;
            written.push(target);
        }
        self.committed = true;
        Ok(written)
    }
}

impl Drop for StreamSet {
    fn drop(&mut self) {
        if self.committed {
            return;
        }
        // Remove the temporaries first, then the directory if this set made it and it is empty.
        self.files.clear();
        if self.created {
            let _ = std::fs::remove_dir(&self.dir);
        }
    }
}

/// Write one file all or nothing: into a temporary file beside `path`, renamed over it when
/// complete (a failure leaves no partial file).
pub fn write_atomically(path: &Path, bytes: &[u8]) -> Result<()> {
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
    tmp.write_all(bytes).map_err(fail)?;
    tmp.as_file().sync_all().map_err(fail)?;
    #[cfg(unix)]
    {
        use std::os::unix::fs::PermissionsExt;
        tmp.as_file()
            .set_permissions(std::fs::Permissions::from_mode(0o644))
            .map_err(fail)?;
    }
    tmp.persist(path).map_err(|e| fail(e.error))?;
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

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn commit_writes_all_files_and_no_temporaries() {
        let dir = tempfile::tempdir().unwrap();
        let out = dir.path().join("new/sub");
        let mut set = OutputSet::new();
        set.add("a.csv", b"x\n".to_vec());
        set.add("b.json", b"{}".to_vec());
        let written = set.commit(&out).unwrap();
        assert_eq!(written.len(), 2);
        let mut names: Vec<String> = std::fs::read_dir(&out)
            .unwrap()
            .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
            .collect();
        names.sort();
        assert_eq!(names, vec!["a.csv", "b.json"]);
        assert_eq!(std::fs::read(out.join("a.csv")).unwrap(), b"x\n");
    }

    #[test]
    fn an_uncommitted_stream_set_leaves_nothing() {
        let dir = tempfile::tempdir().unwrap();
        let out = dir.path().join("fresh");
        {
            let mut set = StreamSet::create(&out, &["a.csv", "b.csv"]).unwrap();
            set.write(0, b"half a file").unwrap();
            assert_eq!(std::fs::read_dir(&out).unwrap().count(), 2);
            // Dropped here, as on an error part-way.
        }
        assert!(!out.exists());
        // An existing directory is kept, and emptied of the temporaries.
        let keep = dir.path().join("kept");
        std::fs::create_dir(&keep).unwrap();
        drop(StreamSet::create(&keep, &["a.csv"]).unwrap());
        assert!(keep.exists());
        assert_eq!(std::fs::read_dir(&keep).unwrap().count(), 0);
    }

    #[test]
    fn a_stream_set_writes_progressively() {
        let dir = tempfile::tempdir().unwrap();
        let mut set = StreamSet::create(dir.path(), &["a.csv"]).unwrap();
        set.write(0, b"x,").unwrap();
        set.write(0, b"y\n").unwrap();
        set.commit().unwrap();
        assert_eq!(std::fs::read(dir.path().join("a.csv")).unwrap(), b"x,y\n");
        #[cfg(unix)]
        {
            use std::os::unix::fs::PermissionsExt;
            let mode = std::fs::metadata(dir.path().join("a.csv"))
                .unwrap()
                .permissions()
                .mode();
            assert_eq!(mode & 0o777, 0o644);
        }
    }

    #[test]
    fn commit_into_a_file_path_fails_cleanly() {
        let dir = tempfile::tempdir().unwrap();
        let blocker = dir.path().join("blocker");
        std::fs::write(&blocker, b"").unwrap();
        let mut set = OutputSet::new();
        set.add("a.csv", b"x".to_vec());
        let err = set.commit(&blocker.join("out")).unwrap_err();
        assert_eq!(err.exit_code(), crate::error::EXIT_INTERNAL);
    }
}
