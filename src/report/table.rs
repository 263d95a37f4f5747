//! Pure text renderers for people: aligned tables, resistances in the IEC 60062 code (4k7), other quantities
//! in engineering notation (2.45 mA). Each returns a `String`; colour is added only when asked for (the
//! binary asks when stdout is a terminal).

use super::{CheckReport, OpReport, Report, StageReport};
use crate::notation::{amps, code, engineering, signed_percent, trim_number, volts};
use crate::stage::CheckUnit;
use crate::units::Ohms;
use itertools::Itertools;
use std::fmt::Write;

/// Columns of text, padded to line up; the first column is left-aligned, the rest right-aligned.
pub(super) struct Grid {
    rows: Vec<Vec<String>>,
    left: usize,
}

impl Grid {
    pub(super) fn new(left: usize) -> Grid {
        Grid {
            rows: Vec::new(),
            left,
        }
    }

    pub(super) fn row<S: Into<String>>(&mut self, cells: impl IntoIterator<Item = S>) {
        self.rows.push(cells.into_iter().map(Into::into).collect());
    }

    pub(super) fn render(&self, indent: &str) -> String {
        let n = self.rows.iter().map(Vec::len).max().unwrap_or(0);
        let width = |c: usize| {
            self.rows
                .iter()
                .filter_map(|r| r.get(c))
                .map(|s| visible_len(s))
                .max()
                .unwrap_or(0)
        };
        let widths: Vec<usize> = (0..n).map(width).collect();
        let mut out = String::new();
        for r in &self.rows {
            let mut line = String::from(indent);
            for (c, cell) in r.iter().enumerate() {
                let pad = widths[c].saturating_sub(visible_len(cell));
                if c > 0 {
                    line.push_str("  ");
                }
                if c < self.left {
                    line.push_str(cell);
                    line.push_str(&" ".repeat(pad));
                } else {
                    line.push_str(&" ".repeat(pad));
                    line.push_str(cell);
                }
            }
            out.push_str(line.trim_end());
            out.push('\n');
        }
        out
    }
}

/// Characters that show, leaving out ANSI colour sequences.
fn visible_len(s: &str) -> usize {
    let mut n = 0;
    let mut in_escape = false;
    for c in s.chars() {
        if in_escape {
            in_escape = c != 'm';
        } else if c == '\u{1b}' {
            in_escape = true;
        } else {
            n += 1;
        }
    }
    n
}

pub(super) fn verdict(ok: bool, colour: bool) -> String {
    match (ok, colour) {
        (true, false) => "ok".into(),
        (false, false) => "FAIL".into(),
        (true, true) => "\u{1b}[32mok\u{1b}[0m".into(),
        (false, true) => "\u{1b}[1;31mFAIL\u{1b}[0m".into(),
    }
}

pub(crate) fn check_value(c: &CheckReport, x: f64) -> String {
    c.unit.show(x)
}

/// A network's members for people: "33k 5 % 250 mW @D3, 680k 1 % 500 mW @D6".
fn parts_text(parts: &[super::PartReport]) -> String {
    parts
        .iter()
        .map(|p| {
            let mut t = format!(
                "{} {} {}",
                code(Ohms(p.ohms)),
                crate::units::Tolerance(p.tolerance),
                engineering(p.power, "W")
            );
            match p.location.as_deref() {
                // A part in a purchase has no drawer yet.
                Some(crate::stock::TO_BUY) => t.push_str(" (to buy)"),
                Some(l) => {
                    let _ = write!(t, " @{l}");
                }
                None => {}
            }
            t
        })
        .join(", ")
}

pub(super) fn heading(s: &StageReport) -> String {
    let supply = match s.supply_neg {
        Some(neg) => format!("{} / −{} supplies", volts(s.supply), volts(neg)),
        None => format!("{} supply", volts(s.supply)),
    };
    let load = s
        .target
        .rc
        .map(|r| format!(", load {}", code(Ohms(r))))
        .unwrap_or_default();
    format!(
        "stage \"{}\": {}, {}, {supply}{load}\n",
        s.name, s.topology, s.polarity
    )
}

