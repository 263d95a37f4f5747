//! The slot fix as aligned text for people: the target, the load, each network found with its error, band,
//! power check and where its parts are, and the nearest E24 and E96 values. Pure: it returns the text, and
//! the model it renders is [`crate::fix::FixReport`] (also the `fix --json` schema).

use crate::fix::{FixPart, FixReport};
use crate::notation::{code, engineering, trim_number};
use std::fmt::Write;

/// The report as aligned text for people; `colour` marks parts over their limit in red.
pub fn render(report: &FixReport, colour: bool) -> String {
    let mut out = String::new();
    let _ = writeln!(
        out,
        "fix {} from {}, up to {} part{}",
        code(report.target),
        report.stock,
        report.max_parts,
        if report.max_parts == 1 { "" } else { "s" }
    );
    if let Some(load) = &report.load {
        let given = match load.kind {
            "watts" => format!("{} in the network", engineering(load.value, "W")),
            "volts" => format!("{} across the network", engineering(load.value, "V")),
            _ => format!("{} through the network", engineering(load.value, "A")),
        };
        let _ = writeln!(
            out,
            "power: {given}; each part held to {} % of its rating",
            trim_number(load.derate * 100.0, 3)
        );
    }
    out.push('\n');
    let mut header = vec!["#", "network", "resistance", "error", "band"];
    if report.load.is_some() {
        header.push("hottest");
    }
    header.push("where");
    let rows: Vec<Vec<String>> = report
        .networks
        .iter()
        .enumerate()
        .map(|(i, n)| {
            let mut row = vec![
                (i + 1).to_string(),
                n.network.clone(),
                code(n.ohms),
                error_text(n.error),
                band_text(n.band),
            ];
            if let (Some(hot), Some(ok)) = (n.hottest, n.power_ok) {
                row.push(format!(
                    "{} % {}",
                    trim_number(hot * 100.0, 3),
                    if ok { "ok" } else { "over" }
                ));
            }
            row.push(where_text(&n.parts));
            row
        })
        .collect();
    let header: Vec<String> = header.into_iter().map(String::from).collect();
    let width = |c: usize| {
        std::iter::once(&header)
            .chain(&rows)
            .map(|r| r[c].chars().count())
            .max()
            .unwrap_or(0)
    };
    let widths: Vec<usize> = (0..header.len()).map(width).collect();
    let hot_column = report.load.as_ref().map(|_| header.len() - 2);
    for row in std::iter::once(&header).chain(&rows) {
        let mut line = String::from(" ");
        for (c, cell) in row.iter().enumerate() {
            let last = c + 1 == row.len();
            let pad = widths[c].saturating_sub(cell.chars().count());
            let text = if c == 0 {
                format!("{}{cell}", " ".repeat(pad))
            } else if last {
                cell.clone()
            } else {
                format!("{cell}{}", " ".repeat(pad))
            };
            let text = if colour && Some(c) == hot_column && cell.ends_with("over") {
                format!("\x1b[31m{text}\x1b[0m")
            } else {
                text
            };
            line.push(' ');
            line.push_str(&text);
            if !last {
                line.push(' ');
            }
        }
        let _ = writeln!(out, "{}", line.trim_end());
    }
    let baseline = report
        .baseline
        .iter()
        .map(|b| {
            format!(
                "{} {} {} ({})",
                b.series,
                code(b.ohms),
                error_text(b.error),
                if b.in_stock { "on hand" } else { "not on hand" }
            )
        })
        .collect::<Vec<_>>()
        .join(", ");
    out.push('\n');
    if let Some(load) = &report.load {
        let _ = writeln!(
            out,
            "  hottest: the hottest part's dissipation as a share of its rating (limit {} %)",
            trim_number(load.derate * 100.0, 3)
        );
    }
    let _ = writeln!(out, "  nearest single value: {baseline}");
    for note in &report.notes {
        let _ = writeln!(out, "  {note}");
    }
    out
}

/// An error in % (3 significant digits), in ppm below 0.1 %, or "exact" below a part per billion.
pub fn error_text(e: f64) -> String {
    let sign = if e < 0.0 { "-" } else { "+" };
    if e.abs() < 1e-9 {
        "exact".into()
    } else if e.abs() < 1e-3 {
        format!("{sign}{} ppm", trim_number(e.abs() * 1e6, 3))
    } else {
        format!("{sign}{} %", trim_number(e.abs() * 100.0, 3))
    }
}

/// A band as "±1 %" when symmetric, else "-3.04/+2.96 %".
pub fn band_text((low, high): (f64, f64)) -> String {
    if (low + high).abs() < 1e-9 {
        format!("±{} %", trim_number(high * 100.0, 3))
    } else {
        let signed = |x: f64| {
            format!(
                "{}{}",
                if x < 0.0 { "-" } else { "+" },
                trim_number(x.abs() * 100.0, 3)
            )
        };
        format!("{}/{} %", signed(low), signed(high))
    }
}

/// Where the members are: "2× 4k7 in C8; 1k in C7", one entry per stock part in member order (a part's
/// own locations are joined by commas, so parts are joined by semicolons).
fn where_text(parts: &[FixPart]) -> String {
    let mut groups: Vec<(&FixPart, usize)> = Vec::new();
    for p in parts {
        match groups.iter_mut().find(|(q, _)| {
            (q.ohms, q.tolerance, q.power, &q.location)
                == (p.ohms, p.tolerance, p.power, &p.location)
        }) {
            Some((_, n)) => *n += 1,
            None => groups.push((p, 1)),
        }
    }
    groups
        .iter()
        .map(|(p, n)| {
            let count = if *n > 1 {
                format!("{n}× ")
            } else {
                String::new()
            };
            match &p.location {
                Some(l) => format!("{count}{} in {l}", code(p.ohms)),
                None => format!("{count}{} (no location)", code(p.ohms)),
            }
        })
        .collect::<Vec<_>>()
        .join("; ")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn errors_and_bands_read_well() {
        assert_eq!(error_text(0.0), "exact");
        assert_eq!(error_text(1e-12), "exact");
        assert_eq!(error_text(12.3e-6), "+12.3 ppm");
        assert_eq!(error_text(-0.000_999), "-999 ppm");
        assert_eq!(error_text(0.006_85), "+0.685 %");
        assert_eq!(error_text(-0.17), "-17 %");
        assert_eq!(band_text((-0.05, 0.05)), "±5 %");
        assert_eq!(band_text((-0.0304, 0.0296)), "-3.04/+2.96 %");
    }
}
