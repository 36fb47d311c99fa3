//! Output directories written all or nothing, one run at a time, with a manifest that lets every
//! reader tell a complete set from a mixed or stale one.
//!
//! A command's files are written into a staging directory inside the output directory
//! (`.pavestrat-stage-RUN`), beside a new `manifest.json`. The commit point is one atomic rename
//! inside the staging directory (`JOURNAL.tmp` → `JOURNAL`, which lists the files to move in and
//! the previous run's files of the same command to take away); then each file is renamed into
//! place, the manifest last, and the staging directory removed. Whoever next opens the directory
//! — another run, or a reader such as `report` — first finishes a journalled commit that was cut
//! short (a killed process) and removes any staging directory without a journal. So after an
//! error, SIGINT, SIGTERM or SIGKILL the directory holds, for every pavestrat reader, either the
//! previous complete set or the new one, and never stray temporaries once it is opened again.
//!
//! A lock file (`.pavestrat.lock`, an advisory `flock`) keeps two runs from committing into one
//! directory at once: the second waits, and says so. SIGINT, SIGTERM and SIGHUP are caught (see
//! [`install_signal_cleanup`]): staging directories are removed (or, past their commit point,
//! finished) before the process exits with 128 + the signal's number.
//!
//! The manifest lists every file pavestrat wrote into the directory with the run that wrote it,
//! the command, its size and checksum (64-bit FNV-1a), and for analyses of a plan (sensitivity,
//! risk) the run id of the plan they were made for.

use crate::error::{Error, Result};
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;
use std::fs::File;
use std::io::Write;
use std::path::{Path, PathBuf};
use std::sync::Mutex;

/// The manifest's file name in an output directory.
pub const MANIFEST: &str = "manifest.json";
/// The lock file's name.
pub const LOCK: &str = ".pavestrat.lock";
const STAGE_PREFIX: &str = ".pavestrat-stage-";
const JOURNAL: &str = "JOURNAL";

/// One file of a directory's manifest.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct Entry {
    /// The run that wrote it.
    pub run: String,
    /// The command that wrote it (`plan`, `sensitivity`, …).
    pub command: String,
    pub bytes: u64,
    /// 64-bit FNV-1a of the contents, in hex.
    pub fnv1a64: String,
    /// For an analysis of a plan: the run id of the plan it was made for.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub for_plan: Option<String>,
}

/// What pavestrat wrote into an output directory: file name → entry.
#[derive(Debug, Clone, Default, PartialEq, Eq, Serialize, Deserialize)]
pub struct Manifest {
    pub tool: String,
    pub files: BTreeMap<String, Entry>,
}

impl Manifest {
    /// The run id of the newest `plan` files, when every plan file comes from one run.
    pub fn plan_run(&self) -> Option<&str> {
        let mut runs = self
            .files
            .values()
            .filter(|e| e.command == "plan")
            .map(|e| e.run.as_str());
        let first = runs.next()?;
        runs.all(|r| r == first).then_some(first)
    }
}

/// What the journal of a commit says: files to move in (by name), and old ones to remove.
#[derive(Debug, Clone, Default, Serialize, Deserialize)]
struct Journal {
    files: Vec<String>,
    remove: Vec<String>,
}

/// 64-bit FNV-1a, incrementally (Fowler–Noll–Vo; offset basis and prime as published).
#[derive(Debug, Clone, Copy)]
pub struct Fnv(u64);

impl Default for Fnv {
    fn default() -> Fnv {
        Fnv(0xcbf2_9ce4_8422_2325)
    }
}

impl Fnv {
    pub fn update(&mut self, bytes: &[u8]) {
        for &b in bytes {
            self.0 ^= u64::from(b);
            self.0 = self.0.wrapping_mul(0x0000_0100_0000_01b3);
        }
    }

    pub fn hex(self) -> String {
        format!("{:016x}", self.0)
    }
}

/// A new run id: time and process, unique enough to tell two runs apart.
pub fn new_run_id() -> String {
    let t = std::time::SystemTime::now()
        .duration_since(std::time::UNIX_EPOCH)
        .map(|d| d.as_nanos())
        .unwrap_or(0);
    let mut h = Fnv::default();
    h.update(&t.to_le_bytes());
    h.update(&std::process::id().to_le_bytes());
    format!("{}-{}", t / 1_000_000_000, &h.hex()[..8])
}

