//! Tests of the spread: the Monte Carlo against the nominal, the corners against every build and against
//! the literal member-by-member enumeration, the sensitivities against finite differences and the textbook
//! closed form, and reproducibility.

use super::corners::member_corner_extremes;
use super::*;
use crate::network::{Member, Network};
use crate::report::spread::{render_spread, render_spread_svg, SpreadReport};
use crate::stage::{parse, Polarity, SlotValues, Topology};
use crate::units::{Ohms, Tolerance, Watts};

/// A stage of any topology, invented for these tests (no textbook circuit).
fn toml_for(
    topology: Topology,
    polarity: Polarity,
    diode: bool,
    beta: &str,
    extra: &str,
) -> String {
    let (supply, neg, rule) = match topology {
        Topology::DualSupply => ("9", "supply_neg = -9\n", ""),
        Topology::DividerSplit => ("15", "", "[stage.rule]\ngain = 6\n"),
        Topology::CollectorFeedback | Topology::BaseResistor => {
            ("15", "", "[stage.rule]\nvrc = 0.4\nvce = 0.5\nvre = 0.1\n")
        }
        Topology::Divider => ("13.5", "", ""),
    };
    let vbe = if diode {
        "vbe = { volts = 0.66, at = \"2mA\", n = 1.2 }"
    } else {
        "vbe = 0.62"
    };
    format!(
        "[[stage]]\nname = \"t\"\ntopology = \"{}\"\npolarity = \"{}\"\nsupply = {supply}\n{neg}load = \"3k6\"\n\
         [stage.transistor]\nbeta = {beta}\n{vbe}\nvce_sat = 0.15\nmax_power = \"0.5W\"\nbeta_tempco = 0.004\n{rule}{extra}",
        topology.name(),
        polarity.name()
    )
}

fn stage_of(text: &str) -> Stage {
    parse("test.toml", text)
        .unwrap_or_else(|e| panic!("{e}"))
        .stages
        .remove(0)
}

fn part(ohms: f64, tol: f64) -> Network {
    Network::Single(Member::loose(Ohms(ohms), Tolerance(tol), Watts(0.25)))
}

/// Networks for the stage's ideal values, in three shapes by turn: one part; a series pair splitting the
/// value 70/30 (1 % and 5 % parts); a parallel pair of twice the value (5 % and 2 %).
fn networks(stage: &Stage, tol: f64) -> SlotNetworks {
    let ideal = stage.ideal().unwrap_or_else(|e| panic!("{e}"));
    SlotNetworks::from_pairs(stage.slots().into_iter().enumerate().map(|(k, s)| {
        let r = ideal.values.get(s).unwrap().0;
        let net = match k % 3 {
            0 => part(r, tol),
            1 => Network::Series(vec![part(0.7 * r, 0.01), part(0.3 * r, tol)]),
            _ => Network::Parallel(vec![part(2.0 * r, tol), part(2.0 * r, 0.02)]),
        };
        (s, net)
    }))
}

fn every_stage(extra: &str) -> Vec<Stage> {
    let mut out = Vec::new();
    for t in Topology::ALL {
        for p in [Polarity::Npn, Polarity::Pnp] {
            for diode in [false, true] {
                out.push(stage_of(&toml_for(t, p, diode, "[90, 160, 320]", extra)));
            }
        }
    }
    out
}

/// A summary in SI base units: [mean, sd, min, max].
fn si<T: Quantity>(s: &Summary<T>) -> [f64; 4] {
    [s.mean.si(), s.sd.si(), s.min.si(), s.max.si()]
}

/// Extremes in SI base units: (min, max).
fn ends<T: Quantity>(e: &Extremes<T>) -> (f64, f64) {
    (e.min.value.si(), e.max.value.si())
}

/// Whether the extremes hold `x` (SI base units), up to rounding.
fn holds<T: Quantity>(e: &Extremes<T>, x: f64) -> bool {
    e.brackets(T::from_si(x), 1e-12)
}

fn opts(runs: usize, seed: u64, dist: Dist) -> Options {
    Options {
        runs,
        seed,
        temperatures: (Celsius(-20.0), Celsius(70.0)),
        dist,
        bins: 20,
    }
}

