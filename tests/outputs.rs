//! Issue 18, items 4 and 5, through the real binary: an output path that is one of the command's inputs is
//! refused by file identity (the same name, another spelling, a symbolic or a hard link), an existing file
//! biasfit did not write is replaced only with `--force`, files biasfit wrote are replaced without a
//! question, and a device, a FIFO or `-` is written to, not replaced.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

const BIN: &str = env!("CARGO_BIN_EXE_biasfit");

/// A fresh folder with a design file and a stock, for one test.
fn scratch(test: &str) -> PathBuf {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let dir = Path::new(env!("CARGO_TARGET_TMPDIR")).join(format!("outputs-{test}"));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    std::fs::copy(root.join("examples/line-driver.toml"), dir.join("d.toml")).unwrap();
    std::fs::copy(root.join("stock/hobby-drawer.csv"), dir.join("hd.csv")).unwrap();
    dir
}

fn run(dir: &Path, args: &[&str]) -> Output {
    Command::new(BIN)
        .args(args)
        .current_dir(dir)
        .env("NO_COLOR", "1")
        .output()
        .unwrap()
}

fn err(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).into_owned()
}

/// The contents of every file in the folder, to show that a refusal wrote nothing.
fn snapshot(dir: &Path) -> Vec<(String, Vec<u8>)> {
    let mut v: Vec<(String, Vec<u8>)> = std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.is_file())
        .map(|p| {
            (
                p.file_name().unwrap().to_string_lossy().into_owned(),
                std::fs::read(&p).unwrap(),
            )
        })
        .collect();
    v.sort();
    v
}

#[test]
fn an_output_onto_an_input_is_refused_by_identity() {
    let dir = scratch("identity");
    #[cfg(unix)]
    {
        std::os::unix::fs::symlink("hd.csv", dir.join("link.csv")).unwrap();
        std::fs::hard_link(dir.join("d.toml"), dir.join("hard.toml")).unwrap();
    }
    let before = snapshot(&dir);
    let mut cases: Vec<(Vec<&str>, &str)> = vec![
        (
            vec!["order", "d.toml", "--stock", "hd.csv", "--csv", "hd.csv"],
            "--csv hd.csv: that is the stock file this command reads",
        ),
        (
            vec!["order", "d.toml", "--stock", "hd.csv", "--csv", "./hd.csv"],
            "that is the stock file (hd.csv)",
        ),
        (
            vec!["design", "d.toml", "--stock", "hd.csv", "--html", "d.toml"],
            "--html d.toml: that is the design file",
        ),
        (
            vec![
                "check",
                "d.toml",
                "--use",
                "R1=33k,R2=6k8,RC=2k7,RE=560R",
                "--svg",
                "d.toml",
            ],
            "--svg d.toml: that is the design file",
        ),
        (
            vec![
                "order",
                "d.toml",
                "--stock",
                "hd.csv",
                "--catalog",
                "hd.csv",
                "--html",
                "hd.csv",
            ],
            "that is the stock file",
        ),
    ];
    if cfg!(unix) {
        cases.push((
            vec![
                "design", "d.toml", "--stock", "hd.csv", "--html", "link.csv",
            ],
            "--html link.csv: that is the stock file (hd.csv)",
        ));
        cases.push((
            vec![
                "design",
                "d.toml",
                "--stock",
                "hd.csv",
                "--html",
                "hard.toml",
                "--force",
            ],
            "--html hard.toml: that is the design file (d.toml)",
        ));
    }
    for (args, want) in cases {
        let o = run(&dir, &args);
        let e = err(&o);
        assert_eq!(o.status.code(), Some(2), "{args:?}: {e}");
        assert!(
            e.starts_with("error: ") && e.contains(want),
            "{args:?}: {e}"
        );
        assert!(e.contains("nothing was written"), "{e}");
        assert_eq!(e.lines().count(), 1, "{e}");
        assert!(o.stdout.is_empty(), "{args:?}: refused before any work");
        assert_eq!(snapshot(&dir), before, "{args:?} changed a file");
    }
}

#[test]
fn a_file_biasfit_did_not_write_is_replaced_only_with_force() {
    let dir = scratch("force");
    std::fs::write(dir.join("notes.txt"), "my own notes\n").unwrap();
    let args = [
        "design",
        "d.toml",
        "--stock",
        "hd.csv",
        "--html",
        "notes.txt",
    ];
    let o = run(&dir, &args);
    assert_eq!(o.status.code(), Some(2), "{}", err(&o));
    assert!(
        err(&o).contains("--html notes.txt: the file exists and biasfit did not write it"),
        "{}",
        err(&o)
    );
    assert!(err(&o).contains("add --force"), "{}", err(&o));
    assert_eq!(
        std::fs::read_to_string(dir.join("notes.txt")).unwrap(),
        "my own notes\n"
    );
    let o = run(&dir, &[&args[..], &["--force"]].concat());
    assert_eq!(o.status.code(), Some(0), "{}", err(&o));
    assert!(std::fs::read_to_string(dir.join("notes.txt"))
        .unwrap()
        .starts_with("<!DOCTYPE html>"));

    std::fs::write(dir.join("list.csv"), "value,qty\n4k7,3\n").unwrap();
    let order = ["order", "d.toml", "--stock", "hd.csv", "--csv", "list.csv"];
    let o = run(&dir, &order);
    assert_eq!(o.status.code(), Some(2), "{}", err(&o));
    assert_eq!(
        std::fs::read_to_string(dir.join("list.csv")).unwrap(),
        "value,qty\n4k7,3\n"
    );
}

