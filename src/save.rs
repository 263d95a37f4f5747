//! Writing files so that nothing is lost: the new contents go to a temporary file in the same folder, are
//! flushed to the disk, and only then renamed over the old file, so a crash, a kill or a full disk leaves
//! either the old file or the new one, never part of each. Replacing a file first keeps its previous
//! contents as `FILE.bak.1`, written the same way, after moving older backups up one number (at most
//! [`BACKUPS`] are kept). Only regular files are replaced this way; a device, a FIFO or a path under /dev
//! is written to as it is ([`is_direct`]). A replaced file keeps its mode and, where the system allows,
//! its owner; a read-only or hard-linked file is refused. [`lock_for_edit`] keeps two runs that edit one
//! file from interleaving.
//!
//! The rename is atomic because the temporary file sits on the same file system as its target (POSIX
//! rename(2); on Windows, `MoveFileEx` with replace, which std uses). Two test hooks let the tests fail or
//! stall a write part-way; they act only here, and only when the binary opts in with
//! [`Saver::with_test_hooks_from_env`].

use std::fs::{File, OpenOptions};
use std::io::Write;
use std::path::{Path, PathBuf};
use std::time::Duration;

/// Set to a byte count, the write of new contents fails after that many bytes, as a full disk would.
pub const FAIL_AFTER_ENV: &str = "BIASFIT_TEST_FAIL_AFTER_BYTES";
/// Set to a byte count, the write of new contents pauses after that many bytes, so a test can kill it.
pub const STALL_AFTER_ENV: &str = "BIASFIT_TEST_STALL_AFTER_BYTES";

/// How long a stalled write waits before carrying on; far longer than a test needs to kill it.
const STALL: Duration = Duration::from_secs(30);

/// Bytes handed to the system per write call, so that the test hooks can stop between them.
const CHUNK: usize = 64 * 1024;

/// Why a file could not be written.
#[derive(Debug, thiserror::Error)]
pub enum SaveError {
    /// A system call failed.
    #[error("{file}: cannot {action}: {source}; the file was left as it was")]
    Io {
        /// The file being written.
        file: String,
        /// What was being done ("write the temporary file …").
        action: String,
        /// The system's reason.
        source: std::io::Error,
    },
    /// The file changed between being read and being replaced.
    #[error("{file}: the file changed while biasfit was working on it; nothing was written, run the command again")]
    Changed {
        /// The file.
        file: String,
    },
    /// The file may not be written: no write permission, for this user or for anyone.
    #[error("{file}: the file is read-only{why}, so biasfit did not rewrite it; nothing was written; make it writable (chmod u+w) if it should change")]
    ReadOnly {
        /// The file.
        file: String,
        /// More about why (" for this user").
        why: &'static str,
    },
    /// The file has other names, which a rename would leave with the old contents.
    #[error("{file}: the file has {links} names (hard links), and rewriting it would leave the other names with the old contents; nothing was written; keep one copy (a symbolic link to it is fine) and run the command again")]
    HardLinked {
        /// The file.
        file: String,
        /// How many names it has.
        links: u64,
    },
    /// Another run holds the file's lock and did not let go in time.
    #[error("{file}: another biasfit has been changing this file for {seconds} s (it holds the file's lock); nothing was written; run the command again once it has finished")]
    Busy {
        /// The file.
        file: String,
        /// How long this run waited.
        seconds: f64,
    },
    /// A test hook stopped the write.
    #[error("{file}: the write was stopped after {bytes} bytes ({FAIL_AFTER_ENV} is set); the file was left as it was")]
    Injected {
        /// The file.
        file: String,
        /// Bytes written before the stop.
        bytes: u64,
    },
}

/// What [`Saver::replace`] did.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Replaced {
    /// Where the previous contents were kept (`FILE.bak.1`).
    pub backup: PathBuf,
    /// What the user should know about the new file (an owner that could not be kept).
    pub notes: Vec<String>,
}

/// What [`Saver::write`] did.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Written {
    /// Whether the path was written to directly (a device, a FIFO, a path under /dev) rather than through a
    /// temporary file and a rename.
    pub direct: bool,
    /// What the user should know about the new file (an owner that could not be kept).
    pub notes: Vec<String>,
}

/// Writes files atomically; holds the test hooks, off unless asked for.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct Saver {
    /// Fail the write of new contents after this many bytes.
    pub fail_after_bytes: Option<u64>,
    /// Pause the write of new contents after this many bytes.
    pub stall_after_bytes: Option<u64>,
}

