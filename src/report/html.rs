//! The build sheet: one self-contained HTML page to build a design from, on screen or printed on A4. It
//! holds, per stage, the schematic, every slot's network with its parts (value, tolerance, rating, drawer)
//! and how to connect them, the operating point against its targets, the checks, the load line and the
//! voltages to expect at the bench; then the pick list for all boards.
//!
//! The page is one file with its style sheet and drawings inline: no script, no font, image or style is
//! fetched, so it opens the same offline, in a mail attachment or from a USB stick. Everything shown is
//! escaped. Relies on [`super::StageReport`] for the numbers and [`super::svg`] for the drawings.

use super::design::PickLine;
use super::svg::{escape, load_line_svg, schematic_svg, LoadLine, Schematic};
use super::table::check_value;
use super::StageReport;
use crate::network::Network;
use crate::notation::{amps, code, engineering, signed_percent, trim_number, volts};
use crate::stage::{Slot, SlotNetworks, Stage};
use crate::units::{Ohms, Tolerance};
use std::collections::BTreeMap;
use std::fmt::Write;

/// One stage of a build sheet: its report, the networks it is built from, and its drawings.
#[derive(Clone, Debug, PartialEq)]
pub struct SheetStage {
    /// The stage object, as `check --json` writes it.
    pub report: StageReport,
    /// The networks in each slot.
    pub networks: SlotNetworks,
    /// How many boards are built this way.
    pub copies: u32,
    /// The schematic.
    pub schematic: Schematic,
    /// The load line (give it a Monte Carlo cloud with [`LoadLine::with_cloud`] if you have one).
    pub load_line: LoadLine,
    /// The slots kept as given: already fitted, so drawn and listed but not pulled from a drawer.
    pub kept: Vec<Slot>,
    /// Figures about the whole stage shown under its heading, where a reader looks first (the Monte Carlo
    /// yield of a spread).
    pub notes: Vec<String>,
}

impl SheetStage {
    /// A stage built from these networks, for `copies` boards.
    pub fn new(stage: &Stage, networks: &SlotNetworks, copies: u32) -> SheetStage {
        SheetStage {
            report: StageReport::new(stage, networks),
            networks: networks.clone(),
            copies,
            schematic: Schematic::of(stage, networks),
            load_line: LoadLine::of(stage, &networks.values()),
            kept: Vec::new(),
            notes: Vec::new(),
        }
    }

    /// Marks slots as kept: already fitted on the board.
    pub fn with_kept(mut self, kept: &[Slot]) -> SheetStage {
        self.report = self.report.with_kept(kept);
        self.kept = kept.to_vec();
        self
    }
}

/// The pick list of builds not drawn from a stock file: every member counted by value, tolerance, rating
/// and drawer, times its copies, sorted by drawer then value.
pub fn pick_list(stages: &[SheetStage]) -> Vec<PickLine> {
    let mut counts: BTreeMap<(Option<String>, u64, u64, u64), u32> = BTreeMap::new();
    for s in stages {
        for (slot, net) in s.networks.iter() {
            // A kept slot is already on the board: nothing to pull.
            if !s.schematic.slots.contains(&slot) || s.kept.contains(&slot) {
                continue;
            }
            for m in net.members() {
                let key = (
                    m.location.clone(),
                    m.ohms.0.to_bits(),
                    m.tolerance.0.to_bits(),
                    m.power.0.to_bits(),
                );
                *counts.entry(key).or_default() += s.copies;
            }
        }
    }
    let mut out: Vec<PickLine> = counts
        .into_iter()
        .map(|((location, ohms, tol, power), count)| PickLine {
            ohms: f64::from_bits(ohms),
            count,
            location,
            tolerance: f64::from_bits(tol),
            power: f64::from_bits(power),
        })
        .collect();
    out.sort_by(|a, b| a.location.cmp(&b.location).then(a.ohms.total_cmp(&b.ohms)));
    out
}