fn werr(path: &Path) -> impl Fn(std::io::Error) -> Error + '_ {
    move |source| Error::Write {
        path: path.to_owned(),
        source,
    }
}

/// Staging directories of this process that are not finished yet (for the signal handler).
static LIVE: Mutex<Vec<PathBuf>> = Mutex::new(Vec::new());

/// Temporary files of this process staged beside their targets and not yet moved into place
/// (a workbook, a report written with `--out FILE`), for the signal handler.
static LIVE_FILES: Mutex<Vec<PathBuf>> = Mutex::new(Vec::new());

/// Note a temporary file staged beside its target, for the signal handler to remove.
pub(crate) fn staged_file(path: &Path) {
    LIVE_FILES
        .lock()
        .unwrap_or_else(|p| p.into_inner())
        .push(path.to_owned());
}

/// Forget a staged file (moved into place, or removed).
pub(crate) fn settled_file(path: &Path) {
    LIVE_FILES
        .lock()
        .unwrap_or_else(|p| p.into_inner())
        .retain(|p| p != path);
}

/// Catch SIGINT, SIGTERM and SIGHUP: finish or remove this process's staging directories and
/// remove its staged files, then exit with 128 + the signal number. Call once, early (the CLI
/// does).
pub fn install_signal_cleanup() {
    use signal_hook::consts::{SIGHUP, SIGINT, SIGTERM};
    let Ok(mut signals) = signal_hook::iterator::Signals::new([SIGINT, SIGTERM, SIGHUP]) else {
        return;
    };
    let _ = std::thread::Builder::new()
        .name("signal-cleanup".into())
        .spawn(move || {
            if let Some(sig) = signals.forever().next() {
                // Holding the lock waits out a commit that is moving files into place.
                let live = LIVE.lock().unwrap_or_else(|p| p.into_inner());
                for stage in live.iter() {
                    if let Some(dir) = stage.parent() {
                        let _ = settle(dir, stage);
                    }
                }
                // A file already moved into place is no longer there under its staged name.
                for file in LIVE_FILES.lock().unwrap_or_else(|p| p.into_inner()).iter() {
                    let _ = std::fs::remove_file(file);
                }
                std::process::exit(128 + sig);
            }
        });
}

/// Finish (journalled) or remove (not yet journalled) one staging directory of `dir`. A move
/// that fails leaves the staging directory, journal and all, for the next opener to finish: it
/// is never removed with part of a committed set still inside.
fn settle(dir: &Path, stage: &Path) -> std::io::Result<()> {
    let journal = std::fs::read(stage.join(JOURNAL))
        .ok()
        .and_then(|b| serde_json::from_slice::<Journal>(&b).ok());
    if let Some(j) = journal {
        for name in j.files.iter().map(String::as_str) {
            let from = stage.join(name);
            if from.exists() {
                std::fs::rename(&from, dir.join(name))?;
            }
        }
        for name in &j.remove {
            match std::fs::remove_file(dir.join(name)) {
                Err(e) if e.kind() != std::io::ErrorKind::NotFound => return Err(e),
                _ => {}
            }
        }
        let from = stage.join(MANIFEST);
        if from.exists() {
            std::fs::rename(&from, dir.join(MANIFEST))?;
        }
    }
    std::fs::remove_dir_all(stage)
}

/// Finish or remove every staging directory a cut-short run left in `dir`. Call with the lock
/// held (see [`DirLock`]).
pub fn recover(dir: &Path) {
    let Ok(entries) = std::fs::read_dir(dir) else {
        return;
    };
    let mut stages: Vec<PathBuf> = entries
        .filter_map(|e| e.ok())
        .filter(|e| e.file_name().to_string_lossy().starts_with(STAGE_PREFIX))
        .map(|e| e.path())
        .collect();
    stages.sort();
    for s in stages {
        // A staging directory that cannot be settled now is tried again next time.
        let _ = settle(dir, &s);
    }
}

/// The exclusive lock of an output directory, held while it exists.
#[derive(Debug)]
pub struct DirLock {
    _file: File,
}

