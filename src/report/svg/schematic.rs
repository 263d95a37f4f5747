//! The stage's schematic, in the symbols of IEC 60617: a resistor is a plain rectangle (not the zigzag), the
//! transistor a circle with base bar, collector and an arrowed emitter (pointing out for NPN, in for PNP),
//! ground the three falling bars. Each slot is drawn as the network it is built from: series members one
//! above the other, parallel members side by side between two bus bars, each labelled with its IEC 60062
//! code, tolerance and drawer, so the drawing is the build instruction.
//!
//! Every topology uses the same frame: the collector-side rail along the top, the emitter-side rail along the
//! bottom, the base side on the left and the collector and emitter side on the right. A PNP stage is drawn in
//! the same frame, its arrow pointing in; the rails carry the voltages the design file gives them from real
//! ground, with their signs, and the ground symbol sits on whichever rail is 0 V (the collector-side rail
//! along the top for a PNP hanging from a positive rail).

use super::{text_width, Anchor, Canvas};
use crate::network::{Member, Network};
use crate::notation::{code, engineering};
use crate::stage::{Ground, Polarity, Slot, SlotNetworks, Stage, Topology};
use crate::units::Volts;

/// What the schematic shows: the stage's shape, rails and the network built in each slot.
#[derive(Clone, Debug, PartialEq)]
pub struct Schematic {
    /// The stage's name, for the title.
    pub name: String,
    /// How the stage is biased.
    pub topology: Topology,
    /// NPN or PNP.
    pub polarity: Polarity,
    /// The collector-side rail's magnitude.
    pub supply: Volts,
    /// The emitter-side rail's magnitude (dual supply).
    pub supply_neg: Option<Volts>,
    /// The slots the stage has, in report order.
    pub slots: Vec<Slot>,
    /// Which side of the stage is ground.
    pub ground: Ground,
    /// The collector-side (top) rail, from real ground, signed.
    pub collector_rail: Volts,
    /// The emitter-side (bottom) rail, from real ground, signed.
    pub emitter_rail: Volts,
    /// The network built in each slot (a slot without one is drawn as a dashed, empty place).
    pub networks: SlotNetworks,
}

impl Schematic {
    /// The schematic of a stage built from these networks.
    pub fn of(stage: &Stage, networks: &SlotNetworks) -> Schematic {
        Schematic {
            name: stage.name.clone(),
            topology: stage.topology,
            polarity: stage.polarity,
            supply: stage.supply,
            supply_neg: stage.supply_neg,
            slots: stage.slots(),
            ground: stage.ground,
            collector_rail: stage.collector_rail(),
            emitter_rail: stage.emitter_rail(),
            networks: networks.clone(),
        }
    }
}

const STYLE: &str = "\
.wire{stroke:#111;stroke-width:1.6;fill:none;stroke-linecap:round}\
.body{stroke:#111;stroke-width:1.6;fill:#fff}\
.empty{stroke:#888;stroke-width:1.2;fill:#fff;stroke-dasharray:4 3}\
.dot{fill:#111;stroke:none}\
.term{stroke:#111;stroke-width:1.4;fill:#fff}\
.arrow{fill:#111;stroke:#111;stroke-width:1}\
.slot{font-size:14px;font-weight:bold;fill:#111}\
.total{font-size:11px;fill:#333}\
.value{font-size:12px;font-weight:bold;fill:#111}\
.where{font-size:10px;fill:#555}\
.rail{font-size:12px;font-weight:bold;fill:#111}\
.title{font-size:15px;font-weight:bold;fill:#111}\
.note{font-size:11px;fill:#555}";

/// Drawing sizes, in pixels.
const BODY_W: f64 = 14.0;
const BODY_H: f64 = 36.0;
const LEAD: f64 = 12.0;
const BUS: f64 = 10.0;
const BRANCH_GAP: f64 = 12.0;
/// Free wire above and below a network inside its span.
const PAD: f64 = 14.0;
const VALUE_SIZE: f64 = 12.0;
const WHERE_SIZE: f64 = 10.0;

/// The size of a drawn network: width, height, and where its wire enters (from the left edge).
#[derive(Clone, Copy, Debug, PartialEq)]
struct Size {
    w: f64,
    h: f64,
    wire: f64,
}

