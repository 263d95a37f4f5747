//! Measured limits of `design` on this machine: the largest stock and the largest number of stages it
//! handles within the 10 s budget, how long every E192 value over ten decades takes, and how far past its
//! time limit a command runs on the largest stocks (the overshoot, wall time over limit, against the target
//! of 1.2 × the limit + 0.2 s). Run with
//! `cargo run --release --example limits_bench [stock] [stages] [e192] [overshoot]` (all four by default).
//!
//! Every run is the whole job after the command line: the stock CSV text parsed (as `biasfit design` reads
//! it), then the design. "Handled" means the search finished and proved its answer within 10 s; each run is
//! given a 10 s time limit, so a run that would take minutes shows as "cut" instead of holding the
//! benchmark. All stocks and design files are generated here and invented. Each figure is measured in this
//! run; the ratios compare measurements of this run (time against the budget, and each size against the
//! one before).

use biasfit::notation::{code, Series};
use biasfit::optimise::design::{design, Request};
use biasfit::stage::{self, Design};
use biasfit::stock::{self, Defaults};
use biasfit::Ohms;
use std::time::{Duration, Instant};

/// The budget the README's limits are measured against.
const BUDGET: f64 = 10.0;

/// A stock CSV of the given values, `qty` of each, 1 %, 0.25 W, in bins.
fn stock_csv(values: &[Ohms], qty: u32) -> String {
    let mut s = String::from("value,qty,tolerance,power,location\n");
    for (i, v) in values.iter().enumerate() {
        s.push_str(&format!("{},{qty},1%,0.25W,bin {}\n", code(*v), i + 1));
    }
    s
}

/// `n` invented values spread evenly in log over 1R to 10M, each rounded to 5 significant digits, as a
/// drawer of measured or odd-value parts would hold; repeats after rounding are dropped.
fn spread_values(n: usize) -> Vec<Ohms> {
    let mut v: Vec<f64> = (0..n)
        .map(|i| {
            let x = 10f64.powf(7.0 * i as f64 / n as f64);
            biasfit::notation::value::round_sig(x, 5)
        })
        .collect();
    v.dedup();
    v.into_iter().map(Ohms).collect()
}

/// What one run gave.
struct Run {
    seconds: f64,
    status: String,
    error: f64,
}

impl Run {
    fn handled(&self) -> bool {
        self.status == "optimal" && self.seconds <= BUDGET
    }

    fn error_cell(&self) -> String {
        if self.error.is_nan() {
            "-".into()
        } else {
            format!("{:.4}%", 100.0 * self.error)
        }
    }

    fn cell(&self) -> String {
        match self.status.as_str() {
            "optimal" => format!("{:.2} s", self.seconds),
            "time limit" => format!("cut at {:.1} s", self.seconds),
            other => format!("{other} ({:.1} s)", self.seconds),
        }
    }
}

/// Parses the stock text and designs `d` from it with up to `parts` resistors per slot.
fn run(d: &Design, csv: &str, parts: usize, limit: f64) -> Run {
    let started = Instant::now();
    let stock = stock::parse("bench.csv", csv.as_bytes(), Defaults::default()).expect("stock");
    let request = Request {
        max_parts: parts,
        time_limit: Some(Duration::from_secs_f64(limit)),
        ..Request::default()
    };
    let out = design(d, &stock, &request, &mut |_| {});
    let seconds = started.elapsed().as_secs_f64();
    match out {
        Ok(o) => Run {
            seconds,
            status: o.solver.status.clone(),
            error: o.built.iter().map(|b| b.error).fold(0.0, f64::max),
        },
        Err(e) => Run {
            seconds,
            status: if e.to_string().contains("time limit") {
                "time limit".into()
            } else {
                format!("refused: {e}")
            },
            error: f64::NAN,
        },
    }
}

fn load(path: &str) -> Design {
    stage::load(path.as_ref()).unwrap_or_else(|e| panic!("{path}: {e}"))
}

/// Growing stocks until a run no longer finishes within the budget, for each parts setting.
fn stock_section() {
    println!("largest stock: invented values over 1R..10M (5 significant digits), 5 of each, line driver");
    let d = load("examples/line-driver.toml");
    let sizes = [
        60, 120, 250, 500, 1000, 1400, 2000, 2800, 4000, 8000, 16000, 32000, 64000, 128000, 256000,
        512000,
    ];
    for parts in [1, 2, 3] {
        println!("  --parts {parts}");
        println!(
            "    {:>8}  {:>14}  {:>9}  {:>10}  {:>10}",
            "values", "time", "of 10 s", "vs before", "error"
        );
        let mut largest = None;
        let mut before: Option<f64> = None;
        for &n in &sizes {
            let values = spread_values(n);
            let csv = stock_csv(&values, 5);
            let r = run(&d, &csv, parts, BUDGET);
            let ratio = before.map_or("-".to_string(), |b| format!("×{:.1}", r.seconds / b));
            println!(
                "    {:>8}  {:>14}  {:>8.1}%  {:>10}  {:>10}",
                values.len(),
                r.cell(),
                100.0 * r.seconds / BUDGET,
                ratio,
                r.error_cell()
            );
            if !r.handled() {
                break;
            }
            largest = Some(values.len());
            before = Some(r.seconds);
        }
        match largest {
            Some(n) => println!("    largest handled within 10 s: {n} values"),
            None => println!("    none of the sizes finished within 10 s"),
        }
    }
}