impl DirLock {
    /// Lock `dir` (which must exist), waiting for another run that holds it — and saying so
    /// through [`crate::notice`].
    pub fn acquire(dir: &Path) -> Result<DirLock> {
        let path = dir.join(LOCK);
        let file = std::fs::OpenOptions::new()
            .create(true)
            .truncate(false)
            .write(true)
            .open(&path)
            .map_err(werr(&path))?;
        match file.try_lock() {
            Ok(()) => {}
            Err(std::fs::TryLockError::WouldBlock) => {
                crate::notice::say(&format!(
                    "waiting: another pavestrat run is writing {}",
                    dir.display()
                ));
                file.lock().map_err(werr(&path))?;
            }
            // A file system without locks (some network mounts): go on unlocked rather than
            // refuse to write at all.
            Err(std::fs::TryLockError::Error(e)) if e.kind() == std::io::ErrorKind::Unsupported => {
                crate::notice::say(&format!(
                    "note: {} cannot be locked ({e}); do not run two commands into it at once",
                    dir.display()
                ));
            }
            Err(std::fs::TryLockError::Error(e)) => return Err(werr(&path)(e)),
        }
        Ok(DirLock { _file: file })
    }
}

/// Read `dir`'s manifest (after finishing any cut-short commit) and check every file it lists
/// against its size and checksum. `Ok(None)` when the directory has no manifest (not written by
/// this version, or assembled by hand): nothing can be checked then. A file that is missing or
/// differs is an input error naming it.
pub fn verify(dir: &Path) -> Result<Option<Manifest>> {
    if !dir.is_dir() {
        return Ok(None);
    }
    // Readers lock too, so that they never read a set half moved into place.
    let _lock = DirLock::acquire(dir).ok();
    recover(dir);
    let path = dir.join(MANIFEST);
    let Ok(bytes) = std::fs::read(&path) else {
        return Ok(None);
    };
    let label = path.display().to_string();
    let mut d = crate::diag::Diagnostics::new();
    let m: Manifest = match serde_json::from_slice(&bytes) {
        Ok(m) => m,
        Err(e) => {
            d.error(
                crate::diag::Place::line(&label, e.line()).with_column(e.column()),
                format!("a manifest that cannot be read ({e})"),
                "the manifest pavestrat wrote with the files (re-run the command that wrote this directory)",
            );
            return Err(Error::Input(d));
        }
    };
    for (name, e) in &m.files {
        let p = dir.join(name);
        match crate::io::read_file(&p) {
            Err(_) => {
                d.error(
                    crate::diag::Place::file(p.display().to_string()),
                    format!("missing, though {MANIFEST} lists it from the `{}` run {}", e.command, e.run),
                    format!("the complete set of files that run wrote (re-run `pavestrat {}` into this directory)", e.command),
                );
            }
            Ok(b) => {
                let mut h = Fnv::default();
                h.update(&b);
                if b.len() as u64 != e.bytes || h.hex() != e.fnv1a64 {
                    d.error(
                        crate::diag::Place::file(p.display().to_string()),
                        format!(
                            "contents that differ from what the `{}` run {} wrote (changed since, or copied from another run)",
                            e.command, e.run
                        ),
                        format!("the file as that run wrote it (re-run `pavestrat {}` into this directory)", e.command),
                    );
                }
            }
        }
    }
    if d.has_errors() {
        return Err(Error::Input(d));
    }
    Ok(Some(m))
}

/// Analyses of a plan that a reader shows beside it: each must have been made for the plan the
/// directory holds now.
pub const ANALYSES: [&str; 3] = ["sensitivity.csv", "risk.csv", "risk_draws.csv"];

