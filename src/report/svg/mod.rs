//! Drawings as SVG text: the DC load line of a stage ([`load_line`]) and its schematic ([`schematic`]), both
//! written by hand into a plain string so that no drawing crate is needed and the output is the same on
//! every machine (snapshot-friendly, printable, and valid XML).
//!
//! Everything is drawn in black and greys on white with a few accent colours that survive a monochrome
//! printer as line styles too (solid, dashed, hollow and filled markers). Text is in the reader's sans-serif
//! font; sizes assume 96 px per inch, so a 720 px drawing prints about 19 cm wide.

pub mod load_line;
pub mod schematic;

pub use load_line::{render as load_line_svg, LoadLine};
pub use schematic::{render as schematic_svg, Schematic};

use std::fmt::Write;

/// Escapes text for use inside an SVG element or attribute.
pub fn escape(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    for c in s.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            c if (c as u32) < 0x20 && c != '\n' && c != '\t' => {}
            c => out.push(c),
        }
    }
    out
}

/// Where text is anchored along its baseline.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) enum Anchor {
    Start,
    Middle,
    End,
}

impl Anchor {
    fn name(self) -> &'static str {
        match self {
            Anchor::Start => "start",
            Anchor::Middle => "middle",
            Anchor::End => "end",
        }
    }
}

/// A growing SVG document. Coordinates are printed with at most two decimals, so snapshots are stable and
/// files small.
pub(crate) struct Canvas {
    body: String,
    width: f64,
    height: f64,
}

/// A coordinate as text: two decimals, trailing zeros dropped.
pub(crate) fn num(x: f64) -> String {
    let x = if x.abs() < 5e-3 { 0.0 } else { x };
    let s = format!("{x:.2}");
    let s = s.trim_end_matches('0').trim_end_matches('.');
    if s == "-0" {
        "0".to_string()
    } else {
        s.to_string()
    }
}

impl Canvas {
    pub(crate) fn new(width: f64, height: f64) -> Canvas {
        Canvas {
            body: String::new(),
            width,
            height,
        }
    }

    pub(crate) fn line(&mut self, x1: f64, y1: f64, x2: f64, y2: f64, class: &str) {
        let _ = writeln!(
            self.body,
            r#"<line x1="{}" y1="{}" x2="{}" y2="{}" class="{class}"/>"#,
            num(x1),
            num(y1),
            num(x2),
            num(y2)
        );
    }

    pub(crate) fn polyline(&mut self, points: &[(f64, f64)], class: &str) {
        let pts: Vec<String> = points
            .iter()
            .map(|(x, y)| format!("{},{}", num(*x), num(*y)))
            .collect();
        let _ = writeln!(
            self.body,
            r#"<polyline points="{}" class="{class}"/>"#,
            pts.join(" ")
        );
    }

    pub(crate) fn polygon(&mut self, points: &[(f64, f64)], class: &str) {
        let pts: Vec<String> = points
            .iter()
            .map(|(x, y)| format!("{},{}", num(*x), num(*y)))
            .collect();
        let _ = writeln!(
            self.body,
            r#"<polygon points="{}" class="{class}"/>"#,
            pts.join(" ")
        );
    }

    pub(crate) fn rect(&mut self, x: f64, y: f64, w: f64, h: f64, class: &str) {
        let _ = writeln!(
            self.body,
            r#"<rect x="{}" y="{}" width="{}" height="{}" class="{class}"/>"#,
            num(x),
            num(y),
            num(w),
            num(h)
        );
    }

    pub(crate) fn circle(&mut self, cx: f64, cy: f64, r: f64, class: &str) {
        let _ = writeln!(
            self.body,
            r#"<circle cx="{}" cy="{}" r="{}" class="{class}"/>"#,
            num(cx),
            num(cy),
            num(r)
        );
    }