/// A design file of `n` invented stages cycling through the five topologies.
fn stages_toml(n: usize) -> String {
    let loads = ["2k2", "3k3", "4k7", "6k8", "10k"];
    let mut s = String::new();
    for i in 0..n {
        let supply = 9 + 2 * (i % 7);
        let beta_min = 80 + 10 * (i % 5);
        let head = format!("[[stage]]\nname = \"stage {}\"\n", i + 1);
        let transistor = format!(
            "[stage.transistor]\nbeta = [{beta_min}, 170, 320]\nvbe = 0.64\nmax_power = \"0.5W\"\n"
        );
        let body = match i % 5 {
            0 => format!("topology = \"divider\"\nsupply = {supply}\nload = \"{}\"\n{transistor}", loads[i % 5]),
            1 => format!(
                "topology = \"collector-feedback\"\nsupply = {supply}\nload = \"{}\"\n{transistor}[stage.rule]\nic_spread = 0.6\n",
                loads[(i + 1) % 5]
            ),
            2 => format!(
                "topology = \"base-resistor\"\nsupply = {supply}\nload = \"{}\"\n{transistor}",
                loads[(i + 2) % 5]
            ),
            3 => format!(
                "topology = \"dual-supply\"\nsupply = {supply}\nsupply_neg = -9\nic = \"1.5mA\"\n{transistor}[stage.rule]\nvrc = 0.5\nvce = 0.5\n"
            ),
            _ => format!(
                "topology = \"divider-split\"\nsupply = {supply}\nload = \"{}\"\n{transistor}[stage.rule]\ngain = 4\n",
                loads[(i + 3) % 5]
            ),
        };
        s.push_str(&head);
        s.push_str(&body);
        s.push('\n');
    }
    s
}

/// Growing designs until a run no longer finishes within the budget.
fn stages_section() {
    println!("largest number of stages: invented stages cycling divider, collector-feedback, base-resistor,");
    println!(
        "dual-supply, divider-split; E24 from 10R to 10M, enough of each value for every stage"
    );
    for parts in [1, 2, 3] {
        println!("  --parts {parts}");
        println!(
            "    {:>8}  {:>14}  {:>9}  {:>10}  {:>10}",
            "stages", "time", "of 10 s", "vs before", "error"
        );
        let mut largest = None;
        let mut before: Option<f64> = None;
        for n in [
            1, 2, 4, 8, 16, 32, 64, 128, 256, 512, 1024, 2048, 4096, 8192,
        ] {
            let d =
                stage::parse("bench.toml", &stages_toml(n)).unwrap_or_else(|e| panic!("{n}: {e}"));
            let values = Series::E24.values_between(Ohms(10.0), Ohms(1e7));
            let csv = stock_csv(&values, 4 * n as u32);
            let r = run(&d, &csv, parts, BUDGET);
            let ratio = before.map_or("-".to_string(), |b| format!("×{:.1}", r.seconds / b));
            println!(
                "    {:>8}  {:>14}  {:>8.1}%  {:>10}  {:>10}",
                n,
                r.cell(),
                100.0 * r.seconds / BUDGET,
                ratio,
                r.error_cell()
            );
            if !r.handled() {
                break;
            }
            largest = Some(n);
            before = Some(r.seconds);
        }
        match largest {
            Some(n) => println!("    largest handled within 10 s: {n} stages"),
            None => println!("    none finished within 10 s"),
        }
    }
}

/// Every E192 value over ten decades, each demo design, singles to triples, each run capped at 60 s.
fn e192_section() {
    const CAP: f64 = 60.0;
    for (lo, hi) in [(1.0, 1e10), (0.1, 1e9)] {
        let values = Series::E192.values_between(Ohms(lo), Ohms(hi));
        let csv = stock_csv(&values, 5);
        println!(
            "every E192 value from {} to {} ({} values), 5 of each; each run capped at {CAP} s",
            code(Ohms(lo)),
            code(Ohms(hi)),
            values.len()
        );
        println!(
            "    {:<26}  {:>14}  {:>14}  {:>14}",
            "design", "--parts 1", "--parts 2", "--parts 3"
        );
        for file in [
            "examples/line-driver.toml",
            "examples/pnp-stage.toml",
            "examples/sensor-preamp.toml",
            "examples/split-emitter.toml",
            "examples/two-stage.toml",
        ] {
            let d = load(file);
            let cells: Vec<String> = [1, 2, 3]
                .iter()
                .map(|&p| run(&d, &csv, p, CAP).cell())
                .collect();
            println!(
                "    {:<26}  {:>14}  {:>14}  {:>14}",
                file.trim_start_matches("examples/"),
                cells[0],
                cells[1],
                cells[2]
            );
        }
    }
}

