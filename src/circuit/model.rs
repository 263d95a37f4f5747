//! The circuit model: named nodes ("gnd" is 0 V), rails (nodes held at a fixed voltage), parts of each kind
//! with their pins, the targets the design aims at and the hard requirements it must meet. A [`Build`] is
//! one concrete instance: every slot given a resistance, every ranged parameter at a chosen corner, at one
//! temperature; that is what the solver solves.
//!
//! The model is checked once ([`Circuit::check`]): every node a pin names must join at least two pins or be
//! a rail (a node named once is almost always a slip of the keyboard), and every node must reach a rail or
//! ground through parts that conduct at DC, else its voltage is undefined. Relies on the stage model for
//! the bipolar transistor ([`crate::stage::Transistor`]) and on [`crate::units`].

use super::bjt::Bjt;
use super::diode::Diode;
use super::fet::SquareLaw;
use super::jfet::Jfet;
use super::mosfet::Mosfet;
use super::opamp::OpAmp;
use super::reference::Reference;
use super::region::Region;
use super::zener::Zener;
use crate::stage::{Limits, Polarity, Transistor, Vbe};
use crate::units::{thermal_voltage, Amps, Celsius, Ohms, Tolerance, Volts, Watts};

/// A node's index in [`Circuit::nodes`]; ground is [`GROUND`].
pub type NodeId = usize;

/// Ground, the 0 V node, always node 0.
pub const GROUND: NodeId = 0;

/// The name of the 0 V node.
pub const GROUND_NAME: &str = "gnd";

/// Which end of every min/typical/max range a build takes.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Pick {
    /// The lowest value.
    Min,
    /// The typical value: what a circuit's error is measured at.
    Typ,
    /// The highest value.
    Max,
}

/// A parameter given as a range, as data sheets give them.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Ranged<T> {
    /// The lowest value a part may have.
    pub min: T,
    /// The typical value.
    pub typ: T,
    /// The highest value a part may have.
    pub max: T,
}

impl<T: Copy> Ranged<T> {
    /// One value for all three.
    pub fn exactly(x: T) -> Ranged<T> {
        Ranged {
            min: x,
            typ: x,
            max: x,
        }
    }

    /// The value at a corner.
    pub fn pick(&self, p: Pick) -> T {
        match p {
            Pick::Min => self.min,
            Pick::Typ => self.typ,
            Pick::Max => self.max,
        }
    }
}

/// What a part is, with its parameters.
#[derive(Clone, Debug, PartialEq)]
pub enum Kind {
    /// A resistor: a slot filled from stock when `value` is None, else a fixed part.
    Resistor {
        /// The fixed value; None makes the part a slot.
        value: Option<Ohms>,
        /// The fixed part's power rating.
        power: Option<Watts>,
        /// The fixed part's tolerance.
        tolerance: Option<Tolerance>,
    },
    /// A bipolar transistor, with the stage model's parameters.
    Bjt {
        /// NPN or PNP.
        polarity: Polarity,
        /// Its parameters.
        transistor: Transistor,
    },
    /// A diode or LED: forward volts at a current, emission coefficient.
    Diode {
        /// Whether it is an LED (for reports; the law is the same).
        led: bool,
        /// The forward voltage at `at`.
        volts: Volts,
        /// The current the forward voltage is given at.
        at: Amps,
        /// The emission coefficient.
        n: f64,
    },
    /// A zener: breakdown volts at a current, slope resistance.
    Zener {
        /// The breakdown voltage at `at`.
        volts: Volts,
        /// The reverse current the breakdown voltage is given at.
        at: Amps,
        /// The slope resistance in breakdown.
        slope: Ohms,
    },
    /// A junction FET.
    Jfet(Jfet),
    /// An enhancement MOSFET.
    Mosfet(Mosfet),
    /// A constant current source, from its first node to its second.
    CurrentSource {
        /// The current.
        amps: Amps,
    },
    /// A voltage reference with a pin current (an adjustable regulator).
    Reference {
        /// Output above adjust.
        volts: Volts,
        /// The adjust pin's current.
        pin: Amps,
    },
    /// An op-amp with finite gain and an output limited to its supplies.
    OpAmp {
        /// Open-loop gain, V/V.
        gain: f64,
        /// How close the output comes to each supply.
        headroom: Volts,
    },
}