/// Check that a verified directory holds one plan and that each of `analyses` present was made
/// for it, and that none of `names` lies there unlisted: a file pavestrat did not write into
/// the set (copied in by hand) cannot be vouched for.
pub fn check_plan_set(dir: &Path, m: &Manifest, names: &[&str]) -> Result<()> {
    let mut d = crate::diag::Diagnostics::new();
    let place = |name: &str| crate::diag::Place::file(dir.join(name).display().to_string());
    let Some(plan) = m.plan_run() else {
        d.error(
            place(MANIFEST),
            "no plan, or plan files from more than one run",
            "the files of one `pavestrat plan --out DIR` run (run it again into this directory)",
        );
        return Err(Error::Input(d));
    };
    for name in names {
        match m.files.get(*name) {
            None => {
                if dir.join(name).exists() {
                    d.error(
                        place(name),
                        format!("a file that {MANIFEST} does not list (not written here by pavestrat)"),
                        "only files a pavestrat run wrote into this directory (remove it, or re-run the command that makes it)",
                    );
                }
            }
            Some(e) if ANALYSES.contains(name) && e.for_plan.as_deref() != Some(plan) => {
                let why = match &e.for_plan {
                    Some(other) => format!(
                        "made for the plan of run {other}, not this directory's plan (run {plan})"
                    ),
                    None => format!(
                        "made for a plan selected afresh, not this directory's plan (run {plan})"
                    ),
                };
                d.error(
                    place(name),
                    why,
                    format!(
                        "an analysis of this plan: run `pavestrat {} --from {} --out {}` again",
                        e.command,
                        dir.display(),
                        dir.display()
                    ),
                );
            }
            Some(_) => {}
        }
    }
    if d.has_errors() {
        return Err(Error::Input(d));
    }
    Ok(())
}

/// Files written progressively into an output directory, all or none (see the module doc).
/// Dropped without a commit (an error, a panic), the staging directory is removed, and so is the
/// output directory if this created it and it is empty.
#[derive(Debug)]
pub struct StreamSet {
    dir: PathBuf,
    created: bool,
    stage: PathBuf,
    command: String,
    run: String,
    for_plan: Option<String>,
    names: Vec<String>,
    files: Vec<(std::io::BufWriter<File>, Fnv, u64)>,
    /// Single files outside the directory, committed with it: (staged temporary, target).
    extras: Vec<(tempfile::NamedTempFile, PathBuf)>,
    manifest: bool,
    committed: bool,
    _lock: DirLock,
}

impl StreamSet {
    /// Lock `dir` (created if missing), finish or remove what an earlier run left, and open one
    /// staged file for each name (plain names, no directories), written by index in this order.
    pub fn create(dir: &Path, command: &str, names: &[&str]) -> Result<StreamSet> {
        let created = !dir.exists();
        std::fs::create_dir_all(dir).map_err(werr(dir))?;
        let lock = DirLock::acquire(dir)?;
        recover(dir);
        // A name that exists as something other than a file cannot be replaced: refuse now,
        // before anything is written.
        for name in names {
            let target = dir.join(name);
            if let Ok(meta) = std::fs::symlink_metadata(&target) {
                if !meta.is_file() {
                    return Err(Error::Write {
                        path: target,
                        source: std::io::Error::new(
                            std::io::ErrorKind::AlreadyExists,
                            "exists and is not a regular file (a directory or link); move it away first",
                        ),
                    });
                }
            }
        }
        let run = new_run_id();
        let stage = dir.join(format!("{STAGE_PREFIX}{run}"));
        // The staging directory is made, registered and filled with its files under the lock
        // the signal handler takes: it sees no directory, or one it can remove whole.
        let live = LIVE.lock();
        let mut live = live.unwrap_or_else(|p| p.into_inner());
        std::fs::create_dir(&stage).map_err(werr(&stage))?;
        live.push(stage.clone());
        let mut set = StreamSet {
            dir: dir.to_owned(),
            created,
            stage,
            command: command.to_owned(),
            run,
            for_plan: None,
            names: names.iter().map(|n| (*n).to_owned()).collect(),
            files: Vec::with_capacity(names.len()),
            extras: Vec::new(),
            manifest: true,
            committed: false,
            _lock: lock,
        };
        let mut made = Ok(());
        for name in names {
            let p = set.stage.join(name);
            match File::create(&p) {
                Ok(f) => set.files.push((
                    std::io::BufWriter::with_capacity(1 << 20, f),
                    Fnv::default(),
                    0,
                )),
                Err(e) => {
                    made = Err(werr(&p)(e));
                    break;
                }
            }
        }
        // Unlocked before a failure drops the set (whose clean-up takes the lock again).
        drop(live);
        made.map(|()| set)
    }

    /// This run's id (written into the set's manifest, and by `plan` into summary.json).
    pub fn run_id(&self) -> &str {
        &self.run
    }

