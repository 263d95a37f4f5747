//! The DC load line: collector current against collector-emitter voltage, the straight line the collector
//! loop allows (VCE = c0 − cc·IC − cb·IB, with IB = IC/β at typical beta), from its cutoff end (IC = 0, VCE =
//! the loop's open-circuit voltage) to its saturation end (VCE = vce_sat). On it sit the Q points at min,
//! typical and max beta; for a split-emitter stage the AC load line through the typical Q point, with slope
//! −1/(RC∥RL + RE1) since RE2 is bypassed; and, when the spread command passes its Monte Carlo samples, the
//! cloud of built operating points.
//!
//! [`LoadLine`] holds plain numbers taken from the stage model; [`render`] is a pure function of it.

use super::{num, text_width, ticks, Anchor, Canvas};
use crate::notation::engineering;
use crate::stage::{Polarity, Region, SlotValues, Stage, Topology};
use crate::units::{Amps, Ohms, Volts};

/// One operating point to mark.
#[derive(Clone, Debug, PartialEq)]
pub struct QPoint {
    /// Which beta it is at ("min", "typical", "max").
    pub label: String,
    /// The beta used, at the ambient.
    pub beta: f64,
    /// Collector-emitter voltage.
    pub vce: Volts,
    /// Collector current.
    pub ic: Amps,
    /// Where the transistor sits.
    pub region: Region,
}

/// The AC load line of a split-emitter stage: through the typical Q point with slope −1/resistance.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct AcLine {
    /// The AC collector-loop resistance RC∥RL + RE1.
    pub resistance: Ohms,
    /// Where it meets IC = 0.
    pub vce_cutoff: Volts,
    /// Where it meets VCE = 0.
    pub ic_saturation: Amps,
}

/// Everything the load-line drawing shows, in the NPN frame (a PNP stage's magnitudes).
#[derive(Clone, Debug, PartialEq)]
pub struct LoadLine {
    /// The stage's name, for the title.
    pub name: String,
    /// NPN or PNP (PNP axes are labelled as magnitudes).
    pub polarity: Polarity,
    /// VCE with no collector current: the cutoff end.
    pub vce_cutoff: Volts,
    /// IC where the line would reach VCE = 0.
    pub ic_at_zero: Amps,
    /// The transistor's saturation voltage: the saturation end sits at this VCE.
    pub vce_sat: Volts,
    /// The Q points at min, typical and max beta.
    pub q: Vec<QPoint>,
    /// The AC load line (split-emitter stages).
    pub ac: Option<AcLine>,
    /// Monte Carlo operating points (VCE, IC), if any.
    pub cloud: Vec<(Volts, Amps)>,
    /// How many simulated builds the cloud was taken from (0 without a cloud).
    pub cloud_of: usize,
}

impl LoadLine {
    /// The load line of a stage with these resistances, at the ambient temperature.
    pub fn of(stage: &Stage, values: &SlotValues) -> LoadLine {
        let t = stage.limits.ambient;
        let b = stage.transistor.beta;
        let loops = stage.loops(values);
        let beta_typ = stage.transistor.beta_at(b.typ, t);
        // IB = IC/β on the collector loop: VCE = c0 − (cc + cb/β)·IC.
        let slope = loops.cc + loops.cb / beta_typ;
        let q: Vec<QPoint> = [(b.min, "min"), (b.typ, "typical"), (b.max, "max")]
            .into_iter()
            .map(|(beta, label)| {
                let op = stage.solve(values, beta, t);
                QPoint {
                    label: label.to_string(),
                    beta: op.beta,
                    vce: op.vce,
                    ic: op.ic,
                    region: op.region,
                }
            })
            .collect();
        let ac = if stage.topology == Topology::DividerSplit {
            let get = |s| values.get(s).map_or(f64::INFINITY, |o: Ohms| o.0);
            let rc = get(crate::stage::Slot::RC);
            let rac =
                stage.load.map_or(rc, |rl| rc * rl.0 / (rc + rl.0)) + get(crate::stage::Slot::RE1);
            let typ = &q[1];
            (rac.is_finite() && rac > 0.0 && typ.region == Region::Active).then(|| AcLine {
                resistance: Ohms(rac),
                vce_cutoff: Volts(typ.vce.0 + typ.ic.0 * rac),
                ic_saturation: Amps(typ.ic.0 + typ.vce.0 / rac),
            })
        } else {
            None
        };
        LoadLine {
            name: stage.name.clone(),
            polarity: stage.polarity,
            vce_cutoff: Volts(loops.c0),
            ic_at_zero: Amps(if slope > 0.0 { loops.c0 / slope } else { 0.0 }),
            vce_sat: stage.transistor.vce_sat,
            q,
            ac,
            cloud: Vec::new(),
            cloud_of: 0,
        }
    }

