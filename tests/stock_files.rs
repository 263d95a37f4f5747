//! Issue 18, items 6 and 7, through the real binary: `stock take` keeps five numbered backups, newest first;
//! a read-only or hard-linked stock file is refused and left as it was; a rewritten file keeps its mode,
//! and its owner where the system allows (else the user is told whose it now is).

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

const BIN: &str = env!("CARGO_BIN_EXE_biasfit");

/// A fresh folder with the demo drawer and a result that takes one 10k from bin D9 (20 there).
fn scratch(test: &str) -> (PathBuf, PathBuf, PathBuf) {
    let dir = Path::new(env!("CARGO_TARGET_TMPDIR")).join(format!("stockfiles-{test}"));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    let stock = dir.join("drawer.csv");
    std::fs::copy(
        Path::new(env!("CARGO_MANIFEST_DIR")).join("stock/hobby-drawer.csv"),
        &stock,
    )
    .unwrap();
    let result = dir.join("one-10k.json");
    std::fs::write(
        &result,
        r#"{ "copies": 1, "pick": [ { "ohms": 10000.0, "tolerance": 0.05, "power": 0.25, "location": "D9", "count": 1 } ] }"#,
    )
    .unwrap();
    (dir, stock, result)
}

fn take(stock: &Path, result: &Path, extra: &[&str]) -> Output {
    Command::new(BIN)
        .args(["stock", "withdraw"])
        .arg(stock)
        .arg("--result")
        .arg(result)
        .args(extra)
        .env_remove("BIASFIT_TEST_FAIL_AFTER_BYTES")
        .env_remove("BIASFIT_TEST_STALL_AFTER_BYTES")
        .output()
        .unwrap()
}

fn err(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).into_owned()
}

/// The qty of the 10k row in bin D9.
fn d9(stock: &Path) -> u32 {
    let text = std::fs::read_to_string(stock).unwrap();
    let row = text
        .lines()
        .find(|l| l.starts_with("10k,") && l.contains(",D9,"))
        .unwrap();
    row.split(',').nth(1).unwrap().trim().parse().unwrap()
}

fn bak(stock: &Path, n: u32) -> PathBuf {
    stock.with_file_name(format!("drawer.csv.bak.{n}"))
}

#[test]
fn seven_takes_keep_the_five_newest_backups_newest_first() {
    let (_dir, stock, result) = scratch("backups");
    for k in 1..=7 {
        let o = take(&stock, &result, &[]);
        assert_eq!(o.status.code(), Some(0), "take {k}: {}", err(&o));
        let out = String::from_utf8_lossy(&o.stdout);
        assert!(out.contains("previous contents kept in"), "{out}");
        assert!(out.contains("drawer.csv.bak.1"), "{out}");
    }
    assert_eq!(d9(&stock), 13);
    // .bak.1 is the file before the 7th take (14), .bak.5 before the 3rd (18); the first two are gone.
    for n in 1..=5 {
        assert_eq!(d9(&bak(&stock, n)), 13 + n, "drawer.csv.bak.{n}");
    }
    assert!(!bak(&stock, 6).exists());
    // Restoring, as docs/hardening.md says: a backup is a whole stock file, read like any other.
    std::fs::copy(bak(&stock, 5), &stock).unwrap();
    let o = Command::new(BIN).arg("stock").arg(&stock).output().unwrap();
    assert_eq!(o.status.code(), Some(0), "{}", err(&o));
    assert_eq!(d9(&stock), 18);
}