    /// Record that these files analyse the plan of run `plan` (sensitivity, risk).
    pub fn made_for(&mut self, plan: Option<String>) {
        self.for_plan = plan;
    }

    /// Append `bytes` to the file called `name` (one of the names the set was created with).
    pub fn write_to(&mut self, name: &str, bytes: &[u8]) -> Result<()> {
        let Some(i) = self.names.iter().position(|n| n == name) else {
            return Err(Error::Internal(format!(
                "`{name}` is not one of the files this set was opened for"
            )));
        };
        self.write(i, bytes)
    }

    /// Append `bytes` to file `i`.
    pub fn write(&mut self, i: usize, bytes: &[u8]) -> Result<()> {
        let (w, h, n) = &mut self.files[i];
        h.update(bytes);
        *n += bytes.len() as u64;
        w.write_all(bytes).map_err(|source| Error::Write {
            path: self.dir.join(&self.names[i]),
            source,
        })
    }

    /// Stage a single file outside the directory (a workbook), moved into place with the set.
    pub fn extra(&mut self, path: &Path, bytes: &[u8]) -> Result<()> {
        let fail = werr(path);
        if let Ok(meta) = std::fs::symlink_metadata(path) {
            if meta.is_dir() {
                return Err(fail(std::io::Error::new(
                    std::io::ErrorKind::AlreadyExists,
                    "is a directory; give a file name",
                )));
            }
        }
        let tmp = crate::io::stage_beside(path, bytes)?;
        self.extras.push((tmp, path.to_owned()));
        Ok(())
    }

    /// Flush every file to disk, journal the commit, then move everything into place. Returns
    /// the paths written.
    pub fn commit(mut self) -> Result<Vec<PathBuf>> {
        let mut entries = BTreeMap::new();
        for ((w, h, n), name) in std::mem::take(&mut self.files).into_iter().zip(&self.names) {
            let target = self.dir.join(name);
            let f = w.into_inner().map_err(|e| werr(&target)(e.into_error()))?;
            f.sync_all().map_err(werr(&target))?;
            entries.insert(
                name.clone(),
                Entry {
                    run: self.run.clone(),
                    command: self.command.clone(),
                    bytes: n,
                    fnv1a64: h.hex(),
                    for_plan: self.for_plan.clone(),
                },
            );
        }
        // The new manifest: what the directory held from other commands, and this set. The
        // previous files of the same command that this set does not replace are taken away.
        let old: Manifest = std::fs::read(self.dir.join(MANIFEST))
            .ok()
            .and_then(|b| serde_json::from_slice(&b).ok())
            .unwrap_or_default();
        let mut journal = Journal {
            files: self.names.clone(),
            remove: Vec::new(),
        };
        let mut manifest = Manifest {
            tool: format!("pavestrat {}", env!("CARGO_PKG_VERSION")),
            files: BTreeMap::new(),
        };
        for (name, e) in old.files {
            if entries.contains_key(&name) || name == MANIFEST {
                continue;
            }
            if e.command == self.command {
                journal.remove.push(name);
            } else {
                manifest.files.insert(name, e);
            }
        }
        manifest.files.extend(entries);
        // From here the staging directory gains entries: the signal handler, which removes it
        // under this lock, must not race them (a removal that meets a new entry fails and
        // leaves the directory behind).
        let live = LIVE.lock().unwrap_or_else(|p| p.into_inner());
        let write_small = |name: &str, bytes: &[u8]| -> Result<()> {
            let p = self.stage.join(name);
            let mut f = File::create(&p).map_err(werr(&p))?;
            f.write_all(bytes).map_err(werr(&p))?;
            f.sync_all().map_err(werr(&p))
        };
        if self.manifest {
            let text = serde_json::to_vec_pretty(&manifest)
                .map_err(|e| Error::Internal(format!("manifest: {e}")))?;
            write_small(MANIFEST, &text)?;
        }
        let text =
            serde_json::to_vec(&journal).map_err(|e| Error::Internal(format!("journal: {e}")))?;
        write_small("JOURNAL.tmp", &text)?;
        // The commit point.
        let jp = self.stage.join(JOURNAL);
        std::fs::rename(self.stage.join("JOURNAL.tmp"), &jp).map_err(werr(&jp))?;
        for (tmp, target) in std::mem::take(&mut self.extras) {
            let staged = tmp.path().to_owned();
            let moved = tmp.persist(&target);
            settled_file(&staged);
            moved.map_err(|e| werr(&target)(e.error))?;
        }
        // Past the commit point: a move that fails leaves the journalled staging directory for
        // the next opener to finish, and says so.
        settle(&self.dir, &self.stage).map_err(werr(&self.dir))?;
        self.committed = true;
        drop(live);
        self.forget();
        Ok(self.names.iter().map(|n| self.dir.join(n)).collect())
    }

