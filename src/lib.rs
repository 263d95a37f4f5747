//! biasfit: bias a bipolar transistor stage from the resistors you actually have.
//!
//! The library holds all the engineering and never prints, parses flags or exits; the `biasfit` binary is a
//! thin shell over it. Data flows one way: validated input ([`stock`], [`notation`]) → candidate networks
//! ([`network`]) → the selection → the exact operating point and checks → the spread → a report.

#![deny(missing_docs)]
#![forbid(unsafe_code)]

pub mod bench;
pub mod network;
pub mod notation;
pub mod optimise;
pub mod order;
pub mod report;
pub mod save;
pub mod spread;
pub mod stage;
pub mod stock;
pub mod units;

pub use network::{Member, Network};
pub use units::{Amps, Celsius, Ohms, Tolerance, Volts, Watts};