#[test]
fn monte_carlo_mean_converges_to_the_nominal_within_its_standard_error() {
    // 1 % parts and one beta: the curvature bias of the mean (second order in the spread, of order
    // (1 %)²/3 ≈ 3e-5 of IC times a curvature below 1) is below the standard error at 20 000 builds (about
    // 4e-5), so the mean of an unbiased sampler must land within a few standard errors of the nominal. (A
    // spread beta would not do: IC is concave in beta, and its ±10 % range alone biases the mean by several
    // standard errors.)
    for diode in [false, true] {
        let st = stage_of(&toml_for(
            Topology::Divider,
            Polarity::Npn,
            diode,
            "[200, 200, 200]",
            "",
        ));
        let nets = networks(&st, 0.01);
        let nominal = st.typical(&nets.values());
        for seed in 1..=4 {
            for dist in [Dist::Uniform, Dist::Normal] {
                let n = 20_000;
                let mc = monte_carlo(&st, &nets, n, seed, dist, 20);
                for (name, s, x) in [
                    ("IC", si(&mc.ic), nominal.ic.0),
                    ("VCE", si(&mc.vce), nominal.vce.0),
                    ("VE", si(&mc.ve), nominal.ve.0),
                ] {
                    let [mean, sd, _, _] = s;
                    let z = (mean - x) / (sd / (n as f64).sqrt());
                    assert!(z.abs() < 3.5, "{name} {dist:?} seed {seed}: z = {z}");
                    assert!(sd > 0.0);
                }
            }
        }
    }
}

#[test]
fn the_standard_error_shrinks_as_one_over_root_n() {
    // The sd of the builds is a property of the circuit, not of the count, so quadrupling the builds halves
    // the standard error; and the mean's distance from the nominal stays within it.
    let st = stage_of(&toml_for(
        Topology::Divider,
        Polarity::Npn,
        false,
        "[200, 200, 200]",
        "",
    ));
    let nets = networks(&st, 0.01);
    let small = monte_carlo(&st, &nets, 5_000, 9, Dist::Uniform, 20);
    let big = monte_carlo(&st, &nets, 80_000, 9, Dist::Uniform, 20);
    let ratio = small.ic.standard_error(5_000) / big.ic.standard_error(80_000);
    assert!((ratio - 4.0).abs() < 0.2, "{ratio}");
    let nominal = st.typical(&nets.values()).ic;
    assert!((big.ic.mean - nominal).abs() < big.ic.standard_error(80_000) * 3.5);
}

#[test]
fn the_corners_bracket_every_build() {
    for extra in ["", "[stage.limits]\ntemperature = [0, 50]\n"] {
        for st in every_stage(extra) {
            let nets = networks(&st, 0.05);
            for dist in [Dist::Uniform, Dist::Normal] {
                let sp = analyse(&st, &nets, &opts(3_000, 17, dist)).unwrap();
                let (w, mc) = (&sp.worst, &sp.monte_carlo);
                let checks = [
                    (
                        "IC",
                        holds(&w.ic, mc.ic.min.0),
                        holds(&w.ic, mc.ic.max.0),
                        ends(&w.ic),
                        si(&mc.ic),
                    ),
                    (
                        "VCE",
                        holds(&w.vce, mc.vce.min.0),
                        holds(&w.vce, mc.vce.max.0),
                        ends(&w.vce),
                        si(&mc.vce),
                    ),
                    (
                        "VE",
                        holds(&w.ve, mc.ve.min.0),
                        holds(&w.ve, mc.ve.max.0),
                        ends(&w.ve),
                        si(&mc.ve),
                    ),
                ];
                for (name, lo_ok, hi_ok, corners, s) in checks {
                    assert!(
                        lo_ok && hi_ok,
                        "{} {} {dist:?} {name}: builds {}..{} outside corners {corners:?}",
                        st.topology,
                        st.polarity,
                        s[2],
                        s[3],
                    );
                }
                // The corners are not vacuous: the builds fill most of the way to them.
                assert!((mc.ic.max - mc.ic.min).0 > 0.3 * (w.ic.max.value - w.ic.min.value).0);
            }
        }
    }
}