impl Kind {
    /// The kind's name in circuit files ("resistor", "npn", "n-jfet").
    pub fn name(&self) -> &'static str {
        match self {
            Kind::Resistor { .. } => "resistor",
            Kind::Bjt {
                polarity: Polarity::Npn,
                ..
            } => "npn",
            Kind::Bjt { .. } => "pnp",
            Kind::Diode { led: false, .. } => "diode",
            Kind::Diode { .. } => "led",
            Kind::Zener { .. } => "zener",
            Kind::Jfet(j) if j.channel == super::fet::Channel::N => "n-jfet",
            Kind::Jfet(_) => "p-jfet",
            Kind::Mosfet(m) if m.channel == super::fet::Channel::N => "n-mosfet",
            Kind::Mosfet(_) => "p-mosfet",
            Kind::CurrentSource { .. } => "current-source",
            Kind::Reference { .. } => "reference",
            Kind::OpAmp { .. } => "opamp",
        }
    }

    /// The names of the kind's pins, in the order [`Part::pins`] holds them.
    pub fn pin_names(&self) -> &'static [&'static str] {
        match self {
            Kind::Resistor { .. } | Kind::CurrentSource { .. } => &["between[0]", "between[1]"],
            Kind::Bjt { .. } => &["collector", "base", "emitter"],
            Kind::Diode { .. } | Kind::Zener { .. } => &["anode", "cathode"],
            Kind::Jfet(_) | Kind::Mosfet(_) => &["drain", "gate", "source"],
            Kind::Reference { .. } => &["out", "adjust", "input"],
            Kind::OpAmp { .. } => &["plus", "minus", "out", "supplies[0]", "supplies[1]"],
        }
    }

    /// The regions the kind can be in (empty for a part with one smooth law).
    pub fn regions(&self) -> &'static [Region] {
        match self {
            Kind::Bjt { .. } => super::bjt::REGIONS,
            Kind::Zener { .. } => super::zener::REGIONS,
            Kind::Jfet(_) | Kind::Mosfet(_) => super::fet::REGIONS,
            Kind::OpAmp { .. } => super::opamp::REGIONS,
            _ => &[],
        }
    }

    /// Whether the part amplifies (a transistor or op-amp): with two or more of them a circuit may latch.
    pub fn has_gain(&self) -> bool {
        matches!(
            self,
            Kind::Bjt { .. } | Kind::Jfet(_) | Kind::Mosfet(_) | Kind::OpAmp { .. }
        )
    }

    /// Pairs of pins joined by a path that conducts at DC (for the floating-node check).
    fn dc_paths(&self) -> &'static [(usize, usize)] {
        match self {
            Kind::Resistor { .. } | Kind::Diode { .. } | Kind::Zener { .. } => &[(0, 1)],
            Kind::Bjt { .. } => &[(0, 2), (1, 2)],
            Kind::Jfet(_) | Kind::Mosfet(_) => &[(0, 2)],
            Kind::Reference { .. } => &[(0, 1), (0, 2)],
            // The output is a source referred to the supplies, which are rails.
            Kind::OpAmp { .. } => &[(2, 3)],
            Kind::CurrentSource { .. } => &[],
        }
    }
}

/// One part of a circuit.
#[derive(Clone, Debug, PartialEq)]
pub struct Part {
    /// Its reference designator ("R1", "Q2").
    pub name: String,
    /// What it is.
    pub kind: Kind,
    /// Its nodes, in the order of [`Kind::pin_names`].
    pub pins: Vec<NodeId>,
    /// The largest dissipation allowed for a part other than a resistor or bipolar transistor.
    pub max_power: Option<Watts>,
    /// The 1-based line of the part's table in its file (0 when built in code).
    pub line: usize,
}

/// A quantity of a solved circuit.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Quantity {
    /// A node's voltage from ground.
    Node(NodeId),
    /// The voltage of the first node above the second.
    Between(NodeId, NodeId),
    /// A part's current (collector or drain current for a transistor; the current through it, first pin to
    /// second, for a two-terminal part).
    Current(usize),
}