/// Where the voltages are read from, for a stage whose ground is not simply its emitter-side rail or whose
/// mirror differs from the circuit (every PNP): the voltages shown are then from real ground.
pub(super) fn ground_note(s: &StageReport) -> String {
    if s.is_pnp() || s.nodes.ground == "collector" {
        format!(
            "  (node voltages from ground: collector rail {}, emitter rail {}; currents and VCE are magnitudes)\n",
            volts(s.nodes.collector_rail),
            volts(s.nodes.emitter_rail)
        )
    } else {
        String::new()
    }
}

/// The operating points with their node voltages from real ground, for showing.
pub(super) fn shown_ops(s: &StageReport) -> [OpReport; 3] {
    let real = |o: &OpReport, r: &super::RealVolts| OpReport {
        vb: r.vb,
        ve: r.ve,
        vc: r.vc,
        ..*o
    };
    [
        real(&s.corners.min_beta, &s.nodes.min_beta),
        real(&s.op, &s.nodes.typical),
        real(&s.corners.max_beta, &s.nodes.max_beta),
    ]
}

/// A deviation signed as the real voltage moves (a PNP's mirror moves the other way).
pub(super) fn real_sign(s: &StageReport, d: f64) -> f64 {
    if s.is_pnp() {
        -d
    } else {
        d
    }
}

pub(super) fn pnp_note(s: &StageReport) -> &'static str {
    if s.is_pnp() {
        "  (pnp: shown as its npn mirror; every real voltage and current has the opposite sign)\n"
    } else {
        ""
    }
}

fn targets_line(s: &StageReport) -> String {
    let t = &s.target;
    let mut parts = vec![
        format!("IC {}", amps(t.ic)),
        format!("VCE {}", volts(t.vce)),
        format!("VE {}", volts(s.nodes.target_ve)),
        format!("VB {}", volts(s.nodes.target_vb)),
        format!("IB {}", amps(t.ib)),
    ];
    if let Some(i) = t.divider_current {
        parts.push(format!("divider current {}", amps(i)));
    }
    if let Some(g) = t.gain {
        parts.push(format!("gain {}", trim_number(g, 3)));
    }
    format!("  targets: {}\n", parts.join(", "))
}

fn checks_table(s: &StageReport, colour: bool) -> String {
    checks_grid(&s.checks, colour)
}

/// The checks as a table: what, value, limit, verdict.
pub(super) fn checks_grid(checks: &[CheckReport], colour: bool) -> String {
    let mut g = Grid::new(1);
    g.row(["check", "value", "limit", ""]);
    for c in checks {
        let sense = if c.at_least { "≥" } else { "≤" };
        let limit = if c.unit == CheckUnit::Flag {
            "required".to_string()
        } else {
            format!("{sense} {}", check_value(c, c.limit))
        };
        g.row([
            c.name.clone(),
            check_value(c, c.value),
            limit,
            verdict(c.ok, colour),
        ]);
    }
    g.render("  ")
}

fn ac_lines(s: &StageReport) -> String {
    match &s.ac {
        None => String::new(),
        // Outside the active region the small-signal figures mean nothing: no gain, no swing.
        Some(_) if s.region != "active" => format!(
            "\n  ac: no gain: the transistor is in {} at typical beta, so the stage does not amplify\n",
            s.region
        ),
        Some(a) => format!(
            "\n  ac: re' {}, gain {} into the load, input {}, output {}, swing {} peak\n",
            code(Ohms(a.re_prime)),
            trim_number(a.gain, 3),
            code(Ohms(a.input)),
            code(Ohms(a.output)),
            volts(a.swing)
        ),
    }
}

pub(super) fn cautions(r: &Report) -> String {
    let mut out = String::new();
    for c in &r.cautions {
        let _ = writeln!(out, "\ncaution: {c}");
    }
    out
}

fn op_rows(g: &mut Grid, ops: [&OpReport; 3]) {
    let row = |g: &mut Grid, label: &str, f: &dyn Fn(&OpReport) -> String| {
        let mut cells = vec![label.to_string()];
        cells.extend(ops.iter().map(|o| f(o)));
        g.row(cells);
    };
    row(g, "beta", &|o| trim_number(o.beta, 4));
    row(g, "region", &|o| o.region.to_string());
    row(g, "IB", &|o| amps(o.ib));
    row(g, "IC", &|o| amps(o.ic));
    row(g, "IE", &|o| amps(o.ie));
    row(g, "VB", &|o| volts(o.vb));
    row(g, "VE", &|o| volts(o.ve));
    row(g, "VC", &|o| volts(o.vc));
    row(g, "VCE", &|o| volts(o.vce));
    if ops[1].divider_current.is_some() {
        row(g, "divider current", &|o| {
            o.divider_current.map_or("-".into(), amps)
        });
    }
    row(g, "supply current", &|o| amps(o.supply_current));
}

