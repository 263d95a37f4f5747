//! Issue 12: every example circuit in examples/starters/ is read and solved, and each device model is held
//! to a formula or worked example from outside the project, named beside the numbers. Slot values are
//! chosen here; the circuits themselves are invented scenarios.

use biasfit::circuit::file::parse;
use biasfit::circuit::{Circuit, Element, Kind, Options, Region, Solution, Solver};
use biasfit::units::{thermal_voltage, Celsius, Ohms};

fn example(name: &str) -> Circuit {
    let path = format!("{}/examples/starters/{name}", env!("CARGO_MANIFEST_DIR"));
    let text = std::fs::read_to_string(&path).unwrap();
    let mut list = parse(&path, &text).unwrap_or_else(|e| panic!("{e}"));
    assert_eq!(list.len(), 1);
    list.remove(0)
}

fn solve(c: &Circuit, slots: &[f64]) -> Solution {
    let slots: Vec<Ohms> = slots.iter().map(|&r| Ohms(r)).collect();
    let b = c.typical(&slots).unwrap();
    let s = Solver::new(c).solve(&b, &Options::default()).unwrap();
    assert!(
        s.worst_residual() < 1e-9,
        "KCL residual {:e}",
        s.worst_residual()
    );
    // The checks and the error run on every example.
    let ratings = vec![None; slots.len()];
    c.checks(&slots, &ratings, &Options::default()).unwrap();
    assert!(c.error(&s).is_finite());
    s
}

fn v(c: &Circuit, s: &Solution, node: &str) -> f64 {
    s.nodes[c.find_node(node).unwrap()].0
}

fn part<'a>(c: &Circuit, s: &'a Solution, name: &str) -> &'a biasfit::circuit::PartState {
    &s.parts[c.find_part(name).unwrap()]
}

#[test]
fn every_example_reads_and_solves() {
    let dir = format!("{}/examples/starters", env!("CARGO_MANIFEST_DIR"));
    let mut n = 0;
    for e in std::fs::read_dir(&dir).unwrap() {
        let name = e.unwrap().file_name().into_string().unwrap();
        let text = std::fs::read_to_string(format!("{dir}/{name}")).unwrap();
        if !text.contains("[[circuit]]") {
            continue; // a stage starter: read by the stage reader, tested in tests/starters.rs
        }
        let c = example(&name);
        // Every slot at 4k7 is not a design, but it must solve.
        let slots = vec![4700.0; c.slots().len()];
        let b = c
            .typical(&slots.iter().map(|&r| Ohms(r)).collect::<Vec<_>>())
            .unwrap();
        let s = Solver::new(&c).solve(&b, &Options::default());
        assert!(s.is_ok(), "{name}: {s:?}");
        n += 1;
    }
    assert!(n >= 6, "only {n} examples");
}

#[test]
fn regulator_feedback_follows_the_adjustable_regulator_equation() {
    // Vout = Vref·(1 + R2/R1) + Iadj·R2, the adjustable three-terminal regulator's equation as data sheets
    // and application notes print it (from memory): 1.25·(1 + 1500/240) + 50 µA·1500 = 9.1375 V. Here the
    // resistor from out to adjust is R1 and from adjust to ground R2, as in that equation.
    let c = example("regulator-feedback.toml");
    let s = solve(&c, &[240.0, 1500.0]);
    let want = 1.25 * (1.0 + 1500.0 / 240.0) + 50e-6 * 1500.0;
    assert!(
        (v(&c, &s, "out") - want).abs() < 1e-12,
        "{}",
        v(&c, &s, "out")
    );
    assert!((want - 9.1375).abs() < 1e-12);
}

#[test]
fn gain_pair_follows_the_feedback_formula() {
    // The closed-loop gain A/(1 + A·β) with β = RG/(RG + RF) (Black's feedback formula, in every op-amp
    // text, e.g. Horowitz & Hill, The Art of Electronics, ch. 4; from memory).
    let c = example("gain-pair.toml");
    let (rf, rg) = (37_400.0, 10_000.0);
    let s = solve(&c, &[rf, rg]);
    let (a, beta) = (200_000.0, rg / (rg + rf));
    let want = 0.5 * a / (1.0 + a * beta);
    assert!(
        (v(&c, &s, "out") - want).abs() < 1e-9,
        "{} vs {want}",
        v(&c, &s, "out")
    );
    assert_eq!(part(&c, &s, "U1").region, Some(Region::Linear));
    // Asked for more than the supply allows, the output stops at its headroom below the 5 V rail.
    let s = solve(&c, &[200_000.0, 1000.0]);
    assert!((v(&c, &s, "out") - 4.9).abs() < 1e-12);
    assert_eq!(part(&c, &s, "U1").region, Some(Region::High));
}