/// What the design aims at.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Target {
    /// What is measured.
    pub quantity: Quantity,
    /// The value aimed at, in volts or amperes by the quantity.
    pub value: f64,
    /// The weight of its relative deviation in the circuit's error.
    pub weight: f64,
    /// The 1-based line of the target's table (0 when built in code).
    pub line: usize,
}

impl Target {
    /// A voltage target at a node, weight 1.
    pub fn node(node: NodeId, v: Volts) -> Target {
        Target {
            quantity: Quantity::Node(node),
            value: v.0,
            weight: 1.0,
            line: 0,
        }
    }

    /// A current target on a part, weight 1.
    pub fn current(part: usize, i: Amps) -> Target {
        Target {
            quantity: Quantity::Current(part),
            value: i.0,
            weight: 1.0,
            line: 0,
        }
    }
}

/// A hard constraint a built circuit must meet.
#[derive(Clone, Debug, PartialEq)]
pub enum Requirement {
    /// The part must sit in one of these regions at every corner checked.
    Region {
        /// The part.
        part: usize,
        /// The regions allowed.
        allowed: Vec<Region>,
    },
    /// The part's current must be at least this much (at typical parameters).
    MinCurrent {
        /// The part.
        part: usize,
        /// The least current.
        amps: Amps,
    },
    /// The stiffness rule, generalised: the part's current at least `times` the base current of the
    /// transistor `over`, with that transistor at its min beta.
    Stiff {
        /// The part whose current is measured (a divider's lower resistor).
        part: usize,
        /// The bipolar transistor whose base current it is held against.
        over: usize,
        /// The ratio required.
        times: f64,
    },
    /// A saturated switch's overdrive: the base current at min beta at least `times` the least base
    /// current that would saturate it there (IC / min beta).
    Overdrive {
        /// The bipolar transistor.
        part: usize,
        /// The overdrive factor required.
        times: f64,
    },
}

/// A slot's own rule, for the ideal design: the targets may leave a slot free (a divider's scale, say), and
/// the rule settles it; a range also bounds the networks the search offers for it.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct SlotRule {
    /// The slot (a part index).
    pub part: usize,
    /// A value to stay near where the targets do not say.
    pub hint: Option<Ohms>,
    /// The least and the greatest value allowed.
    pub range: Option<(Ohms, Ohms)>,
}

/// A circuit the user describes.
#[derive(Clone, Debug, PartialEq)]
pub struct Circuit {
    /// Free-text name.
    pub name: String,
    /// Node names; node 0 is "gnd".
    pub nodes: Vec<String>,
    /// Each node's fixed voltage, if it is a rail (ground is 0 V).
    pub rails: Vec<Option<Volts>>,
    /// The parts, in file order.
    pub parts: Vec<Part>,
    /// What the design aims at.
    pub targets: Vec<Target>,
    /// The hard constraints beyond each part's power.
    pub requirements: Vec<Requirement>,
    /// How slots the targets leave free are settled: a value to stay near, a range to keep within.
    pub rules: Vec<SlotRule>,
    /// Derating and temperatures (the stage model's).
    pub limits: Limits,
    /// The 1-based line of the `[[circuit]]` header (0 when built in code).
    pub line: usize,
}