/// How many previous versions of a stock file are kept: `FILE.bak.1` (the newest) to `FILE.bak.5`.
pub const BACKUPS: u32 = 5;

/// The `n`th backup of `path` (1 the newest): the same name with `.bak.N` added (`drawer.csv.bak.1`).
pub fn backup_path(path: &Path, n: u32) -> PathBuf {
    let mut name = path.file_name().unwrap_or_default().to_os_string();
    name.push(format!(".bak.{n}"));
    path.with_file_name(name)
}

/// A file's identity, the same whatever name reaches it (a link, `./`, another spelling): its device and
/// inode on unix; elsewhere its canonical path, which catches the same name spelled differently but not a
/// hard link.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct FileId(#[cfg(unix)] (u64, u64), #[cfg(not(unix))] PathBuf);

impl FileId {
    /// The identity of the file `path` names (following links); none when there is no such file.
    pub fn of(path: &Path) -> Option<FileId> {
        #[cfg(unix)]
        {
            use std::os::unix::fs::MetadataExt;
            std::fs::metadata(path)
                .ok()
                .map(|m| FileId((m.dev(), m.ino())))
        }
        #[cfg(not(unix))]
        {
            std::fs::canonicalize(path).ok().map(FileId)
        }
    }
}

/// Whether `path` is written to directly instead of through a temporary file and a rename: anything that
/// is not a regular file or a folder (a device such as /dev/null, a FIFO, a socket) and any path under
/// /dev or /proc, whatever it resolves to. Renaming over a device would replace the device node with a
/// file; and /dev/stdout resolves to the file the shell redirected to, which a rename would take away from
/// under the redirection.
pub fn is_direct(path: &Path) -> bool {
    if cfg!(unix) && (path.starts_with("/dev") || path.starts_with("/proc")) {
        return true;
    }
    std::fs::metadata(path).is_ok_and(|m| !m.is_file() && !m.is_dir())
}

/// The prefix of the temporary files written beside `path`, so that tests and people can recognise them.
pub fn temp_prefix(path: &Path) -> String {
    format!(
        ".{}.biasfit-",
        path.file_name().unwrap_or_default().to_string_lossy()
    )
}

/// Temporary files an interrupted write (a kill, a power cut) left beside `path`, oldest name first.
pub fn leftovers(path: &Path) -> Vec<PathBuf> {
    let target = resolve(path);
    let dir = match target.parent() {
        Some(d) if !d.as_os_str().is_empty() => d.to_path_buf(),
        _ => PathBuf::from("."),
    };
    let prefix = temp_prefix(&target);
    let mut found: Vec<PathBuf> = std::fs::read_dir(&dir)
        .into_iter()
        .flatten()
        .flatten()
        .filter(|e| {
            let name = e.file_name();
            let name = name.to_string_lossy();
            name.starts_with(&prefix) && name.ends_with(".tmp")
        })
        .map(|e| e.path())
        .collect();
    found.sort();
    found
}

/// How long a command waits for another biasfit to finish with a stock file before giving up.
pub const LOCK_WAIT: Duration = Duration::from_secs(10);

/// Set to a number of milliseconds, the wait for a stock file's lock is that long instead of [`LOCK_WAIT`],
/// so that a test of the refusal need not wait ten seconds; honoured only by [`lock_wait_from_env`].
pub const LOCK_WAIT_ENV: &str = "BIASFIT_TEST_LOCK_WAIT_MS";

/// [`LOCK_WAIT`], or the test hook's wait when [`LOCK_WAIT_ENV`] holds a whole number.
pub fn lock_wait_from_env() -> Duration {
    std::env::var(LOCK_WAIT_ENV)
        .ok()
        .and_then(|v| v.trim().parse().ok())
        .map_or(LOCK_WAIT, Duration::from_millis)
}

/// An advisory lock on a file being edited, held from before it is read until after it is replaced, so
/// that two biasfit runs on one stock file take turns instead of one losing the other's update. Dropping it
/// releases the lock. Programs that take no lock (an editor, a script) are caught by the second line of
/// defence instead: [`Saver::replace`] refuses when the file no longer holds what was read.
#[derive(Debug)]
pub struct EditLock {
    /// The locked file; none when there was nothing to lock (the read will say why).
    _file: Option<File>,
}