    /// The same drawing with a Monte Carlo cloud of (VCE, IC) operating points, taken from `of` simulated
    /// builds (more than the points when the cloud is a sample of a larger run, which the legend then says).
    pub fn with_cloud(mut self, points: &[(Volts, Amps)], of: usize) -> LoadLine {
        self.cloud_of = of.max(points.len());
        self.cloud = points
            .iter()
            .filter(|(v, i)| v.0.is_finite() && i.0.is_finite())
            .map(|(v, i)| (v.abs(), i.abs()))
            .collect();
        self
    }

    /// IC on the DC load line at a VCE.
    pub fn ic_at(&self, vce: Volts) -> Amps {
        if self.vce_cutoff.0 <= 0.0 {
            return Amps(0.0);
        }
        Amps((self.ic_at_zero.0 * (1.0 - vce.0 / self.vce_cutoff.0)).max(0.0))
    }
}

const STYLE: &str = "\
.axis{stroke:#111;stroke-width:1.2}\
.grid{stroke:#ddd;stroke-width:1}\
.dc{stroke:#1f4e9c;stroke-width:2.4;fill:none}\
.acl{stroke:#c25e00;stroke-width:1.8;stroke-dasharray:7 4;fill:none}\
.sat{fill:#f1f1f1;stroke:none}\
.ext{stroke:#1f4e9c;stroke-width:1.2;stroke-dasharray:2 3}\
.cloud{fill:#7a3fa0;fill-opacity:0.35;stroke:none}\
.qmin{fill:#fff;stroke:#111;stroke-width:1.8}\
.qtyp{fill:#111;stroke:#111;stroke-width:1.2}\
.qmax{fill:#fff;stroke:#111;stroke-width:1.8}\
.end{fill:#1f4e9c;stroke:#fff;stroke-width:1}\
.tick{font-size:11px;fill:#333}\
.label{font-size:12px;fill:#111}\
.axisname{font-size:13px;font-weight:bold;fill:#111}\
.legend{font-size:12px;fill:#111}\
.title{font-size:15px;font-weight:bold;fill:#111}\
.note{font-size:11px;fill:#555}";

/// The plot area inside the canvas.
const LEFT: f64 = 78.0;
const RIGHT: f64 = 700.0;
const TOP: f64 = 76.0;
const BOTTOM: f64 = 376.0;
const WIDTH: f64 = 740.0;

fn q_marker(c: &mut Canvas, x: f64, y: f64, label: &str) {
    match label {
        "min" => c.circle(x, y, 6.0, "qmin"),
        "max" => c.rect(x - 5.5, y - 5.5, 11.0, 11.0, "qmax"),
        _ => c.circle(x, y, 5.5, "qtyp"),
    }
}

