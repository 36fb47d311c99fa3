//! A temporary working directory and a way to run `pavestrat` in it.

use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};

/// A scratch directory that disappears after the test.
pub struct Workdir {
    dir: tempfile::TempDir,
}

/// What a run printed and returned.
pub struct Output {
    pub code: i32,
    pub stdout: String,
    pub stderr: String,
    pub shown: String,
}

impl Output {
    /// Fail with the whole run shown unless the exit code is `code`.
    pub fn expect_code(&self, code: i32) -> &Output {
        assert_eq!(self.code, code, "unexpected exit code\n{}", self.shown);
        self
    }

    /// Fail unless stderr contains `text`.
    pub fn stderr_has(&self, text: &str) -> &Output {
        assert!(
            self.stderr.contains(text),
            "stderr lacks {text:?}\n{}",
            self.shown
        );
        self
    }

    /// Fail unless stdout contains `text`.
    pub fn stdout_has(&self, text: &str) -> &Output {
        assert!(
            self.stdout.contains(text),
            "stdout lacks {text:?}\n{}",
            self.shown
        );
        self
    }
}

impl Workdir {
    pub fn new() -> Workdir {
        Workdir {
            dir: tempfile::tempdir().expect("temporary directory"),
        }
    }

    pub fn path(&self) -> &Path {
        self.dir.path()
    }

    pub fn join(&self, p: &str) -> PathBuf {
        self.dir.path().join(p)
    }

    /// Write a file (bytes) into the directory.
    pub fn write(&self, name: &str, contents: impl AsRef<[u8]>) {
        let p = self.join(name);
        if let Some(parent) = p.parent() {
            std::fs::create_dir_all(parent).unwrap();
        }
        std::fs::write(p, contents).unwrap();
    }

    pub fn read(&self, name: &str) -> String {
        std::fs::read_to_string(self.join(name)).unwrap_or_else(|e| panic!("reading {name}: {e}"))
    }

    /// Write the built-in demo's four files here, as a user's starting point.
    pub fn demo_files(&self) {
        for (name, bytes) in pavestrat::demo::FILES {
            self.write(name, bytes);
        }
    }

    /// Names of every entry in the directory, sorted.
    pub fn listing(&self) -> Vec<String> {
        let mut v: Vec<String> = std::fs::read_dir(self.path())
            .unwrap()
            .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
            .collect();
        v.sort();
        v
    }

    /// Run `pavestrat ARGS` here, with `stdin` on standard input.
    pub fn run_with_stdin(&self, args: &[&str], stdin: &[u8]) -> Output {
        self.run_full(args, stdin, &[])
    }

    /// Run `pavestrat ARGS` here with extra environment variables.
    pub fn run_env(&self, args: &[&str], env: &[(&str, &str)]) -> Output {
        self.run_full(args, b"", env)
    }

    fn run_full(&self, args: &[&str], stdin: &[u8], env: &[(&str, &str)]) -> Output {
        use std::io::Write;
        let mut cmd = Command::new(env!("CARGO_BIN_EXE_pavestrat"));
        cmd.envs(env.iter().copied());
        cmd.args(args)
            .current_dir(self.path())
            .stdin(Stdio::piped())
            .stdout(Stdio::piped())
            .stderr(Stdio::piped());
        let mut child = cmd.spawn().expect("the binary runs");
        child.stdin.take().unwrap().write_all(stdin).unwrap();
        let out = child.wait_with_output().unwrap();
        let stdout = String::from_utf8_lossy(&out.stdout).into_owned();
        let stderr = String::from_utf8_lossy(&out.stderr).into_owned();
        let code = out.status.code().unwrap_or(-1);
        let shown = format!(
            "command: pavestrat {}\nin: {}\nexit: {code}\n--- stdout\n{stdout}\n--- stderr\n{stderr}",
            args.join(" "),
            self.path().display()
        );
        Output {
            code,
            stdout,
            stderr,
            shown,
        }
    }

    pub fn run(&self, args: &[&str]) -> Output {
        self.run_with_stdin(args, b"")
    }
}

/// Rows of a CSV text as maps from column name to field (fields hold no commas here).
pub fn rows(text: &str) -> Vec<std::collections::HashMap<String, String>> {
    let mut lines = text.lines();
    let head: Vec<&str> = lines.next().unwrap().split(',').collect();
    lines
        .map(|l| {
            head.iter()
                .zip(l.split(','))
                .map(|(h, v)| ((*h).to_owned(), v.to_owned()))
                .collect()
        })
        .collect()
}
