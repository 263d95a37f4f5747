//! Writing files so that nothing is lost: the new contents go to a temporary file in the same folder, are
//! flushed to the disk, and only then renamed over the old file, so a crash, a kill or a full disk leaves
//! either the old file or the new one, never part of each. Replacing a file first keeps its previous
//! contents as `FILE.bak`, written the same way.
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
    /// Another run holds the file's lock and did not let go in time.
    #[error("{file}: another biasfit has been changing this file for {seconds} s (it holds the file's lock); nothing was written; run the command again once it has finished")]
    Busy {
        /// The file.
        file: String,
        /// How long this run waited.
        seconds: u64,
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
    /// Where the previous contents were kept.
    pub backup: PathBuf,
}

/// Writes files atomically; holds the test hooks, off unless asked for.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct Saver {
    /// Fail the write of new contents after this many bytes.
    pub fail_after_bytes: Option<u64>,
    /// Pause the write of new contents after this many bytes.
    pub stall_after_bytes: Option<u64>,
}

/// The backup of `path`: the same name with `.bak` added (`drawer.csv.bak`).
pub fn backup_path(path: &Path) -> PathBuf {
    let mut name = path.file_name().unwrap_or_default().to_os_string();
    name.push(".bak");
    path.with_file_name(name)
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
                            seconds: wait.as_secs(),
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

    /// Writes `contents` to `path` atomically, creating it or replacing it, with no backup.
    pub fn write(&self, path: &Path, contents: &[u8]) -> Result<(), SaveError> {
        let target = resolve(path);
        let permissions = std::fs::metadata(&target).ok().map(|m| m.permissions());
        self.write_via_temp(path, &target, contents, permissions, true)
    }

    /// Replaces `path`, whose contents the caller read as `previous`, by `contents`, keeping `previous` as
    /// [`backup_path`]. Refuses, writing nothing, when the file no longer holds `previous`.
    pub fn replace(
        &self,
        path: &Path,
        previous: &[u8],
        contents: &[u8],
    ) -> Result<Replaced, SaveError> {
        let target = resolve(path);
        let file = path.display().to_string();
        let now = std::fs::read(&target).map_err(|source| SaveError::Io {
            file: file.clone(),
            action: "read it again before replacing it".into(),
            source,
        })?;
        if now != previous {
            return Err(SaveError::Changed { file });
        }
        let permissions = std::fs::metadata(&target).ok().map(|m| m.permissions());
        // Beside the link's target when the path is a link; otherwise beside the path as given, so that
        // messages name it the way the user does.
        let is_link = std::fs::symlink_metadata(path).is_ok_and(|m| m.file_type().is_symlink());
        let backup = backup_path(if is_link { &target } else { path });
        // The backup goes first: once the new contents are in place, the old ones must already be safe.
        self.write_via_temp(&backup, &backup, previous, permissions.clone(), false)?;
        self.write_via_temp(path, &target, contents, permissions, true)?;
        Ok(Replaced { backup })
    }

    /// Writes `contents` to a new temporary file beside `target`, syncs it, and renames it over `target`.
    /// `hooks` says whether the test hooks apply (they do for new contents, not for backups).
    fn write_via_temp(
        &self,
        shown: &Path,
        target: &Path,
        contents: &[u8],
        permissions: Option<std::fs::Permissions>,
        hooks: bool,
    ) -> Result<(), SaveError> {
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
            if let Some(p) = permissions {
                std::fs::set_permissions(&temp, p)
                    .map_err(|e| io("copy the file's permissions", e))?;
            }
            drop(out);
            std::fs::rename(&temp, target)
                .map_err(|e| io("rename the temporary file over it", e))?;
            sync_dir(&dir);
            Ok(())
        })();
        if result.is_err() {
            let _ = std::fs::remove_file(&temp);
        }
        result
    }
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
    fn replace_keeps_a_backup_of_the_previous_contents() {
        let dir = scratch("replace");
        let f = dir.join("drawer.csv");
        std::fs::write(&f, b"old").unwrap();
        std::fs::write(backup_path(&f), b"older").unwrap();
        let r = Saver::new().replace(&f, b"old", b"new").unwrap();
        assert_eq!(std::fs::read(&f).unwrap(), b"new");
        assert_eq!(std::fs::read(&r.backup).unwrap(), b"old");
        assert!(r.backup.ends_with("drawer.csv.bak"));
        assert!(leftovers(&dir).is_empty());
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
        assert!(!backup_path(&f).exists());
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
        assert!(!backup_path(&f).exists());
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
        assert_eq!(std::fs::read(dir.join("real.csv.bak")).unwrap(), b"old");
        assert!(r.backup.ends_with("real.csv.bak"));
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
