//! Pure renderers of the Monte Carlo histograms: a text chart for the terminal and an SVG chart for a build
//! sheet. Both mark the target and the ±5 % and ±10 % bands, because the question a reader brings is "how
//! many builds land close enough to what I designed for".

use super::svg::escape;
use crate::notation::{engineering, trim_number};
use crate::spread::Histogram;
use std::fmt::Write;

/// What a chart shows: the quantity's name and unit, and the target it is judged against.
#[derive(Clone, Copy, Debug)]
pub struct Axis<'a> {
    /// The quantity ("IC").
    pub name: &'a str,
    /// Its unit symbol ("A").
    pub unit: &'a str,
    /// The target value, in the same unit.
    pub target: f64,
}

/// Which of the bench bands a value lies in, relative to the target: "±5 %", "±10 %", or "" (outside both).
fn band(x: f64, target: f64) -> &'static str {
    let d = (x / target - 1.0).abs();
    if d <= 0.05 {
        "±5 %"
    } else if d <= 0.10 {
        "±10 %"
    } else {
        ""
    }
}

/// A bar of `fraction` of `width` character cells, in eighths of a cell.
fn bar(fraction: f64, width: usize) -> String {
    const PARTIAL: [&str; 8] = ["", "▏", "▎", "▍", "▌", "▋", "▊", "▉"];
    let eighths = (fraction.clamp(0.0, 1.0) * (width * 8) as f64).round() as usize;
    let mut s = "█".repeat(eighths / 8);
    s.push_str(PARTIAL[eighths % 8]);
    s
}

/// The text chart: one row per bin with its centre, its deviation from the target, the bench band it lies
/// in, a bar scaled to the fullest bin, and the count; a ◆ marks the bin holding the target.
pub fn render_text(h: &Histogram, axis: &Axis<'_>) -> String {
    const WIDTH: usize = 40;
    let mut out = String::new();
    let _ = writeln!(
        out,
        "{} of {} builds (target {}; band: centre within ±5 % or ±10 % of it)",
        axis.name,
        h.total(),
        engineering(axis.target, axis.unit)
    );
    let peak = h.counts.iter().copied().max().unwrap_or(0).max(1) as f64;
    let rows: Vec<(String, String, &str, String, String)> = h
        .counts
        .iter()
        .enumerate()
        .map(|(k, &n)| {
            let c = h.centre(k);
            let lo = h.lo + k as f64 * h.width();
            // A target on the top edge belongs to the last bin, as a sample there would.
            let holds_target = axis.target >= lo
                && (axis.target < lo + h.width()
                    || (k + 1 == h.counts.len() && axis.target <= h.hi));
            let dev = 100.0 * (c / axis.target - 1.0);
            (
                engineering(c, axis.unit),
                format!("{}{} %", if dev >= 0.0 { "+" } else { "" }, fixed1(dev)),
                band(c, axis.target),
                format!(
                    "{}{}",
                    if holds_target { "◆" } else { " " },
                    bar(n as f64 / peak, WIDTH)
                ),
                n.to_string(),
            )
        })
        .collect();
    let w0 = rows.iter().map(|r| r.0.chars().count()).max().unwrap_or(0);
    let w1 = rows.iter().map(|r| r.1.chars().count()).max().unwrap_or(0);
    let w4 = rows.iter().map(|r| r.4.len()).max().unwrap_or(0);
    for (value, dev, band, bar, count) in &rows {
        let pad_bar = WIDTH + 1 - bar.chars().count();
        let _ = writeln!(
            out,
            "  {value:>w0$}  {dev:>w1$}  {band:<5}  {bar}{}  {count:>w4$}",
            " ".repeat(pad_bar)
        );
    }
    out
}

/// A number with one decimal ("-4.5", "0.0"), never "-0.0".
fn fixed1(x: f64) -> String {
    let s = format!("{x:.1}");
    if s == "-0.0" {
        "0.0".into()
    } else {
        s
    }
}