/// The load line as a standalone SVG document.
pub fn render(l: &LoadLine) -> String {
    let mag = l.polarity == Polarity::Pnp;
    let mut x_max = l.vce_cutoff.0;
    let mut y_max = l.ic_at_zero.0;
    if let Some(ac) = &l.ac {
        x_max = x_max.max(ac.vce_cutoff.0);
        y_max = y_max.max(ac.ic_saturation.0);
    }
    for q in &l.q {
        x_max = x_max.max(q.vce.0);
        y_max = y_max.max(q.ic.0);
    }
    for (v, i) in &l.cloud {
        x_max = x_max.max(v.0);
        y_max = y_max.max(i.0);
    }
    if !(x_max > 0.0 && x_max.is_finite()) {
        x_max = 1.0;
    }
    if !(y_max > 0.0 && y_max.is_finite()) {
        y_max = 1e-3;
    }
    x_max *= 1.06;
    y_max *= 1.1;
    let px = |v: f64| LEFT + (v / x_max).clamp(0.0, 1.0) * (RIGHT - LEFT);
    let py = |i: f64| BOTTOM - (i / y_max).clamp(0.0, 1.0) * (BOTTOM - TOP);

    let legend_rows =
        l.q.len() + 1 + usize::from(l.ac.is_some()) + usize::from(!l.cloud.is_empty());
    let height = BOTTOM + 64.0 + 20.0 * legend_rows as f64;
    let mut c = Canvas::new(WIDTH, height);
    c.text(
        16.0,
        24.0,
        Anchor::Start,
        "title",
        &format!("{}: DC load line", l.name),
    );
    if mag {
        c.text(
            16.0,
            42.0,
            Anchor::Start,
            "note",
            "PNP: voltages and currents are magnitudes",
        );
    }

    // The saturation strip, the grid and the axes.
    c.rect(LEFT, TOP, px(l.vce_sat.0) - LEFT, BOTTOM - TOP, "sat");
    for t in ticks(x_max, 8) {
        let x = px(t);
        c.line(x, TOP, x, BOTTOM, "grid");
        c.text(
            x,
            BOTTOM + 16.0,
            Anchor::Middle,
            "tick",
            &engineering(t, "V"),
        );
    }
    for t in ticks(y_max, 6) {
        let y = py(t);
        c.line(LEFT, y, RIGHT, y, "grid");
        c.text(
            LEFT - 6.0,
            y + 4.0,
            Anchor::End,
            "tick",
            &engineering(t, "A"),
        );
    }
    c.line(LEFT, BOTTOM, RIGHT, BOTTOM, "axis");
    c.line(LEFT, TOP, LEFT, BOTTOM, "axis");
    let (xn, yn) = if mag {
        ("|VCE|", "|IC|")
    } else {
        ("VCE", "IC")
    };
    c.text(
        (LEFT + RIGHT) / 2.0,
        BOTTOM + 36.0,
        Anchor::Middle,
        "axisname",
        xn,
    );
    c.text(LEFT - 6.0, TOP - 10.0, Anchor::End, "axisname", yn);
    if px(l.vce_sat.0) - LEFT > 60.0 {
        c.text(
            LEFT + 4.0,
            BOTTOM - 8.0,
            Anchor::Start,
            "note",
            "saturation",
        );
    }

    // The cloud goes under the lines so they stay readable.
    if !l.cloud.is_empty() {
        c.group("cloud", "Monte Carlo");
        for (v, i) in &l.cloud {
            c.circle(px(v.0), py(i.0), 1.8, "cloud");
        }
        c.end_group();
    }

    // The DC load line from the saturation end to the cutoff end.
    let sat_ic = l.ic_at(l.vce_sat);
    c.polyline(
        &[
            (px(l.vce_sat.0), py(sat_ic.0)),
            (px(l.vce_cutoff.0), py(0.0)),
        ],
        "dc",
    );
    c.line(
        px(0.0),
        py(l.ic_at_zero.0),
        px(l.vce_sat.0),
        py(sat_ic.0),
        "ext",
    );
    let (sx, sy) = (px(l.vce_sat.0), py(sat_ic.0));
    c.polygon(
        &[
            (sx, sy - 6.0),
            (sx + 6.0, sy),
            (sx, sy + 6.0),
            (sx - 6.0, sy),
        ],
        "end",
    );
    let sat_label = format!("saturation end: {}", engineering(sat_ic.0, "A"));
    c.text(sx + 10.0, sy - 6.0, Anchor::Start, "label", &sat_label);
    let (cx, cy) = (px(l.vce_cutoff.0), py(0.0));
    c.polygon(
        &[
            (cx, cy - 6.0),
            (cx + 6.0, cy),
            (cx, cy + 6.0),
            (cx - 6.0, cy),
        ],
        "end",
    );
    let cut_label = format!("cutoff end: {}", engineering(l.vce_cutoff.0, "V"));
    // Above the line: at the label's left end the line is highest, so clear that.
    let cut_left = cx - 10.0 - text_width(&cut_label, 12.0);
    let line_y = if l.vce_cutoff.0 > l.vce_sat.0 {
        let f = ((cut_left - sx) / (cx - sx)).clamp(0.0, 1.0);
        sy + f * (cy - sy)
    } else {
        cy
    };
    c.text(
        cx - 10.0,
        line_y.min(cy) - 8.0,
        Anchor::End,
        "label",
        &cut_label,
    );

    if let Some(ac) = &l.ac {
        c.polyline(
            &[
                (px(0.0), py(ac.ic_saturation.0)),
                (px(ac.vce_cutoff.0), py(0.0)),
            ],
            "acl",
        );
    }

    for q in &l.q {
        c.group("q", &q.label);
        q_marker(&mut c, px(q.vce.0), py(q.ic.0), &q.label);
        c.end_group();
    }

    // The legend, one row per mark.
    let mut y = BOTTOM + 62.0;
    let lx = LEFT;
    c.line(lx, y - 4.0, lx + 26.0, y - 4.0, "dc");
    c.text(
        lx + 36.0,
        y,
        Anchor::Start,
        "legend",
        &format!(
            "DC load line, from {} (cutoff) to {} at VCE = {} (saturation)",
            engineering(l.vce_cutoff.0, "V"),
            engineering(sat_ic.0, "A"),
            engineering(l.vce_sat.0, "V")
        ),
    );
    for q in &l.q {
        y += 20.0;
        q_marker(&mut c, lx + 13.0, y - 4.0, &q.label);
        let region = if q.region == Region::Active {
            String::new()
        } else {
            format!(" ({})", q.region)
        };
        c.text(
            lx + 36.0,
            y,
            Anchor::Start,
            "legend",
            &format!(
                "Q at {} beta ({}): VCE {}, IC {}{region}",
                q.label,
                num(q.beta),
                engineering(q.vce.0, "V"),
                engineering(q.ic.0, "A")
            ),
        );
    }
    if let Some(ac) = &l.ac {
        y += 20.0;
        c.line(lx, y - 4.0, lx + 26.0, y - 4.0, "acl");
        c.text(
            lx + 36.0,
            y,
            Anchor::Start,
            "legend",
            &format!(
                "AC load line through typical Q, slope −1/(RC∥RL + RE1) = −1/{}",
                crate::notation::code(ac.resistance)
            ),
        );
    }
    if !l.cloud.is_empty() {
        y += 20.0;
        c.circle(lx + 13.0, y - 4.0, 3.0, "cloud");
        c.text(
            lx + 36.0,
            y,
            Anchor::Start,
            "legend",
            &if l.cloud_of > l.cloud.len() {
                format!(
                    "Monte Carlo: a sample of {} of {} simulated builds",
                    crate::report::histogram::grouped(l.cloud.len() as u64),
                    crate::report::histogram::grouped(l.cloud_of as u64)
                )
            } else {
                format!(
                    "Monte Carlo: {} simulated builds",
                    crate::report::histogram::grouped(l.cloud.len() as u64)
                )
            },
        );
    }
    c.finish(&format!("DC load line of {}", l.name), STYLE)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::stage::{parse, Slot};

    fn stage(topology: &str) -> Stage {
        let rule = if topology == "divider-split" {
            "[stage.rule]\ngain = 6\n"
        } else {
            ""
        };
        let text = format!(
            "[[stage]]\nname = \"plot\"\ntopology = \"{topology}\"\npolarity = \"npn\"\nsupply = 15\nload = \"3k9\"\n\
             [stage.transistor]\nbeta = [90, 160, 320]\nvbe = 0.62\nvce_sat = 0.15\n{rule}"
        );
        parse("plot.toml", &text).unwrap().stages.remove(0)
    }

    fn values(pairs: &[(Slot, f64)]) -> SlotValues {
        pairs.iter().map(|(s, r)| (*s, Ohms(*r))).collect()
    }

    #[test]
    fn divider_load_line_by_hand() {
        // Collector loop: VCE = 15 − (RC + RE)·IC − RE·IB. With IB = IC/160 the line meets VCE = 0 at
        // IC = 15 / (3900 + 820 + 820/160) = 15 / 4725.125 = 3.174519 mA (hand arithmetic).
        let st = stage("divider");
        let v = values(&[
            (Slot::R1, 62e3),
            (Slot::R2, 11e3),
            (Slot::RC, 3.9e3),
            (Slot::RE, 820.0),
        ]);
        let l = LoadLine::of(&st, &v);
        assert_eq!(l.vce_cutoff, Volts(15.0));
        assert!(
            (l.ic_at_zero.0 - 15.0 / 4725.125).abs() < 1e-12,
            "{}",
            l.ic_at_zero.0
        );
        assert!(l.ac.is_none());
        // The typical Q point lies on the line (it is where the line was drawn for); min and max beta lie
        // off it only by the RE·IB term's change, RE·IC·|1/β − 1/160|.
        for q in &l.q {
            assert_eq!(q.region, Region::Active);
            let gap = (l.ic_at(q.vce).0 - q.ic.0).abs();
            let allowed = 820.0 * q.ic.0 * (1.0 / q.beta - 1.0 / 160.0).abs() / 4725.125 + 1e-12;
            assert!(gap <= allowed * 1.000_001, "{}: {gap} > {allowed}", q.label);
        }
        assert_eq!(
            l.q.iter().map(|q| q.label.as_str()).collect::<Vec<_>>(),
            ["min", "typical", "max"]
        );
    }

    #[test]
    fn split_emitter_ac_line_by_hand() {
        // RC ∥ RL = 3k9 ∥ 3k9 = 1950 Ω, plus RE1 330 Ω: 2280 Ω. The AC line runs through the typical Q point
        // and meets the axes at VCEQ + ICQ·2280 and ICQ + VCEQ/2280.
        let st = stage("divider-split");
        let v = values(&[
            (Slot::R1, 62e3),
            (Slot::R2, 11e3),
            (Slot::RC, 3.9e3),
            (Slot::RE1, 330.0),
            (Slot::RE2, 560.0),
        ]);
        let l = LoadLine::of(&st, &v);
        let ac = l.ac.expect("a split-emitter stage has an AC line");
        assert!((ac.resistance.0 - 2280.0).abs() < 1e-9);
        let q = &l.q[1];
        assert!((ac.vce_cutoff.0 - (q.vce.0 + q.ic.0 * 2280.0)).abs() < 1e-12);
        assert!((ac.ic_saturation.0 - (q.ic.0 + q.vce.0 / 2280.0)).abs() < 1e-15);
        // Steeper than the DC line, whose resistance includes the bypassed RE2.
        assert!(ac.ic_saturation.0 / ac.vce_cutoff.0 > l.ic_at_zero.0 / l.vce_cutoff.0);
        let svg = render(&l);
        let doc = roxmltree::Document::parse(&svg).unwrap();
        let text: String = doc.descendants().filter_map(|n| n.text()).collect();
        assert!(text.contains("AC load line"), "{text}");
        assert!(text.contains("2k28"), "{text}");
    }

    #[test]
    fn cloud_points_are_drawn_and_bad_ones_dropped() {
        let st = stage("divider");
        let v = values(&[
            (Slot::R1, 62e3),
            (Slot::R2, 11e3),
            (Slot::RC, 3.9e3),
            (Slot::RE, 820.0),
        ]);
        let pts: Vec<(Volts, Amps)> = (0..50)
            .map(|k| (Volts(7.0 + 0.01 * k as f64), Amps(1.6e-3)))
            .chain([
                (Volts(f64::NAN), Amps(1e-3)),
                (Volts(7.0), Amps(f64::INFINITY)),
            ])
            .collect();
        let l = LoadLine::of(&st, &v).with_cloud(&pts, 500);
        assert_eq!(l.cloud.len(), 50);
        let svg = render(&l);
        let doc = roxmltree::Document::parse(&svg).unwrap();
        let cloud = doc
            .descendants()
            .find(|n| n.attribute("class") == Some("cloud") && n.has_tag_name("g"))
            .expect("a cloud group");
        assert_eq!(
            cloud
                .children()
                .filter(|n| n.has_tag_name("circle"))
                .count(),
            50
        );
        let text: String = doc.descendants().filter_map(|n| n.text()).collect();
        assert!(text.contains("cutoff end: 15 V"), "{text}");
        assert!(
            text.contains("a sample of 50 of 500 simulated builds"),
            "{text}"
        );
        for label in ["min", "typical", "max"] {
            assert!(text.contains(&format!("Q at {label} beta")), "{label}");
        }
    }
}