/// Takes the advisory lock on `path` for a read-modify-write, waiting at most `wait` for another holder.
///
/// The lock is on the file itself (flock on unix), so no lock file is left beside it. A replace renames a new
/// file over the old one, so a run that waited on the old one finds, once it holds the lock, that the
/// name now points at another file, and locks that one instead. A path that is not a regular file gets no
/// lock: reading it fails with the usual message. Where locks are not available (Windows, whose locks also
/// stop reads, or a file system without them) the compare before the rename is the only defence.
pub fn lock_for_edit(path: &Path, wait: Duration) -> Result<EditLock, SaveError> {
    let file = path.display().to_string();
    let target = resolve(path);
    let started = std::time::Instant::now();
    loop {
        let Ok(meta) = std::fs::metadata(&target) else {
            return Ok(EditLock { _file: None });
        };
        if !meta.is_file() || cfg!(not(unix)) {
            return Ok(EditLock { _file: None });
        }
        // Refused before any work: a read-only or hard-linked stock would be refused at the write anyway.
        may_replace(&file, &target, &meta)?;
        let f = OpenOptions::new()
            .read(true)
            .open(&target)
            .map_err(|source| SaveError::Io {
                file: file.clone(),
                action: "open it to lock it".into(),
                source,
            })?;
        loop {
            match f.try_lock() {
                Ok(()) => break,
                Err(std::fs::TryLockError::WouldBlock) => {
                    if started.elapsed() >= wait {
                        return Err(SaveError::Busy {
                            file,
                            seconds: wait.as_secs_f64(),
                        });
                    }
                    std::thread::sleep(Duration::from_millis(2));
                }
                Err(std::fs::TryLockError::Error(e))
                    if e.kind() == std::io::ErrorKind::Unsupported =>
                {
                    return Ok(EditLock { _file: None });
                }
                Err(std::fs::TryLockError::Error(source)) => {
                    return Err(SaveError::Io {
                        file,
                        action: "lock it".into(),
                        source,
                    })
                }
            }
        }
        if same_file(&f, &target) {
            return Ok(EditLock { _file: Some(f) });
        }
        // Replaced while we waited: the lock we hold is on the old file; start again on the new one.
    }
}

/// Whether the open file `f` is still the one `path` names.
#[cfg(unix)]
fn same_file(f: &File, path: &Path) -> bool {
    use std::os::unix::fs::MetadataExt;
    match (f.metadata(), std::fs::metadata(path)) {
        (Ok(a), Ok(b)) => a.dev() == b.dev() && a.ino() == b.ino(),
        _ => false,
    }
}

/// Without file identities, trust the name.
#[cfg(not(unix))]
fn same_file(_f: &File, _path: &Path) -> bool {
    true
}

impl Saver {
    /// A writer with no test hooks.
    pub fn new() -> Saver {
        Saver::default()
    }

    /// A writer with the test hooks taken from [`FAIL_AFTER_ENV`] and [`STALL_AFTER_ENV`] (ignored unless they
    /// hold a whole number).
    pub fn with_test_hooks_from_env() -> Saver {
        let read = |name: &str| std::env::var(name).ok().and_then(|v| v.trim().parse().ok());
        Saver {
            fail_after_bytes: read(FAIL_AFTER_ENV),
            stall_after_bytes: read(STALL_AFTER_ENV),
        }
    }

    /// Writes `contents` to `path`, creating it or replacing it, with no backup: a regular file atomically,
    /// through a temporary file and a rename, keeping its owner and mode; anything [`is_direct`] names is
    /// written to as it is. A read-only or hard-linked file is refused.
    pub fn write(&self, path: &Path, contents: &[u8]) -> Result<Written, SaveError> {
        let file = path.display().to_string();
        if is_direct(path) {
            self.write_direct(&file, path, contents)?;
            return Ok(Written {
                direct: true,
                notes: Vec::new(),
            });
        }
        let target = resolve(path);
        let was = std::fs::metadata(&target).ok().filter(|m| m.is_file());
        if let Some(m) = &was {
            may_replace(&file, &target, m)?;
        }
        let notes = self.write_via_temp(path, &target, contents, was.as_ref(), true, &|| Ok(()))?;
        Ok(Written {
            direct: false,
            notes,
        })
    }