#[test]
fn the_corners_bracket_builds_that_saturate() {
    // Fixed base bias with a 10:1 beta range: IC follows beta until the transistor saturates, so some
    // builds and corners are saturated and the extremes must still hold every build.
    for p in [Polarity::Npn, Polarity::Pnp] {
        for diode in [false, true] {
            let st = stage_of(&toml_for(
                Topology::BaseResistor,
                p,
                diode,
                "[60, 200, 600]",
                "",
            ));
            let nets = networks(&st, 0.05);
            let sp = analyse(&st, &nets, &opts(5_000, 3, Dist::Uniform)).unwrap();
            let (w, mc) = (&sp.worst, &sp.monte_carlo);
            assert_eq!(
                w.vce.min.region,
                crate::stage::Region::Saturation,
                "{p} {diode}"
            );
            assert!(mc.active < 1.0, "some builds saturate");
            for (lo, hi) in [
                (holds(&w.ic, mc.ic.min.0), holds(&w.ic, mc.ic.max.0)),
                (holds(&w.vce, mc.vce.min.0), holds(&w.vce, mc.vce.max.0)),
                (holds(&w.ve, mc.ve.min.0), holds(&w.ve, mc.ve.max.0)),
            ] {
                assert!(lo && hi, "{p} {diode}: {:?} {:?}", si(&mc.ic), ends(&w.ic));
            }
        }
    }
}

#[test]
fn slot_band_corners_equal_every_member_corner() {
    // The worst case solves 2^slots corners; enumerating every member's two ends (2^members) must give the
    // same extremes, since a network's resistance rises with each member.
    for st in every_stage("") {
        let nets = networks(&st, 0.05);
        let temps = (Celsius(-10.0), Celsius(60.0));
        let w = worst_case(&st, &nets, temps);
        let full = member_corner_extremes(&st, &nets, temps);
        for (name, (a, b), (lo, hi)) in [
            ("IC", ends(&w.ic), full[0]),
            ("VCE", ends(&w.vce), full[1]),
            ("VE", ends(&w.ve), full[2]),
        ] {
            let tol = 1e-12 * lo.abs().max(hi.abs());
            assert!(
                (a - lo).abs() <= tol && (b - hi).abs() <= tol,
                "{} {} {name}: {:?} vs {:?}",
                st.topology,
                st.polarity,
                (a, b),
                (lo, hi)
            );
        }
    }
}

#[test]
fn a_pair_of_one_percent_parts_is_a_one_percent_network() {
    // 2 × 1 % in series spans ±1 %, not ±2 %: the worst case of a stage built from such pairs equals that of
    // the same stage built from single 1 % parts of the same totals. (One beta, so that the resistors'
    // share of the spread is not drowned by beta's.)
    let st = stage_of(&toml_for(
        Topology::Divider,
        Polarity::Npn,
        false,
        "[200, 200, 200]",
        "",
    ));
    let ideal = st.ideal().unwrap();
    let single = SlotNetworks::from_pairs(
        st.slots()
            .into_iter()
            .map(|s| (s, part(ideal.values.get(s).unwrap().0, 0.01))),
    );
    let pairs = SlotNetworks::from_pairs(st.slots().into_iter().map(|s| {
        let r = ideal.values.get(s).unwrap().0;
        (
            s,
            Network::Series(vec![part(0.5 * r, 0.01), part(0.5 * r, 0.01)]),
        )
    }));
    let t = (Celsius(25.0), Celsius(25.0));
    let (a, b) = (worst_case(&st, &single, t), worst_case(&st, &pairs, t));
    for (x, y) in [(ends(&a.ic), ends(&b.ic)), (ends(&a.vce), ends(&b.vce))] {
        assert!((x.0 - y.0).abs() < 1e-12 * x.0.abs() && (x.1 - y.1).abs() < 1e-12 * x.1.abs());
    }
    // ...while the pairs' builds spread less (two independent errors partly cancel).
    let (ma, mb) = (
        monte_carlo(&st, &single, 20_000, 3, Dist::Uniform, 20),
        monte_carlo(&st, &pairs, 20_000, 3, Dist::Uniform, 20),
    );
    assert!(mb.ic.sd < 0.85 * ma.ic.sd, "{} vs {}", mb.ic.sd, ma.ic.sd);
}

