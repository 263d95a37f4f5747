//! `biasfit verify` through the real binary: a sound build is judged good (exit 0); readings from a
//! simulated fault, rounded as a meter shows them, put that fault first (exit 1) in the text and in the
//! `--json` contract; PNP readings are taken negative or as magnitudes; bad input is refused on one line
//! with exit 2.

mod common;
use biasfit::bench::faults::{catalogue, simulate};
use biasfit::bench::Fault;
use biasfit::network::parse_network;
use biasfit::notation::value::round_sig;
use biasfit::stage::{self, Slot, SlotNetworks, Stage};
use biasfit::units::{Tolerance, Watts};
use common::*;

const FILE: &str = "examples/line-driver.toml";
const BUILT: &str = "R1=39k,R2=7k5,RC=2k7,RE=560+39";

fn line_driver() -> (Stage, SlotNetworks) {
    let st = stage::load(FILE.as_ref()).unwrap().stages.remove(0);
    let nets = SlotNetworks::from_pairs(BUILT.split(',').map(|pair| {
        let (slot, net) = pair.split_once('=').unwrap();
        (
            slot.parse::<Slot>().unwrap(),
            parse_network(net, Tolerance(0.05), Watts(0.25)).unwrap(),
        )
    }));
    (st, nets)
}

/// What a 3-digit meter shows.
fn reading(v: f64) -> String {
    format!("{}", round_sig(v, 3))
}

fn verify(measured: &str, json: bool) -> std::process::Output {
    let mut args = vec!["verify", FILE, "--use", BUILT, "--measured", measured];
    if json {
        args.push("--json");
    }
    biasfit(&args)
}

#[test]
fn a_sound_build_is_good() {
    // check prints VB 1.85 V, VE 1.2 V, VC 6.62 V at typical beta for this build; a meter a little off.
    let out = verify("VB=1.83,VE=1.18,VC=6.71", false);
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    let text = stdout(&out);
    assert!(text.contains("verdict: good"), "{text}");
    assert!(!text.contains("likely faults"), "{text}");
    insta::assert_snapshot!("verify-good", text);
}

#[test]
fn simulated_faults_come_first_through_the_binary() {
    let (st, nets) = line_driver();
    let mut tried = 0;
    let mut kinds_done: Vec<&str> = Vec::new();
    for f in catalogue(&st, &nets) {
        // The first fault of each class that the readings show as a fault, to keep the test quick.
        if kinds_done.contains(&f.kind()) {
            continue;
        }
        let n = simulate(
            &st,
            &nets,
            Some(&f),
            if f == Fault::Reversed { 4.0 } else { 150.0 },
        );
        let measured = format!(
            "VB={},VE={},VC={}",
            reading(n.vb.0),
            reading(n.ve.0),
            reading(n.vc.0)
        );
        let out = verify(&measured, true);
        let v: serde_json::Value = serde_json::from_slice(&out.stdout)
            .unwrap_or_else(|e| panic!("{f}: {e}: {}", stderr(&out)));
        if v["verdict"] != "fault" {
            // Some faults (a 39R a decade low inside 599R) stay within the bands: nothing to rank.
            assert_eq!(out.status.code(), Some(0));
            continue;
        }
        assert_eq!(out.status.code(), Some(1), "{f}");
        let top = &v["explanations"][0];
        let kinds: Vec<&str> = std::iter::once(top["fault"].as_str().unwrap())
            .chain(
                top["alike"]
                    .as_array()
                    .unwrap()
                    .iter()
                    .map(|a| a["fault"].as_str().unwrap()),
            )
            .collect();
        assert!(kinds.contains(&f.kind()), "{f}: top was {top}");
        if let Some(slot) = f.slot() {
            let slots: Vec<&str> = std::iter::once(&top["slot"])
                .chain(top["alike"].as_array().unwrap().iter().map(|a| &a["slot"]))
                .filter_map(|s| s.as_str())
                .collect();
            assert!(slots.contains(&slot.name()), "{f}: top was {top}");
        }
        kinds_done.push(f.kind());
        tried += 1;
    }
    assert_eq!(tried, 9, "classes judged faults: {kinds_done:?}");
}

#[test]
fn the_json_contract() {
    // RC fitted a decade high: the collector sits near the emitter.
    let (st, nets) = line_driver();
    let f = Fault::DecadeHigh(biasfit::bench::Place {
        slot: Slot::RC,
        member: 0,
    });
    let n = simulate(&st, &nets, Some(&f), 150.0);
    let measured = format!(
        "VB={},VE={},VC={}",
        reading(n.vb.0),
        reading(n.ve.0),
        reading(n.vc.0)
    );
    let out = verify(&measured, true);
    assert_eq!(out.status.code(), Some(1));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(v["verdict"], "fault");
    for k in ["vb", "ve", "vc"] {
        assert!(v["deviations"][k].is_number(), "{k}");
    }
    assert!(v.get("beta_estimate").is_some());
    let e = &v["explanations"][0];
    assert_eq!(e["fault"], "decade-high");
    assert_eq!(e["slot"], "RC");
    let score = e["score"].as_f64().unwrap();
    assert!(score > 0.9 && score <= 1.0, "{score}");
    for k in ["vb", "ve", "vc"] {
        assert!(e["predicted"][k].is_number(), "{k}");
    }
    assert_eq!(e["member"]["fitted_ohms"], 27000.0);
    let scores: Vec<f64> = v["explanations"]
        .as_array()
        .unwrap()
        .iter()
        .map(|e| e["score"].as_f64().unwrap())
        .collect();
    assert!(
        scores.windows(2).all(|w| w[0] >= w[1]),
        "best first: {scores:?}"
    );

    let text = stdout(&verify(&measured, false));
    assert!(text.contains("1. "), "{text}");
    assert!(
        text.contains("RC (2k7) fitted as 27k: a misread multiplier band"),
        "{text}"
    );
    insta::assert_snapshot!("verify-fault", text);
}