    fn forget(&self) {
        LIVE.lock()
            .unwrap_or_else(|p| p.into_inner())
            .retain(|s| s != &self.stage);
    }
}

impl Drop for StreamSet {
    fn drop(&mut self) {
        if self.committed {
            return;
        }
        self.files.clear();
        for (tmp, _) in std::mem::take(&mut self.extras) {
            let staged = tmp.path().to_owned();
            drop(tmp);
            settled_file(&staged);
        }
        // Past the commit point a failed move is finished by whoever opens the directory next;
        // before it, the staging directory goes.
        if !self.stage.join(JOURNAL).exists() {
            let _ = std::fs::remove_dir_all(&self.stage);
        }
        self.forget();
        if self.created {
            let _ = std::fs::remove_file(self.dir.join(LOCK));
            let _ = std::fs::remove_dir(&self.dir);
        }
    }
}

/// Files to write into an output directory, all or none, built in memory first.
#[derive(Debug, Default)]
pub struct OutputSet {
    files: Vec<(String, Vec<u8>)>,
    plain: bool,
    for_plan: Option<String>,
}

impl OutputSet {
    pub fn new() -> OutputSet {
        OutputSet::default()
    }

    /// A set of files for the user to edit (`init`): no manifest, since edits are expected.
    pub fn plain() -> OutputSet {
        OutputSet {
            files: Vec::new(),
            plain: true,
            for_plan: None,
        }
    }