fn member_note(m: &Member) -> String {
    match &m.location {
        Some(l) if !l.trim().is_empty() => format!("{} · {}", m.tolerance, l.trim()),
        _ => m.tolerance.to_string(),
    }
}

fn size(net: &Network) -> Size {
    match net {
        Network::Single(m) => {
            let label =
                text_width(&code(m.ohms), VALUE_SIZE).max(text_width(&member_note(m), WHERE_SIZE));
            Size {
                w: BODY_W + 6.0 + label + 4.0,
                h: LEAD * 2.0 + BODY_H,
                wire: BODY_W / 2.0,
            }
        }
        Network::Series(parts) => {
            let sizes: Vec<Size> = parts.iter().map(size).collect();
            let wire = sizes.iter().map(|s| s.wire).fold(0.0, f64::max);
            let right = sizes.iter().map(|s| s.w - s.wire).fold(0.0, f64::max);
            Size {
                w: wire + right,
                h: sizes.iter().map(|s| s.h).sum(),
                wire,
            }
        }
        Network::Parallel(parts) => {
            let sizes: Vec<Size> = parts.iter().map(size).collect();
            let w = sizes.iter().map(|s| s.w).sum::<f64>()
                + BRANCH_GAP * (sizes.len().max(1) - 1) as f64;
            Size {
                w,
                h: sizes.iter().map(|s| s.h).fold(0.0, f64::max) + 2.0 * BUS,
                wire: sizes.first().map_or(0.0, |s| s.wire),
            }
        }
    }
}

/// Draws a network with its wire entering at (x, y) and leaving at (x, y + height).
fn draw(c: &mut Canvas, net: &Network, x: f64, y: f64) {
    match net {
        Network::Single(m) => {
            c.line(x, y, x, y + LEAD, "wire");
            c.rect(x - BODY_W / 2.0, y + LEAD, BODY_W, BODY_H, "body");
            c.line(x, y + LEAD + BODY_H, x, y + 2.0 * LEAD + BODY_H, "wire");
            let lx = x + BODY_W / 2.0 + 6.0;
            let mid = y + LEAD + BODY_H / 2.0;
            c.text(lx, mid - 1.0, Anchor::Start, "value", &code(m.ohms));
            c.text(lx, mid + 12.0, Anchor::Start, "where", &member_note(m));
        }
        Network::Series(parts) => {
            let mut y = y;
            for p in parts {
                draw(c, p, x, y);
                y += size(p).h;
            }
        }
        Network::Parallel(parts) => {
            let total = size(net);
            let sizes: Vec<Size> = parts.iter().map(size).collect();
            // Branch wires, left to right; the first one is the network's own wire.
            let mut left = x - total.wire;
            let mut wires = Vec::new();
            for s in &sizes {
                wires.push(left + s.wire);
                left += s.w + BRANCH_GAP;
            }
            let top = y;
            let bottom = y + total.h;
            let (first, last) = (wires[0], *wires.last().unwrap_or(&wires[0]));
            c.line(first, top, last, top, "wire");
            c.line(first, bottom, last, bottom, "wire");
            c.circle(first, top, 2.5, "dot");
            c.circle(first, bottom, 2.5, "dot");
            for ((p, s), wx) in parts.iter().zip(&sizes).zip(&wires) {
                c.line(*wx, top, *wx, top + BUS, "wire");
                draw(c, p, *wx, top + BUS);
                // A shorter branch is wired down to the bottom bus.
                c.line(*wx, top + BUS + s.h, *wx, bottom, "wire");
            }
        }
    }
}

/// What sits in a slot's place: its network, or nothing yet.
fn slot_size(n: Option<&Network>) -> Size {
    n.map_or(
        Size {
            w: BODY_W + 60.0,
            h: LEAD * 2.0 + BODY_H,
            wire: BODY_W / 2.0,
        },
        size,
    )
}

/// How much vertical span a slot needs.
fn span(n: Option<&Network>) -> f64 {
    slot_size(n).h + 2.0 * PAD
}

