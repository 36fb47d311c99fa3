//! Reading inputs and writing outputs, in one place for every command.
//!
//! Inputs are a path or `-` for standard input. Outputs are staged: a command builds every file
//! it will write in memory, then [`OutputSet::commit`] writes each to a temporary name inside the
//! target directory and renames them into place only once all were written. A run that fails —
//! on bad input, or half-way through writing — leaves no partial file behind.

use crate::error::{Error, Result};
use std::io::{Read, Write};
use std::path::{Path, PathBuf};

/// The label of standard input in messages.
pub const STDIN_LABEL: &str = "<stdin>";

/// Read a whole input: a file, or standard input for `-`.
pub fn read_input(path: &str) -> std::io::Result<Vec<u8>> {
    if path == "-" {
        let mut buf = Vec::new();
        std::io::stdin().lock().read_to_end(&mut buf)?;
        Ok(buf)
    } else {
        std::fs::read(path)
    }
}

/// How an input is named in messages.
pub fn input_label(path: &str) -> String {
    if path == "-" {
        STDIN_LABEL.to_owned()
    } else {
        path.to_owned()
    }
}

/// Files to write into an output directory, all or none.
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
        std::fs::create_dir_all(dir).map_err(|source| Error::Write {
            path: dir.to_owned(),
            source,
        })?;
        let mut staged = Vec::with_capacity(self.files.len());
        for (name, contents) in &self.files {
            let target = dir.join(name);
            let write = |source| Error::Write {
                path: target.clone(),
                source,
            };
            let mut tmp = tempfile::Builder::new()
                .prefix(&format!(".{name}."))
                .suffix(".tmp")
                .tempfile_in(dir)
                .map_err(write)?;
            tmp.write_all(contents).map_err(write)?;
            // Temporary files are private (0600); an output is an ordinary file.
            #[cfg(unix)]
            {
                use std::os::unix::fs::PermissionsExt;
                tmp.as_file()
                    .set_permissions(std::fs::Permissions::from_mode(0o644))
                    .map_err(write)?;
            }
            tmp.as_file().sync_all().map_err(write)?;
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
        Ok(written)
    }
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