#[test]
fn jfet_self_bias_solves_shockleys_equation() {
    // ID = IDSS·(1 − VGS/VP)² with VGS = −ID·RS (Shockley's equation, as in Boylestad & Nashelsky,
    // Electronic Devices and Circuit Theory, JFET self-bias; from memory). With IDSS 8 mA, VP −4 V,
    // RS 1k: ID = 8·(1 − ID/4)² in mA, i.e. ID² − 10·ID + 16 = 0, whose root above pinch-off is 2 mA
    // (the other, 8 mA, would put VGS below VP). Hand arithmetic.
    let c = example("jfet-self-bias.toml");
    let s = solve(&c, &[3300.0, 1000.0]);
    let j = part(&c, &s, "J1");
    assert!((j.current.0 - 2e-3).abs() < 1e-15, "{}", j.current.0);
    assert!((j.control.0 + 2.0).abs() < 1e-12);
    assert!((v(&c, &s, "d") - (18.0 - 3300.0 * 2e-3)).abs() < 1e-11);
    assert_eq!(j.region, Some(Region::FetSaturation));
}

#[test]
fn mosfet_divider_solves_the_square_law() {
    // ID = ½·k·(VG − ID·RS − VT)² (the MOSFET square law, Sedra & Smith, Microelectronic Circuits, ch. 5),
    // solved here by the quadratic formula for the root with VGS above VT.
    let c = example("mosfet-divider.toml");
    let (r1, r2) = (1.0e6, 150e3);
    let s = solve(&c, &[r1, r2]);
    let vg = 24.0 * r2 / (r1 + r2);
    let (k, vt, rs) = (0.08, 2.1, 470.0);
    // u = VGS − VT: u = (VG − VT) − RS·½·k·u²  →  ½·k·RS·u² + u − (VG − VT) = 0.
    let a = 0.5 * k * rs;
    let u = (-1.0 + (1.0 + 4.0 * a * (vg - vt)).sqrt()) / (2.0 * a);
    let id = 0.5 * k * u * u;
    let m = part(&c, &s, "M1");
    assert!(
        (m.current.0 / id - 1.0).abs() < 1e-10,
        "{} vs {id}",
        m.current.0
    );
    assert_eq!(m.region, Some(Region::FetSaturation));
}

#[test]
fn mosfet_matches_a_textbook_design_example() {
    // Sedra & Smith, Microelectronic Circuits (MOSFET DC design example; the figures from memory): VDD
    // 2.5 V, VSS −2.5 V, gate grounded, Vt 0.7 V, μnCox·W/L = 100 µA/V² × 32 = 3.2 mA/V², RD 5 kΩ, RS
    // 3.25 kΩ give ID = 0.4 mA with VOV = 0.5 V (VS = −1.2 V) and VD = 0.5 V.
    let text = r#"
[[circuit]]
name = "textbook"
[circuit.rails]
vdd = 2.5
vss = -2.5
[[circuit.part]]
name = "RD"
kind = "resistor"
value = "5k"
between = ["vdd", "d"]
[[circuit.part]]
name = "RS"
kind = "resistor"
value = "3k25"
between = ["s", "vss"]
[[circuit.part]]
name = "M1"
kind = "n-mosfet"
drain = "d"
gate = "gnd"
source = "s"
threshold = 0.7
k = 0.0032
"#;
    let c = parse("textbook.toml", text).unwrap().remove(0);
    let s = solve(&c, &[]);
    let m = part(&c, &s, "M1");
    assert!((m.current.0 - 0.4e-3).abs() < 1e-12, "{}", m.current.0);
    assert!((v(&c, &s, "s") + 1.2).abs() < 1e-9);
    assert!((v(&c, &s, "d") - 0.5).abs() < 1e-9);
}

#[test]
fn led_string_meets_ohms_law_and_the_shockley_law() {
    // 12 V = I·R1 + 3·VF(I), VF(I) = 2.05 V + n·VT·ln(I / 10 mA) (the Shockley law written from a forward
    // voltage at a current; VT from CODATA 2018 via units::thermal_voltage).
    let c = example("led-string.toml");
    let s = solve(&c, &[680.0]);
    let i = part(&c, &s, "R1").current.0;
    let nvt = 2.0 * thermal_voltage(Celsius(25.0)).0;
    let vf = 2.05 + nvt * (i / 10e-3).ln();
    assert!((12.0 - i * 680.0 - 3.0 * vf).abs() < 1e-9, "{i}");
    assert!(i > 5e-3 && i < 15e-3);
}

