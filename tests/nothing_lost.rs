//! Issue 9, "nothing lost": a stock-writing command killed or failing mid-write leaves the stock file either
//! as it was or as it should become, never a mix, and a failure leaves no temporary file behind.
//!
//! The real binary rewrites a large stock file (100 000 rows, about 3 MB). One test stalls the write part-way
//! with the writer's test hook and kills the process there; one kills it at moments spread over a normal
//! run; one injects a write failure.

use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

const BIN: &str = env!("CARGO_BIN_EXE_biasfit");
const ROWS: usize = 100_000;

/// A folder with a large stock file, a design result taking one piece from its first row, and an order
/// file giving it back. Returns the folder, the stock, the result, the order, and the stock's contents
/// before and after the take.
struct Setup {
    dir: PathBuf,
    stock: PathBuf,
    result: PathBuf,
    order: PathBuf,
    before: Vec<u8>,
    after: Vec<u8>,
}

fn setup(test: &str) -> Setup {
    let dir = Path::new(env!("CARGO_TARGET_TMPDIR")).join(format!("lost-{test}"));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    // Invented: 100 000 rows cycling through 1k to 9k1 (E24 mantissas) in bins, 50 pieces each.
    let mantissas = [
        "1k", "1k1", "1k2", "1k3", "1k5", "1k6", "1k8", "2k", "2k2", "2k4", "2k7", "3k", "3k3",
        "3k6", "3k9", "4k3", "4k7", "5k1", "5k6", "6k2", "6k8", "7k5", "8k2", "9k1",
    ];
    let mut text = String::from(
        "# invented large stock for the kill test\nvalue,qty,tolerance,power,location\n",
    );
    for i in 0..ROWS {
        text.push_str(&format!(
            "{},50,5%,0.25W,bin {i}\n",
            mantissas[i % mantissas.len()]
        ));
    }
    let before = text.clone().into_bytes();
    let after = text
        .replacen("1k,50,5%,0.25W,bin 0\n", "1k,49,5%,0.25W,bin 0\n", 1)
        .into_bytes();
    let stock = dir.join("big.csv");
    std::fs::write(&stock, &before).unwrap();
    let result = dir.join("design.json");
    std::fs::write(
        &result,
        r#"{"copies": 1, "pick": [{"ohms": 1000.0, "tolerance": 0.05, "power": 0.25, "location": "bin 0", "count": 1}], "stages": []}"#,
    )
    .unwrap();
    let order = dir.join("order.csv");
    std::fs::write(
        &order,
        "value,tolerance,power,qty,packs,cost,location\n1k,5%,0.25W,1,1,0.1,bin 0\n",
    )
    .unwrap();
    Setup {
        dir,
        stock,
        result,
        order,
        before,
        after,
    }
}

fn temp_files(dir: &Path) -> Vec<PathBuf> {
    std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| {
            let n = p.file_name().unwrap().to_string_lossy().into_owned();
            n.starts_with(".big.csv.biasfit-") && n.ends_with(".tmp")
        })
        .collect()
}

fn command(s: &Setup, take: bool) -> Command {
    let mut c = Command::new(BIN);
    if take {
        c.args(["stock", "withdraw"])
            .arg(&s.stock)
            .arg("--result")
            .arg(&s.result);
    } else {
        c.args(["stock", "add"])
            .arg(&s.stock)
            .arg("--order")
            .arg(&s.order);
    }
    c.env_remove("BIASFIT_TEST_FAIL_AFTER_BYTES")
        .env_remove("BIASFIT_TEST_STALL_AFTER_BYTES")
        .stdout(Stdio::null())
        .stderr(Stdio::piped());
    c
}

