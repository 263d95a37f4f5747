//! Issue 9, fuzzing as a property test: random text, random bytes and randomly mutated copies of the
//! project's own input files (demo and fixture stocks, design files, design results, bench readings) go
//! through every parser biasfit has. None may panic; every refusal is one line; and what is accepted keeps
//! the bounds the loaders promise (values in range, a design file's stages all with an ideal design). This
//! is what CI runs on every commit; `bash fuzz/run` runs the same parsers under cargo-fuzz for longer.

use biasfit::bench::Measured;
use biasfit::network::parse_network;
use biasfit::network::{Member, Network};
use biasfit::notation::value::{MAX_OHMS, MIN_OHMS};
use biasfit::notation::{
    parse_amps, parse_ohms, parse_power, parse_tolerance, parse_volts, parse_watts, Series,
};
use biasfit::order::catalogue::Catalogue;
use biasfit::order::orderfile;
use biasfit::order::stocktake::{parse_result, StockFile};
use biasfit::report::result::read_result;
use biasfit::stage::{Slot, SlotNetworks, Stage};
use biasfit::stock::Defaults;
use biasfit::{Tolerance, Watts};
use proptest::prelude::*;
use std::path::Path;
use std::sync::OnceLock;

/// The seeds: every input file the project ships, and a design result made by the real binary.
fn seeds() -> &'static Vec<Vec<u8>> {
    static SEEDS: OnceLock<Vec<Vec<u8>>> = OnceLock::new();
    SEEDS.get_or_init(|| {
        let root = Path::new(env!("CARGO_MANIFEST_DIR"));
        let mut out = Vec::new();
        for dir in [
            "stock",
            "examples",
            "examples/starters",
            "tests/fixtures",
            "tests/fixtures/stock",
            "tests/fixtures/designs",
            "tests/fixtures/keep",
            "tests/fixtures/bad/csv",
            "tests/fixtures/bad/toml",
            "tests/fixtures/bad/files",
        ] {
            let mut files: Vec<_> = std::fs::read_dir(root.join(dir))
                .unwrap()
                .map(|e| e.unwrap().path())
                .filter(|p| {
                    p.extension()
                        .is_some_and(|e| e == "csv" || e == "toml" || e == "json")
                })
                .collect();
            files.sort();
            out.extend(files.iter().map(|f| std::fs::read(f).unwrap()));
        }
        let check = std::process::Command::new(env!("CARGO_BIN_EXE_biasfit"))
            .args([
                "check",
                "examples/line-driver.toml",
                "--use",
                "R1=39k,R2=7k5,RC=2k7,RE=560+39",
                "--json",
            ])
            .current_dir(root)
            .output()
            .unwrap();
        assert!(!check.stdout.is_empty());
        out.push(check.stdout);
        assert!(out.len() > 100, "only {} seeds", out.len());
        out
    })
}

/// The line-driver stage, for reading design results against.
fn line_driver() -> &'static Stage {
    static STAGE: OnceLock<Stage> = OnceLock::new();
    STAGE.get_or_init(|| {
        let root = Path::new(env!("CARGO_MANIFEST_DIR"));
        biasfit::stage::load(&root.join("examples/line-driver.toml"))
            .unwrap()
            .stages
            .remove(0)
    })
}

/// One edit of a byte string, at a position given as a fraction of its length.
#[derive(Clone, Debug)]
enum Edit {
    Delete(f64, usize),
    Insert(f64, Vec<u8>),
    Replace(f64, u8),
    DuplicateLine(f64),
    Truncate(f64),
}

fn edit() -> impl Strategy<Value = Edit> {
    // Inserted bytes favour the characters the formats give meaning to.
    let special = prop_oneof![
        Just(b','),
        Just(b';'),
        Just(b'"'),
        Just(b'\n'),
        Just(b'='),
        Just(b'['),
        Just(b']'),
        Just(b'{'),
        Just(b'-'),
        Just(b'.'),
        Just(b'e'),
        Just(b'k'),
        Just(b'0'),
        Just(b'9'),
        Just(b'#'),
        Just(0xff),
        any::<u8>(),
    ];
    prop_oneof![
        (0.0..1.0, 1..16usize).prop_map(|(p, n)| Edit::Delete(p, n)),
        (0.0..1.0, proptest::collection::vec(special.clone(), 1..6))
            .prop_map(|(p, b)| Edit::Insert(p, b)),
        (0.0..1.0, special).prop_map(|(p, b)| Edit::Replace(p, b)),
        (0.0..1.0).prop_map(Edit::DuplicateLine),
        (0.0..1.0).prop_map(Edit::Truncate),
    ]
}

