//! Issue 12: the five closed-form topologies, written as circuits, must give the closed form's operating
//! point to 1e-9: random divider, split-emitter, collector-feedback, dual-supply and base-resistor stages,
//! NPN and PNP, fixed VBE and the diode law, over resistances wide enough to reach all three regions. Any
//! disagreement is a bug in one of the two. A second test walks a seeded sweep and requires every topology
//! and polarity to have been seen in cutoff, active and saturation, so the property cannot pass by only
//! ever drawing active stages.

use biasfit::circuit::of_stage::of_stage;
use biasfit::circuit::{Options, Pick, Solver};
use biasfit::stage::design::{DEFAULT_LIMITS, DEFAULT_RULE};
use biasfit::stage::{
    Beta, Ground, Limits, Polarity, Region, Slot, SlotValues, Stage, Topology, Transistor, Vbe,
};
use biasfit::units::{Amps, Celsius, Ohms, Volts};
use proptest::prelude::*;

/// One random stage and its resistances, from raw draws in [0, 1).
#[derive(Clone, Debug)]
struct Case {
    stage: Stage,
    values: SlotValues,
    temperature: Celsius,
}

fn log_between(u: f64, lo: f64, hi: f64) -> f64 {
    (lo.ln() + u * (hi.ln() - lo.ln())).exp()
}

fn case(topology: Topology, polarity: Polarity, diode: bool, u: &[f64; 12]) -> Case {
    let vbe_level = 0.55 + 0.2 * u[0];
    let vbe = if diode {
        Vbe::Diode {
            volts: Volts(vbe_level),
            at: Amps(log_between(u[1], 1e-4, 1e-2)),
            n: 1.0 + u[2],
        }
    } else {
        Vbe::Fixed(Volts(vbe_level))
    };
    let beta = 30.0 + 400.0 * u[3];
    // Below vce_sat no region of the model holds for collector feedback (VCE ≤ VCC < vce_sat, yet active
    // needs VCE ≥ vce_sat): the engine then says there is no operating point, while the closed form's
    // saturated branch takes the logarithm of a negative emitter current and returns NaN. The design file
    // refuses such a supply (it must exceed VBE), so the sweep starts just above vce_sat.
    let vce_sat = 0.05 + 0.4 * u[4] * vbe_level;
    // Under the diode law a supply below VBE can leave collector feedback and base bias in a state no
    // region of the model holds (see `collector_feedback_below_vbe_has_no_consistent_region`); there the
    // supply starts at VBE, as the design file requires for every topology but the dual supply.
    let floor = if topology != Topology::DualSupply && diode {
        vbe_level
    } else {
        vce_sat
    };
    let supply = floor + 0.01 + 29.7 * u[6].powi(3);
    let transistor = Transistor {
        beta: Beta {
            min: beta,
            typ: beta,
            max: beta,
        },
        vbe,
        vce_sat: Volts(vce_sat),
        max_power: None,
        max_ic: None,
        max_vce: None,
        vbe_tempco: -0.002,
        beta_tempco: 0.004,
        reference: Celsius(25.0),
        tj_max: Celsius(150.0),
    };
    let mut rule = DEFAULT_RULE;
    // Collector feedback and base bias may leave RE out.
    if matches!(
        topology,
        Topology::CollectorFeedback | Topology::BaseResistor
    ) && u[5] < 0.3
    {
        rule.vre = 0.0;
    }
    let limits = Limits {
        ambient: Celsius(25.0),
        ..DEFAULT_LIMITS
    };
    let stage = Stage {
        name: "random".into(),
        topology,
        polarity,
        supply: Volts(supply),
        supply_neg: (topology == Topology::DualSupply).then(|| Volts(0.3 + 14.7 * u[7])),
        ground: if topology == Topology::DualSupply {
            Ground::Between
        } else {
            Ground::Emitter
        },
        load: Some(Ohms(4700.0)),
        ic: None,
        transistor,
        rule,
        limits,
        line: 0,
    };
    let mut values = SlotValues::new();
    for (k, slot) in stage.slots().into_iter().enumerate() {
        let (lo, hi) = match slot {
            Slot::R1 | Slot::RB => (1e3, 1e7),
            Slot::RE | Slot::RE1 | Slot::RE2 => (1.0, 1e4),
            _ => (10.0, 1e5),
        };
        // Reuse the draws cyclically: each slot gets its own.
        let w = u[(8 + k) % 12].fract();
        let w = if k >= 4 { (w * 7.31).fract() } else { w };
        values.set(slot, Ohms(log_between(w, lo, hi)));
    }
    Case {
        stage,
        values,
        temperature: Celsius(-20.0 + 100.0 * u[7].fract()),
    }
}