/// Why a circuit is not a circuit.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum ModelError {
    /// Two parts share a name.
    #[error("two parts are named {0}; rename one")]
    PartTwice(String),
    /// A rail is given twice.
    #[error("rail '{0}' is named twice; give each rail once")]
    RailTwice(String),
    /// Ground given as a rail at a voltage other than 0.
    #[error("'gnd' is the 0 V node and cannot be a rail at {0}; name the rail something else")]
    GroundRail(Volts),
    /// A part with the wrong number of pins.
    #[error("{part} ({kind}) needs {expected} pins, got {got}")]
    Pins {
        /// The part.
        part: String,
        /// Its kind.
        kind: &'static str,
        /// How many it needs.
        expected: usize,
        /// How many it was given.
        got: usize,
    },
    /// A pin on a node that nothing else uses and that is not a rail.
    #[error("node '{node}' ({part} {pin}) joins no other pin and is not a rail{}; check the name or give it a rail", hint.as_ref().map(|h| format!(" (did you mean '{h}'?)")).unwrap_or_default())]
    LonelyNode {
        /// The node.
        node: String,
        /// The part whose pin names it.
        part: String,
        /// Which pin.
        pin: &'static str,
        /// The nearest node name that is used elsewhere.
        hint: Option<String>,
    },
    /// A node with no DC path to a rail or ground.
    #[error("node '{node}' floats: no resistor, junction or channel connects it to a rail or gnd ({part} {pin} is on it); give it a DC path")]
    Floating {
        /// The node.
        node: String,
        /// A part on it.
        part: String,
        /// The pin of that part.
        pin: &'static str,
    },
    /// An op-amp whose supply pin is not a rail.
    #[error("{part}: supply '{node}' must be a rail (an op-amp's output current is drawn from its supplies)")]
    SupplyNotRail {
        /// The op-amp.
        part: String,
        /// The node given.
        node: String,
    },
    /// A build given the wrong number of slot values.
    #[error("the circuit has {expected} slots ({names}) but {got} values were given")]
    SlotCount {
        /// How many slots.
        expected: usize,
        /// Their names.
        names: String,
        /// How many values.
        got: usize,
    },
    /// A resistance that is not a finite positive number.
    #[error("{part} = {ohms} Ω: a resistance must be finite and greater than zero")]
    BadOhms {
        /// The part.
        part: String,
        /// The value.
        ohms: f64,
    },
    /// A circuit with no parts.
    #[error("the circuit has no parts; expected at least one [[circuit.part]]")]
    NoParts,
    /// Two same-polarity transistors with a fixed VBE whose base-emitter junctions are in parallel.
    #[error("{first} and {second} have their base-emitter junctions in parallel ({nodes}) with a fixed VBE, which cannot say how they share the current; give both vbe by the diode law, vbe = {{ volts, at, n }}")]
    ParallelJunctions {
        /// The first transistor, in part order.
        first: String,
        /// The second.
        second: String,
        /// Their shared nodes, as "base 'm', emitter 'gnd'" (one field keeps the error no larger).
        nodes: String,
    },
}

/// One part's parameters at one build, as the solver uses them.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Element {
    /// A resistor of so many ohms.
    Resistor(f64),
    /// A bipolar transistor.
    Bjt(Bjt),
    /// A diode or LED.
    Diode(Diode),
    /// A zener.
    Zener(Zener),
    /// A JFET or MOSFET.
    Fet(SquareLaw),
    /// A current source of so many amperes.
    Current(f64),
    /// A voltage reference.
    Reference(Reference),
    /// An op-amp.
    OpAmp(OpAmp),
}

/// One concrete build of a circuit: what the solver solves.
#[derive(Clone, Debug, PartialEq)]
pub struct Build {
    /// Each part's parameters, in [`Circuit::parts`] order.
    pub elements: Vec<Element>,
    /// The temperature it is solved at.
    pub temperature: Celsius,
}

impl Circuit {
    /// An empty circuit: only ground.
    pub fn new(name: &str) -> Circuit {
        Circuit {
            name: name.to_string(),
            nodes: vec![GROUND_NAME.to_string()],
            rails: vec![Some(Volts(0.0))],
            parts: Vec::new(),
            targets: Vec::new(),
            requirements: Vec::new(),
            rules: Vec::new(),
            limits: crate::stage::design::DEFAULT_LIMITS,
            line: 0,
        }
    }

    /// The node with this name, if any.
    pub fn find_node(&self, name: &str) -> Option<NodeId> {
        self.nodes.iter().position(|n| n == name)
    }

    /// The part with this name, if any.
    pub fn find_part(&self, name: &str) -> Option<usize> {
        self.parts.iter().position(|p| p.name == name)
    }

    /// The node with this name, made if new.
    pub fn node(&mut self, name: &str) -> NodeId {
        match self.find_node(name) {
            Some(n) => n,
            None => {
                self.nodes.push(name.to_string());
                self.rails.push(None);
                self.nodes.len() - 1
            }
        }
    }

    /// Holds a node at a voltage.
    pub fn rail(&mut self, name: &str, v: Volts) -> Result<NodeId, ModelError> {
        if name == GROUND_NAME {
            if v.0 == 0.0 {
                return Ok(GROUND);
            }
            return Err(ModelError::GroundRail(v));
        }
        let n = self.node(name);
        if self.rails[n].is_some() {
            return Err(ModelError::RailTwice(name.to_string()));
        }
        self.rails[n] = Some(v);
        Ok(n)
    }

