//! The stock summary (`biasfit stock FILE`) as text for people: the counts, the columns read, the decades,
//! the common values missing and the mix of tolerances and ratings. The model is [`crate::stock::Summary`].

use crate::notation::{code, engineering, trim_number};
use crate::stock::Summary;
use crate::units::Ohms;
use itertools::Itertools;

/// The summary as an aligned table for people.
pub fn render(s: &Summary) -> String {
    use std::fmt::Write;
    let mut out = String::new();
    let _ = writeln!(out, "stock {}", s.file);
    let _ = writeln!(
        out,
        "  {} distinct values, {} pieces{}",
        s.distinct,
        s.pieces,
        if s.empty > 0 {
            format!(" ({} listed with none left)", s.empty)
        } else {
            String::new()
        }
    );
    if let Some((lo, hi)) = s.range {
        let _ = writeln!(out, "  from {} to {}", code(Ohms(lo)), code(Ohms(hi)));
    }
    // Said here, once, rather than by every command that reads the file.
    let read = s
        .columns
        .iter()
        .map(|(ours, theirs)| {
            if ours.eq_ignore_ascii_case(theirs) {
                ours.clone()
            } else {
                format!("{ours} ← \"{theirs}\"")
            }
        })
        .join(", ");
    let _ = writeln!(out, "  columns read ({}-separated): {read}", s.delimiter);
    let _ = writeln!(out, "\n  decade         values  pieces");
    for d in &s.decades {
        let label = format!("{} – {}", code(Ohms(d.from)), code(Ohms(d.from * 10.0)));
        let _ = writeln!(out, "  {:<14} {:>6}  {:>6}", label, d.values, d.pieces);
    }
    let list = |v: &[f64]| -> String {
        const SHOWN: usize = 24;
        let mut line = v.iter().take(SHOWN).map(|x| code(Ohms(*x))).join(" ");
        if v.len() > SHOWN {
            let _ = write!(line, " … (+{} more)", v.len() - SHOWN);
        }
        if v.is_empty() {
            line.push_str("none");
        }
        line
    };
    let _ = writeln!(
        out,
        "\n  missing E12 ({}): {}",
        s.missing_e12.len(),
        list(&s.missing_e12)
    );
    let _ = writeln!(
        out,
        "  missing E24 ({}): {}",
        s.missing_e24.len(),
        list(&s.missing_e24)
    );
    if s.off_series > 0 {
        let _ = writeln!(out, "  {} value(s) outside E24", s.off_series);
    }
    let tol = s
        .tolerances
        .iter()
        .map(|m| format!("{} % × {}", trim_number(m.value * 100.0, 3), m.pieces))
        .join(", ");
    let pow = s
        .powers
        .iter()
        .map(|m| format!("{} × {}", engineering(m.value, "W"), m.pieces))
        .join(", ");
    let _ = writeln!(out, "\n  tolerance: {tol}");
    let _ = writeln!(out, "  power:     {pow}");
    out
}