    /// Record that these files are drawn from, or analyse, the plan of run `plan`.
    pub fn made_for(&mut self, plan: Option<String>) {
        self.for_plan = plan;
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

    /// Write every staged file into `dir` as one set (see [`StreamSet`]) by `command`.
    pub fn commit(self, dir: &Path, command: &str) -> Result<Vec<PathBuf>> {
        let names: Vec<&str> = self.names().collect();
        let mut out = StreamSet::create(dir, command, &names)?;
        out.manifest = !self.plain;
        out.for_plan = self.for_plan;
        for (i, (_, contents)) in self.files.iter().enumerate() {
            out.write(i, contents)?;
        }
        let written = out.commit()?;
        if self.plain {
            // Files for the user to edit: no trace of the tool's bookkeeping beside them.
            let _ = std::fs::remove_file(dir.join(LOCK));
        }
        Ok(written)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn listing(dir: &Path) -> Vec<String> {
        let mut names: Vec<String> = std::fs::read_dir(dir)
            .unwrap()
            .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
            .collect();
        names.sort();
        names
    }

    /// A file staged beside its target is known to the signal handler until it is moved into
    /// place, or removed with the set that staged it.
    #[test]
    fn staged_files_are_known_until_settled() {
        let dir = tempfile::tempdir().unwrap();
        let live = |p: &Path| {
            LIVE_FILES
                .lock()
                .unwrap_or_else(|e| e.into_inner())
                .contains(&p.to_owned())
        };
        let target = dir.path().join("book.xlsx");
        let tmp = crate::io::stage_beside(&target, b"bytes").unwrap();
        let staged = tmp.path().to_owned();
        assert!(live(&staged) && staged.exists());
        drop(tmp);
        settled_file(&staged);
        assert!(!live(&staged) && !staged.exists());
        // Through a set: staged with it, forgotten once it is committed or dropped.
        for commit in [true, false] {
            let out = dir.path().join(format!("out-{commit}"));
            let mut set = StreamSet::create(&out, "test", &["a.csv"]).unwrap();
            set.write_to("a.csv", b"x\n").unwrap();
            set.extra(&target, b"book").unwrap();
            let staged: Vec<PathBuf> = set
                .extras
                .iter()
                .map(|(t, _)| t.path().to_owned())
                .collect();
            assert!(staged.iter().all(|p| live(p)));
            if commit {
                set.commit().unwrap();
                assert_eq!(std::fs::read(&target).unwrap(), b"book");
            } else {
                drop(set);
            }
            assert!(staged.iter().all(|p| !live(p) && !p.exists()));
        }
    }

    #[test]
    fn fnv1a64_reference_values() {
        // FNV-1a 64 of "" and "a", as listed with the algorithm's published test vectors.
        let mut h = Fnv::default();
        assert_eq!(h.hex(), "cbf29ce484222325");
        h.update(b"a");
        assert_eq!(h.hex(), "af63dc4c8601ec8c");
    }

    #[test]
    fn commit_writes_all_files_a_manifest_and_no_temporaries() {
        let dir = tempfile::tempdir().unwrap();
        let out = dir.path().join("new/sub");
        let mut set = OutputSet::new();
        set.add("a.csv", b"x\n".to_vec());
        set.add("b.json", b"{}".to_vec());
        let written = set.commit(&out, "plan").unwrap();
        assert_eq!(written.len(), 2);
        assert_eq!(listing(&out), vec![LOCK, "a.csv", "b.json", MANIFEST]);
        assert_eq!(std::fs::read(out.join("a.csv")).unwrap(), b"x\n");
        let m = verify(&out).unwrap().unwrap();
        assert_eq!(m.files.len(), 2);
        assert!(m.plan_run().is_some());
    }

    #[test]
    fn an_uncommitted_stream_set_leaves_nothing() {
        let dir = tempfile::tempdir().unwrap();
        let out = dir.path().join("fresh");
        {
            let mut set = StreamSet::create(&out, "plan", &["a.csv", "b.csv"]).unwrap();
            set.write(0, b"half a file").unwrap();
            // Dropped here, as on an error part-way.
        }
        assert!(!out.exists());
        // An existing directory keeps what it had.
        let keep = dir.path().join("kept");
        std::fs::create_dir(&keep).unwrap();
        std::fs::write(keep.join("mine.txt"), b"user's").unwrap();
        drop(StreamSet::create(&keep, "plan", &["a.csv"]).unwrap());
        assert_eq!(listing(&keep), vec![LOCK, "mine.txt"]);
    }

    #[test]
    fn a_stream_set_writes_progressively() {
        let dir = tempfile::tempdir().unwrap();
        let mut set = StreamSet::create(dir.path(), "plan", &["a.csv"]).unwrap();
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
        let err = set.commit(&blocker.join("out"), "plan").unwrap_err();
        assert_eq!(err.exit_code(), crate::error::EXIT_INTERNAL);
    }

    #[test]
    fn a_name_taken_by_a_directory_is_refused_before_anything_is_written() {
        let dir = tempfile::tempdir().unwrap();
        let mut first = OutputSet::new();
        first.add("a.csv", b"old".to_vec());
        first.add("summary.json", b"{}".to_vec());
        first.commit(dir.path(), "plan").unwrap();
        std::fs::remove_file(dir.path().join("summary.json")).unwrap();
        std::fs::create_dir(dir.path().join("summary.json")).unwrap();
        let mut set = OutputSet::new();
        set.add("a.csv", b"new".to_vec());
        set.add("summary.json", b"{}".to_vec());
        assert!(set.commit(dir.path(), "plan").is_err());
        assert_eq!(std::fs::read(dir.path().join("a.csv")).unwrap(), b"old");
        assert!(!listing(dir.path())
            .iter()
            .any(|n| n.starts_with(STAGE_PREFIX)));
    }

    #[test]
    fn a_commit_cut_short_after_its_journal_is_finished_and_one_before_it_is_undone() {
        let dir = tempfile::tempdir().unwrap();
        let d = dir.path();
        let mut first = OutputSet::new();
        first.add("a.csv", b"old a".to_vec());
        first.add("b.csv", b"old b".to_vec());
        first.commit(d, "plan").unwrap();
        // A run killed after its commit point, half-way through the moves: a.csv is new,
        // b.csv still staged.
        let stage = d.join(format!("{STAGE_PREFIX}killed"));
        std::fs::create_dir(&stage).unwrap();
        std::fs::write(d.join("a.csv"), b"new a").unwrap();
        std::fs::write(stage.join("b.csv"), b"new b").unwrap();
        let mut m: Manifest =
            serde_json::from_slice(&std::fs::read(d.join(MANIFEST)).unwrap()).unwrap();
        for (name, body) in [("a.csv", &b"new a"[..]), ("b.csv", &b"new b"[..])] {
            let mut h = Fnv::default();
            h.update(body);
            let e = m.files.get_mut(name).unwrap();
            e.run = "killed".into();
            e.fnv1a64 = h.hex();
            e.bytes = body.len() as u64;
        }
        std::fs::write(stage.join(MANIFEST), serde_json::to_vec(&m).unwrap()).unwrap();
        std::fs::write(
            stage.join(JOURNAL),
            br#"{"files":["a.csv","b.csv"],"remove":[]}"#,
        )
        .unwrap();
        // And one killed before it: only its staging directory.
        let early = d.join(format!("{STAGE_PREFIX}early"));
        std::fs::create_dir(&early).unwrap();
        std::fs::write(early.join("a.csv"), b"never").unwrap();
        let m = verify(d).unwrap().unwrap();
        assert_eq!(m.plan_run(), Some("killed"));
        assert_eq!(std::fs::read(d.join("b.csv")).unwrap(), b"new b");
        assert_eq!(listing(d), vec![LOCK, "a.csv", "b.csv", MANIFEST]);
    }

    #[test]
    fn a_move_that_fails_after_the_commit_point_is_finished_by_the_next_opener() {
        let dir = tempfile::tempdir().unwrap();
        let d = dir.path();
        let mut set = StreamSet::create(d, "plan", &["a.csv", "b.csv"]).unwrap();
        set.write(0, b"new a").unwrap();
        set.write(1, b"new b").unwrap();
        // Something takes b.csv's place after the set was opened: its move fails.
        std::fs::create_dir(d.join("b.csv")).unwrap();
        std::fs::write(d.join("b.csv/x"), b"").unwrap();
        assert!(set.commit().is_err());
        let stages: Vec<String> = listing(d)
            .into_iter()
            .filter(|n| n.starts_with(STAGE_PREFIX))
            .collect();
        assert_eq!(
            stages.len(),
            1,
            "the journalled set is kept, not thrown away half moved"
        );
        std::fs::remove_dir_all(d.join("b.csv")).unwrap();
        let m = verify(d).unwrap().unwrap();
        assert_eq!(m.files.len(), 2);
        assert_eq!(std::fs::read(d.join("b.csv")).unwrap(), b"new b");
        assert_eq!(listing(d), vec![LOCK, "a.csv", "b.csv", MANIFEST]);
    }

    #[test]
    fn a_changed_file_is_named() {
        let dir = tempfile::tempdir().unwrap();
        let mut set = OutputSet::new();
        set.add("a.csv", b"x".to_vec());
        set.commit(dir.path(), "plan").unwrap();
        std::fs::write(dir.path().join("a.csv"), b"y").unwrap();
        let e = verify(dir.path()).unwrap_err().to_string();
        assert!(e.contains("a.csv") && e.contains("differ"), "{e}");
    }

    #[test]
    fn a_later_run_of_the_same_command_takes_away_the_files_it_does_not_replace() {
        let dir = tempfile::tempdir().unwrap();
        let mut a = OutputSet::new();
        a.add("a.csv", b"1".to_vec());
        a.add("report.html", b"old".to_vec());
        a.commit(dir.path(), "plan").unwrap();
        let mut s = OutputSet::new();
        s.add("sensitivity.csv", b"s".to_vec());
        s.commit(dir.path(), "sensitivity").unwrap();
        let mut b = OutputSet::new();
        b.add("a.csv", b"2".to_vec());
        b.commit(dir.path(), "plan").unwrap();
        assert_eq!(
            listing(dir.path()),
            vec![LOCK, "a.csv", MANIFEST, "sensitivity.csv"]
        );
        let m = verify(dir.path()).unwrap().unwrap();
        assert_eq!(m.files["sensitivity.csv"].command, "sensitivity");
    }
}