#[test]
fn the_pnp_example_built_well_and_read_from_ground_is_good() {
    // Issue 14's repro: the PNP hangs from +9 V, so a meter from ground reads about 7.6 V at the emitter
    // (the hand analysis is in bench::tests::the_pnp_example_reads_as_its_real_circuit).
    let out = biasfit(&[
        "verify",
        "examples/pnp-stage.toml",
        "--use",
        "R1=27k,R2=8k2,RC=3k3,RE=1k",
        "--measured",
        "VB=6.97,VE=7.6,VC=4.59",
        "--json",
    ]);
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(v["verdict"], "good", "{v}");
    assert_eq!(v["ground"], "collector");
    assert_eq!(v["magnitudes"], false);
    assert_eq!(v["nodes"]["emitter_rail"], 9.0);
    assert_eq!(v["nodes"]["collector_rail"], 0.0);
    assert!((v["nodes"]["measured"]["ve"].as_f64().unwrap() - 7.6).abs() < 1e-9);
    // The old keys keep their meaning: magnitudes from the emitter-side rail.
    assert!(
        (v["measured"]["ve"].as_f64().unwrap() - 1.4).abs() < 1e-9,
        "{v}"
    );
    // The same build read the old way, as magnitudes, is understood too, and says so on one line.
    let old = biasfit(&[
        "verify",
        "examples/pnp-stage.toml",
        "--use",
        "R1=27k,R2=8k2,RC=3k3,RE=1k",
        "--measured",
        "VB=2.03,VE=1.4,VC=4.41",
    ]);
    assert_eq!(old.status.code(), Some(0), "{}", stderr(&old));
    let text = String::from_utf8_lossy(&old.stdout);
    assert!(text.contains("readings taken as magnitudes"), "{text}");
    assert!(text.contains("verdict: good"), "{text}");
}

#[test]
fn pnp_readings_negative_or_as_magnitudes() {
    let file = "examples/pnp-stage.toml";
    let st = stage::load(file.as_ref()).unwrap().stages.remove(0);
    let ideal = st.ideal().unwrap();
    let built: Vec<String> = ideal
        .values
        .iter()
        .map(|(s, v)| {
            format!(
                "{s}={}",
                biasfit::notation::code(biasfit::notation::Series::E24.nearest(v))
            )
        })
        .collect();
    let built = built.join(",");
    let nets = SlotNetworks::from_pairs(built.split(',').map(|p| {
        let (s, n) = p.split_once('=').unwrap();
        (
            s.parse::<Slot>().unwrap(),
            parse_network(n, Tolerance(0.05), Watts(0.25)).unwrap(),
        )
    }));
    let f = Fault::Short(biasfit::bench::Place {
        slot: Slot::RE,
        member: 0,
    });
    let n = simulate(&st, &nets, Some(&f), 130.0);
    let mut answers = Vec::new();
    for sign in [-1.0, 1.0] {
        let measured = format!(
            "VB={},VE={},VC={}",
            reading(sign * n.vb.0),
            reading(sign * n.ve.0),
            reading(sign * n.vc.0)
        );
        let out = biasfit(&[
            "verify",
            file,
            "--use",
            &built,
            "--measured",
            &measured,
            "--json",
        ]);
        let v: serde_json::Value =
            serde_json::from_slice(&out.stdout).unwrap_or_else(|e| panic!("{e}: {}", stderr(&out)));
        assert_eq!(v["explanations"][0]["fault"], "short", "{v}");
        assert_eq!(v["explanations"][0]["slot"], "RE", "{v}");
        answers.push(v["measured"].clone());
    }
    assert_eq!(answers[0], answers[1]);
}

#[test]
fn bad_input_is_refused_on_one_line() {
    for (args, want) in [
        (
            vec!["verify", FILE, "--use", BUILT, "--measured", "VB=1.8,VX=2"],
            "\"VX\" is not a node",
        ),
        (
            vec!["verify", FILE, "--use", BUILT, "--measured", "VB=fast"],
            "--measured: VB=fast",
        ),
        (
            vec!["verify", FILE, "--use", BUILT, "--measured", ""],
            "no readings",
        ),
        (
            vec![
                "verify",
                FILE,
                "--use",
                "R1=39k,R2=7k5,RC=2k7",
                "--measured",
                "VB=1.8",
            ],
            "no value for RE",
        ),
        (
            vec![
                "verify",
                "examples/two-stage.toml",
                "--use",
                BUILT,
                "--measured",
                "VB=1.8",
            ],
            "--stage",
        ),
        (
            vec![
                "verify",
                "no-such.toml",
                "--use",
                BUILT,
                "--measured",
                "VB=1.8",
            ],
            "no-such.toml",
        ),
    ] {
        let out = biasfit(&args);
        assert_eq!(out.status.code(), Some(2), "{args:?}: {}", stderr(&out));
        let err = stderr(&out);
        assert_eq!(err.lines().count(), 1, "{err}");
        assert!(
            err.starts_with("error: ") && err.contains(want),
            "{args:?}: {err}"
        );
        assert!(stdout(&out).is_empty());
    }
}

#[test]
fn readme_shows_real_verify_output() {
    let readme = user_docs();
    let measured = "VB=1.84,VE=1.19,VC=5.2";
    let out = stdout(&verify(measured, false));
    let block = format!("$ biasfit verify {FILE} --use {BUILT} --measured {measured}\n{out}```");
    assert!(
        readme.contains(&block),
        "README's verify output is stale; it is now:\n{out}"
    );
}