/// Compares the engine with the closed form; returns the closed form's region, or what disagreed.
fn compare(c: &Case) -> Result<Region, String> {
    let st = &c.stage;
    let op = st.solve(&c.values, st.transistor.beta.typ, c.temperature);
    let (circuit, slots) = of_stage(st, &c.values).ok_or("the stage did not write as a circuit")?;
    circuit.check().map_err(|e| e.to_string())?;
    let build = circuit
        .build(&slots, Pick::Typ, c.temperature)
        .map_err(|e| e.to_string())?;
    let sol = Solver::new(&circuit)
        .solve(&build, &Options::default())
        .map_err(|e| e.to_string())?;
    if sol.worst_residual() > 1e-9 {
        return Err(format!(
            "KCL residual {:e} {:?} {:?} {:?} {:?}",
            sol.worst_residual(),
            sol.residuals,
            circuit.nodes,
            sol.nodes,
            sol.parts
        ));
    }
    let q = circuit.find_part("Q1").unwrap();
    let p = &sol.parts[q];
    let region = match p.region {
        Some(biasfit::circuit::Region::Active) => Region::Active,
        Some(biasfit::circuit::Region::Saturation) => Region::Saturation,
        _ => Region::Cutoff,
    };
    if region != op.region {
        return Err(format!(
            "region: engine {region}, closed form {}",
            op.region
        ));
    }
    let s = if st.polarity == Polarity::Npn {
        1.0
    } else {
        -1.0
    };
    let close_i = |a: f64, b: f64| (a - b).abs() <= 1e-9 * a.abs().max(b.abs()) + 1e-18;
    let span = st.supply_span().0;
    let close_v = |a: f64, b: f64| (a - b).abs() <= 1e-9 * span.max(a.abs()).max(b.abs());
    if !close_i(p.current.0, op.ic.0) {
        return Err(format!(
            "IC: engine {:e}, closed form {:e}",
            p.current.0, op.ic.0
        ));
    }
    if !close_i(p.base_current.0, op.ib.0) {
        return Err(format!(
            "IB: engine {:e}, closed form {:e}",
            p.base_current.0, op.ib.0
        ));
    }
    let node = |n: &str| circuit.find_node(n).map_or(0.0, |i| sol.nodes[i].0);
    for (name, engine, closed) in [
        ("VB", node("b"), s * op.vb.0),
        ("VC", node("c"), s * op.vc.0),
        ("VE", sol.nodes[circuit.parts[q].pins[2]].0, s * op.ve.0),
    ] {
        if !close_v(engine, closed) {
            return Err(format!("{name}: engine {engine}, closed form {closed}"));
        }
    }
    Ok(op.region)
}

fn topology_of(k: u8) -> Topology {
    Topology::ALL[k as usize % 5]
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(3000))]
    #[test]
    fn every_topology_as_a_circuit_matches_the_closed_form(
        t in 0u8..5, pnp in any::<bool>(), diode in any::<bool>(),
        u in proptest::array::uniform12(0.0f64..1.0),
    ) {
        let polarity = if pnp { Polarity::Pnp } else { Polarity::Npn };
        let c = case(topology_of(t), polarity, diode, &u);
        if let Err(e) = compare(&c) {
            prop_assert!(false, "{e}\n{:?}\n{:?}", c.stage, c.values);
        }
    }
}

