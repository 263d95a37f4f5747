//! The drawings and the build sheet through the real binary: `check --svg DIR --html FILE` writes a load
//! line and a schematic per stage that parse as XML and show the chosen values, and an HTML page that
//! headless Chromium (the Debian package `chromium`) opens without a console message, renders to a
//! screenshot that is not blank, and prints on A4.
//!
//! Without Chromium the browser tests pass saying plainly on the terminal that they did not run; under CI
//! (`CI` or `BIASFIT_REQUIRE_BROWSER` set) they fail instead, and `.ci/run` installs Chromium, so CI always
//! runs them.

mod common;
use common::*;
use std::path::{Path, PathBuf};
use std::process::Command;

/// A fresh, empty folder for one test's outputs.
fn scratch(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("biasfit-{name}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).expect("a scratch folder");
    dir
}

const LINE_DRIVER: &[&str] = &[
    "check",
    "examples/line-driver.toml",
    "--use",
    "R1=33k+5k6,R2=(6k8+680)|150k,RC=2k7,RE=560+39",
];

fn check_with_outputs(dir: &Path) -> (PathBuf, PathBuf, PathBuf) {
    let svg_dir = dir.join("drawings");
    let html = dir.join("sheet.html");
    let mut args: Vec<String> = LINE_DRIVER.iter().map(|s| s.to_string()).collect();
    args.extend([
        "--svg".into(),
        svg_dir.display().to_string(),
        "--html".into(),
        html.display().to_string(),
    ]);
    let argv: Vec<&str> = args.iter().map(String::as_str).collect();
    let out = biasfit(&argv);
    assert!(
        out.status.code() == Some(0) || out.status.code() == Some(1),
        "{}",
        stderr(&out)
    );
    for f in ["line-driver-load-line.svg", "line-driver-schematic.svg"] {
        assert!(stderr(&out).contains(f), "{}", stderr(&out));
    }
    (
        svg_dir.join("line-driver-load-line.svg"),
        svg_dir.join("line-driver-schematic.svg"),
        html,
    )
}

fn texts(path: &Path) -> Vec<String> {
    let svg = std::fs::read_to_string(path).expect("the SVG was written");
    let doc = roxmltree::Document::parse(&svg)
        .unwrap_or_else(|e| panic!("{} is not XML: {e}", path.display()));
    assert_eq!(doc.root_element().tag_name().name(), "svg");
    doc.descendants()
        .filter(|n| n.has_tag_name("text"))
        .filter_map(|n| n.text())
        .map(str::to_string)
        .collect()
}

#[test]
fn svg_files_parse_as_xml_and_show_the_chosen_values() {
    let dir = scratch("svg");
    let (load_line, schematic, _) = check_with_outputs(&dir);
    let t = texts(&schematic);
    for v in [
        "33k", "5k6", "6k8", "680R", "150k", "2k7", "560R", "39R", "= 38k6", "= 599R",
    ] {
        assert!(t.iter().any(|s| s == v), "schematic lacks {v}: {t:?}");
    }
    for slot in ["R1", "R2", "RC", "RE"] {
        assert!(t.iter().any(|s| s == slot), "schematic lacks {slot}");
    }
    let t = texts(&load_line).join("\n");
    // The cutoff end is the 12 V supply; the legend names the three Q points.
    assert!(t.contains("cutoff end: 12 V"), "{t}");
    for q in ["min beta (80)", "typical beta (150)", "max beta (260)"] {
        assert!(t.contains(q), "load line lacks {q}: {t}");
    }
    // The renderers are pure: the same build draws the same files.
    insta::assert_binary_snapshot!(
        "line-driver-schematic.svg",
        std::fs::read(&schematic).unwrap()
    );
    insta::assert_binary_snapshot!(
        "line-driver-load-line.svg",
        std::fs::read(&load_line).unwrap()
    );
    // No temporary files are left behind.
    let left: Vec<_> = std::fs::read_dir(dir.join("drawings"))
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    assert_eq!(left.len(), 2, "{left:?}");
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn an_unwritable_output_is_an_io_error() {
    let dir = scratch("unwritable");
    let blocker = dir.join("file");
    std::fs::write(&blocker, "not a folder").unwrap();
    let mut args: Vec<&str> = LINE_DRIVER.to_vec();
    let target = blocker.join("sub").display().to_string();
    args.extend(["--svg", &target]);
    let out = biasfit(&args);
    assert_eq!(out.status.code(), Some(4), "{}", stderr(&out));
    let err = stderr(&out);
    assert_eq!(err.lines().count(), 1, "{err}");
    assert!(err.starts_with("error: --svg"), "{err}");
    let _ = std::fs::remove_dir_all(&dir);
}

/// The browser, or None (said plainly on the terminal) when this machine has none. Under CI
/// (`CI` or `BIASFIT_REQUIRE_BROWSER` set) a missing browser fails the test instead, so CI always runs it.
fn chromium() -> Option<&'static str> {
    let found = Command::new("chromium")
        .arg("--version")
        .output()
        .is_ok_and(|o| o.status.success());
    if found {
        return Some("chromium");
    }
    let required = ["CI", "BIASFIT_REQUIRE_BROWSER"]
        .iter()
        .any(|v| std::env::var_os(v).is_some_and(|v| !v.is_empty() && v != "0" && v != "false"));
    if required {
        panic!(
            "headless Chromium is needed to test the HTML build sheet and CI requires it: install it \
             with `apt-get install -y chromium` (Debian)"
        );
    }
    // Written straight to stderr, not through eprintln!, so the test harness does not swallow it.
    use std::io::Write;
    let _ = writeln!(
        std::io::stderr().lock(),
        "browser test did not run: no chromium on PATH (apt-get install chromium to run it)"
    );
    None
}

/// Runs headless Chromium on a page with extra arguments; returns its stderr log.
fn run_chromium(browser: &str, page: &Path, extra: &[String]) -> String {
    let profile = page
        .parent()
        .unwrap()
        .join(format!("profile-{}", extra.len()));
    let out = Command::new(browser)
        .args([
            "--headless",
            "--no-sandbox",
            "--disable-gpu",
            "--disable-quic",
            "--no-first-run",
            "--disable-background-networking",
            "--disable-component-update",
            "--disable-sync",
            "--hide-scrollbars",
            "--enable-logging=stderr",
            "--v=0",
        ])
        .arg(format!("--user-data-dir={}", profile.display()))
        .args(extra)
        .arg(format!("file://{}", page.display()))
        .output()
        .expect("chromium runs");
    String::from_utf8_lossy(&out.stderr).into_owned()
}

/// Console messages and uncaught errors in a Chromium log: the page has no script, so any is a fault.
fn console_problems(log: &str) -> Vec<String> {
    log.lines()
        .filter(|l| l.contains(":CONSOLE") || l.contains("Uncaught"))
        .map(str::to_string)
        .collect()
}

/// The share of pixels in a PNG that are not near-white.
fn inked_share(png_path: &Path) -> f64 {
    let decoder = png::Decoder::new(std::io::BufReader::new(
        std::fs::File::open(png_path).expect("a screenshot"),
    ));
    let mut reader = decoder.read_info().expect("a PNG");
    let mut buf = vec![0; reader.output_buffer_size()];
    let info = reader.next_frame(&mut buf).expect("a frame");
    let channels = info.color_type.samples();
    let pixels = &buf[..info.buffer_size()];
    let total = pixels.len() / channels;
    let inked = pixels
        .chunks(channels)
        .filter(|p| p.iter().take(3).any(|&c| c < 200))
        .count();
    inked as f64 / total as f64
}

#[test]
fn the_build_sheet_loads_cleanly_renders_and_prints_on_a4() {
    let Some(browser) = chromium() else { return };
    let dir = scratch("html");
    let (_, _, html) = check_with_outputs(&dir);
    let page = std::fs::read_to_string(&html).unwrap();
    for v in [
        "33k+5k6",
        "(6k8+680R)|150k",
        "560R+39R",
        "Pick list",
        "@page { size: A4;",
    ] {
        assert!(page.contains(v), "the page lacks {v}");
    }

    let shot = dir.join("sheet.png");
    let log = run_chromium(
        browser,
        &html,
        &[
            format!("--screenshot={}", shot.display()),
            "--window-size=900,1400".into(),
        ],
    );
    assert_eq!(
        console_problems(&log),
        Vec::<String>::new(),
        "console output"
    );
    let ink = inked_share(&shot);
    // Text, tables and the schematic cover a few per cent of the first screen; blank is 0 (the page
    // background is near-white, the margin light grey, both above the threshold).
    assert!(ink > 0.01, "the screenshot looks blank: {ink}");

    let pdf = dir.join("sheet.pdf");
    run_chromium(
        browser,
        &html,
        &[
            format!("--print-to-pdf={}", pdf.display()),
            "--no-pdf-header-footer".into(),
        ],
    );
    let bytes = std::fs::read(&pdf).expect("a PDF was printed");
    let text = String::from_utf8_lossy(&bytes);
    let boxes: Vec<&str> = text
        .match_indices("/MediaBox [")
        .map(|(i, _)| &text[i..i + 40])
        .collect();
    assert!(!boxes.is_empty(), "no pages in the PDF");
    for b in &boxes {
        // ISO 216 A4 is 210 × 297 mm = 595.3 × 841.9 pt (1 pt = 1/72 in = 0.3528 mm).
        let nums: Vec<f64> = b["/MediaBox [".len()..]
            .split(|c: char| c == ']' || c.is_whitespace())
            .filter_map(|s| s.parse().ok())
            .take(4)
            .collect();
        assert!(
            (nums[2] - 595.3).abs() < 1.0 && (nums[3] - 841.9).abs() < 1.0,
            "{b}"
        );
    }
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn the_console_check_catches_a_script_error() {
    // The detector must be able to fail: a page that throws is caught.
    let Some(browser) = chromium() else { return };
    let dir = scratch("console");
    let page = dir.join("bad.html");
    std::fs::write(
        &page,
        "<!DOCTYPE html><p>x</p><script>throw new Error('planted')</script>",
    )
    .unwrap();
    let log = run_chromium(browser, &page, &["--dump-dom".into()]);
    let problems = console_problems(&log);
    assert!(problems.iter().any(|l| l.contains("planted")), "{log}");
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn the_circuit_build_sheet_loads_cleanly_and_renders() {
    let Some(browser) = chromium() else { return };
    let dir = scratch("circuit-html");
    let html = dir.join("tail-pair.html");
    let out = biasfit(&[
        "check",
        "examples/starters/tail-pair.toml",
        "--use",
        "RT=7k5",
        "--html",
        html.to_str().unwrap(),
    ]);
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    let shot = dir.join("sheet.png");
    let log = run_chromium(
        browser,
        &html,
        &[
            format!("--screenshot={}", shot.display()),
            "--window-size=900,1400".into(),
        ],
    );
    assert_eq!(
        console_problems(&log),
        Vec::<String>::new(),
        "console output"
    );
    assert!(inked_share(&shot) > 0.01, "the screenshot looks blank");
    let _ = std::fs::remove_dir_all(&dir);
}

/// Issue 17, item 4: a slot kept as given (`--keep`) is marked as already fitted in every report: the text
/// slot table and pick list, the JSON, and the HTML build sheet's build table and pick list.
#[test]
fn kept_slots_are_marked_as_already_fitted() {
    let dir = std::path::Path::new(env!("CARGO_TARGET_TMPDIR")).join("kept-slots");
    std::fs::create_dir_all(&dir).unwrap();
    let html = dir.join("sheet.html");
    let args = [
        "design",
        "examples/line-driver.toml",
        "--stock",
        "stock/hobby-drawer.csv",
        "--keep",
        "RC=2k7",
    ];
    let mut with_html = args.to_vec();
    with_html.extend(["--html", html.to_str().unwrap()]);
    let out = biasfit(&with_html);
    assert!(out.status.success(), "{}", stderr(&out));
    let text = stdout(&out);
    assert!(
        text.contains("RC    2k7               already fitted (kept): 2k7 5 % 250 mW"),
        "{text}"
    );
    assert!(
        text.contains("already fitted (kept, not pulled): RC = 2k7"),
        "{text}"
    );
    // The chosen slots are not marked.
    assert_eq!(text.matches("already fitted").count(), 2, "{text}");
    let sheet = std::fs::read_to_string(&html).unwrap();
    assert!(sheet.contains("<strong>already fitted</strong> (kept as given)"));
    assert!(sheet.contains("Already fitted (kept as given, not pulled): RC = 2k7"));
    let mut with_json = args.to_vec();
    with_json.push("--json");
    let v: serde_json::Value = serde_json::from_slice(&biasfit(&with_json).stdout).unwrap();
    assert_eq!(v["stages"][0]["slots"]["RC"]["kept"], true);
    assert_eq!(v["stages"][0]["slots"]["R1"]["kept"], false);
    assert_eq!(v["kept"][0]["slot"], "RC");
    assert_eq!(v["kept"][0]["network"], "2k7");
    // Without --keep nothing is marked.
    let plain: serde_json::Value = serde_json::from_slice(
        &biasfit(&[
            "design",
            "examples/line-driver.toml",
            "--stock",
            "stock/hobby-drawer.csv",
            "--json",
        ])
        .stdout,
    )
    .unwrap();
    assert_eq!(plain["kept"], serde_json::json!([]));
    assert_eq!(plain["stages"][0]["slots"]["RC"]["kept"], false);
}