    /// Adds a part on the named nodes (made if new).
    pub fn add(&mut self, name: &str, kind: Kind, pins: &[&str]) -> Result<usize, ModelError> {
        if self.find_part(name).is_some() {
            return Err(ModelError::PartTwice(name.to_string()));
        }
        let expected = kind.pin_names().len();
        if pins.len() != expected {
            return Err(ModelError::Pins {
                part: name.to_string(),
                kind: kind.name(),
                expected,
                got: pins.len(),
            });
        }
        let pins = pins.iter().map(|p| self.node(p)).collect();
        self.parts.push(Part {
            name: name.to_string(),
            kind,
            pins,
            max_power: None,
            line: 0,
        });
        Ok(self.parts.len() - 1)
    }

    /// The slots (resistors with no value), as part indices in file order.
    pub fn slots(&self) -> Vec<usize> {
        self.parts
            .iter()
            .enumerate()
            .filter(|(_, p)| matches!(p.kind, Kind::Resistor { value: None, .. }))
            .map(|(i, _)| i)
            .collect()
    }

    /// Checks the structure: pins on lonely nodes, floating nodes, op-amp supplies.
    pub fn check(&self) -> Result<(), ModelError> {
        if self.parts.is_empty() {
            return Err(ModelError::NoParts);
        }
        let mut uses = vec![0usize; self.nodes.len()];
        for p in &self.parts {
            for &n in &p.pins {
                uses[n] += 1;
            }
        }
        for p in &self.parts {
            for (k, &n) in p.pins.iter().enumerate() {
                if uses[n] < 2 && self.rails[n].is_none() {
                    let others: Vec<&str> = self
                        .nodes
                        .iter()
                        .enumerate()
                        .filter(|&(i, _)| i != n && (uses[i] >= 2 || self.rails[i].is_some()))
                        .map(|(_, s)| s.as_str())
                        .collect();
                    return Err(ModelError::LonelyNode {
                        node: self.nodes[n].clone(),
                        part: p.name.clone(),
                        pin: p.kind.pin_names()[k],
                        hint: super::file::nearest(&self.nodes[n], &others).map(str::to_string),
                    });
                }
            }
            if let Kind::OpAmp { .. } = p.kind {
                for &n in &p.pins[3..5] {
                    if self.rails[n].is_none() {
                        return Err(ModelError::SupplyNotRail {
                            part: p.name.clone(),
                            node: self.nodes[n].clone(),
                        });
                    }
                }
            }
        }
        self.check_parallel_junctions()?;
        // Union-find over the DC paths; a group holding no fixed node floats.
        let mut root: Vec<usize> = (0..self.nodes.len()).collect();
        fn find(root: &mut [usize], mut a: usize) -> usize {
            while root[a] != a {
                root[a] = root[root[a]];
                a = root[a];
            }
            a
        }
        for p in &self.parts {
            for &(a, b) in p.kind.dc_paths() {
                let (ra, rb) = (find(&mut root, p.pins[a]), find(&mut root, p.pins[b]));
                root[ra] = rb;
            }
        }
        let mut anchored = vec![false; self.nodes.len()];
        for n in 0..self.nodes.len() {
            if self.rails[n].is_some() {
                let r = find(&mut root, n);
                anchored[r] = true;
            }
        }
        for p in &self.parts {
            for (k, &n) in p.pins.iter().enumerate() {
                let r = find(&mut root, n);
                if !anchored[r] {
                    return Err(ModelError::Floating {
                        node: self.nodes[n].clone(),
                        part: p.name.clone(),
                        pin: p.kind.pin_names()[k],
                    });
                }
            }
        }
        Ok(())
    }