/// ln X at slot value R·e^x (or beta·e^x), by plain central difference with step h.
fn central(st: &Stage, v: &SlotValues, which: Option<Slot>, h: f64) -> (f64, f64) {
    let b = st.transistor.beta.typ;
    let t = st.limits.ambient;
    let at = |x: f64| {
        let mut v = *v;
        let mut beta = b;
        match which {
            Some(s) => v.set(s, v.get(s).unwrap() * x.exp()),
            None => beta *= x.exp(),
        }
        let op = st.solve(&v, beta, t);
        (op.ic.0.ln(), op.vce.0.ln())
    };
    let (p, m) = (at(h), at(-h));
    ((p.0 - m.0) / (2.0 * h), (p.1 - m.1) / (2.0 * h))
}

#[test]
fn sensitivities_agree_with_finite_differences() {
    for st in every_stage("") {
        let nets = networks(&st, 0.05);
        let v = nets.values();
        let s = sensitivities(&st, &nets);
        assert_eq!(s.slots.len(), st.slots().len());
        let mut all: Vec<(Option<Slot>, Sensitivity)> =
            s.slots.iter().map(|(k, x)| (Some(*k), *x)).collect();
        all.push((None, s.beta));
        for (which, x) in all {
            let (ic, vce) = central(&st, &v, which, 1e-5);
            assert!(
                (x.ic - ic).abs() < 1e-6 && (x.vce - vce).abs() < 1e-6,
                "{} {} {which:?}: ({}, {}) vs ({ic}, {vce})",
                st.topology,
                st.polarity,
                x.ic,
                x.vce
            );
        }
    }
}

#[test]
fn divider_sensitivities_match_the_closed_form() {
    // With a fixed VBE the divider's active-region current is IC = β(VTh − VBE)/(RTh + (β + 1)RE), with
    // VTh = VCC·R2/(R1 + R2) and RTh = R1∥R2 (the Thevenin form of the textbook analysis, e.g. Sedra & Smith,
    // Microelectronic Circuits, ch. 6, IE = (VBB − VBE)/(RE + RBB/(β + 1)); from memory). Differentiating
    // by hand:
    //   d ln IC/d ln RE = −(β + 1)RE / D,            D = RTh + (β + 1)RE
    //   d ln IC/d ln β  = (RTh + RE) / D
    //   d ln IC/d ln R1 = −VTh·R1/((R1 + R2)(VTh − VBE)) − RTh·R2/((R1 + R2)·D)
    //   d ln IC/d ln R2 = +VTh·R1/((R1 + R2)(VTh − VBE)) − RTh·R1/((R1 + R2)·D)
    //   d ln VCE/d ln RC = −IC·RC/VCE, and IC does not depend on RC.
    let st = stage_of(&toml_for(
        Topology::Divider,
        Polarity::Npn,
        false,
        "[90, 160, 320]",
        "",
    ));
    let nets = networks(&st, 0.05);
    let v = nets.values();
    let g = |s: Slot| v.get(s).unwrap().0;
    let (r1, r2, rc, re) = (g(Slot::R1), g(Slot::R2), g(Slot::RC), g(Slot::RE));
    let (vcc, vbe, beta) = (13.5, 0.62, 160.0);
    let vth = vcc * r2 / (r1 + r2);
    let rth = r1 * r2 / (r1 + r2);
    let d = rth + (beta + 1.0) * re;
    let ic = beta * (vth - vbe) / d;
    let vce = vcc - ic * rc - ic * (beta + 1.0) / beta * re;
    let s = sensitivities(&st, &nets);
    let get = |slot: Slot| s.slots.iter().find(|(k, _)| *k == slot).unwrap().1;
    let close = |a: f64, b: f64| (a - b).abs() < 1e-9;
    assert!(
        close(st.typical(&v).ic.0, ic),
        "the solver disagrees with the closed form"
    );
    assert!(close(get(Slot::RE).ic, -(beta + 1.0) * re / d));
    assert!(close(s.beta.ic, (rth + re) / d));
    let a = vth * r1 / ((r1 + r2) * (vth - vbe));
    assert!(close(get(Slot::R1).ic, -a - rth * r2 / ((r1 + r2) * d)));
    assert!(close(get(Slot::R2).ic, a - rth * r1 / ((r1 + r2) * d)));
    assert!(close(get(Slot::RC).ic, 0.0));
    assert!(close(get(Slot::RC).vce, -ic * rc / vce));
}