#[cfg(unix)]
#[test]
fn a_read_only_stock_is_refused_and_left_as_it_was() {
    use std::os::unix::fs::PermissionsExt;
    let (_dir, stock, result) = scratch("read-only");
    let before = std::fs::read(&stock).unwrap();
    std::fs::set_permissions(&stock, std::fs::Permissions::from_mode(0o444)).unwrap();
    // Refused whoever runs it, root too: the user marked the file read-only.
    let o = take(&stock, &result, &[]);
    assert_eq!(o.status.code(), Some(4), "{}", err(&o));
    let e = err(&o);
    assert!(e.starts_with("error: ") && e.lines().count() == 1, "{e}");
    assert!(
        e.contains("drawer.csv: the file is read-only, so biasfit did not rewrite it"),
        "{e}"
    );
    assert!(e.contains("chmod u+w"), "{e}");
    assert_eq!(std::fs::read(&stock).unwrap(), before);
    assert!(!bak(&stock, 1).exists());
    let mode = std::fs::metadata(&stock).unwrap().permissions().mode() & 0o777;
    assert_eq!(mode, 0o444);
    // A dry run writes nothing, so it is allowed.
    let o = take(&stock, &result, &["--dry-run"]);
    assert_eq!(o.status.code(), Some(0), "{}", err(&o));
}

#[cfg(unix)]
#[test]
fn a_hard_linked_stock_is_refused_so_its_names_do_not_drift_apart() {
    let (dir, stock, result) = scratch("linked");
    let other = dir.join("same-drawer.csv");
    std::fs::hard_link(&stock, &other).unwrap();
    let o = take(&stock, &result, &[]);
    assert_eq!(o.status.code(), Some(4), "{}", err(&o));
    assert!(
        err(&o).contains("drawer.csv: the file has 2 names (hard links)"),
        "{}",
        err(&o)
    );
    assert_eq!(d9(&stock), 20);
    assert_eq!(d9(&other), 20);
    assert!(!bak(&stock, 1).exists());
    // A symbolic link instead is followed, and the file it names is rewritten.
    std::fs::remove_file(&other).unwrap();
    std::os::unix::fs::symlink("drawer.csv", &other).unwrap();
    let o = take(&other, &result, &[]);
    assert_eq!(o.status.code(), Some(0), "{}", err(&o));
    assert_eq!(d9(&stock), 19);
}

#[cfg(unix)]
#[test]
fn a_rewritten_stock_keeps_its_mode_and_says_when_its_owner_changed() {
    use std::os::unix::fs::{MetadataExt, PermissionsExt};
    use std::os::unix::process::CommandExt;
    let (dir, stock, result) = scratch("owner");
    std::fs::set_permissions(&stock, std::fs::Permissions::from_mode(0o666)).unwrap();
    let o = take(&stock, &result, &[]);
    assert_eq!(o.status.code(), Some(0), "{}", err(&o));
    let m = std::fs::metadata(&stock).unwrap();
    assert_eq!(m.permissions().mode() & 0o777, 0o666);
    assert!(
        err(&o).is_empty(),
        "nothing to say when the owner is kept: {}",
        err(&o)
    );

    // As another user, rewriting a file owned by root: only root can keep the owner, so the new file is
    // the other user's, its mode is kept, and a warning says so. That needs root to set up.
    let owner = m.uid();
    if owner != 0 {
        eprintln!("skipped the other-user half: it needs root to run a command as another user");
        return;
    }
    std::fs::set_permissions(&dir, std::fs::Permissions::from_mode(0o777)).unwrap();
    let o = Command::new(BIN)
        .args(["stock", "withdraw"])
        .arg(&stock)
        .arg("--result")
        .arg(&result)
        .uid(4242)
        .gid(4242)
        .output();
    let o = match o {
        Ok(o) if !err(&o).contains("Permission denied") => o,
        _ => {
            eprintln!("skipped the other-user half: user 4242 cannot reach the test folder here");
            return;
        }
    };
    assert_eq!(o.status.code(), Some(0), "{}", err(&o));
    let e = err(&o);
    assert!(
        e.contains("warning: ")
            && e.contains("the rewritten file now belongs to user 4242 (it was user 0)")
            && e.contains("its mode 666 was kept"),
        "{e}"
    );
    let m = std::fs::metadata(&stock).unwrap();
    assert_eq!(m.uid(), 4242);
    assert_eq!(m.permissions().mode() & 0o777, 0o666);
    assert_eq!(d9(&stock), 18);
}