    /// Refuses two fixed-VBE transistors of one polarity on the same base and emitter nodes. Both junctions
    /// then hold the same voltage by fiat, so the equations fix only the sum of their base currents: the
    /// Jacobian is singular and the split the solver lands on is arbitrary (once a point with one of them
    /// active at 0 A). Splitting by symmetry would be a guess for unequal betas; the diode law decides it.
    fn check_parallel_junctions(&self) -> Result<(), ModelError> {
        let fixed: Vec<(usize, Polarity)> = self
            .parts
            .iter()
            .enumerate()
            .filter_map(|(i, p)| match &p.kind {
                Kind::Bjt {
                    polarity,
                    transistor,
                } if matches!(transistor.vbe, Vbe::Fixed(_)) => Some((i, *polarity)),
                _ => None,
            })
            .collect();
        for (k, &(i, pi)) in fixed.iter().enumerate() {
            for &(j, pj) in &fixed[k + 1..] {
                let (a, b) = (&self.parts[i], &self.parts[j]);
                if pi == pj && a.pins[1] == b.pins[1] && a.pins[2] == b.pins[2] {
                    return Err(ModelError::ParallelJunctions {
                        first: a.name.clone(),
                        second: b.name.clone(),
                        nodes: format!(
                            "base '{}', emitter '{}'",
                            self.nodes[a.pins[1]], self.nodes[a.pins[2]]
                        ),
                    });
                }
            }
        }
        Ok(())
    }

    /// One build: `slots` gives each slot's resistance in [`Circuit::slots`] order, every range is taken at
    /// `pick`, and the devices are set to temperature `t`.
    pub fn build(&self, slots: &[Ohms], pick: Pick, t: Celsius) -> Result<Build, ModelError> {
        let names = self.slots();
        if names.len() != slots.len() {
            return Err(ModelError::SlotCount {
                expected: names.len(),
                names: names
                    .iter()
                    .map(|&i| self.parts[i].name.as_str())
                    .collect::<Vec<_>>()
                    .join(", "),
                got: slots.len(),
            });
        }
        let mut next = slots.iter();
        let vt = thermal_voltage(t).0;
        let mut elements = Vec::with_capacity(self.parts.len());
        for p in &self.parts {
            let e = match &p.kind {
                Kind::Resistor { value, .. } => {
                    let r = match value {
                        Some(v) => v.0,
                        None => next.next().map_or(f64::NAN, |o| o.0),
                    };
                    if !(r.is_finite() && r > 0.0) {
                        return Err(ModelError::BadOhms {
                            part: p.name.clone(),
                            ohms: r,
                        });
                    }
                    Element::Resistor(r)
                }
                Kind::Bjt {
                    polarity,
                    transistor,
                } => Element::Bjt(Bjt::at(
                    transistor,
                    *polarity,
                    match pick {
                        Pick::Min => transistor.beta.min,
                        Pick::Typ => transistor.beta.typ,
                        Pick::Max => transistor.beta.max,
                    },
                    t,
                )),
                Kind::Diode { volts, at, n, .. } => Element::Diode(Diode {
                    volts: volts.0,
                    at: at.0,
                    nvt: n * vt,
                }),
                Kind::Zener { volts, at, slope } => Element::Zener(Zener {
                    volts: volts.0,
                    at: at.0,
                    slope: slope.0,
                }),
                Kind::Jfet(j) => Element::Fet(j.law(pick)),
                Kind::Mosfet(m) => Element::Fet(m.law(pick)),
                Kind::CurrentSource { amps } => Element::Current(amps.0),
                Kind::Reference { volts, pin } => Element::Reference(Reference {
                    volts: volts.0,
                    pin: pin.0,
                }),
                Kind::OpAmp { gain, headroom } => Element::OpAmp(OpAmp {
                    gain: *gain,
                    headroom: headroom.0,
                }),
            };
            elements.push(e);
        }
        Ok(Build {
            elements,
            temperature: t,
        })
    }

    /// The circuit with every fixed resistor that gives no rating or tolerance taking these, as slots'
    /// parts given by value alone do, so that its dissipation is checked too.
    pub fn with_assumed_parts(&self, tolerance: Tolerance, power: Watts) -> Circuit {
        let mut c = self.clone();
        for p in &mut c.parts {
            if let Kind::Resistor {
                value: Some(_),
                power: pw,
                tolerance: tol,
            } = &mut p.kind
            {
                pw.get_or_insert(power);
                tol.get_or_insert(tolerance);
            }
        }
        c
    }

    /// The build at typical parameters and ambient: the one the error is measured at.
    pub fn typical(&self, slots: &[Ohms]) -> Result<Build, ModelError> {
        self.build(slots, Pick::Typ, self.limits.ambient)
    }
}