/// The horizontal room a slot's name and total take left of its wire.
fn name_room(slot: Slot, n: Option<&Network>) -> f64 {
    let total = n
        .filter(|n| n.part_count() > 1)
        .map_or(0.0, |n| text_width(&format!("= {}", code(n.ohms())), 11.0));
    text_width(slot.name(), 14.0).max(total) + 10.0
}

/// Draws a slot between (x, top) and (x, bottom): the network centred, wire above and below, and the slot
/// name with the network's total on its left.
fn draw_slot(c: &mut Canvas, slot: Slot, n: Option<&Network>, x: f64, top: f64, bottom: f64) {
    let s = slot_size(n);
    let y0 = top + ((bottom - top) - s.h) / 2.0;
    c.line(x, top, x, y0, "wire");
    c.line(x, y0 + s.h, x, bottom, "wire");
    c.group("slot", slot.name());
    match n {
        Some(net) => draw(c, net, x, y0),
        None => {
            c.line(x, y0, x, y0 + LEAD, "wire");
            c.rect(x - BODY_W / 2.0, y0 + LEAD, BODY_W, BODY_H, "empty");
            c.line(x, y0 + LEAD + BODY_H, x, y0 + s.h, "wire");
            c.text(
                x + BODY_W,
                y0 + s.h / 2.0 + 4.0,
                Anchor::Start,
                "where",
                "not given",
            );
        }
    }
    let mid = y0 + s.h / 2.0;
    c.text(x - 10.0, mid + 1.0, Anchor::End, "slot", slot.name());
    if let Some(net) = n.filter(|n| n.part_count() > 1) {
        c.text(
            x - 10.0,
            mid + 15.0,
            Anchor::End,
            "total",
            &format!("= {}", code(net.ohms())),
        );
    }
    c.end_group();
}

fn ground(c: &mut Canvas, x: f64, y: f64) {
    c.line(x, y, x, y + 8.0, "wire");
    c.line(x - 11.0, y + 8.0, x + 11.0, y + 8.0, "wire");
    c.line(x - 7.0, y + 12.0, x + 7.0, y + 12.0, "wire");
    c.line(x - 3.0, y + 16.0, x + 3.0, y + 16.0, "wire");
}

fn terminal(c: &mut Canvas, x: f64, y: f64, label: &str, anchor: Anchor) {
    c.circle(x, y, 3.5, "term");
    if !label.is_empty() {
        let dx = if anchor == Anchor::End { -7.0 } else { 7.0 };
        c.text(x + dx, y + 4.0, anchor, "note", label);
    }
}

/// The transistor with its base bar at (bx, by): the base lead comes in from the left, the collector leaves
/// upward and the emitter downward at x = bx + 14. Returns (collector top y, emitter bottom y) of the leads
/// inside the circle.
fn transistor(c: &mut Canvas, bx: f64, by: f64, polarity: Polarity) -> (f64, f64) {
    let lead_x = bx + 14.0;
    c.circle(bx + 6.0, by, 22.0, "body");
    c.line(bx, by - 11.0, bx, by + 11.0, "wire");
    c.line(bx - 18.0, by, bx, by, "wire");
    // Collector: from the bar up-right to the lead.
    c.line(bx, by - 5.0, lead_x, by - 14.0, "wire");
    c.line(lead_x, by - 14.0, lead_x, by - 22.0, "wire");
    // Emitter: from the bar down-right, arrowed.
    let (ex0, ey0, ex1, ey1) = (bx, by + 5.0, lead_x, by + 14.0);
    c.line(ex0, ey0, ex1, ey1, "wire");
    c.line(lead_x, by + 14.0, lead_x, by + 22.0, "wire");
    let (dx, dy) = (ex1 - ex0, ey1 - ey0);
    let len = (dx * dx + dy * dy).sqrt();
    let (ux, uy) = (dx / len, dy / len);
    // The arrow points along the current: out along the emitter for NPN, in towards the bar for PNP.
    let (tip, dir) = match polarity {
        Polarity::Npn => (0.9, 1.0),
        Polarity::Pnp => (0.25, -1.0),
    };
    let (tx, ty) = (ex0 + dx * tip, ey0 + dy * tip);
    let (bx0, by0) = (tx - dir * ux * 8.0, ty - dir * uy * 8.0);
    let (px, py) = (-uy * 4.0, ux * 4.0);
    c.polygon(
        &[(tx, ty), (bx0 + px, by0 + py), (bx0 - px, by0 - py)],
        "arrow",
    );
    (by - 22.0, by + 22.0)
}