#[test]
fn files_biasfit_wrote_are_replaced_without_a_question() {
    let dir = scratch("again");
    // An empty file (as `touch` or `mktemp` leaves) holds nothing to lose.
    std::fs::write(dir.join("sheet.html"), "").unwrap();
    let args = [
        "order",
        "d.toml",
        "--stock",
        "hd.csv",
        "--csv",
        "o.csv",
        "--html",
        "sheet.html",
        "--svg",
        "svg",
    ];
    for round in 0..2 {
        let o = run(&dir, &args);
        assert_eq!(o.status.code(), Some(0), "round {round}: {}", err(&o));
    }
    let csv = std::fs::read_to_string(dir.join("o.csv")).unwrap();
    assert!(
        csv.starts_with("value,tolerance,power,qty,packs,cost\n"),
        "{csv}"
    );
    let html = std::fs::read_to_string(dir.join("sheet.html")).unwrap();
    assert!(html.contains("<meta name=\"generator\" content=\"biasfit\">"));
    let svg = std::fs::read_to_string(dir.join("svg/line-driver-schematic.svg")).unwrap();
    assert!(
        svg.starts_with("<!-- written by biasfit -->\n<svg "),
        "{svg}"
    );
    // The mark is a comment: the file is still one SVG document.
    roxmltree::Document::parse(&svg).unwrap();
}

#[cfg(unix)]
#[test]
fn devices_fifos_and_stdout_are_written_to_not_replaced() {
    use std::os::unix::fs::FileTypeExt;
    let dir = scratch("devices");
    let o = run(
        &dir,
        &[
            "design",
            "d.toml",
            "--stock",
            "hd.csv",
            "--html",
            "/dev/null",
        ],
    );
    assert_eq!(o.status.code(), Some(0), "{}", err(&o));
    let t = std::fs::metadata("/dev/null").unwrap().file_type();
    assert!(t.is_char_device(), "/dev/null is no longer a device");

    if Path::new("/dev/full").exists() {
        let o = run(
            &dir,
            &["order", "d.toml", "--stock", "hd.csv", "--csv", "/dev/full"],
        );
        assert_eq!(o.status.code(), Some(4), "{}", err(&o));
        assert!(
            err(&o).contains("/dev/full: cannot write to it"),
            "{}",
            err(&o)
        );
        assert!(std::fs::metadata("/dev/full")
            .unwrap()
            .file_type()
            .is_char_device());
    }

    // `-` and /dev/stdout: standard output holds the order list alone, with no report after it, so it
    // can be redirected to a file that `stock add` reads.
    for dash in ["-", "/dev/stdout"] {
        let o = run(
            &dir,
            &["order", "d.toml", "--stock", "hd.csv", "--csv", dash],
        );
        assert_eq!(o.status.code(), Some(0), "{}", err(&o));
        let out = String::from_utf8(o.stdout).unwrap();
        assert!(
            out.starts_with("value,tolerance,power,qty,packs,cost\n"),
            "{out}"
        );
        assert!(!out.contains("order: the cheapest purchase"), "{out}");
    }
    let o = run(
        &dir,
        &["design", "d.toml", "--stock", "hd.csv", "--html", "-"],
    );
    assert_eq!(o.status.code(), Some(0), "{}", err(&o));
    let out = String::from_utf8(o.stdout).unwrap();
    assert!(
        out.starts_with("<!DOCTYPE html>") && out.trim_end().ends_with("</html>"),
        "{out}"
    );
    let o = run(
        &dir,
        &[
            "order", "d.toml", "--stock", "hd.csv", "--csv", "-", "--html", "-",
        ],
    );
    assert_eq!(o.status.code(), Some(2), "{}", err(&o));
    assert!(o.stdout.is_empty());

    // A FIFO gets the contents and stays a FIFO.
    let fifo = dir.join("pipe");
    let made = Command::new("mkfifo").arg(&fifo).status();
    if made.is_ok_and(|s| s.success()) {
        let reader = {
            let fifo = fifo.clone();
            std::thread::spawn(move || std::fs::read_to_string(fifo).unwrap())
        };
        let o = run(
            &dir,
            &["order", "d.toml", "--stock", "hd.csv", "--csv", "pipe"],
        );
        assert_eq!(o.status.code(), Some(0), "{}", err(&o));
        let got = reader.join().unwrap();
        assert!(
            got.starts_with("value,tolerance,power,qty,packs,cost\n"),
            "{got}"
        );
        assert!(std::fs::metadata(&fifo).unwrap().file_type().is_fifo());
    }
}

#[cfg(unix)]
#[test]
fn a_read_only_output_is_refused_before_any_work() {
    use std::os::unix::fs::PermissionsExt;
    let dir = scratch("read-only");
    let args = ["order", "d.toml", "--stock", "hd.csv", "--csv", "o.csv"];
    let o = run(&dir, &args);
    assert_eq!(o.status.code(), Some(0), "{}", err(&o));
    let before = std::fs::read(dir.join("o.csv")).unwrap();
    std::fs::set_permissions(dir.join("o.csv"), std::fs::Permissions::from_mode(0o444)).unwrap();
    // Even with --force, and even for root: the user marked the file read-only.
    for force in [false, true] {
        let o = run(
            &dir,
            &[&args[..], if force { &["--force"][..] } else { &[][..] }].concat(),
        );
        assert_eq!(o.status.code(), Some(4), "{}", err(&o));
        assert!(
            err(&o).contains("o.csv: the file is read-only"),
            "{}",
            err(&o)
        );
        assert!(o.stdout.is_empty(), "refused before the search");
        assert_eq!(std::fs::read(dir.join("o.csv")).unwrap(), before);
    }
}
