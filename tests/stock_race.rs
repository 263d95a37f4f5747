//! Issue 18, item 3: two `stock take` runs at once on one stock file. Each holds the file's advisory lock
//! from before it reads until after it has renamed the new file into place, so the second waits and then
//! takes from the first one's result: both updates land, or (when another program changed the file
//! between the read and the rename) one is refused; never is one lost. Real binary processes, started back
//! to back, 100 rounds.

#![cfg(unix)]

use std::path::{Path, PathBuf};
use std::process::{Child, Command, Stdio};
use std::time::Duration;

const BIN: &str = env!("CARGO_BIN_EXE_biasfit");

/// A fresh folder with a copy of the 69-row demo drawer and a result that takes one 10k from bin D9.
fn scratch(test: &str) -> (PathBuf, PathBuf, PathBuf) {
    let dir = Path::new(env!("CARGO_TARGET_TMPDIR")).join(format!("race-{test}"));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    let stock = dir.join("drawer.csv");
    let result = dir.join("one-10k.json");
    std::fs::write(
        &result,
        r#"{ "copies": 1, "pick": [ { "ohms": 10000.0, "tolerance": 0.05, "power": 0.25, "location": "D9", "count": 1 } ] }"#,
    )
    .unwrap();
    (dir, stock, result)
}

fn drawer() -> String {
    std::fs::read_to_string(Path::new(env!("CARGO_MANIFEST_DIR")).join("stock/hobby-drawer.csv"))
        .unwrap()
}

/// The qty of the 10k row in bin D9 (20 in the demo drawer).
fn d9(stock: &Path) -> u32 {
    let text = std::fs::read_to_string(stock).unwrap();
    let row = text
        .lines()
        .find(|l| l.starts_with("10k,") && l.contains(",D9,"))
        .unwrap_or_else(|| panic!("no 10k row in D9:\n{text}"));
    row.split(',').nth(1).unwrap().trim().parse().unwrap()
}

fn take(stock: &Path, result: &Path) -> Child {
    Command::new(BIN)
        .args(["stock", "withdraw"])
        .arg(stock)
        .arg("--result")
        .arg(result)
        .env_remove("BIASFIT_TEST_FAIL_AFTER_BYTES")
        .env_remove("BIASFIT_TEST_STALL_AFTER_BYTES")
        .env_remove("BIASFIT_TEST_LOCK_WAIT_MS")
        .stdout(Stdio::null())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap()
}

#[test]
fn two_takes_at_once_both_land_or_one_is_refused_never_lost() {
    let (_dir, stock, result) = scratch("two-takes");
    let original = drawer();
    assert_eq!(original.lines().count(), 69);
    let mut both = 0;
    for round in 0..100 {
        std::fs::write(&stock, &original).unwrap();
        let a = take(&stock, &result);
        let b = take(&stock, &result);
        let mut succeeded = 0;
        for child in [a, b] {
            let out = child.wait_with_output().unwrap();
            let err = String::from_utf8_lossy(&out.stderr).into_owned();
            match out.status.code() {
                Some(0) => succeeded += 1,
                // The refusals that name a concurrent change; anything else is a failure of the test.
                Some(4) if err.contains("changed while") || err.contains("another biasfit") => {}
                code => panic!("round {round}: exit {code:?}: {err}"),
            }
        }
        assert_eq!(
            d9(&stock),
            20 - succeeded,
            "round {round}: {succeeded} take(s) reported success but the file shows {}",
            20 - d9(&stock)
        );
        if succeeded == 2 {
            both += 1;
        }
    }
    // With the lock nothing else touches the file, so every round should see both takes through.
    assert_eq!(both, 100, "only {both} of 100 rounds applied both takes");
}

#[test]
fn a_take_waits_for_the_lock_and_then_takes_from_the_new_contents() {
    let (_dir, stock, result) = scratch("waits");
    std::fs::write(&stock, drawer()).unwrap();
    let held = std::fs::File::open(&stock).unwrap();
    held.lock().unwrap();
    let child = take(&stock, &result);
    std::thread::sleep(Duration::from_millis(300));
    let mut child = child;
    assert!(
        child.try_wait().unwrap().is_none(),
        "the take finished while another process held the lock"
    );
    assert_eq!(d9(&stock), 20, "the take wrote while the lock was held");
    // While it waits, another program replaces the file (as a second take would): the waiting take must
    // take from the new contents, not from the file it first opened.
    let replaced = drawer().replace("10k,20,5%,0.25W,D9,", "10k,15,5%,0.25W,D9,");
    let temp = stock.with_file_name("drawer.csv.new");
    std::fs::write(&temp, replaced).unwrap();
    std::fs::rename(&temp, &stock).unwrap();
    held.unlock().unwrap();
    drop(held);
    let out = child.wait_with_output().unwrap();
    assert_eq!(
        out.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    assert_eq!(d9(&stock), 14);
}

#[test]
fn a_take_and_an_add_at_once_both_land() {
    let (dir, stock, result) = scratch("take-and-add");
    let order = dir.join("order.csv");
    // Three 10k arrive; with no location column they go to the part's first row, bin D9.
    std::fs::write(
        &order,
        "value,tolerance,power,qty,packs,cost\n10k,5%,0.25W,3,1,0.3\n",
    )
    .unwrap();
    let original = drawer();
    for round in 0..30 {
        std::fs::write(&stock, &original).unwrap();
        let a = take(&stock, &result);
        let b = Command::new(BIN)
            .args(["stock", "add"])
            .arg(&stock)
            .arg("--order")
            .arg(&order)
            .stdout(Stdio::null())
            .stderr(Stdio::piped())
            .spawn()
            .unwrap();
        for child in [a, b] {
            let out = child.wait_with_output().unwrap();
            assert_eq!(
                out.status.code(),
                Some(0),
                "round {round}: {}",
                String::from_utf8_lossy(&out.stderr)
            );
        }
        assert_eq!(d9(&stock), 20 - 1 + 3, "round {round}");
    }
}

#[test]
fn a_lock_held_too_long_is_a_refusal_that_writes_nothing() {
    let (_dir, stock, result) = scratch("busy");
    std::fs::write(&stock, drawer()).unwrap();
    let held = std::fs::File::open(&stock).unwrap();
    held.lock().unwrap();
    // The wait is 10 s; the test hook shortens it to 0.2 s.
    let out = Command::new(BIN)
        .args(["stock", "withdraw"])
        .arg(&stock)
        .arg("--result")
        .arg(&result)
        .env("BIASFIT_TEST_LOCK_WAIT_MS", "200")
        .output()
        .unwrap();
    let err = String::from_utf8_lossy(&out.stderr).into_owned();
    assert_eq!(out.status.code(), Some(4), "{err}");
    assert!(
        err.contains("drawer.csv: another biasfit has been changing this file for 0.2 s")
            && err.contains("nothing was written; run the command again"),
        "{err}"
    );
    assert_eq!(d9(&stock), 20);
    assert!(!stock.with_file_name("drawer.csv.bak.1").exists());
}