/// The `check` report: parts, operating point at min, typical and max beta, target against actual, checks.
pub fn render_check(r: &Report, colour: bool) -> String {
    let mut out = String::new();
    for (i, s) in r.stages.iter().enumerate() {
        if i > 0 {
            out.push('\n');
        }
        out.push_str(&heading(s));
        out.push_str(&ground_note(s));

        let mut g = Grid::new(3);
        g.row(["slot", "network", "parts"]);
        for (slot, sr) in &s.slots.0 {
            let parts = parts_text(&sr.parts);
            let shown = if sr.parts.len() > 1 {
                format!("{} = {}", sr.network, sr.shown)
            } else {
                sr.network.clone()
            };
            let parts = if sr.kept {
                format!("already fitted (kept): {parts}")
            } else {
                parts
            };
            g.row([slot.name().to_string(), shown, parts]);
        }
        out.push('\n');
        out.push_str(&g.render("  "));

        let mut g = Grid::new(1);
        g.row(["operating point", "min beta", "typ beta", "max beta"]);
        let [lo, typ, hi] = shown_ops(s);
        op_rows(&mut g, [&lo, &typ, &hi]);
        out.push('\n');
        out.push_str(&g.render("  "));

        let mut g = Grid::new(1);
        g.row(["at typ beta", "target", "actual", "deviation"]);
        let d = &s.deviations;
        g.row([
            "IC".into(),
            amps(s.target.ic),
            amps(s.op.ic),
            signed_percent(d.ic),
        ]);
        g.row([
            "VCE".into(),
            volts(s.target.vce),
            volts(s.op.vce),
            signed_percent(d.vce),
        ]);
        if let Some(dv) = d.ve {
            g.row([
                "VE".into(),
                volts(s.nodes.target_ve),
                volts(s.nodes.typical.ve),
                signed_percent(real_sign(s, dv)),
            ]);
        }
        if let (Some(rl), Some(dr)) = (s.target.rc, d.rc) {
            let rc = s
                .slots
                .0
                .iter()
                .find(|(slot, _)| *slot == crate::stage::Slot::RC)
                .map_or(f64::NAN, |(_, r)| r.ohms);
            g.row([
                "RC vs RL".into(),
                code(Ohms(rl)),
                code(Ohms(rc)),
                signed_percent(dr),
            ]);
        }
        if let (Some(gt), Some(dg), Some(ac)) = (s.target.gain, d.gain, &s.ac) {
            g.row([
                "gain".into(),
                trim_number(gt, 3),
                if s.region == "active" {
                    trim_number(ac.gain, 3)
                } else {
                    "none".to_string()
                },
                signed_percent(dg),
            ]);
        }
        g.row([
            "error".to_string(),
            String::new(),
            String::new(),
            format!("{} %", trim_number(s.error * 100.0, 3)),
        ]);
        out.push('\n');
        out.push_str(&g.render("  "));
        out.push_str(&ac_lines(s));
        out.push('\n');
        out.push_str(&checks_table(s, colour));
    }
    for (i, c) in r.circuits.iter().enumerate() {
        if i > 0 || !r.stages.is_empty() {
            out.push('\n');
        }
        out.push_str(&circuit_check(c, colour));
    }
    out.push_str(&cautions(r));
    out
}

/// An error's magnitude as a percentage to three figures; below 0.0005 % (rounding, not a deviation) it
/// is 0 %.
fn error_percent(x: f64) -> String {
    if !x.is_finite() {
        "∞".into()
    } else if x * 100.0 < 0.0005 {
        "0 %".into()
    } else {
        format!("{} %", trim_number(x * 100.0, 3))
    }
}

