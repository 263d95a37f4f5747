//! Issue 9, "bad input": every case in tests/fixtures/bad/ goes through the real binary and is refused the
//! same way. Exit code 2 (or the one the case names), nothing on stdout, and on stderr exactly one line,
//! starting `error: `, that names the file and line where there is one and says what to do. No panic, no
//! backtrace (the runs set RUST_BACKTRACE=1, so a panic could not hide). The line must match the case's
//! insta snapshot, `NAME.snap` beside it; `INSTA_UPDATE=always cargo test --release --test bad_input`
//! rewrites them after a deliberate change of wording (or review the `.snap.new` files a failing run leaves,
//! with `cargo insta review` where cargo-insta is installed).
//!
//! insta rather than trycmd: trycmd runs case files of its own format, and here the case is the broken
//! input itself (`toml/NAME.toml` is a design file, which trycmd would take for a case of its own); the
//! checks beyond the text (one line, the file and line named, what to do said) need code in any case.
//!
//! - `csv/NAME.csv` runs as `biasfit stock FILE`;
//! - `toml/NAME.toml` runs as `biasfit ideal FILE`;
//! - `cli/NAME.args` holds a whole command line, one argument a line; its `# expect: TEXT` lines name text
//!   the message must hold (the flag, the range), and `# exit: N` a code other than 2;
//! - `files/` holds the inputs the command lines read;
//! - `generated/` holds the snapshots of files the tests write themselves (a 100 000-row stock).

mod common;
use common::root;
use std::path::{Path, PathBuf};
use std::process::{Command, Output};

fn run(args: &[String], dir: &Path) -> Output {
    Command::new(env!("CARGO_BIN_EXE_biasfit"))
        .args(args)
        .current_dir(dir)
        .env("NO_COLOR", "1")
        .env("RUST_BACKTRACE", "1")
        .output()
        .expect("the biasfit binary runs")
}

/// The files of one corpus folder with an extension, sorted.
fn cases(folder: &str, ext: &str) -> Vec<PathBuf> {
    let dir = root().join("tests/fixtures/bad").join(folder);
    let mut v: Vec<PathBuf> = std::fs::read_dir(&dir)
        .unwrap_or_else(|e| panic!("{}: {e}", dir.display()))
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|x| x == ext))
        .collect();
    v.sort();
    v
}

fn rel(p: &Path) -> String {
    p.strip_prefix(root())
        .unwrap()
        .to_string_lossy()
        .into_owned()
}

/// Words of a message that tell the reader what would be accepted or what to do next.
/// "cannot read" stands for itself: the system's reason (no such file) says what to fix.
const GUIDANCE: [&str; 22] = [
    "expected",
    "must",
    "give ",
    "write ",
    "save it",
    "keep ",
    "rename",
    "separate",
    "use ",
    "lower ",
    "raise ",
    "quote ",
    "see ",
    "say which",
    "pick ",
    "takes no",
    "cannot be",
    "valid keys are",
    "cannot read",
    "needs ",
    "its slots are",
    "check ",
];

/// Checks one refusal and compares it with its snapshot; `file` is the input the message must name, and
/// `line` whether it must name a line in it too. Returns what is wrong, so that one run lists every case
/// that fails rather than the first.
fn refused(
    case: &str,
    out: &Output,
    code: i32,
    file: Option<&str>,
    line: bool,
    snap: &Path,
) -> Result<(), String> {
    let err = String::from_utf8_lossy(&out.stderr).into_owned();
    let fail = |why: &str| Err(format!("{case}: {why}: {err}"));
    if out.status.code() != Some(code) {
        return fail(&format!("exit code {:?}, not {code}", out.status.code()));
    }
    if !out.stdout.is_empty() {
        return fail(&format!(
            "printed on stdout ({})",
            String::from_utf8_lossy(&out.stdout)
        ));
    }
    if err.contains("panicked") || err.contains("backtrace") || err.contains("RUST_BACKTRACE") {
        return fail("a panic");
    }
    if err.lines().count() != 1 || !err.ends_with('\n') {
        return fail("not exactly one line");
    }
    let msg = err.trim_end();
    if !msg.starts_with("error: ") {
        return fail("does not start with 'error: '");
    }
    if msg.chars().count() > 600 {
        return fail("longer than 600 characters");
    }
    if !GUIDANCE.iter().any(|g| msg.contains(g)) {
        return fail("does not say what is expected");
    }
    if let Some(file) = file {
        let named = format!("error: {file}");
        let Some(rest) = msg.strip_prefix(&named) else {
            return fail("does not start with the file");
        };
        if line {
            let digits = rest
                .strip_prefix(':')
                .map(|r| r.chars().take_while(char::is_ascii_digit).count());
            let ok = digits.is_some_and(|d| d > 0 && rest[1 + d..].starts_with(':'));
            if !ok {
                return fail("no line number after the file");
            }
        }
    }
    matches_snapshot(case, msg, snap)
}

/// Compares the refusal with its insta snapshot `snap` (`NAME.snap` beside the case). A mismatch is
/// returned rather than raised, so that one run lists (and, outside CI, writes a `.snap.new` for) every
/// case that changed.
fn matches_snapshot(case: &str, msg: &str, snap: &Path) -> Result<(), String> {
    let folder = root().join(snap.parent().expect("a snapshot in a folder"));
    let name = snap.file_stem().unwrap().to_string_lossy().into_owned();
    let mut settings = insta::Settings::clone_current();
    settings.set_snapshot_path(folder);
    settings.set_prepend_module_to_snapshot(false);
    settings.set_omit_expression(true);
    if root().join(case).exists() {
        settings.set_input_file(root().join(case));
    }
    let compared = std::panic::catch_unwind(std::panic::AssertUnwindSafe(|| {
        settings.bind(|| insta::assert_snapshot!(name.as_str(), msg));
    }));
    compared.map_err(|_| format!("{case}: differs from {} ({msg})", snap.display()))
}