/// A small deterministic generator (xorshift64*), so the coverage sweep is the same every run.
fn draws(seed: &mut u64) -> [f64; 12] {
    let mut out = [0.0; 12];
    for o in &mut out {
        *seed ^= *seed >> 12;
        *seed ^= *seed << 25;
        *seed ^= *seed >> 27;
        let v = seed.wrapping_mul(0x2545_F491_4F6C_DD1D);
        *o = (v >> 11) as f64 / (1u64 << 53) as f64;
    }
    out
}

#[test]
fn the_sweep_reaches_every_region_of_every_topology() {
    let mut seed = 0x1234_5678_9abc_def1;
    for t in Topology::ALL {
        for polarity in [Polarity::Npn, Polarity::Pnp] {
            let mut seen = [false; 3];
            for diode in [false, true] {
                for _ in 0..400 {
                    let c = case(t, polarity, diode, &draws(&mut seed));
                    let r = compare(&c)
                        .unwrap_or_else(|e| panic!("{e}\n{:?}\n{:?}", c.stage, c.values));
                    seen[r as usize] = true;
                }
            }
            // Collector feedback need not saturate: with a fixed VBE it cannot (VCE = VBE + IB·RB stays
            // above vce_sat < VBE), and under the diode law only at tiny currents.
            let need = [true, true, t != Topology::CollectorFeedback];
            assert!(
                seen.iter().zip(need).all(|(s, n)| *s || !n),
                "{t} {polarity}: regions seen (cutoff, active, saturation) {seen:?}"
            );
        }
    }
}

/// The one disagreement the sweep found, kept as a check. Collector feedback, diode law, a 0.272 V supply just
/// above a 0.262 V vce_sat (below VBE, which the design file refuses): active puts VCE under vce_sat, so the
/// closed form takes its saturated branch, whose currents come out with the collector current reversed;
/// it then reports "saturation" with IC held at 0 and VCE no longer at vce_sat (or, elsewhere in the
/// range, with IB < 0 and so IC > β·IB): not saturation by the model's own definition. No region holds,
/// and the engine says there is no operating point, naming the transistor. The closed form is the one in
/// error, on an input its reader never lets through.
#[test]
fn collector_feedback_below_vbe_has_no_consistent_region() {
    let u = [0.0; 12];
    let mut c = case(Topology::CollectorFeedback, Polarity::Npn, true, &u);
    c.stage.supply = Volts(0.272_073_891_901_110_4);
    c.stage.transistor.vbe = Vbe::Diode {
        volts: Volts(0.55),
        at: Amps(0.007_943_951_623_167_53),
        n: 1.533_707_888_560_87,
    };
    c.stage.transistor.beta = Beta {
        min: 30.0,
        typ: 30.0,
        max: 30.0,
    };
    c.stage.transistor.vce_sat = Volts(0.262_073_891_901_110_4);
    c.stage.rule.vre = 0.1;
    c.values = SlotValues::from_pairs([
        (Slot::RC, Ohms(10.0)),
        (Slot::RE, Ohms(6_036.185_279_704_491)),
        (Slot::RB, Ohms(1000.0)),
    ]);
    // The sweep met it at one temperature; look for the state over the range rather than pin that one.
    let mut met = 0;
    for t in -20..=80 {
        c.temperature = Celsius(f64::from(t));
        let op = c.stage.solve(&c.values, 30.0, c.temperature);
        let consistent = op.ib.0 > 0.0 && op.ic.0 > 0.0 && op.ic.0 <= op.beta * op.ib.0;
        if op.region == Region::Saturation && !consistent {
            met += 1;
            let e = compare(&c).unwrap_err();
            assert!(e.contains("no operating point") && e.contains("Q1"), "{e}");
        }
    }
    assert!(met > 0, "the inconsistent saturated state was not met");
    let _ = Amps(0.0);
}