/// The biasfit binary beside this example (target/release/biasfit): the overshoot is measured on whole
/// commands, process start, file reading and all.
fn binary() -> std::path::PathBuf {
    let exe = std::env::current_exe().expect("the benchmark's own path");
    let bin = exe
        .parent()
        .and_then(|examples| examples.parent())
        .map(|release| release.join("biasfit"))
        .expect("target/release");
    assert!(
        bin.exists(),
        "{} is missing: run `cargo build --release` first",
        bin.display()
    );
    bin
}

/// One command under a time limit, through the binary: its wall time and what came of it.
fn limited(args: &[&str], stock: &std::path::Path, limit: f64) -> (f64, String) {
    let started = Instant::now();
    let out = std::process::Command::new(binary())
        .args(args)
        .arg("--stock")
        .arg(stock)
        .args(["--time-limit", &limit.to_string(), "--json"])
        .output()
        .expect("biasfit runs");
    let wall = started.elapsed().as_secs_f64();
    let what = match out.status.code() {
        Some(5) => "none in time (exit 5)".to_string(),
        Some(0) | Some(1) => {
            let v: serde_json::Value = serde_json::from_slice(&out.stdout).expect("JSON");
            let worst = v["stages"]
                .as_array()
                .map(|a| {
                    a.iter()
                        .filter_map(|s| s["error"].as_f64())
                        .fold(0.0, f64::max)
                })
                .unwrap_or(f64::NAN);
            format!(
                "{} {:.4}%",
                v["solver"]["result"].as_str().unwrap_or("?"),
                100.0 * worst
            )
        }
        other => format!(
            "exit {other:?}: {}",
            String::from_utf8_lossy(&out.stderr).trim()
        ),
    };
    (wall, what)
}

/// Wall time over the limit on the largest stocks of the sections above, at limits of 0.2 s, 1 s and 10 s.
fn overshoot_section() {
    println!("overshoot: wall time / limit of whole commands (the binary, files read and all), target 1.2 × limit + 0.2 s");
    let dir = std::env::temp_dir().join("biasfit-limits-bench");
    std::fs::create_dir_all(&dir).expect("a scratch folder");
    let write = |name: &str, csv: String| {
        let path = dir.join(name);
        std::fs::write(&path, csv).expect("the stock written");
        path
    };
    let e192 = write(
        "e192.csv",
        stock_csv(&Series::E192.values_between(Ohms(1.0), Ohms(1e10)), 5),
    );
    let v8k = write("8k.csv", stock_csv(&spread_values(8_000), 5));
    let v100k = write("100k.csv", stock_csv(&spread_values(100_000), 5));
    let v512k = write("512k.csv", stock_csv(&spread_values(512_000), 5));
    let cases: Vec<(&str, Vec<&str>, &std::path::Path)> = vec![
        (
            "design split emitter, E192 1R-10G, triples",
            vec!["design", "examples/split-emitter.toml", "--parts", "3"],
            &e192,
        ),
        (
            "design two-stage, E192 1R-10G, triples",
            vec!["design", "examples/two-stage.toml", "--parts", "3"],
            &e192,
        ),
        (
            "design line driver, 8 000 values, triples",
            vec!["design", "examples/line-driver.toml", "--parts", "3"],
            &v8k,
        ),
        (
            "design line driver, 100 000 values, triples",
            vec!["design", "examples/line-driver.toml", "--parts", "3"],
            &v100k,
        ),
        (
            "design line driver, 512 000 values, pairs",
            vec!["design", "examples/line-driver.toml", "--parts", "2"],
            &v512k,
        ),
        (
            "order two-stage x10, E192 1R-10G, pairs",
            vec![
                "order",
                "examples/two-stage.toml",
                "--parts",
                "2",
                "--copies",
                "10",
            ],
            &e192,
        ),
    ];
    println!(
        "    {:<46}  {:>6}  {:>8}  {:>7}  {:>7}  {:<4}  result",
        "case", "limit", "wall", "ratio", "target", "ok"
    );
    let mut worst: f64 = 0.0;
    let mut all_ok = true;
    for (name, args, stock) in &cases {
        for limit in [0.2, 1.0, 10.0] {
            let (wall, what) = limited(args, stock, limit);
            let target = 1.2 * limit + 0.2;
            let ok = wall <= target;
            all_ok &= ok;
            worst = worst.max(wall / limit);
            println!(
                "    {:<46}  {:>5} s  {:>6.2} s  {:>6.2}×  {:>6.2}×  {:<4}  {what}",
                name,
                limit,
                wall,
                wall / limit,
                target / limit,
                if ok { "yes" } else { "NO" }
            );
        }
    }
    println!(
        "    largest ratio {worst:.2}×; {}",
        if all_ok {
            "every run within its target"
        } else {
            "some runs past their target"
        }
    );
}

fn main() {
    let wanted: Vec<String> = std::env::args().skip(1).collect();
    let all = wanted.is_empty();
    let want = |s: &str| all || wanted.iter().any(|w| w == s);
    if want("stock") {
        stock_section();
        println!();
    }
    if want("stages") {
        stages_section();
        println!();
    }
    if want("e192") {
        e192_section();
        println!();
    }
    if want("overshoot") {
        overshoot_section();
    }
}