/// Fails with every problem found, one a line.
fn all_ok(problems: Vec<String>) {
    assert!(
        problems.is_empty(),
        "{} case(s) failed:\n{}",
        problems.len(),
        problems.join("\n")
    );
}

/// Refusals about a file as a whole, where no line can be named.
const WHOLE_FILE: [&str; 3] = ["csv/empty.csv", "csv/only-comments.csv", "toml/empty.toml"];

fn file_cases(folder: &str, ext: &str, command: &str, at_least: usize) {
    let list = cases(folder, ext);
    assert!(list.len() >= at_least, "only {} {folder} cases", list.len());
    let mut problems = Vec::new();
    for path in list {
        let name = rel(&path);
        let out = run(&[command.to_string(), name.clone()], &root());
        let whole = WHOLE_FILE.iter().any(|w| name.ends_with(w));
        let snap = path.with_extension("snap");
        problems.extend(
            refused(
                &name,
                &out,
                2,
                Some(&name),
                !whole,
                snap.strip_prefix(root()).unwrap(),
            )
            .err(),
        );
    }
    all_ok(problems);
}

#[test]
fn broken_stock_files_are_refused() {
    file_cases("csv", "csv", "stock", 40);
}

#[test]
fn broken_design_files_are_refused() {
    file_cases("toml", "toml", "ideal", 55);
}

#[test]
fn broken_command_lines_are_refused() {
    let list = cases("cli", "args");
    assert!(list.len() >= 100, "only {} command-line cases", list.len());
    let mut problems = Vec::new();
    for path in list {
        let name = rel(&path);
        let text = std::fs::read_to_string(&path).unwrap();
        let mut args = Vec::new();
        let mut expect = Vec::new();
        let mut code = 2;
        for l in text.lines() {
            if let Some(e) = l.strip_prefix("# expect: ") {
                expect.push(e.to_string());
            } else if let Some(c) = l.strip_prefix("# exit: ") {
                code = c.trim().parse().unwrap();
            } else if !l.starts_with('#') {
                args.push(l.to_string());
            }
        }
        assert!(!expect.is_empty(), "{name}: say what the message must hold");
        let out = run(&args, &root());
        let snap = path.with_extension("snap");
        problems.extend(
            refused(
                &name,
                &out,
                code,
                None,
                false,
                snap.strip_prefix(root()).unwrap(),
            )
            .err(),
        );
        let err = String::from_utf8_lossy(&out.stderr);
        for e in expect.iter().filter(|e| !err.contains(e.as_str())) {
            problems.push(format!("{name}: wanted {e:?} in {err}"));
        }
    }
    all_ok(problems);
}

#[test]
fn every_snapshot_has_its_case() {
    // A snapshot whose input was renamed or deleted would otherwise linger and mislead.
    for (folder, ext) in [("csv", "csv"), ("toml", "toml"), ("cli", "args")] {
        for err in cases(folder, "snap") {
            assert!(
                err.with_extension(ext).exists(),
                "{} has no .{ext} case",
                rel(&err)
            );
        }
    }
}

/// An invented stock of `rows` rows: the 24 E24 mantissas over six decades, 1R to 910k, 20 pieces a row,
/// in 997 bins, cycling.
fn big_stock(rows: usize) -> String {
    // IEC 60063 E24, in hundredths (from memory of the standard's table; the same list as notation::eseries).
    let mantissas = [
        100, 110, 120, 130, 150, 160, 180, 200, 220, 240, 270, 300, 330, 360, 390, 430, 470, 510,
        560, 620, 680, 750, 820, 910,
    ];
    let mut text = String::from("value,qty,tolerance,power,location\n");
    for i in 0..rows {
        let m = mantissas[i % mantissas.len()];
        let value = match (i / mantissas.len()) % 6 {
            0 => format!("{}.{:02}", m / 100, m % 100),
            1 => format!("{}.{}", m / 10, m % 10),
            e => format!("{m}{}", "0".repeat(e - 2)),
        };
        text.push_str(&format!("{value},20,5%,0.25W,bin {}\n", i % 997));
    }
    text
}

#[test]
fn a_100000_row_stock_loads_and_its_last_bad_row_is_named() {
    let dir = Path::new(env!("CARGO_TARGET_TMPDIR")).join("bad-input");
    std::fs::create_dir_all(&dir).unwrap();
    let good = big_stock(100_000);
    std::fs::write(dir.join("rows-100000.csv"), &good).unwrap();
    let out = run(
        &["stock".into(), "rows-100000.csv".into(), "--json".into()],
        &dir,
    );
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(v["pieces"], 2_000_000);
    assert_eq!(v["distinct"], 144);
    assert_eq!(v["range"][0], 1.0);
    assert_eq!(v["range"][1], 910e3);
    // The same file with one more row, broken: refused at line 100 002 (the header is line 1).
    let bad = format!("{good}4k7,twenty,5%,0.25W,bin 0\n");
    std::fs::write(dir.join("rows-100000-bad-last.csv"), bad).unwrap();
    let out = run(&["stock".into(), "rows-100000-bad-last.csv".into()], &dir);
    refused(
        "rows-100000-bad-last.csv",
        &out,
        2,
        Some("rows-100000-bad-last.csv"),
        true,
        Path::new("tests/fixtures/bad/generated/rows-100000-bad-last.snap"),
    )
    .unwrap();
    assert!(String::from_utf8_lossy(&out.stderr).contains(":100002: column qty"));
}