fn apply(mut bytes: Vec<u8>, edits: &[Edit]) -> Vec<u8> {
    for e in edits {
        let at = |p: f64, len: usize| ((p * len as f64) as usize).min(len);
        match e {
            Edit::Delete(p, n) => {
                let i = at(*p, bytes.len());
                let j = (i + n).min(bytes.len());
                bytes.drain(i..j);
            }
            Edit::Insert(p, b) => {
                let i = at(*p, bytes.len());
                bytes.splice(i..i, b.iter().copied());
            }
            Edit::Replace(p, b) => {
                if !bytes.is_empty() {
                    let i = at(*p, bytes.len() - 1);
                    bytes[i] = *b;
                }
            }
            Edit::DuplicateLine(p) => {
                let i = at(*p, bytes.len());
                let start = bytes[..i]
                    .iter()
                    .rposition(|&b| b == b'\n')
                    .map_or(0, |k| k + 1);
                let end = bytes[i..]
                    .iter()
                    .position(|&b| b == b'\n')
                    .map_or(bytes.len(), |k| i + k + 1);
                let line = bytes[start..end].to_vec();
                bytes.splice(end..end, line);
            }
            Edit::Truncate(p) => {
                let i = at(*p, bytes.len());
                bytes.truncate(i);
            }
        }
    }
    bytes
}

/// A refusal must read as one line.
fn one_line<E: std::fmt::Display>(what: &str, e: E) -> Result<(), TestCaseError> {
    let m = e.to_string();
    prop_assert!(!m.is_empty(), "{what}: an empty message");
    prop_assert!(!m.contains('\n'), "{what}: more than one line: {m}");
    Ok(())
}

/// Every file parser on the same bytes.
fn all_file_parsers(bytes: &[u8]) -> Result<(), TestCaseError> {
    let d = Defaults::default();
    match biasfit::stock::parse("p.csv", bytes, d) {
        Ok(s) => {
            let rows: u64 = s.rows.iter().map(|r| u64::from(r.qty)).sum();
            let parts: u64 = s.parts.iter().map(|p| u64::from(p.qty)).sum();
            prop_assert_eq!(rows, parts, "merging keeps every piece");
            for p in &s.parts {
                prop_assert!((MIN_OHMS..=MAX_OHMS).contains(&p.ohms.0), "{:?}", p);
                prop_assert!(p.tolerance.0 > 0.0 && p.tolerance.0 <= 0.5, "{:?}", p);
                prop_assert!((1e-3..=1e4).contains(&p.power.0), "{:?}", p);
                prop_assert!(!p.lines.is_empty());
            }
        }
        Err(e) => one_line("stock", e)?,
    }
    if let Err(e) = StockFile::parse("p.csv", bytes.to_vec(), d) {
        one_line("stock file", e)?;
    }
    if let Err(e) = Catalogue::parse("p.csv", bytes) {
        one_line("catalogue", e)?;
    }
    if let Err(e) = orderfile::parse("p.csv", bytes, d) {
        one_line("order file", e)?;
    }
    if let Err(e) = parse_result("p.json", bytes) {
        one_line("design result (pick)", e)?;
    }
    let Ok(text) = std::str::from_utf8(bytes) else {
        return Ok(());
    };
    if let Err(e) = read_result("p.json", text, &[line_driver()]) {
        one_line("design result (stages)", e)?;
    }
    match biasfit::stage::parse("p.toml", text) {
        Ok(design) => {
            for s in &design.stages {
                let ideal = s.ideal();
                prop_assert!(
                    ideal.is_ok(),
                    "accepted without an ideal design: {:?}",
                    ideal
                );
                let v = ideal.unwrap().values;
                for (_, r) in v.iter() {
                    prop_assert!((MIN_OHMS..=MAX_OHMS).contains(&r.0));
                }
                prop_assert!(s.error(&v).is_finite());
                let nets = v.iter().fold(SlotNetworks::new(), |mut n, (slot, r)| {
                    n.set(
                        slot,
                        Network::Single(Member::loose(r, Tolerance(0.05), Watts(0.25))),
                    );
                    n
                });
                let _ = s.checks(&nets);
            }
        }
        Err(e) => one_line("design file", e)?,
    }
    match biasfit::circuit::file::parse("p.toml", text) {
        Ok(circuits) => {
            for c in &circuits {
                // Every slot at one value: whatever was accepted must solve or say in one line why not.
                let slots = vec![biasfit::units::Ohms(4700.0); c.slots().len()];
                if let Ok(b) = c.typical(&slots) {
                    let solved = biasfit::circuit::Solver::new(c)
                        .solve(&b, &biasfit::circuit::Options::default());
                    match solved {
                        Ok(sol) => prop_assert!(sol.nodes.iter().all(|v| v.0.is_finite())),
                        Err(e) => one_line("circuit solve", e)?,
                    }
                }
            }
        }
        Err(e) => one_line("circuit file", e)?,
    }
    Ok(())
}