/// A whole number with thin-space thousands groups, as the SI brochure writes them: "20 000".
pub fn grouped(n: u64) -> String {
    let digits = n.to_string();
    // The first group takes what is left over from whole groups of three (README: Rust 1.80, so no
    // is_multiple_of).
    let first = match digits.len() % 3 {
        0 => 3,
        r => r,
    };
    let mut out = digits[..first.min(digits.len())].to_string();
    let mut at = first;
    while at < digits.len() {
        out.push('\u{2009}');
        out.push_str(&digits[at..at + 3]);
        at += 3;
    }
    out
}

/// The top of a count axis: the first of 1, 2, 2.5, 5 × 10ⁿ at least 10 % above the tallest bar, so the bar
/// never touches the frame and the ticks fall on round numbers.
pub fn count_axis_top(peak: u64) -> u64 {
    let want = (peak as f64 * 1.1).max(1.0);
    let mut scale = 1.0;
    loop {
        for m in [1.0, 2.0, 2.5, 5.0] {
            let top = m * scale;
            if top >= want && (top.fract() == 0.0) {
                return top as u64;
            }
        }
        scale *= 10.0;
    }
}

/// The SVG chart of one histogram, `width` × `height` pixels, drawn at (`x`, `y`) inside a larger
/// picture: bars under a count axis with headroom above the tallest, the ±10 % and ±5 % bands shaded behind
/// them, the target as a dashed line, and the ends and target labelled on the axis.
pub fn render_svg_at(h: &Histogram, axis: &Axis<'_>, title: &str, x: f64, y: f64) -> String {
    const W: f64 = 420.0;
    const H: f64 = 200.0;
    // Room on the left for the count axis's labels.
    const LEFT: f64 = 46.0;
    const RIGHT: f64 = 10.0;
    const TOP: f64 = 28.0;
    const BOTTOM: f64 = 40.0;
    let plot_w = W - LEFT - RIGHT;
    let plot_h = H - TOP - BOTTOM;
    // The drawn range covers the samples and the ±10 % band, so the bands always show where they are.
    let lo = h.lo.min(axis.target * 0.9).min(axis.target * 1.1);
    let hi = h.hi.max(axis.target * 0.9).max(axis.target * 1.1);
    let span = if hi > lo { hi - lo } else { 1.0 };
    let px = |v: f64| x + LEFT + (v - lo) / span * plot_w;
    let base = y + TOP + plot_h;
    let mut s = String::new();
    let _ = writeln!(
        s,
        r##"<g font-family="sans-serif" font-size="11"><text x="{:.1}" y="{:.1}" font-size="13" font-weight="bold">{}</text>"##,
        x + LEFT,
        y + 16.0,
        escape(title)
    );
    for (frac, fill) in [(0.10, "#e4eef8"), (0.05, "#c6dcf0")] {
        let (a, b) = (axis.target * (1.0 - frac), axis.target * (1.0 + frac));
        let (a, b) = (a.min(b), a.max(b));
        let _ = writeln!(
            s,
            r##"<rect x="{:.1}" y="{:.1}" width="{:.1}" height="{:.1}" fill="{fill}"/>"##,
            px(a),
            y + TOP,
            px(b) - px(a),
            plot_h
        );
    }
    let top = count_axis_top(h.counts.iter().copied().max().unwrap_or(0));
    // The count axis: 0, half and the top, with light grid lines, and what it counts.
    for tick in [0, top / 2, top] {
        let ty = base - tick as f64 / top as f64 * plot_h;
        let _ = writeln!(
            s,
            r##"<line x1="{:.1}" y1="{ty:.1}" x2="{:.1}" y2="{ty:.1}" stroke="#ccc" stroke-width="0.5"/><text x="{:.1}" y="{:.1}" text-anchor="end" class="count">{}</text>"##,
            x + LEFT,
            x + LEFT + plot_w,
            x + LEFT - 4.0,
            ty + 4.0,
            grouped(tick)
        );
    }
    let _ = writeln!(
        s,
        r##"<line x1="{:.1}" y1="{:.1}" x2="{:.1}" y2="{base:.1}" stroke="#333"/><text x="{:.1}" y="{:.1}" text-anchor="middle" transform="rotate(-90 {:.1} {:.1})" fill="#555">builds</text>"##,
        x + LEFT,
        y + TOP,
        x + LEFT,
        x + 10.0,
        y + TOP + plot_h / 2.0,
        x + 10.0,
        y + TOP + plot_h / 2.0
    );
    let peak = top as f64;
    for (k, &n) in h.counts.iter().enumerate() {
        if n == 0 {
            continue;
        }
        let left = h.lo + k as f64 * h.width();
        let bh = n as f64 / peak * plot_h;
        let _ = writeln!(
            s,
            r##"<rect x="{:.1}" y="{:.1}" width="{:.1}" height="{:.1}" fill="#3b6ea5"><title>{}: {n}</title></rect>"##,
            px(left),
            base - bh,
            (px(left + h.width()) - px(left) - 0.5).max(0.5),
            bh,
            escape(&engineering(h.centre(k), axis.unit))
        );
    }
    let _ = writeln!(
        s,
        r##"<line x1="{:.1}" y1="{base:.1}" x2="{:.1}" y2="{base:.1}" stroke="#333"/>"##,
        x + LEFT,
        x + LEFT + plot_w
    );
    let t = px(axis.target);
    let _ = writeln!(
        s,
        r##"<line x1="{t:.1}" y1="{:.1}" x2="{t:.1}" y2="{base:.1}" stroke="#b03030" stroke-dasharray="4 3"/>"##,
        y + TOP
    );
    for (v, anchor, label) in [
        (lo, "start", engineering(lo, axis.unit)),
        (
            axis.target,
            "middle",
            format!("target {}", engineering(axis.target, axis.unit)),
        ),
        (hi, "end", engineering(hi, axis.unit)),
    ] {
        let _ = writeln!(
            s,
            r##"<text x="{:.1}" y="{:.1}" text-anchor="{anchor}">{}</text>"##,
            px(v),
            base + 15.0,
            escape(&label)
        );
    }
    let _ = writeln!(
        s,
        r##"<text x="{:.1}" y="{:.1}" fill="#555">shaded: within ±10 % and ±5 % of target; {} builds</text></g>"##,
        x + LEFT,
        base + 31.0,
        grouped(h.total())
    );
    s
}