#[test]
fn killed_mid_write_the_stock_is_the_old_file() {
    let s = setup("stall");
    const STALL_AT: u64 = 1_000_000;
    let mut child = command(&s, true)
        .env("BIASFIT_TEST_STALL_AFTER_BYTES", STALL_AT.to_string())
        .stderr(Stdio::null())
        .spawn()
        .unwrap();
    // Wait until the new contents are a third written, then kill the process there.
    let started = Instant::now();
    let temp = loop {
        if let Some(t) = temp_files(&s.dir)
            .into_iter()
            .find(|t| std::fs::metadata(t).is_ok_and(|m| m.len() >= STALL_AT))
        {
            break t;
        }
        assert!(
            started.elapsed() < Duration::from_secs(60),
            "the write never reached {STALL_AT} bytes"
        );
        assert!(
            child.try_wait().unwrap().is_none(),
            "biasfit ended before the stall"
        );
        std::thread::sleep(Duration::from_millis(5));
    };
    child.kill().unwrap();
    child.wait().unwrap();
    // The kill came mid-write: the temporary file holds part of the new contents...
    let partial = std::fs::read(&temp).unwrap();
    assert_eq!(partial.len() as u64, STALL_AT);
    assert!(partial.len() < s.after.len());
    assert_eq!(&partial[..], &s.after[..partial.len()]);
    // ...and the stock file is the old one, whole; the backup was already safe.
    assert_eq!(std::fs::read(&s.stock).unwrap(), s.before);
    assert_eq!(
        std::fs::read(s.dir.join("big.csv.bak.1")).unwrap(),
        s.before
    );
    // Running again works, says what the kill left behind, and gives the new file.
    let o = command(&s, true).output().unwrap();
    assert_eq!(
        o.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&o.stderr)
    );
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(
        err.contains("looks left over from an interrupted write"),
        "{err}"
    );
    assert_eq!(std::fs::read(&s.stock).unwrap(), s.after);
    std::fs::remove_dir_all(&s.dir).unwrap();
}

#[test]
fn killed_at_any_moment_the_stock_is_old_or_new_never_a_mix() {
    let s = setup("anytime");
    // Time one whole take, so that the kills spread over a run.
    let t0 = Instant::now();
    let o = command(&s, true).output().unwrap();
    assert_eq!(
        o.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&o.stderr)
    );
    let run = t0.elapsed();
    assert_eq!(std::fs::read(&s.stock).unwrap(), s.after);
    const KILLS: u32 = 8;
    for k in 0..KILLS {
        // Take when the file is the old one, give back when it is the new one.
        let now = std::fs::read(&s.stock).unwrap();
        let take = now == s.before;
        let mut child = command(&s, take).stderr(Stdio::null()).spawn().unwrap();
        std::thread::sleep(run * k / KILLS);
        let _ = child.kill();
        child.wait().unwrap();
        let got = std::fs::read(&s.stock).unwrap();
        assert!(
            got == s.before || got == s.after,
            "kill {k} after {:?} left a stock file that is neither the old nor the new one ({} bytes)",
            run * k / KILLS,
            got.len()
        );
        for t in temp_files(&s.dir) {
            std::fs::remove_file(t).unwrap();
        }
    }
    std::fs::remove_dir_all(&s.dir).unwrap();
}

#[test]
fn an_injected_failure_leaves_the_original_and_no_temp_file() {
    let s = setup("inject");
    for (take, at) in [(true, 0u64), (true, 100_000), (false, 2_000_000)] {
        if !take {
            // Give the add something to put back.
            std::fs::write(&s.stock, &s.after).unwrap();
        }
        let was = std::fs::read(&s.stock).unwrap();
        let o = command(&s, take)
            .env("BIASFIT_TEST_FAIL_AFTER_BYTES", at.to_string())
            .output()
            .unwrap();
        let err = String::from_utf8_lossy(&o.stderr);
        assert_eq!(o.status.code(), Some(4), "{err}");
        assert!(
            err.contains(&format!("the write was stopped after {at} bytes")),
            "{err}"
        );
        assert!(err.contains("the file was left as it was"), "{err}");
        assert_eq!(std::fs::read(&s.stock).unwrap(), was);
        assert!(temp_files(&s.dir).is_empty(), "{:?}", temp_files(&s.dir));
    }
    std::fs::remove_dir_all(&s.dir).unwrap();
}