#[test]
fn the_dominant_source_is_the_loosest_steepest_one() {
    // Make RE a 10 % part and everything else 0.1 %; with a stiff divider IC follows RE almost one for one.
    let st = stage_of(&toml_for(
        Topology::Divider,
        Polarity::Npn,
        false,
        "[200, 200, 200]",
        "",
    ));
    let ideal = st.ideal().unwrap();
    let nets = SlotNetworks::from_pairs(st.slots().into_iter().map(|s| {
        let tol = if s == Slot::RE { 0.10 } else { 0.001 };
        (s, part(ideal.values.get(s).unwrap().0, tol))
    }));
    let s = sensitivities(&st, &nets);
    assert_eq!(s.dominant_ic, Source::Slot(Slot::RE));
    assert_eq!(s.beta.reach, 0.0);
    // Now a wide beta and tight parts on base resistor bias: beta dominates.
    let st = stage_of(&toml_for(
        Topology::BaseResistor,
        Polarity::Npn,
        false,
        "[60, 200, 600]",
        "",
    ));
    let s = sensitivities(&st, &networks(&st, 0.01));
    assert_eq!(s.dominant_ic, Source::Beta);
}

#[test]
fn the_same_seed_gives_the_same_result() {
    let st = stage_of(&toml_for(
        Topology::DividerSplit,
        Polarity::Pnp,
        true,
        "[90, 160, 320]",
        "",
    ));
    let nets = networks(&st, 0.05);
    for dist in [Dist::Uniform, Dist::Normal] {
        let a = analyse(&st, &nets, &opts(5_000, 2024, dist)).unwrap();
        let b = analyse(&st, &nets, &opts(5_000, 2024, dist)).unwrap();
        assert_eq!(a, b);
        let c = analyse(&st, &nets, &opts(5_000, 2025, dist)).unwrap();
        assert_ne!(a.monte_carlo, c.monte_carlo);
        assert_eq!(a.worst, c.worst);
    }
}

#[test]
fn yields_are_ordered_and_reach_both_ends() {
    // Tight parts and a fixed beta on the ideal design: every build lands within 5 %.
    let st = stage_of(&toml_for(
        Topology::Divider,
        Polarity::Npn,
        false,
        "[200, 200, 200]",
        "",
    ));
    let mc = monte_carlo(&st, &networks(&st, 0.001), 2_000, 1, Dist::Uniform, 20);
    assert_eq!((mc.yield_5, mc.yield_10, mc.active), (1.0, 1.0, 1.0));
    // RE a third too large: IC is some 30 % low in every build.
    let mut nets = networks(&st, 0.01);
    let re = nets.get(Slot::RE).unwrap().ohms();
    nets.set(Slot::RE, part(re.0 * 1.35, 0.01));
    let mc = monte_carlo(&st, &nets, 2_000, 1, Dist::Uniform, 20);
    assert_eq!(mc.yield_10, 0.0);
    assert_eq!(mc.active, 1.0);
    // 5 % parts and a wide beta: somewhere in between, and ±5 % never beats ±10 %.
    let st = stage_of(&toml_for(
        Topology::Divider,
        Polarity::Npn,
        false,
        "[90, 160, 320]",
        "",
    ));
    let mc = monte_carlo(&st, &networks(&st, 0.05), 20_000, 1, Dist::Uniform, 20);
    assert!(
        mc.yield_5 < mc.yield_10 && mc.yield_10 <= mc.active,
        "{mc:?}"
    );
    assert!(
        mc.yield_5 > 0.0 && mc.yield_10 < 1.0,
        "{} {}",
        mc.yield_5,
        mc.yield_10
    );
    // Normal draws (3σ at the tolerance) are kinder than uniform ones.
    let mn = monte_carlo(&st, &networks(&st, 0.05), 20_000, 1, Dist::Normal, 20);
    assert!(mn.yield_5 > mc.yield_5 && mn.ic.sd < mc.ic.sd);
}