/// The size of one chart drawn by [`render_svg_at`].
pub const CHART: (f64, f64) = (420.0, 200.0);

/// A standalone SVG document of charts laid out in rows of `per_row`, each given as (histogram, axis, title).
pub fn render_svg(charts: &[(&Histogram, Axis<'_>, String)], per_row: usize) -> String {
    render_svg_headed(charts, per_row, &[])
}

/// Height of a row's heading line in [`render_svg_headed`].
const HEADING: f64 = 24.0;

/// As [`render_svg`], with a heading line above each row (`headings[i]` over row `i`): where a reader looks
/// first, so a figure that concerns the whole row (the combined yield) goes there, not in one chart's title.
pub fn render_svg_headed(
    charts: &[(&Histogram, Axis<'_>, String)],
    per_row: usize,
    headings: &[String],
) -> String {
    let per_row = per_row.max(1);
    let rows = charts.len().div_ceil(per_row).max(1);
    let head = if headings.is_empty() { 0.0 } else { HEADING };
    let row_h = CHART.1 + head;
    let (w, h) = (
        CHART.0 * per_row.min(charts.len().max(1)) as f64,
        row_h * rows as f64,
    );
    let mut s = format!(
        r##"<svg xmlns="http://www.w3.org/2000/svg" width="{w:.0}" height="{h:.0}" viewBox="0 0 {w:.0} {h:.0}">
<rect width="100%" height="100%" fill="white"/>
"##
    );
    for (row, heading) in headings.iter().enumerate().take(rows) {
        let _ = writeln!(
            s,
            r##"<text x="10" y="{:.1}" font-family="sans-serif" font-size="13" font-weight="bold" class="heading">{}</text>"##,
            row as f64 * row_h + 17.0,
            escape(heading)
        );
    }
    for (i, (hist, axis, title)) in charts.iter().enumerate() {
        let (col, row) = (i % per_row, i / per_row);
        s.push_str(&render_svg_at(
            hist,
            axis,
            title,
            col as f64 * CHART.0,
            row as f64 * row_h + head,
        ));
    }
    s.push_str("</svg>\n");
    s
}

/// A fraction as a percentage with up to 3 significant digits ("97.3 %"), for yields and shares.
pub fn share(fraction: f64) -> String {
    // Below 0.0005 % is rounding noise (a slope that is zero in exact arithmetic), not a figure.
    if fraction.abs() < 5e-6 {
        return "0 %".into();
    }
    format!("{} %", trim_number(100.0 * fraction, 3))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn text_chart_marks_target_and_bands() {
        // Target 2 mA; samples from 1.7 to 2.3 mA in 0.1 mA steps, 6 bins of 0.1 mA.
        let xs: Vec<f64> = (0..=6).map(|k| 1.7e-3 + 0.1e-3 * k as f64).collect();
        let h = Histogram::of(&xs, 6);
        let t = render_text(
            &h,
            &Axis {
                name: "IC",
                unit: "A",
                target: 2e-3,
            },
        );
        let lines: Vec<&str> = t.lines().collect();
        assert_eq!(lines.len(), 7, "{t}");
        // Bin centres 1.75, 1.85, 1.95, 2.05, 2.15, 2.25 mA: -12.5 %, -7.5 %, -2.5 %, +2.5 %, +7.5 %, +12.5 %.
        assert!(lines[1].contains("1.75 mA") && lines[1].contains("-12.5 %"));
        assert!(lines[2].contains("±10 %") && lines[3].contains("±5 %"));
        // 2 mA is the lower edge of the fourth bin.
        assert!(lines[4].contains('◆') && !lines[3].contains('◆'), "{t}");
        assert_eq!(t.matches('◆').count(), 1);
        // A target beyond the builds' range is marked nowhere.
        let t = render_text(
            &h,
            &Axis {
                name: "IC",
                unit: "A",
                target: 2.5e-3,
            },
        );
        assert_eq!(t.matches('◆').count(), 0, "{t}");
        assert_eq!(share(1.1e-15), "0 %");
        assert_eq!(share(0.973), "97.3 %");
    }

    #[test]
    fn svg_is_well_formed_and_escaped() {
        let h = Histogram::of(&[1.0, 2.0, 2.0, 3.0], 3);
        let s = render_svg(
            &[(
                &h,
                Axis {
                    name: "VCE",
                    unit: "V",
                    target: 2.0,
                },
                "stage <a> & b".into(),
            )],
            2,
        );
        assert!(s.starts_with("<svg") && s.trim_end().ends_with("</svg>"));
        assert!(s.contains("stage &lt;a&gt; &amp; b"));
        assert_eq!(s.matches("<g ").count(), s.matches("</g>").count());
        // Three bars, each with a tooltip.
        assert_eq!(s.matches("<title>").count(), 3);
        // A count axis with its ticks: the tallest bar (2) under a top of 5 (10 % headroom, round).
        assert!(s.contains(">builds</text>"));
        assert_eq!(s.matches("class=\"count\"").count(), 3);
        assert!(
            s.contains(">5</text>") && s.contains(">2</text>") && s.contains(">0</text>"),
            "{s}"
        );
    }

    #[test]
    fn count_axes_leave_headroom_on_round_numbers() {
        for (peak, top) in [
            (0, 1),
            (1, 2),
            (2, 5),
            (9, 10),
            (10, 20),
            (45, 50),
            (46, 100),
            (180, 200),
            (2200, 2500),
            (2300, 5000),
        ] {
            assert_eq!(count_axis_top(peak), top, "{peak}");
            assert!(top as f64 >= peak as f64 * 1.1);
        }
        assert_eq!(grouped(20_000), "20\u{2009}000");
        assert_eq!(grouped(2_000), "2\u{2009}000");
        assert_eq!(grouped(999), "999");
        assert_eq!(grouped(1_234_567), "1\u{2009}234\u{2009}567");
    }
}