/// One built circuit: its slots, node voltages, parts at the operating point, targets and checks.
fn circuit_check(c: &super::circuit::CircuitReport, colour: bool) -> String {
    let mut out = format!("circuit \"{}\"\n", c.name);
    let slots: Vec<_> = c
        .parts
        .0
        .iter()
        .filter(|(_, p)| p.network.is_some())
        .collect();
    if !slots.is_empty() {
        let mut g = Grid::new(3);
        g.row(["slot", "network", "parts"]);
        for (name, p) in slots {
            let members = p.parts.as_deref().unwrap_or_default();
            let parts = parts_text(members);
            let network = p.network.clone().unwrap_or_default();
            let shown = match &p.shown {
                Some(v) if members.len() > 1 => format!("{network} = {v}"),
                _ => network,
            };
            g.row([name.clone(), shown, parts]);
        }
        out.push('\n');
        out.push_str(&g.render("  "));
    }

    // Rounding residue (1e-16 V on a node that sits at 0 V) is shown as 0, as a meter would.
    let scale = c.nodes.0.iter().fold(1.0_f64, |m, (_, v)| m.max(v.abs()));
    let clean = |x: f64, floor: f64| if x.abs() < floor { 0.0 } else { x };
    let mut g = Grid::new(1);
    g.row(["node", "from ground"]);
    for (name, v) in &c.nodes.0 {
        g.row([name.clone(), volts(clean(*v, 1e-12 * scale))]);
    }
    out.push('\n');
    out.push_str(&g.render("  "));

    let mut g = Grid::new(3);
    g.row(["part", "kind", "region", "current", "across", "power"]);
    for (name, p) in &c.parts.0 {
        let kind = match p.ohms {
            Some(o) if p.network.is_none() => format!("{} {}", p.kind, code(Ohms(o))),
            _ => p.kind.to_string(),
        };
        g.row([
            name.clone(),
            kind,
            p.region.unwrap_or("").to_string(),
            amps(clean(p.current, 1e-15)),
            volts(clean(p.across, 1e-12 * scale)),
            engineering(clean(p.power, 1e-15), "W"),
        ]);
    }
    out.push('\n');
    out.push_str(&g.render("  "));

    if !c.targets.is_empty() {
        let mut g = Grid::new(1);
        g.row(["at typical", "target", "actual", "deviation"]);
        for t in &c.targets {
            let show = |x: f64| if t.amps { amps(x) } else { volts(x) };
            g.row([
                t.what.clone(),
                show(t.target),
                show(t.actual),
                signed_percent(t.deviation),
            ]);
        }
        g.row([
            "error".to_string(),
            String::new(),
            String::new(),
            error_percent(c.error),
        ]);
        out.push('\n');
        out.push_str(&g.render("  "));
    }
    if let Some(parts) = &c.latch {
        let _ = writeln!(
            out,
            "\n  {} more than one operating point: {} can settle in another region; the circuit may latch",
            verdict(false, colour),
            parts.join(", ")
        );
    }
    if !c.checks.is_empty() {
        out.push('\n');
        out.push_str(&checks_grid(&c.checks, colour));
    }
    out
}