    /// Replaces `path`, whose contents the caller read as `previous`, by `contents`, keeping `previous` as
    /// the newest of [`BACKUPS`] numbered backups ([`backup_path`]). Refuses, writing nothing, when the file
    /// no longer holds `previous`, is read-only or has other names (hard links). The new file keeps the old
    /// one's mode, and its owner where the system allows.
    pub fn replace(
        &self,
        path: &Path,
        previous: &[u8],
        contents: &[u8],
    ) -> Result<Replaced, SaveError> {
        self.replace_with(path, previous, contents, &|| {})
    }

    /// [`Saver::replace`], with `meanwhile` run after the first compare, where another program could change
    /// the file (the tests use it to do so).
    fn replace_with(
        &self,
        path: &Path,
        previous: &[u8],
        contents: &[u8],
        meanwhile: &dyn Fn(),
    ) -> Result<Replaced, SaveError> {
        let target = resolve(path);
        let file = path.display().to_string();
        let was = std::fs::metadata(&target).map_err(|source| SaveError::Io {
            file: file.clone(),
            action: "read it again before replacing it".into(),
            source,
        })?;
        may_replace(&file, &target, &was)?;
        // Compared twice: first before anything is written (so a changed file leaves even the backups
        // alone), then once more after the new contents are on the disk, just before the rename, so that
        // the window in which a program that takes no lock can slip a change in is a read and a rename
        // long, not two writes and their syncs.
        let unchanged = || -> Result<(), SaveError> {
            let now = std::fs::read(&target).map_err(|source| SaveError::Io {
                file: file.clone(),
                action: "read it again before replacing it".into(),
                source,
            })?;
            if now == previous {
                Ok(())
            } else {
                Err(SaveError::Changed { file: file.clone() })
            }
        };
        unchanged()?;
        meanwhile();
        // Beside the link's target when the path is a link; otherwise beside the path as given, so that
        // messages name it the way the user does.
        let is_link = std::fs::symlink_metadata(path).is_ok_and(|m| m.file_type().is_symlink());
        let base = if is_link { &target } else { path };
        rotate_backups(base).map_err(|source| SaveError::Io {
            file: file.clone(),
            action: "number its older backups".into(),
            source,
        })?;
        let backup = backup_path(base, 1);
        // The backup goes first: once the new contents are in place, the old ones must already be safe.
        // (Should the second compare refuse, the backup still holds a true earlier version.)
        self.write_via_temp(&backup, &backup, previous, Some(&was), false, &|| Ok(()))?;
        let notes = self.write_via_temp(path, &target, contents, Some(&was), true, &unchanged)?;
        Ok(Replaced { backup, notes })
    }

    /// Writes to something that is not a regular file (a device, a FIFO, /dev/fd/N), as it is: appending,
    /// so that a redirection the shell opened is added to rather than overwritten from its start.
    fn write_direct(&self, file: &str, path: &Path, contents: &[u8]) -> Result<(), SaveError> {
        let io = |action: &str, source| SaveError::Io {
            file: file.to_string(),
            action: action.to_string(),
            source,
        };
        let mut out = OpenOptions::new()
            .append(true)
            .open(path)
            .map_err(|e| io("open it for writing", e))?;
        out.write_all(contents)
            .and_then(|_| out.flush())
            .map_err(|e| io("write to it", e))
    }

