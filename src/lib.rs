//! biasfit: bias a bipolar transistor stage from the resistors you actually have.
//!
//! The library holds all the engineering and never prints, parses flags or exits; the `biasfit` binary is a
//! thin shell over it. Data flows one way: validated input ([`stock`], [`notation`]) → candidate networks
//! ([`network`]) → the selection → the exact operating point and checks → the spread → a report.
//!
//! ```
//! use biasfit::notation::{code, parse_ohms};
//! use biasfit::network::parse_network;
//! use biasfit::{Tolerance, Watts};
//!
//! // The IEC 60062 letter code reads and prints the way the trade writes values.
//! assert_eq!(parse_ohms("4k7").unwrap(), parse_ohms("4700").unwrap());
//! assert_eq!(code(parse_ohms("0.47").unwrap()), "R47");
//!
//! // A network in the command-line notation: 10k in series with two 2k2 in parallel.
//! let net = parse_network("10k+2k2|2k2", Tolerance(0.01), Watts(0.25)).unwrap();
//! assert_eq!(code(net.ohms()), "11k1");
//! ```

#![deny(missing_docs)]
#![forbid(unsafe_code)]

pub mod bench;
pub mod circuit;
pub mod design_file;
pub mod fix;
pub mod input;
pub mod network;
pub mod notation;
pub mod optimise;
pub mod order;
pub mod report;
pub mod save;
pub mod spread;
pub mod stage;
pub mod starter;
pub mod stock;
pub mod units;

pub use network::{Member, Network};
pub use units::{Amps, Celsius, Ohms, Tolerance, Volts, Watts};