const STYLE: &str = r#"
@page { size: A4; margin: 13mm 12mm 14mm 12mm; }
:root { --ink: #16181d; --muted: #5b6270; --rule: #d5d9e0; --band: #f4f6f9; --ok: #1d7a3a; --bad: #b3261e; --accent: #1f4e9c; }
* { box-sizing: border-box; }
html { background: #e9ecf1; }
body { margin: 0 auto; max-width: 210mm; background: #fff; color: var(--ink);
  font: 10.5pt/1.45 "DejaVu Sans", "Helvetica Neue", Arial, sans-serif; padding: 12mm 12mm 16mm; }
header.sheet { border-bottom: 3px solid var(--accent); padding-bottom: 6px; margin-bottom: 14px; }
h1 { font-size: 20pt; margin: 0; letter-spacing: 0.01em; }
h2 { font-size: 14pt; margin: 0 0 2px; color: var(--accent); }
h2, h3 { break-after: avoid; }
h3 { font-size: 11pt; margin: 14px 0 6px; text-transform: uppercase; letter-spacing: 0.06em; color: var(--muted); }
p { margin: 4px 0; }
.sub, .meta { color: var(--muted); }
.caution { border: 2px solid var(--bad); border-radius: 4px; padding: 6px 10px; margin: 8px 0; background: #fff6f5; }
.caution strong { color: var(--bad); }
table { border-collapse: collapse; width: 100%; margin: 4px 0 6px; font-size: 9.5pt; }
th, td { text-align: left; padding: 4px 6px; border-bottom: 1px solid var(--rule); vertical-align: top; }
th { background: var(--band); font-weight: 600; border-bottom: 1.5px solid #aab1bd; }
td.num, th.num { text-align: right; font-variant-numeric: tabular-nums; white-space: nowrap; }
td.code { font-weight: 700; white-space: nowrap; }
td.box { width: 1.6em; text-align: center; font-size: 12pt; color: var(--muted); }
.ok { color: var(--ok); font-weight: 700; }
.fail { color: var(--bad); font-weight: 700; }
.badge { display: inline-block; padding: 0 6px; border-radius: 9px; font-size: 8.5pt; font-weight: 700; color: #fff; }
.badge.ok { background: var(--ok); color: #fff; }
.badge.fail { background: var(--bad); color: #fff; }
section.stage { margin-top: 18px; }
section.stage + section.stage, section.picks { break-before: page; }
figure { margin: 8px 0; break-inside: avoid; text-align: center; }
figure svg { max-width: 100%; height: auto; }
figcaption { font-size: 8.5pt; color: var(--muted); }
table, tr, .expect { break-inside: avoid; }
.expect { border-left: 4px solid var(--accent); background: var(--band); padding: 6px 10px; margin: 10px 0; }
.parts { margin: 0; padding: 0; list-style: none; }
.parts li { white-space: nowrap; }
.where { color: var(--muted); }
footer { margin-top: 18px; padding-top: 6px; border-top: 1px solid var(--rule); font-size: 8.5pt; color: var(--muted); }
@media print {
  html { background: #fff; }
  body { max-width: none; padding: 0; font-size: 9.5pt; }
  a { color: inherit; text-decoration: none; }
}
"#;

fn e(s: &str) -> String {
    escape(s)
}

/// One cell of the operating-point table, from an operating point.
type OpCell = dyn Fn(&super::OpReport) -> String;

/// How to connect a slot's network, in words a person can solder from.
fn connect(net: &Network) -> String {
    match net {
        Network::Single(_) => "fit as one part".to_string(),
        Network::Series(parts) if parts.iter().all(|p| matches!(p, Network::Single(_))) => format!(
            "{} in series: join end to end, the pair fills the slot",
            parts.len()
        ),
        Network::Parallel(parts) if parts.iter().all(|p| matches!(p, Network::Single(_))) => {
            format!(
                "{} in parallel: side by side, both ends joined",
                parts.len()
            )
        }
        _ => format!(
            "{}: bracketed groups first, then as written (+ in series, | in parallel)",
            net.notation()
        ),
    }
}

fn stage_section(out: &mut String, n: usize, s: &SheetStage) {
    let r = &s.report;
    let all_ok = r.checks.iter().all(|c| c.ok);
    let supply = match r.supply_neg {
        Some(neg) => format!("{} and −{}", volts(r.supply), volts(neg)),
        None => volts(r.supply),
    };
    let _ = write!(
        out,
        "<section class=\"stage\" id=\"stage-{n}\">\n<h2>{n}. {}</h2>\n<p class=\"meta\">{} · {} · supply {}{} · \
         error {} · {}{}</p>\n",
        e(&r.name),
        e(r.topology),
        r.polarity.to_uppercase(),
        supply,
        r.target
            .rc
            .map(|rl| format!(" · load {}", code(Ohms(rl))))
            .unwrap_or_default(),
        trim_number(r.error * 100.0, 3) + " %",
        if all_ok {
            "<span class=\"badge ok\">all checks pass</span>".to_string()
        } else {
            "<span class=\"badge fail\">a check fails</span>".to_string()
        },
        if s.copies > 1 {
            format!(" · {} boards", s.copies)
        } else {
            String::new()
        }
    );
    for n in &s.notes {
        let _ = writeln!(
            out,
            "<p class=\"meta headline\"><strong>{}</strong></p>",
            e(n)
        );
    }
    let note = super::table::ground_note(r);
    if !note.is_empty() {
        let _ = writeln!(
            out,
            "<p class=\"meta\">{}</p>",
            e(note.trim().trim_matches(['(', ')']))
        );
    }
    let _ = writeln!(
        out,
        "<figure>{}<figcaption>Schematic: each slot drawn as the network it is built from.</figcaption></figure>",
        schematic_svg(&s.schematic)
    );

    out.push_str(
        "<h3>Build</h3>\n<table class=\"build\"><thead><tr><th></th><th>Slot</th><th>Network</th><th \
         class=\"num\">Value</th><th>Parts</th><th>How to connect</th></tr></thead><tbody>\n",
    );
    for slot in &s.schematic.slots {
        let Some(net) = s.networks.get(*slot) else {
            let _ = writeln!(
                out,
                "<tr><td class=\"box\">☐</td><td class=\"code\">{slot}</td><td colspan=\"4\" class=\"fail\">not \
                 given</td></tr>"
            );
            continue;
        };
        let parts: String = net
            .members()
            .iter()
            .map(|m| {
                format!(
                    "<li><strong>{}</strong> {} {}{}</li>",
                    code(m.ohms),
                    m.tolerance,
                    engineering(m.power.0, "W"),
                    match m.location.as_deref() {
                        Some(crate::stock::TO_BUY) =>
                            " <span class=\"where\">(to buy)</span>".to_string(),
                        Some(l) => format!(" <span class=\"where\">· {}</span>", e(l)),
                        None => String::new(),
                    }
                )
            })
            .collect();
        let (lo, hi) = net.band();
        let parts = if s.kept.contains(slot) {
            format!(
                "<li class=\"kept\"><strong>already fitted</strong> (kept as given)</li>{parts}"
            )
        } else {
            parts
        };
        let _ = writeln!(
            out,
            "<tr><td class=\"box\">{}</td><td class=\"code\">{slot}</td><td class=\"code\">{}</td><td \
             class=\"num\">{}<br><span class=\"where\">{} … {}</span></td><td><ul \
             class=\"parts\">{parts}</ul></td><td>{}</td></tr>",
            if s.kept.contains(slot) { "✓" } else { "☐" },
            e(&net.notation()),
            net.value_code(),
            signed_percent(lo),
            signed_percent(hi),
            e(&connect(net)),
        );
    }
    out.push_str("</tbody></table>\n");

    // Target against actual, and the operating point over the beta range.
    let t = &r.target;
    let d = &r.deviations;
    out.push_str(
        "<h3>Operating point</h3>\n<table><thead><tr><th>at typical beta</th><th class=\"num\">target</th><th \
         class=\"num\">built</th><th class=\"num\">deviation</th></tr></thead><tbody>\n",
    );
    let mut row = |name: &str, target: String, actual: String, dev: Option<f64>| {
        let _ = writeln!(
            out,
            "<tr><td>{name}</td><td class=\"num\">{target}</td><td class=\"num\">{actual}</td><td \
             class=\"num\">{}</td></tr>",
            dev.map(signed_percent).unwrap_or_default()
        );
    };
    row("IC", amps(t.ic), amps(r.op.ic), Some(d.ic));
    row("VCE", volts(t.vce), volts(r.op.vce), Some(d.vce));
    row(
        "VE",
        volts(r.nodes.target_ve),
        volts(r.nodes.typical.ve),
        d.ve.map(|d| super::table::real_sign(r, d)),
    );
    if let (Some(rl), Some(dr)) = (t.rc, d.rc) {
        let rc = s.networks.get(Slot::RC).map_or(f64::NAN, |n| n.ohms().0);
        row("RC against RL", code(Ohms(rl)), code(Ohms(rc)), Some(dr));
    }
    if let (Some(g), Some(dg), Some(ac)) = (t.gain, d.gain, &r.ac) {
        let shown = if r.region == "active" {
            trim_number(ac.gain, 3)
        } else {
            "none".to_string()
        };
        row("gain", trim_number(g, 3), shown, Some(dg));
    }
    out.push_str("</tbody></table>\n");

    let shown = super::table::shown_ops(r);
    let ops = [&shown[0], &shown[1], &shown[2]];
    out.push_str("<table><thead><tr><th>over the beta range</th>");
    for (label, o) in ["min", "typical", "max"].iter().zip(ops) {
        let _ = write!(
            out,
            "<th class=\"num\">{label} β {}</th>",
            trim_number(o.beta, 4)
        );
    }
    out.push_str("</tr></thead><tbody>\n");
    let lines: [(&str, &OpCell); 7] = [
        ("region", &|o| o.region.to_string()),
        ("IB", &|o| amps(o.ib)),
        ("IC", &|o| amps(o.ic)),
        ("VB", &|o| volts(o.vb)),
        ("VE", &|o| volts(o.ve)),
        ("VC", &|o| volts(o.vc)),
        ("VCE", &|o| volts(o.vce)),
    ];
    for (name, f) in lines {
        let _ = write!(out, "<tr><td>{name}</td>");
        for o in ops {
            let _ = write!(out, "<td class=\"num\">{}</td>", f(o));
        }
        out.push_str("</tr>\n");
    }
    out.push_str("</tbody></table>\n");

    out.push_str(
        "<h3>Checks</h3>\n<table><thead><tr><th>check</th><th class=\"num\">value</th><th \
         class=\"num\">limit</th><th></th></tr></thead><tbody>\n",
    );
    for c in &r.checks {
        let sense = if c.at_least { "≥" } else { "≤" };
        let _ = writeln!(
            out,
            "<tr><td>{}</td><td class=\"num\">{}</td><td class=\"num\">{sense} {}</td><td \
             class=\"{}\">{}</td></tr>",
            e(&c.name),
            e(&check_value(c, c.value)),
            e(&check_value(c, c.limit)),
            if c.ok { "ok" } else { "fail" },
            if c.ok { "ok" } else { "FAIL" }
        );
    }
    out.push_str("</tbody></table>\n");

    let _ = writeln!(
        out,
        "<figure>{}<figcaption>DC load line: the Q point at min, typical and max beta.</figcaption></figure>",
        load_line_svg(&s.load_line)
    );

    let o = &r.nodes.typical;
    let (lo, hi) = (&r.nodes.min_beta, &r.nodes.max_beta);
    let range = |a: f64, b: f64| format!("{} to {}", volts(a.min(b)), volts(a.max(b)));
    let _ = writeln!(
        out,
        "<div class=\"expect\"><strong>At the bench</strong>, measured from ground with power on, expect VB {} \
         ({}), VE {} ({}), VC {} ({}) at typical beta (min to max beta in brackets). Within 5 % is good, within \
         10 % acceptable; beyond that, <code>biasfit verify</code> with your readings ranks the likely build \
         faults.</div>\n</section>",
        volts(o.vb),
        range(lo.vb, hi.vb),
        volts(o.ve),
        range(lo.ve, hi.ve),
        volts(o.vc),
        range(lo.vc, hi.vc),
    );
}

/// The generator tag every build sheet carries, by which biasfit knows a file it wrote before.
pub const GENERATOR: &str = "<meta name=\"generator\" content=\"biasfit\">";

/// The whole build sheet: a title, the cautions that apply, each stage, and the pick list.
pub fn build_sheet(
    title: &str,
    stages: &[SheetStage],
    pick: &[PickLine],
    cautions: &[String],
) -> String {
    let mut out = String::new();
    let _ = write!(
        out,
        "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n{GENERATOR}\n<meta name=\"viewport\" \
         content=\"width=device-width, initial-scale=1\">\n<title>Build sheet: {}</title>\n<style>{STYLE}</style>\n\
         </head>\n<body>\n<header class=\"sheet\"><h1>Build sheet</h1><p class=\"sub\">{} · {} stage{} · made \
         by biasfit {}</p></header>\n",
        e(title),
        e(title),
        stages.len(),
        if stages.len() == 1 { "" } else { "s" },
        env!("CARGO_PKG_VERSION"),
    );
    for c in cautions {
        let _ = writeln!(
            out,
            "<p class=\"caution\"><strong>Caution.</strong> {}</p>",
            e(c)
        );
    }
    if stages.len() > 1 {
        out.push_str(
            "<table><thead><tr><th>stage</th><th>topology</th><th class=\"num\">error</th><th \
             class=\"num\">boards</th><th>checks</th></tr></thead><tbody>\n",
        );
        for (i, s) in stages.iter().enumerate() {
            let ok = s.report.checks.iter().all(|c| c.ok);
            let _ = writeln!(
                out,
                "<tr><td><a href=\"#stage-{}\">{}. {}</a></td><td>{}</td><td class=\"num\">{} %</td><td \
                 class=\"num\">{}</td><td class=\"{}\">{}</td></tr>",
                i + 1,
                i + 1,
                e(&s.report.name),
                e(s.report.topology),
                trim_number(s.report.error * 100.0, 3),
                s.copies,
                if ok { "ok" } else { "fail" },
                if ok { "all pass" } else { "a check fails" }
            );
        }
        out.push_str("</tbody></table>\n");
    }
    for (i, s) in stages.iter().enumerate() {
        stage_section(&mut out, i + 1, s);
    }

    let pieces: u32 = pick.iter().map(|p| p.count).sum();
    let _ = writeln!(
        out,
        "<section class=\"picks\"><h2>Pick list</h2>\n<p class=\"meta\">{pieces} piece{} in {} line{}, by \
         drawer; tick each as you pull it.</p>",
        if pieces == 1 { "" } else { "s" },
        pick.len(),
        if pick.len() == 1 { "" } else { "s" },
    );
    out.push_str(
        "<table><thead><tr><th></th><th>drawer</th><th class=\"num\">value</th><th \
         class=\"num\">tolerance</th><th class=\"num\">rating</th><th class=\"num\">count</th></tr></thead><tbody>\n",
    );
    for p in pick {
        let _ = writeln!(
            out,
            "<tr><td class=\"box\">☐</td><td>{}</td><td class=\"num code\">{}</td><td class=\"num\">{}</td><td \
             class=\"num\">{}</td><td class=\"num\">{}</td></tr>",
            p.location.as_deref().map(e).unwrap_or_else(|| "—".to_string()),
            code(Ohms(p.ohms)),
            Tolerance(p.tolerance),
            engineering(p.power, "W"),
            p.count
        );
    }
    out.push_str("</tbody></table>\n");
    let kept: Vec<String> = stages
        .iter()
        .flat_map(|s| {
            s.kept.iter().filter_map(move |slot| {
                s.networks.get(*slot).map(|n| {
                    if stages.len() > 1 {
                        format!("{} {slot} = {}", s.report.name, n.notation())
                    } else {
                        format!("{slot} = {}", n.notation())
                    }
                })
            })
        })
        .collect();
    if !kept.is_empty() {
        let _ = writeln!(
            out,
            "<p class=\"meta kept\">Already fitted (kept as given, not pulled): {}</p>",
            e(&kept.join(", "))
        );
    }
    out.push_str("</section>\n");
    out.push_str(FOOTER);
    out.push_str("</body>\n</html>\n");
    out
}

/// The safety note at the foot of every build sheet.
const FOOTER: &str = "<footer>biasfit does arithmetic; it does not make a circuit safe. Parts run near their rating get hot; \
     supplies of 50 V DC or more, and anything mains-powered, are for people trained and licensed for them. \
     Follow your local electrical codes.</footer>\n";

/// The build sheet of a circuit of the user's own: the parts to fit, the readings to expect from real
/// ground, every part at the operating point, the targets and the checks, as plain tables.
pub fn circuit_sheet(
    title: &str,
    c: &super::circuit::CircuitReport,
    cautions: &[String],
) -> String {
    let mut out = String::new();
    let all_ok = c.all_ok();
    let _ = write!(
        out,
        "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n{GENERATOR}\n<meta name=\"viewport\" \
         content=\"width=device-width, initial-scale=1\">\n<title>Build sheet: {}</title>\n<style>{STYLE}</style>\n\
         </head>\n<body>\n<header class=\"sheet\"><h1>Build sheet</h1><p class=\"sub\">{} · circuit · made by \
         biasfit {}</p></header>\n",
        e(title),
        e(title),
        env!("CARGO_PKG_VERSION"),
    );
    for k in cautions {
        let _ = writeln!(
            out,
            "<p class=\"caution\"><strong>Caution.</strong> {}</p>",
            e(k)
        );
    }
    let _ = writeln!(
        out,
        "<section class=\"stage\" id=\"circuit\">\n<h2>{}</h2>\n<p class=\"meta\">error {} · {}</p>",
        e(&c.name),
        trim_number(c.error * 100.0, 3) + " %",
        if all_ok {
            "<span class=\"badge ok\">all checks pass</span>"
        } else {
            "<span class=\"badge fail\">a check fails</span>"
        }
    );
    out.push_str(
        "<h3>Parts to fit</h3>\n<p class=\"meta\">every part of the circuit, where it goes; tick each as you fit \
         it</p>\n<table><thead><tr><th></th><th>part</th><th>kind</th><th>value or network</th><th>parts</th>\
         <th>connects</th></tr></thead><tbody>\n",
    );
    for (name, p) in &c.parts.0 {
        let members = p
            .parts
            .as_deref()
            .unwrap_or_default()
            .iter()
            .map(|m| {
                let at = m
                    .location
                    .as_deref()
                    .map(|l| format!(" @{}", e(l)))
                    .unwrap_or_default();
                format!(
                    "{} {} {}{at}",
                    code(Ohms(m.ohms)),
                    crate::units::Tolerance(m.tolerance),
                    crate::notation::engineering(m.power, "W")
                )
            })
            .collect::<Vec<_>>()
            .join(", ");
        let value = match (&p.network, p.ohms) {
            (Some(n), _) => e(n),
            (None, Some(o)) => code(Ohms(o)),
            _ => String::new(),
        };
        let kind = if p.network.is_some() {
            "slot (from stock)".to_string()
        } else {
            e(p.kind)
        };
        let _ = writeln!(
            out,
            "<tr><td class=\"box\">☐</td><td class=\"code\">{}</td><td>{kind}</td><td class=\"code\">{value}</td>\
             <td>{members}</td><td>{}</td></tr>",
            e(name),
            e(&p.connects.join(" – "))
        );
    }
    out.push_str("</tbody></table>\n");
    out.push_str(
        "<h3>Expected readings</h3>\n<p class=\"meta\">volts from ground, as a meter reads them, at typical \
         parameters</p>\n<table><thead><tr><th>node</th><th class=\"num\">from ground</th><th>measured</th></tr>\
         </thead><tbody>\n",
    );
    for (n, v) in &c.nodes.0 {
        let _ = writeln!(
            out,
            "<tr><td>{}</td><td class=\"num\">{}</td><td></td></tr>",
            e(n),
            volts(*v)
        );
    }
    out.push_str("</tbody></table>\n");
    out.push_str(
        "<h3>Parts at the operating point</h3>\n<table><thead><tr><th>part</th><th>kind</th><th>region</th>\
         <th class=\"num\">current</th><th class=\"num\">across</th><th class=\"num\">power</th></tr></thead><tbody>\n",
    );
    for (n, p) in &c.parts.0 {
        let _ = writeln!(
            out,
            "<tr><td>{}</td><td>{}</td><td>{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td><td \
             class=\"num\">{}</td></tr>",
            e(n),
            e(p.kind),
            e(p.region.unwrap_or("")),
            amps(p.current),
            volts(p.across),
            crate::notation::engineering(p.power, "W")
        );
    }
    out.push_str("</tbody></table>\n");
    if !c.targets.is_empty() {
        out.push_str(
            "<h3>Targets</h3>\n<table><thead><tr><th>target</th><th class=\"num\">aim</th><th \
             class=\"num\">actual</th><th class=\"num\">deviation</th></tr></thead><tbody>\n",
        );
        for t in &c.targets {
            let show = |x: f64| if t.amps { amps(x) } else { volts(x) };
            let _ = writeln!(
                out,
                "<tr><td>{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td></tr>",
                e(&t.what),
                show(t.target),
                show(t.actual),
                signed_percent(t.deviation)
            );
        }
        out.push_str("</tbody></table>\n");
    }
    if let Some(parts) = &c.latch {
        let _ = writeln!(
            out,
            "<p class=\"caution\"><strong>More than one operating point.</strong> {} can settle in another \
             region; the circuit may latch.</p>",
            e(&parts.join(", "))
        );
    }
    out.push_str(
        "<h3>Checks</h3>\n<table><thead><tr><th>check</th><th class=\"num\">value</th><th \
         class=\"num\">limit</th><th></th></tr></thead><tbody>\n",
    );
    for k in &c.checks {
        let limit = if k.unit == crate::stage::CheckUnit::Flag {
            "required".to_string()
        } else {
            format!(
                "{} {}",
                if k.at_least { "≥" } else { "≤" },
                check_value(k, k.limit)
            )
        };
        let _ = writeln!(
            out,
            "<tr><td>{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td><td class=\"{}\">{}</td></tr>",
            e(&k.name),
            e(&check_value(k, k.value)),
            e(&limit),
            if k.ok { "ok" } else { "fail" },
            if k.ok { "ok" } else { "FAIL" }
        );
    }
    out.push_str("</tbody></table>\n</section>\n");
    out.push_str(FOOTER);
    out.push_str("</body>\n</html>\n");
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::network::Member;
    use crate::stage::parse;
    use crate::units::Watts;

    fn part(ohms: f64, location: &str) -> Network {
        let mut m = Member::loose(Ohms(ohms), Tolerance(0.05), Watts(0.25));
        m.location = Some(location.to_string());
        Network::Single(m)
    }

    fn sheet_stage(copies: u32) -> SheetStage {
        let st = parse(
            "s.toml",
            "[[stage]]\nname = \"tone <stage> & co\"\ntopology = \"divider\"\npolarity = \"npn\"\nsupply = 15\n\
             load = \"3k9\"\n[stage.transistor]\nbeta = [90, 160, 320]\nvbe = 0.62\nvce_sat = 0.15\n",
        )
        .unwrap()
        .stages
        .remove(0);
        let nets = SlotNetworks::from_pairs([
            (
                Slot::R1,
                Network::Series(vec![part(56e3, "A1"), part(6.8e3, "A2")]),
            ),
            (
                Slot::R2,
                Network::Parallel(vec![part(12e3, "B1"), part(150e3, "B2")]),
            ),
            (Slot::RC, part(3.9e3, "C1")),
            (Slot::RE, part(820.0, "A1")),
        ]);
        SheetStage::new(&st, &nets, copies)
    }

    #[test]
    fn pick_list_counts_members_times_boards() {
        let s = sheet_stage(3);
        let p = pick_list(std::slice::from_ref(&s));
        // Six parts, each once per board; A1 holds two values (56k and 820R), sorted by drawer then value.
        assert_eq!(p.len(), 6);
        assert!(p.iter().all(|l| l.count == 3));
        assert_eq!(p[0].location.as_deref(), Some("A1"));
        assert_eq!(p[0].ohms, 820.0);
        assert_eq!(p[1].ohms, 56e3);
    }

    #[test]
    fn the_page_holds_every_part_escaped_and_no_fetches() {
        let s = sheet_stage(1);
        let pick = pick_list(std::slice::from_ref(&s));
        let html = build_sheet(
            "bench <demo>",
            std::slice::from_ref(&s),
            &pick,
            &["hot & high".into()],
        );
        assert!(html.contains("@page { size: A4;"));
        assert!(html.contains("tone &lt;stage&gt; &amp; co"));
        assert!(!html.contains("<stage>"));
        assert!(html.contains("hot &amp; high"));
        for v in [
            "56k", "6k8", "12k", "150k", "3k9", "820R", "56k+6k8", "12k|150k",
        ] {
            assert!(html.contains(v), "{v}");
        }
        for fetch in ["<script", "src=", "href=\"http", "@import", "url("] {
            assert!(!html.contains(fetch), "{fetch}");
        }
        // The drawings are inline.
        assert_eq!(html.matches("<svg ").count(), 2);
    }
}