/// The `ideal` report: each slot's ideal resistance with its nearest E12, E24 and E96 values, the targets,
/// and the checks of the ideal values built from the assumed parts.
pub fn render_ideal(r: &Report, colour: bool) -> String {
    let mut out = String::new();
    for (i, s) in r.stages.iter().enumerate() {
        if i > 0 {
            out.push('\n');
        }
        out.push_str(&heading(s));
        out.push_str(&ground_note(s));
        out.push_str(&targets_line(s));
        let mut g = Grid::new(1);
        g.row(["slot", "ideal", "E12", "E24", "E96"]);
        for (slot, sr) in &s.slots.0 {
            let mut cells = vec![
                slot.name().to_string(),
                crate::notation::value::code_with(Ohms(sr.ohms), 4),
            ];
            if let Some(n) = sr.nearest {
                cells.extend([n.e12, n.e24, n.e96].map(|x| code(Ohms(x))));
            }
            g.row(cells);
        }
        out.push('\n');
        out.push_str(&g.render("  "));
        out.push_str(&ac_lines(s));
        let assumed = s
            .slots
            .0
            .first()
            .and_then(|(_, sr)| sr.parts.first())
            .map(|p| {
                format!(
                    " (ideal values as {} {} parts)",
                    crate::units::Tolerance(p.tolerance),
                    engineering(p.power, "W")
                )
            })
            .unwrap_or_default();
        let _ = writeln!(out, "\n  checks{assumed}");
        out.push_str(&checks_table(s, colour));
    }
    out.push_str(&cautions(r));
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::network::parse_network;
    use crate::network::{Member, Network};
    use crate::stage::{parse, Slot, SlotNetworks};
    use crate::units::{Tolerance, Watts};

    /// Compares a rendering with its stored snapshot; `BIASFIT_BLESS=1 cargo test` rewrites the snapshot
    /// after a deliberate change (then read the diff before committing it).
    fn snapshot(name: &str, text: &str) {
        let path = format!("{}/src/report/snapshots/{name}", env!("CARGO_MANIFEST_DIR"));
        if std::env::var_os("BIASFIT_BLESS").is_some() {
            std::fs::write(&path, text).unwrap();
        }
        let stored = std::fs::read_to_string(&path).unwrap_or_default();
        assert_eq!(text, stored, "{name} differs from its snapshot");
    }

    fn nets(pairs: &[(Slot, &str)]) -> SlotNetworks {
        SlotNetworks::from_pairs(
            pairs
                .iter()
                .map(|(s, n)| (*s, parse_network(n, Tolerance(0.05), Watts(0.25)).unwrap())),
        )
    }

    #[test]
    fn check_table_snapshot() {
        let design = parse(
            "line-driver.toml",
            include_str!("../../examples/line-driver.toml"),
        )
        .unwrap();
        let n = nets(&[
            (Slot::R1, "39k"),
            (Slot::R2, "6k8+560"),
            (Slot::RC, "2k7"),
            (Slot::RE, "(470+120)|10k"),
        ]);
        let r = Report::new(vec![StageReport::new(&design.stages[0], &n)]);
        let text = render_check(&r, false);
        snapshot("check-line-driver.txt", &text);
        // Colour only adds escape sequences: the columns still line up.
        let coloured = render_check(&r, true);
        assert!(coloured.contains("\u{1b}[1;31mFAIL"));
        let strip = |s: &str| {
            s.replace("\u{1b}[1;31m", "")
                .replace("\u{1b}[32m", "")
                .replace("\u{1b}[0m", "")
        };
        assert_eq!(strip(&coloured), text);
    }

    #[test]
    fn ideal_table_snapshot() {
        let design = parse(
            "split-emitter.toml",
            include_str!("../../examples/split-emitter.toml"),
        )
        .unwrap();
        let s = &design.stages[0];
        let ideal = s.ideal().unwrap();
        let n = SlotNetworks::from_pairs(ideal.values.iter().map(|(slot, r)| {
            (
                slot,
                Network::Single(Member::loose(r, Tolerance(0.01), Watts(0.25))),
            )
        }));
        let r = Report::new(vec![StageReport::new(s, &n).with_nearest()]);
        snapshot("ideal-split-emitter.txt", &render_ideal(&r, false));
    }

    #[test]
    fn high_voltage_and_hot_parts_print_the_caution() {
        let text = "[[stage]]\ntopology = \"divider\"\nsupply = 60\nload = \"220\"\n\
                    [stage.transistor]\nbeta = [60, 100, 160]\nvbe = 0.7\n";
        let design = parse("hv.toml", text).unwrap();
        let s = &design.stages[0];
        let ideal = s.ideal().unwrap();
        let n = SlotNetworks::from_pairs(ideal.values.iter().map(|(slot, r)| {
            (
                slot,
                Network::Single(Member::loose(r, Tolerance(0.05), Watts(0.25))),
            )
        }));
        let r = Report::new(vec![StageReport::new(s, &n)]);
        let out = render_check(&r, false);
        assert!(
            out.contains("caution: stage \"stage 1\" spans 60 V"),
            "{out}"
        );
        // 27 V across 220 Ω is 3.3 W in RC: far over a quarter-watt part.
        let hot = out
            .lines()
            .find(|l| l.contains("over the derated limit"))
            .unwrap();
        assert!(hot.contains("power RC") && hot.contains("burn"), "{hot}");
    }
}