#[test]
fn worst_error_matches_the_corners_and_reduces_to_the_error() {
    for st in every_stage("") {
        let nets = networks(&st, 0.05);
        let temps = (Celsius(0.0), Celsius(50.0));
        let e = worst_error(&st, &nets, temps);
        let w = worst_case(&st, &nets, temps);
        let t = st.targets();
        let rel = |x: f64, target: f64| (x / target - 1.0).abs();
        let ((i0, i1), (v0, v1), (e0, e1)) = (ends(&w.ic), ends(&w.vce), ends(&w.ve));
        let mut want = [
            rel(i0, t.ic.0),
            rel(i1, t.ic.0),
            rel(v0, t.vce.0),
            rel(v1, t.vce.0),
        ]
        .into_iter()
        .fold(0.0, f64::max);
        if t.ve.0 != 0.0 {
            want = want.max(rel(e0, t.ve.0)).max(rel(e1, t.ve.0));
        }
        let d = st.deviations(&nets.values());
        for x in [d.rc, d.gain].into_iter().flatten() {
            want = want.max(x.abs());
        }
        assert!(
            (e - want).abs() < 1e-12,
            "{} {}: {e} vs {want}",
            st.topology,
            st.polarity
        );
        assert!(e >= st.error(&nets.values()) - 1e-12);
    }
    // With no tolerance, one beta and one temperature, the worst error is the stage's error.
    let st = stage_of(&toml_for(
        Topology::Divider,
        Polarity::Npn,
        true,
        "[150, 150, 150]",
        "",
    ));
    let mut nets = networks(&st, 0.05);
    let zero =
        SlotNetworks::from_pairs(nets.iter().map(|(s, n)| (s, part(n.ohms().0 * 1.03, 0.0))));
    nets = zero;
    let a = st.limits.ambient;
    let e = worst_error(&st, &nets, (a, a));
    assert!((e - st.error(&nets.values())).abs() < 1e-12, "{e}");
}

#[test]
fn worst_case_reports_stiffness_power_and_regions() {
    let st = stage_of(&toml_for(
        Topology::Divider,
        Polarity::Npn,
        false,
        "[90, 160, 320]",
        "",
    ));
    let nets = networks(&st, 0.05);
    let w = worst_case(&st, &nets, (Celsius(-20.0), Celsius(70.0)));
    // 4 slots × 2 ends, 2 betas, 3 temperatures.
    assert_eq!(w.corners, 16 * 2 * 3);
    assert_eq!(
        w.temperatures,
        vec![Celsius(-20.0), Celsius(25.0), Celsius(70.0)]
    );
    let s = w.stiffness.as_ref().expect("a divider has a stiffness");
    // The ideal design meets stiffness 10 at min beta; the worst corner may dip a little below.
    assert!(s.min.value > 8.0 && s.max.value > s.min.value);
    assert!(s.min.corner.beta == 90.0 && s.max.corner.beta == 320.0);
    assert!(w.transistor_power.max.value > w.transistor_power.min.value);
    assert!(w.resistor_load.max.value > 0.0);
    assert_eq!(w.ic.min.region, crate::stage::Region::Active);
    // IC is highest at max beta and the hottest temperature (VBE falls, beta rises), lowest at the opposite.
    assert_eq!(
        (w.ic.max.corner.beta, w.ic.max.corner.temperature),
        (320.0, Celsius(70.0))
    );
    assert_eq!(
        (w.ic.min.corner.beta, w.ic.min.corner.temperature),
        (90.0, Celsius(-20.0))
    );
    // A base-resistor stage has no stiffness rule.
    let st = stage_of(&toml_for(
        Topology::BaseResistor,
        Polarity::Npn,
        false,
        "[90, 160, 320]",
        "",
    ));
    assert!(
        worst_case(&st, &networks(&st, 0.05), (Celsius(0.0), Celsius(0.0)))
            .stiffness
            .is_none()
    );
}