/// Every text parser on the same text, and the pieces of it split as `--use` and `--measured` are.
fn all_text_parsers(s: &str) -> Result<(), TestCaseError> {
    if let Ok(r) = parse_ohms(s) {
        prop_assert!((MIN_OHMS..=MAX_OHMS).contains(&r.0));
        let back = parse_ohms(&biasfit::notation::code(r)).unwrap();
        prop_assert!(((back.0 - r.0) / r.0).abs() < 1e-3);
    }
    if let Ok(t) = parse_tolerance(s) {
        prop_assert!(t.0 > 0.0 && t.0 <= 0.5);
    }
    if let Ok(w) = parse_watts(s) {
        prop_assert!((1e-3..=1e4).contains(&w.0));
    }
    if let Ok(w) = parse_power(s) {
        prop_assert!(w.0 > 0.0 && w.0.is_finite());
    }
    for v in [parse_volts(s).map(|v| v.0), parse_amps(s).map(|a| a.0)]
        .into_iter()
        .flatten()
    {
        prop_assert!(v.is_finite());
    }
    let _ = s.parse::<Series>();
    match Measured::parse(s) {
        Ok(m) => {
            for v in m.as_array().into_iter().flatten() {
                prop_assert!(v.is_finite() && v.abs() <= 1e3);
            }
        }
        Err(e) => one_line("--measured", e)?,
    }
    for item in s.split(',') {
        let (name, value) = item.split_once('=').unwrap_or((item, item));
        let _ = name.trim().parse::<Slot>();
        if let Ok(n) = parse_network(value, Tolerance(0.01), Watts(0.25)) {
            prop_assert!(n.ohms().0 > 0.0 && n.ohms().0.is_finite());
            let again = parse_network(&n.notation(), Tolerance(0.01), Watts(0.25));
            prop_assert!(again.is_ok(), "{} does not read back", n.notation());
        }
    }
    Ok(())
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 20_000, ..ProptestConfig::default() })]

    #[test]
    fn mutated_input_files(seed in any::<proptest::sample::Index>(), edits in proptest::collection::vec(edit(), 0..6)) {
        let s = seeds();
        let bytes = apply(s[seed.index(s.len())].clone(), &edits);
        all_file_parsers(&bytes)?;
    }

    #[test]
    fn random_bytes(bytes in proptest::collection::vec(any::<u8>(), 0..400)) {
        all_file_parsers(&bytes)?;
    }

    #[test]
    fn random_text(s in "\\PC{0,60}") {
        all_text_parsers(&s)?;
    }

    #[test]
    fn text_from_the_formats_alphabet(s in "[0-9a-zA-Z.,;:=+|()\\-µΩ% ]{0,40}") {
        all_text_parsers(&s)?;
    }
}