    /// Writes `contents` to a new temporary file beside `target`, syncs it, gives it `was`'s owner and mode
    /// (the file it replaces), and renames it over `target`. `hooks` says whether the test hooks apply
    /// (they do for new contents, not for backups); `before_rename` may still refuse once the data is on the
    /// disk. Returns what the user should be told.
    fn write_via_temp(
        &self,
        shown: &Path,
        target: &Path,
        contents: &[u8],
        was: Option<&std::fs::Metadata>,
        hooks: bool,
        before_rename: &dyn Fn() -> Result<(), SaveError>,
    ) -> Result<Vec<String>, SaveError> {
        let file = shown.display().to_string();
        let io = |action: &str, source: std::io::Error| SaveError::Io {
            file: file.clone(),
            action: action.to_string(),
            source,
        };
        let dir = match target.parent() {
            Some(d) if !d.as_os_str().is_empty() => d.to_path_buf(),
            _ => PathBuf::from("."),
        };
        let (temp, mut out) = create_temp(&dir, &temp_prefix(target))
            .map_err(|e| io("create a temporary file", e))?;
        let result = (|| {
            let mut written = 0u64;
            for chunk in contents.chunks(CHUNK) {
                let mut chunk = chunk;
                if hooks {
                    if let Some(limit) = self.stall_after_bytes {
                        if written + chunk.len() as u64 > limit && written <= limit {
                            let (head, tail) = chunk.split_at((limit - written) as usize);
                            out.write_all(head)
                                .map_err(|e| io("write the temporary file", e))?;
                            written += head.len() as u64;
                            let _ = out.sync_data();
                            std::thread::sleep(STALL);
                            chunk = tail;
                        }
                    }
                    if let Some(limit) = self.fail_after_bytes {
                        if written + chunk.len() as u64 > limit {
                            let head = &chunk[..(limit.saturating_sub(written)) as usize];
                            out.write_all(head)
                                .map_err(|e| io("write the temporary file", e))?;
                            return Err(SaveError::Injected {
                                file: file.clone(),
                                bytes: written + head.len() as u64,
                            });
                        }
                    }
                }
                out.write_all(chunk)
                    .map_err(|e| io("write the temporary file", e))?;
                written += chunk.len() as u64;
            }
            // The data must be on the disk before the rename makes it the file, or a crash could leave the
            // new name pointing at blocks that were never written.
            out.sync_all()
                .map_err(|e| io("flush the temporary file to disk", e))?;
            let mut notes = Vec::new();
            if let Some(was) = was {
                // The owner first: a change of owner clears set-user-ID bits, which the mode then restores.
                notes.extend(keep_owner(&file, &out, was));
                std::fs::set_permissions(&temp, was.permissions())
                    .map_err(|e| io("copy the file's permissions", e))?;
            }
            drop(out);
            before_rename()?;
            std::fs::rename(&temp, target)
                .map_err(|e| io("rename the temporary file over it", e))?;
            sync_dir(&dir);
            Ok(notes)
        })();
        if result.is_err() {
            let _ = std::fs::remove_file(&temp);
        }
        result
    }
}

/// Refuses to replace a regular file the user did not allow to be written (no write bit, or no write
/// permission for this user) or one with other names (hard links), which a rename would leave behind.
/// Even root, whom the system lets write anything, does not replace a file marked read-only.
fn may_replace(file: &str, target: &Path, meta: &std::fs::Metadata) -> Result<(), SaveError> {
    if meta.permissions().readonly() {
        return Err(SaveError::ReadOnly {
            file: file.to_string(),
            why: "",
        });
    }
    match OpenOptions::new().write(true).open(target) {
        Err(e) if e.kind() == std::io::ErrorKind::PermissionDenied => {
            return Err(SaveError::ReadOnly {
                file: file.to_string(),
                why: " for this user",
            })
        }
        // Any other trouble shows up, with its own reason, when the file is written.
        _ => {}
    }
    let links = link_count(meta);
    if links > 1 {
        return Err(SaveError::HardLinked {
            file: file.to_string(),
            links,
        });
    }
    Ok(())
}

/// How many names (hard links) a file has.
#[cfg(unix)]
fn link_count(meta: &std::fs::Metadata) -> u64 {
    use std::os::unix::fs::MetadataExt;
    meta.nlink()
}

/// Without link counts, every file has one name.
#[cfg(not(unix))]
fn link_count(_meta: &std::fs::Metadata) -> u64 {
    1
}

/// Gives the new file `out` the owner and group of the file it replaces. Only root may give a file to
/// another user, so when another user's file is rewritten by someone else the new file is theirs: the group
/// is kept if it can be, the mode is kept, and the returned note says whose the file now is, so that the
/// change is not silent.
#[cfg(unix)]
fn keep_owner(file: &str, out: &File, was: &std::fs::Metadata) -> Option<String> {
    use std::os::unix::fs::{fchown, MetadataExt};
    let now = out.metadata().ok()?;
    if now.uid() == was.uid() && now.gid() == was.gid() {
        return None;
    }
    if fchown(out, Some(was.uid()), Some(was.gid())).is_ok() {
        return None;
    }
    let group_kept = now.gid() == was.gid() || fchown(out, None, Some(was.gid())).is_ok();
    let mut lost = Vec::new();
    if now.uid() != was.uid() {
        lost.push(format!("user {} (it was user {})", now.uid(), was.uid()));
    }
    if !group_kept {
        lost.push(format!("group {} (it was group {})", now.gid(), was.gid()));
    }
    if lost.is_empty() {
        return None;
    }
    use std::os::unix::fs::PermissionsExt;
    Some(format!(
        "{file}: the rewritten file now belongs to {}: only root can give a file to another owner; its mode {:o} was kept",
        lost.join(" and "),
        was.permissions().mode() & 0o7777
    ))
}