#[test]
fn analyse_refuses_what_it_cannot_run() {
    let st = stage_of(&toml_for(
        Topology::Divider,
        Polarity::Npn,
        false,
        "[90, 160, 320]",
        "",
    ));
    let mut nets = networks(&st, 0.05);
    assert_eq!(
        analyse(&st, &nets, &opts(0, 1, Dist::Uniform)),
        Err(SpreadError::NoRuns)
    );
    let mut o = opts(10, 1, Dist::Uniform);
    o.temperatures = (Celsius(70.0), Celsius(-20.0));
    assert!(matches!(
        analyse(&st, &nets, &o),
        Err(SpreadError::BadRange { .. })
    ));
    let partial = SlotNetworks::from_pairs(
        nets.iter()
            .filter(|(s, _)| *s != Slot::RE)
            .map(|(s, n)| (s, n.clone())),
    );
    nets = partial;
    let e = analyse(&st, &nets, &opts(10, 1, Dist::Uniform)).unwrap_err();
    assert!(e.to_string().contains("slot RE has no resistor"), "{e}");
}

#[test]
fn json_has_the_contracted_shape() {
    let st = stage_of(&toml_for(
        Topology::Divider,
        Polarity::Npn,
        false,
        "[90, 160, 320]",
        "",
    ));
    let nets = networks(&st, 0.05);
    let sp = analyse(&st, &nets, &opts(1_000, 5, Dist::Uniform)).unwrap();
    let v = serde_json::to_value(SpreadReport::new(vec![(&st, &nets, sp)])).unwrap();
    let s = &v["stages"][0];
    assert_eq!(s["name"], "t");
    for k in ["ic", "vce", "ve", "stiffness"] {
        let pair = s["worst"][k]
            .as_array()
            .unwrap_or_else(|| panic!("worst.{k}"));
        assert_eq!(pair.len(), 2);
        assert!(pair[0].as_f64().unwrap() <= pair[1].as_f64().unwrap());
    }
    let mc = &s["monte_carlo"];
    assert_eq!(mc["runs"], 1000);
    assert_eq!(mc["seed"], 5);
    for k in ["yield_10", "yield_5"] {
        assert!((0.0..=1.0).contains(&mc[k].as_f64().unwrap()));
    }
    for q in ["ic", "vce"] {
        assert!(mc[q]["mean"].as_f64().unwrap() > 0.0 && mc[q]["sd"].as_f64().unwrap() > 0.0);
    }
    let sens = s["sensitivity"].as_object().unwrap();
    let keys: Vec<&str> = sens.keys().map(String::as_str).collect();
    for k in ["R1", "R2", "RC", "RE", "beta"] {
        assert!(keys.contains(&k), "{keys:?}");
        assert!(sens[k]["ic"].is_number() && sens[k]["vce"].is_number());
    }
    assert!(s["dominant"]["ic"].is_string());
    // The stage object of `check` is there too, so a spread can be read back like a design result.
    for k in [
        "topology", "region", "target", "op", "error", "slots", "checks",
    ] {
        assert!(!s[k].is_null(), "{k}");
    }
}

#[test]
fn the_text_report_shows_every_part() {
    let st = stage_of(&toml_for(
        Topology::Divider,
        Polarity::Npn,
        false,
        "[90, 160, 320]",
        "",
    ));
    let nets = networks(&st, 0.05);
    let sp = analyse(&st, &nets, &opts(2_000, 5, Dist::Uniform)).unwrap();
    let r = SpreadReport::new(vec![(&st, &nets, sp)]);
    let t = render_spread(&r);
    for want in [
        "worst case over 96 corners",
        "stiffness (× IB)",
        "Monte Carlo: 2000 builds (seed 5)",
        "IC of 2000 builds",
        "VCE of 2000 builds",
        "comes mostly from",
    ] {
        assert!(t.contains(want), "missing {want:?} in\n{t}");
    }
    let svg = render_spread_svg(&r);
    assert!(svg.starts_with("<svg") && svg.matches("<g ").count() == 2);
}