#[test]
fn zener_current_source_follows_the_zener_and_emitter_loop() {
    // The zener-referenced source: IC = α·(VZ − VEB)/RE (Horowitz & Hill, The Art of Electronics, current
    // sources; from memory), with VZ = Vz0 + IZ·rz the zener's linear model, Vz0 = 4.7 V − 5 mA·20 Ω.
    let c = example("zener-current-source.toml");
    let s = solve(&c, &[1800.0]);
    let q = part(&c, &s, "Q1");
    let vz = 15.0 - v(&c, &s, "zb");
    let iz = part(&c, &s, "DZ").current.0;
    assert!((vz - (4.6 + 20.0 * iz)).abs() < 1e-12);
    let beta = 220.0;
    let want = beta / (beta + 1.0) * (vz - 0.62) / 1800.0;
    assert!(
        (q.current.0 / want - 1.0).abs() < 1e-12,
        "{} vs {want}",
        q.current.0
    );
    assert_eq!(part(&c, &s, "DZ").region, Some(Region::Breakdown));
    assert_eq!(q.region, Some(Region::Active));
}

#[test]
fn tail_pair_is_symmetric_and_obeys_kirchhoff() {
    // By symmetry the two halves carry equal currents; Ohm's law at the collectors and the tail resistor.
    let c = example("tail-pair.toml");
    let s = solve(&c, &[15_000.0]);
    let (q1, q2) = (part(&c, &s, "Q1"), part(&c, &s, "Q2"));
    assert!((q1.current.0 / q2.current.0 - 1.0).abs() < 1e-12);
    assert!((v(&c, &s, "c1") - (9.0 - 8200.0 * q1.current.0)).abs() < 1e-10);
    let tail = (v(&c, &s, "tail") + 9.0) / 15_000.0;
    let ie = q1.current.0 + q1.base_current.0 + q2.current.0 + q2.base_current.0;
    assert!((tail / ie - 1.0).abs() < 1e-12);
    // Two transistors: the latch search ran and found one operating point.
    assert!(s.latch_checked && s.latch.is_none());
    assert!(matches!(
        c.parts[c.find_part("Q1").unwrap()].kind,
        Kind::Bjt { .. }
    ));
}

#[test]
fn mirror_follows_the_basic_current_mirror_relation() {
    // The basic BJT current mirror with identical transistors (Sedra & Smith, Microelectronic Circuits, the
    // BJT current mirror; from memory): IC2 = IC1, IREF = IC1·(1 + 2/β), so Iout = IREF·β/(β + 2). IREF is
    // taken by Ohm's law from the node voltage, β from the build; the model has no Early effect, so the
    // relation holds exactly while Q2 stays active.
    let c = example("mirror.toml");
    for rref in [8200.0, 4700.0, 33_000.0] {
        let s = solve(&c, &[rref]);
        let b = c.typical(&[Ohms(rref)]).unwrap();
        let beta = match b.elements[c.find_part("Q2").unwrap()] {
            Element::Bjt(q) => q.beta,
            ref e => panic!("{e:?}"),
        };
        let (q1, q2) = (part(&c, &s, "Q1"), part(&c, &s, "Q2"));
        assert_eq!(q1.region, Some(Region::Active));
        assert_eq!(q2.region, Some(Region::Active));
        let iref = (9.0 - v(&c, &s, "m")) / rref;
        // Near 1 mA the junction sits near its 0.65 V: IREF ≈ (9 − 0.65)/RREF to a few per cent
        // (hand arithmetic; the junction moves 26 mV per factor e of current).
        assert!((iref * rref / 8.35 - 1.0).abs() < 0.02, "{iref}");
        let near = |a: f64, b: f64| (a / b - 1.0).abs() < 1e-9;
        assert!(near(q2.current.0, q1.current.0), "{q1:?} {q2:?}");
        assert!(near(iref, q1.current.0 * (1.0 + 2.0 / beta)), "{iref}");
        assert!(near(q2.current.0, iref * beta / (beta + 2.0)), "{iref}");
        // The output by Ohm's law at RL (2k2 from the 9 V rail).
        assert!(near((9.0 - v(&c, &s, "out")) / 2200.0, q2.current.0));
        // One operating point: the diode-connected Q1 is never taken for saturated.
        assert!(s.latch_checked && s.latch.is_none(), "{:?}", s.latch);
    }
}