fn rail_label(signed: f64) -> String {
    if signed > 0.0 {
        format!("+{}", engineering(signed, "V"))
    } else if signed == 0.0 {
        "0 V".to_string()
    } else {
        engineering(signed, "V")
    }
}

/// The schematic as a standalone SVG document.
pub fn render(s: &Schematic) -> String {
    let net = |slot: Slot| s.networks.get(slot);
    let has = |slot: Slot| s.slots.contains(&slot);
    let top_pad = 84.0;
    let y_top = top_pad;

    // The left (base-side) column: what hangs from the base.
    let (left_up, left_down): (Option<Slot>, Option<Slot>) = match s.topology {
        Topology::Divider | Topology::DividerSplit => (Some(Slot::R1), Some(Slot::R2)),
        Topology::BaseResistor => (Some(Slot::RB), None),
        Topology::CollectorFeedback => (Some(Slot::RB), None),
        Topology::DualSupply => (None, Some(Slot::RB)),
    };
    // The right (collector and emitter) column, top to bottom below the emitter.
    let emitter_slots: Vec<Slot> = match s.topology {
        Topology::DividerSplit => vec![Slot::RE1, Slot::RE2],
        _ if has(Slot::RE) => vec![Slot::RE],
        _ => vec![],
    };

    // Vertical positions: the base level is far enough below the top rail for the upper slots, and for
    // the collector lead plus RC; the bottom rail far enough below for the lower slots.
    let feedback = s.topology == Topology::CollectorFeedback;
    let rc_span = span(net(Slot::RC));
    let above_base = {
        let mut need = rc_span + 22.0 + 8.0;
        if let Some(up) = left_up {
            if feedback {
                // RB runs from the collector node down to the base level.
                need = need.max(rc_span + span(net(up)));
            } else {
                need = need.max(span(net(up)));
            }
        }
        need
    };
    let y_base = y_top + above_base;
    let y_coll = y_base - 22.0 - 8.0;
    let y_coll = if feedback {
        y_coll.min(y_base - span(net(Slot::RB)))
    } else {
        y_coll
    };
    let y_emit = y_base + 22.0 + 8.0;
    let emit_need: f64 = emitter_slots.iter().map(|sl| span(net(*sl))).sum();
    let mut below_base = 22.0 + 8.0 + emit_need.max(10.0);
    let dual = s.topology == Topology::DualSupply;
    if let Some(down) = left_down {
        let extra = if dual { 40.0 } else { 0.0 };
        below_base = below_base.max(span(net(down)) + extra);
    }
    let y_bot = y_base + below_base;

    // Horizontal positions.
    let left_slots: Vec<Slot> = [left_up, left_down].into_iter().flatten().collect();
    let left_name = left_slots
        .iter()
        .map(|sl| name_room(*sl, net(*sl)))
        .fold(40.0, f64::max);
    let left_right = left_slots
        .iter()
        .map(|sl| {
            let z = slot_size(net(*sl));
            z.w - z.wire
        })
        .fold(0.0, f64::max);
    let x_left = 24.0 + left_name;
    let x_bar = (x_left + left_right + 40.0).max(x_left + 90.0);
    let x_right = x_bar + 14.0;
    let right_slots: Vec<Slot> = std::iter::once(Slot::RC)
        .chain(emitter_slots.iter().copied())
        .collect();
    let right_right = right_slots
        .iter()
        .map(|sl| {
            let z = slot_size(net(*sl));
            z.w - z.wire
        })
        .fold(60.0, f64::max);
    let cap_x = x_right + right_right + 30.0;
    let split = s.topology == Topology::DividerSplit;
    const NOTE: &str = "resistors as IEC 60617 rectangles; values in the IEC 60062 code, with tolerance and drawer";
    let width = if split {
        cap_x + 24.0 + text_width("bypass, your choice", 10.0)
    } else {
        x_right + right_right + 70.0
    }
    .max(32.0 + text_width(NOTE, 11.0));
    let height = y_bot + 70.0;

    let mut c = Canvas::new(width, height);
    let title = format!(
        "{}: {} {}",
        s.name,
        s.topology,
        s.polarity.name().to_uppercase()
    );
    c.text(16.0, 24.0, Anchor::Start, "title", &title);
    c.text(16.0, 44.0, Anchor::Start, "note", NOTE);

    // Rails.
    c.line(16.0, y_top, width - 16.0, y_top, "wire");
    c.text(
        20.0,
        y_top - 6.0,
        Anchor::Start,
        "rail",
        &rail_label(s.collector_rail.0),
    );
    c.line(16.0, y_bot, width - 16.0, y_bot, "wire");
    c.text(
        20.0,
        y_bot + 16.0,
        Anchor::Start,
        "rail",
        &rail_label(s.emitter_rail.0),
    );
    match s.ground {
        Ground::Emitter => ground(&mut c, width / 2.0, y_bot),
        // Off the top rail's far end, clear of the collector slot and the output.
        Ground::Collector => ground(&mut c, width - 30.0, y_top),
        Ground::Between => {}
    }

    // The transistor, and its leads to the collector and emitter nodes.
    let (ct, eb) = transistor(&mut c, x_bar, y_base, s.polarity);
    c.line(x_right, ct, x_right, y_coll, "wire");
    c.line(x_right, eb, x_right, y_emit, "wire");
    // Base wire from the left column.
    c.line(x_left, y_base, x_bar - 18.0, y_base, "wire");
    c.circle(x_left, y_base, 2.5, "dot");
    let x_in = x_left - left_name + 6.0;
    c.line(x_in, y_base, x_left, y_base, "wire");
    terminal(&mut c, x_in, y_base, "", Anchor::Start);
    c.text(x_in, y_base - 8.0, Anchor::Start, "note", "in");

    // Collector side.
    draw_slot(&mut c, Slot::RC, net(Slot::RC), x_right, y_top, y_coll);
    c.circle(x_right, y_coll, 2.5, "dot");
    c.line(
        x_right,
        y_coll,
        x_right + right_right + 40.0,
        y_coll,
        "wire",
    );
    terminal(
        &mut c,
        x_right + right_right + 44.0,
        y_coll,
        "out",
        Anchor::Start,
    );
    c.circle(x_right, y_top, 2.5, "dot");

    // Base side.
    match s.topology {
        Topology::Divider | Topology::DividerSplit | Topology::BaseResistor => {
            if let Some(up) = left_up {
                draw_slot(&mut c, up, net(up), x_left, y_top, y_base);
                c.circle(x_left, y_top, 2.5, "dot");
            }
            if let Some(down) = left_down {
                draw_slot(&mut c, down, net(down), x_left, y_base, y_bot);
                c.circle(x_left, y_bot, 2.5, "dot");
            }
        }
        Topology::CollectorFeedback => {
            // RB from the collector node back to the base: a wire above the transistor to the left column.
            let y_fb = y_coll;
            c.line(x_left, y_fb, x_right, y_fb, "wire");
            draw_slot(&mut c, Slot::RB, net(Slot::RB), x_left, y_fb, y_base);
        }
        Topology::DualSupply => {
            let y_g = y_base + span(net(Slot::RB));
            draw_slot(&mut c, Slot::RB, net(Slot::RB), x_left, y_base, y_g);
            ground(&mut c, x_left, y_g);
            c.text(x_left + 16.0, y_g + 16.0, Anchor::Start, "note", "0 V");
        }
    }

    // Emitter side.
    if emitter_slots.is_empty() {
        c.line(x_right, y_emit, x_right, y_bot, "wire");
    } else {
        let avail = y_bot - y_emit;
        let need: f64 = emitter_slots.iter().map(|sl| span(net(*sl))).sum();
        let stretch = avail / need.max(1.0);
        let mut y = y_emit;
        let mut joins = Vec::new();
        for sl in &emitter_slots {
            let h = span(net(*sl)) * stretch;
            draw_slot(&mut c, *sl, net(*sl), x_right, y, y + h);
            y += h;
            joins.push(y);
        }
        if split {
            // The bypass capacitor across RE2 (from the RE1–RE2 junction to the rail): not chosen here.
            let y_j = joins[0];
            c.circle(x_right, y_j, 2.5, "dot");
            c.line(x_right, y_j, cap_x, y_j, "wire");
            let mid = (y_j + y_bot) / 2.0;
            c.line(cap_x, y_j, cap_x, mid - 4.0, "wire");
            c.line(cap_x - 12.0, mid - 4.0, cap_x + 12.0, mid - 4.0, "wire");
            c.line(cap_x - 12.0, mid + 4.0, cap_x + 12.0, mid + 4.0, "wire");
            c.line(cap_x, mid + 4.0, cap_x, y_bot, "wire");
            c.circle(cap_x, y_bot, 2.5, "dot");
            c.text(cap_x + 16.0, mid - 2.0, Anchor::Start, "slot", "CE");
            c.text(
                cap_x + 16.0,
                mid + 12.0,
                Anchor::Start,
                "where",
                "bypass, your choice",
            );
        }
        c.circle(x_right, y_bot, 2.5, "dot");
    }
    c.circle(x_right, y_emit, 2.5, "dot");

    c.finish(&format!("Schematic of {}", s.name), STYLE)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::network::Member;
    use crate::stage::parse;
    use crate::units::{Ohms, Tolerance, Watts};

    fn part(ohms: f64, location: Option<&str>) -> Network {
        let mut m = Member::loose(Ohms(ohms), Tolerance(0.01), Watts(0.25));
        m.location = location.map(str::to_string);
        Network::Single(m)
    }

    fn stage(topology: &str, polarity: &str) -> Stage {
        let extra = match topology {
            "dual-supply" => "supply_neg = -9\n",
            _ => "",
        };
        let rule = if topology == "divider-split" {
            "[stage.rule]\ngain = 6\n"
        } else {
            ""
        };
        let text = format!(
            "[[stage]]\nname = \"drawn <A&B>\"\ntopology = \"{topology}\"\npolarity = \"{polarity}\"\nsupply = 9\n\
             {extra}load = \"2k7\"\n[stage.transistor]\nbeta = [120, 200, 400]\nvbe = 0.6\n{rule}"
        );
        parse("draw.toml", &text).unwrap().stages.remove(0)
    }

    /// Every slot gets a different shape: a single, a series pair, a parallel pair, and a parallel of a
    /// series pair with a single, with distinct invented values and drawers.
    fn networks(st: &Stage) -> SlotNetworks {
        let shapes = [
            Network::Series(vec![part(33e3, Some("A3")), part(2.2e3, Some("A7"))]),
            Network::Parallel(vec![part(6.8e3, Some("B1")), part(82e3, Some("B9"))]),
            part(2.7e3, Some("drawer 4")),
            Network::Parallel(vec![
                Network::Series(vec![part(390.0, None), part(56.0, Some("C2"))]),
                part(4.7e3, Some("C5")),
            ]),
            part(180.0, Some("D1")),
        ];
        SlotNetworks::from_pairs(st.slots().into_iter().zip(shapes))
    }

    /// Every text node of an SVG, parsed as XML (so the document must be well formed).
    fn texts(svg: &str) -> Vec<String> {
        let doc = roxmltree::Document::parse(svg).unwrap_or_else(|e| panic!("not XML: {e}\n{svg}"));
        doc.descendants()
            .filter(|n| n.has_tag_name("text"))
            .map(|n| n.text().unwrap_or("").to_string())
            .collect()
    }

    #[test]
    fn every_topology_draws_every_member_with_its_code_and_drawer() {
        for topology in [
            "divider",
            "divider-split",
            "collector-feedback",
            "dual-supply",
            "base-resistor",
        ] {
            for polarity in ["npn", "pnp"] {
                let st = stage(topology, polarity);
                let nets = networks(&st);
                let svg = render(&Schematic::of(&st, &nets));
                let t = texts(&svg);
                for slot in st.slots() {
                    assert!(t.iter().any(|s| s == slot.name()), "{topology}: {slot}");
                    let net = nets.get(slot).unwrap();
                    for m in net.members() {
                        assert!(t.contains(&code(m.ohms)), "{topology}: {}", code(m.ohms));
                        if let Some(l) = &m.location {
                            assert!(t.iter().any(|s| s.ends_with(l.as_str())), "{topology}: {l}");
                        }
                    }
                    if net.part_count() > 1 {
                        assert!(
                            t.contains(&format!("= {}", code(net.ohms()))),
                            "{topology}: {slot} total"
                        );
                    }
                }
                // The title survives escaping.
                assert!(t[0].starts_with("drawn <A&B>"), "{}", t[0]);
                // The design file's supply = 9 is a rail at +9 V from ground, whichever the polarity.
                assert!(
                    t.iter().any(|s| s == "+9 V"),
                    "{topology} {polarity}: {t:?}"
                );
            }
        }
    }

    #[test]
    fn the_rails_carry_the_design_files_supply_with_its_sign() {
        // (polarity, supply line, the top (collector-side) rail, the bottom (emitter-side) rail).
        let cases = [
            ("npn", "supply = 9", "+9 V", "0 V"),
            ("npn", "supply = -9\nground = \"collector\"", "0 V", "-9 V"),
            ("pnp", "supply = 9", "0 V", "+9 V"),
            ("pnp", "supply = -9", "-9 V", "0 V"),
            ("npn", "supply = 12\nsupply_neg = -5", "+12 V", "-5 V"),
            ("pnp", "supply = -12\nsupply_neg = 5", "-12 V", "+5 V"),
        ];
        for (polarity, supply, top, bottom) in cases {
            let topology = if supply.contains("supply_neg") {
                "dual-supply"
            } else {
                "divider"
            };
            let text = format!(
                "[[stage]]\nname = \"r\"\ntopology = \"{topology}\"\npolarity = \"{polarity}\"\n{supply}\n\
                 load = \"2k7\"\n[stage.transistor]\nbeta = [120, 200, 400]\nvbe = 0.6\n"
            );
            let st = parse("draw.toml", &text)
                .unwrap_or_else(|e| panic!("{e}"))
                .stages
                .remove(0);
            let svg = render(&Schematic::of(&st, &networks(&st)));
            let doc = roxmltree::Document::parse(&svg).unwrap();
            let rails: Vec<(f64, String)> = doc
                .descendants()
                .filter(|n| n.has_tag_name("text") && n.attribute("class") == Some("rail"))
                .map(|n| {
                    (
                        n.attribute("y").unwrap().parse().unwrap(),
                        n.text().unwrap_or("").to_string(),
                    )
                })
                .collect();
            assert_eq!(rails.len(), 2, "{rails:?}");
            let (upper, lower) = if rails[0].0 < rails[1].0 {
                (&rails[0].1, &rails[1].1)
            } else {
                (&rails[1].1, &rails[0].1)
            };
            assert_eq!(
                (upper.as_str(), lower.as_str()),
                (top, bottom),
                "{polarity} {supply}"
            );
        }
    }

    #[test]
    fn an_unfilled_slot_is_drawn_empty() {
        let st = stage("divider", "npn");
        let mut nets = networks(&st);
        nets = SlotNetworks::from_pairs(
            nets.iter()
                .filter(|(s, _)| *s != Slot::RE)
                .map(|(s, n)| (s, n.clone())),
        );
        let t = texts(&render(&Schematic::of(&st, &nets)));
        assert!(t.iter().any(|s| s == "not given"));
        assert!(t.iter().any(|s| s == "RE"));
    }

    #[test]
    fn network_sizes_follow_their_shape() {
        let a = part(1e3, None);
        let single = size(&a);
        let series = size(&Network::Series(vec![a.clone(), a.clone()]));
        let parallel = size(&Network::Parallel(vec![a.clone(), a.clone()]));
        assert_eq!(series.h, 2.0 * single.h);
        assert_eq!(series.w, single.w);
        assert_eq!(parallel.h, single.h + 2.0 * BUS);
        assert_eq!(parallel.w, 2.0 * single.w + BRANCH_GAP);
    }
}