    pub(crate) fn text(&mut self, x: f64, y: f64, anchor: Anchor, class: &str, s: &str) {
        let _ = writeln!(
            self.body,
            r#"<text x="{}" y="{}" text-anchor="{}" class="{class}">{}</text>"#,
            num(x),
            num(y),
            anchor.name(),
            escape(s)
        );
    }

    /// Opens a group with a tooltip-free label for readers and tests (`data-name`).
    pub(crate) fn group(&mut self, class: &str, name: &str) {
        let _ = writeln!(
            self.body,
            r#"<g class="{class}" data-name="{}">"#,
            escape(name)
        );
    }

    pub(crate) fn end_group(&mut self) {
        self.body.push_str("</g>\n");
    }

    /// The finished document: a standalone SVG with its own style sheet and a title for screen readers.
    pub(crate) fn finish(self, title: &str, style: &str) -> String {
        format!(
            "<svg xmlns=\"http://www.w3.org/2000/svg\" viewBox=\"0 0 {w} {h}\" width=\"{w}\" height=\"{h}\" \
             role=\"img\" font-family=\"DejaVu Sans, Helvetica, Arial, sans-serif\">\n<title>{}</title>\n\
             <style>{style}</style>\n<rect x=\"0\" y=\"0\" width=\"{w}\" height=\"{h}\" fill=\"#ffffff\"/>\n{}</svg>\n",
            escape(title),
            self.body,
            w = num(self.width),
            h = num(self.height),
        )
    }
}

/// Estimated width of text in pixels at a font size: sans-serif glyphs average a little over half the size.
/// Only used to leave room, never to clip, so erring wide is safe.
pub(crate) fn text_width(s: &str, size: f64) -> f64 {
    s.chars().count() as f64 * size * 0.6
}

/// Round tick positions covering [0, max]: steps of 1, 2 or 5 times a power of ten, the step whose count
/// of ticks comes nearest to `want`.
pub(crate) fn ticks(max: f64, want: usize) -> Vec<f64> {
    if !(max > 0.0 && max.is_finite()) {
        return vec![0.0];
    }
    let want = want.max(1) as f64;
    let power = 10f64.powf((max / want).log10().floor());
    let step = [0.5, 1.0, 2.0, 5.0, 10.0, 20.0]
        .into_iter()
        .map(|m| m * power)
        .min_by(|a, b| {
            let da = ((max / a).floor() - want).abs();
            let db = ((max / b).floor() - want).abs();
            da.total_cmp(&db)
        })
        .unwrap_or(power);
    let n = (max / step + 1e-9).floor() as usize;
    (0..=n).map(|k| k as f64 * step).collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn escapes_markup() {
        assert_eq!(
            escape("R1 <drawer \"A&B\">"),
            "R1 &lt;drawer &quot;A&amp;B&quot;&gt;"
        );
        assert_eq!(escape("bin\u{7}3"), "bin3");
    }

    #[test]
    fn numbers_are_short_and_stable() {
        assert_eq!(num(12.0), "12");
        assert_eq!(num(12.345), "12.35");
        assert_eq!(num(-0.001), "0");
        assert_eq!(num(0.5), "0.5");
    }

    #[test]
    fn ticks_are_round_and_cover_the_range() {
        // 0 to 12.6 V in about 6 steps: step 2 gives 6 intervals, nearer than 1 (12) or 5 (2).
        assert_eq!(ticks(12.6, 6), vec![0.0, 2.0, 4.0, 6.0, 8.0, 10.0, 12.0]);
        // 0 to 3.2 mA in about 4 steps: step 1 mA gives 3, step 0.5 mA gives 6: 1 mA is nearer.
        assert_eq!(ticks(3.2e-3, 4).len(), 4);
        for (max, want) in [(7.3, 5), (0.0042, 6), (150.0, 8)] {
            let t = ticks(max, want);
            assert_eq!(t[0], 0.0);
            assert!(*t.last().unwrap() <= max * (1.0 + 1e-9));
            assert!(t.len() >= 2, "{max}: {t:?}");
        }
    }
}