/// Elsewhere owners are not kept.
#[cfg(not(unix))]
fn keep_owner(_file: &str, _out: &File, _was: &std::fs::Metadata) -> Option<String> {
    None
}

/// Moves `FILE.bak.1` … to `FILE.bak.2` …, dropping the oldest, so that `FILE.bak.1` is free for the newest.
fn rotate_backups(base: &Path) -> std::io::Result<()> {
    for n in (1..BACKUPS).rev() {
        let from = backup_path(base, n);
        if std::fs::symlink_metadata(&from).is_ok() {
            std::fs::rename(&from, backup_path(base, n + 1))?;
        }
    }
    Ok(())
}

/// The file a path names, following symbolic links, so that replacing a link replaces its target (and the
/// temporary file lands on the target's file system).
fn resolve(path: &Path) -> PathBuf {
    std::fs::canonicalize(path).unwrap_or_else(|_| path.to_path_buf())
}

/// Creates a temporary file that did not exist before, named after the target and this process.
fn create_temp(dir: &Path, prefix: &str) -> std::io::Result<(PathBuf, File)> {
    let pid = std::process::id();
    let mut last = None;
    for n in 0..1000u32 {
        let path = dir.join(format!("{prefix}{pid}-{n}.tmp"));
        match OpenOptions::new().write(true).create_new(true).open(&path) {
            Ok(f) => return Ok((path, f)),
            Err(e) if e.kind() == std::io::ErrorKind::AlreadyExists => last = Some(e),
            Err(e) => return Err(e),
        }
    }
    Err(last.unwrap_or_else(|| std::io::Error::other("no free temporary file name")))
}

/// Syncs a folder so that a rename in it survives a power cut; where folders cannot be opened (Windows),
/// the rename is already durable once it returns.
fn sync_dir(dir: &Path) {
    if let Ok(d) = File::open(dir) {
        let _ = d.sync_all();
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A fresh, empty folder under the system's temporary folder.
    fn scratch(name: &str) -> PathBuf {
        let dir = std::env::temp_dir().join(format!(
            "biasfit-save-{}-{name}-{}",
            std::process::id(),
            std::time::SystemTime::now()
                .duration_since(std::time::UNIX_EPOCH)
                .map_or(0, |d| d.as_nanos())
        ));
        std::fs::create_dir_all(&dir).unwrap();
        dir
    }

    fn leftovers(dir: &Path) -> Vec<String> {
        std::fs::read_dir(dir)
            .unwrap()
            .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
            .filter(|n| n.ends_with(".tmp"))
            .collect()
    }

    #[test]
    fn replace_keeps_numbered_backups_newest_first_at_most_five() {
        let dir = scratch("replace");
        let f = dir.join("drawer.csv");
        std::fs::write(&f, b"v0").unwrap();
        for n in 1..=7 {
            let previous = format!("v{}", n - 1);
            let r = Saver::new()
                .replace(&f, previous.as_bytes(), format!("v{n}").as_bytes())
                .unwrap();
            assert!(r.backup.ends_with("drawer.csv.bak.1"));
            assert_eq!(std::fs::read(&r.backup).unwrap(), previous.as_bytes());
        }
        assert_eq!(std::fs::read(&f).unwrap(), b"v7");
        // Newest first: .bak.1 is v6, … .bak.5 is v2; v0 and v1 have gone, and there is no .bak.6.
        for n in 1..=BACKUPS {
            let want = format!("v{}", 7 - n);
            assert_eq!(std::fs::read(backup_path(&f, n)).unwrap(), want.as_bytes());
        }
        assert!(!backup_path(&f, BACKUPS + 1).exists());
        assert!(leftovers(&dir).is_empty());
        std::fs::remove_dir_all(dir).unwrap();
    }

    #[cfg(unix)]
    #[test]
    fn a_read_only_or_hard_linked_file_is_refused_and_left_alone() {
        use std::os::unix::fs::PermissionsExt;
        let dir = scratch("refused");
        let f = dir.join("ro.csv");
        std::fs::write(&f, b"old").unwrap();
        std::fs::set_permissions(&f, std::fs::Permissions::from_mode(0o444)).unwrap();
        // Refused even for root, whom the system would let write it.
        let err = Saver::new().replace(&f, b"old", b"new").unwrap_err();
        assert!(matches!(err, SaveError::ReadOnly { .. }), "{err}");
        let err = Saver::new().write(&f, b"new").unwrap_err();
        assert!(err.to_string().contains("read-only"), "{err}");
        assert!(matches!(
            lock_for_edit(&f, Duration::ZERO).unwrap_err(),
            SaveError::ReadOnly { .. }
        ));
        assert_eq!(std::fs::read(&f).unwrap(), b"old");
        assert!(!backup_path(&f, 1).exists());

        let g = dir.join("linked.csv");
        std::fs::write(&g, b"old").unwrap();
        std::fs::hard_link(&g, dir.join("other-name.csv")).unwrap();
        let err = Saver::new().replace(&g, b"old", b"new").unwrap_err();
        assert!(
            matches!(err, SaveError::HardLinked { links: 2, .. }),
            "{err}"
        );
        assert!(lock_for_edit(&g, Duration::ZERO).is_err());
        assert_eq!(std::fs::read(dir.join("other-name.csv")).unwrap(), b"old");
        assert!(!backup_path(&g, 1).exists());
        std::fs::remove_dir_all(dir).unwrap();
    }

    #[cfg(unix)]
    #[test]
    fn a_replaced_file_keeps_its_mode_and_owner() {
        use std::os::unix::fs::{MetadataExt, PermissionsExt};
        let dir = scratch("owner");
        let f = dir.join("shared.csv");
        std::fs::write(&f, b"old").unwrap();
        std::fs::set_permissions(&f, std::fs::Permissions::from_mode(0o664)).unwrap();
        // Only root can give the file to someone else; elsewhere the owner is already ours, and the mode is
        // what is checked.
        let other = std::os::unix::fs::chown(&f, Some(4242), Some(4243)).is_ok();
        let r = Saver::new().replace(&f, b"old", b"new").unwrap();
        assert!(r.notes.is_empty(), "{:?}", r.notes);
        let m = std::fs::metadata(&f).unwrap();
        assert_eq!(m.permissions().mode() & 0o7777, 0o664);
        let b = std::fs::metadata(&r.backup).unwrap();
        assert_eq!(b.permissions().mode() & 0o7777, 0o664);
        if other {
            assert_eq!((m.uid(), m.gid()), (4242, 4243));
            assert_eq!((b.uid(), b.gid()), (4242, 4243));
        }
        std::fs::remove_dir_all(dir).unwrap();
    }

    #[cfg(unix)]
    #[test]
    fn devices_and_fifos_are_written_to_not_replaced() {
        use std::os::unix::fs::FileTypeExt;
        assert!(is_direct(Path::new("/dev/null")));
        assert!(is_direct(Path::new("/dev/stdout")));
        let w = Saver::new().write(Path::new("/dev/null"), b"gone").unwrap();
        assert!(w.direct);
        let t = std::fs::metadata("/dev/null").unwrap().file_type();
        assert!(t.is_char_device());
        let err = Saver::new().write(Path::new("/dev/full"), b"x");
        if Path::new("/dev/full").exists() {
            assert!(err.unwrap_err().to_string().contains("write to it"));
            assert!(std::fs::metadata("/dev/full")
                .unwrap()
                .file_type()
                .is_char_device());
        }
        let dir = scratch("regular");
        let f = dir.join("plain.csv");
        assert!(!is_direct(&f));
        assert!(!Saver::new().write(&f, b"x").unwrap().direct);
        std::fs::remove_dir_all(dir).unwrap();
    }

    #[test]
    fn a_file_changed_behind_our_back_is_not_replaced() {
        let dir = scratch("changed");
        let f = dir.join("s.csv");
        std::fs::write(&f, b"edited meanwhile").unwrap();
        let err = Saver::new().replace(&f, b"as read", b"new").unwrap_err();
        assert!(matches!(err, SaveError::Changed { .. }), "{err}");
        assert_eq!(std::fs::read(&f).unwrap(), b"edited meanwhile");
        assert!(!backup_path(&f, 1).exists());
        std::fs::remove_dir_all(dir).unwrap();
    }

    #[test]
    fn a_change_while_the_new_file_is_written_is_caught_before_the_rename() {
        let dir = scratch("late-change");
        let f = dir.join("s.csv");
        std::fs::write(&f, b"value,qty\n4k7,3\n").unwrap();
        // Another program (taking no lock) appends a row after the first compare.
        let append = || {
            use std::io::Write as _;
            let mut a = OpenOptions::new().append(true).open(&f).unwrap();
            a.write_all(b"10k,2\n").unwrap();
        };
        let err = Saver::new()
            .replace_with(&f, b"value,qty\n4k7,3\n", b"value,qty\n4k7,2\n", &append)
            .unwrap_err();
        assert!(matches!(err, SaveError::Changed { .. }), "{err}");
        assert_eq!(std::fs::read(&f).unwrap(), b"value,qty\n4k7,3\n10k,2\n");
        assert!(leftovers(&dir).is_empty(), "{:?}", leftovers(&dir));
        std::fs::remove_dir_all(dir).unwrap();
    }

    #[test]
    fn an_injected_failure_leaves_the_original_and_no_temp_file() {
        let dir = scratch("inject");
        let f = dir.join("big.csv");
        let old: Vec<u8> = (0..300_000u32).map(|i| b'a' + (i % 26) as u8).collect();
        let new: Vec<u8> = (0..400_000u32).map(|i| b'A' + (i % 26) as u8).collect();
        std::fs::write(&f, &old).unwrap();
        for limit in [0u64, 1, 65_535, 65_536, 200_001, 399_999] {
            let saver = Saver {
                fail_after_bytes: Some(limit),
                ..Saver::default()
            };
            let err = saver.replace(&f, &old, &new).unwrap_err();
            match err {
                SaveError::Injected { bytes, .. } => assert_eq!(bytes, limit),
                e => panic!("{e}"),
            }
            assert_eq!(std::fs::read(&f).unwrap(), old, "limit {limit}");
            assert!(leftovers(&dir).is_empty(), "{:?}", leftovers(&dir));
        }
        // A limit past the end does not trigger.
        let saver = Saver {
            fail_after_bytes: Some(400_000),
            ..Saver::default()
        };
        saver.replace(&f, &old, &new).unwrap();
        assert_eq!(std::fs::read(&f).unwrap(), new);
        std::fs::remove_dir_all(dir).unwrap();
    }

    #[test]
    fn write_creates_and_keeps_permissions() {
        let dir = scratch("write");
        let f = dir.join("order.csv");
        Saver::new().write(&f, b"one").unwrap();
        assert_eq!(std::fs::read(&f).unwrap(), b"one");
        #[cfg(unix)]
        {
            use std::os::unix::fs::PermissionsExt;
            std::fs::set_permissions(&f, std::fs::Permissions::from_mode(0o640)).unwrap();
            Saver::new().write(&f, b"two").unwrap();
            let mode = std::fs::metadata(&f).unwrap().permissions().mode() & 0o777;
            assert_eq!(mode, 0o640);
        }
        assert_eq!(std::fs::read(&f).unwrap(), b"two");
        assert!(!backup_path(&f, 1).exists());
        std::fs::remove_dir_all(dir).unwrap();
    }

    #[cfg(unix)]
    #[test]
    fn replacing_a_link_replaces_its_target() {
        let dir = scratch("link");
        let real = dir.join("real.csv");
        let link = dir.join("link.csv");
        std::fs::write(&real, b"old").unwrap();
        std::os::unix::fs::symlink(&real, &link).unwrap();
        let r = Saver::new().replace(&link, b"old", b"new").unwrap();
        assert_eq!(std::fs::read(dir.join("real.csv.bak.1")).unwrap(), b"old");
        assert!(r.backup.ends_with("real.csv.bak.1"));
        assert!(std::fs::symlink_metadata(&link)
            .unwrap()
            .file_type()
            .is_symlink());
        assert_eq!(std::fs::read(&real).unwrap(), b"new");
        std::fs::remove_dir_all(dir).unwrap();
    }

    #[test]
    fn a_missing_folder_is_an_io_error_naming_the_file() {
        let f = std::env::temp_dir().join("biasfit-no-such-folder-x/y/out.csv");
        let err = Saver::new().write(&f, b"x").unwrap_err().to_string();
        assert!(
            err.contains("out.csv: cannot create a temporary file"),
            "{err}"
        );
    }
}
