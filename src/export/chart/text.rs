//! Words on a drawing: text elements in either [`Look`], wrapping and clipping, the legend and
//! the caution block.

use svg::Node;
use svg::node::element::{Group, Text};

use super::{FONT, Look, colour, px, rule};
use crate::report::CAUTION;

/// Text safe for XML 1.0: control characters (not allowed there) become spaces.
pub fn clean_text(text: &str) -> String {
    text.chars()
        .map(|c| if c.is_control() { ' ' } else { c })
        .collect()
}

/// Split `text` at whitespace into lines of at most `width` characters (longer words stay whole).
pub fn wrap(text: &str, width: usize) -> Vec<String> {
    let mut lines = Vec::new();
    let mut line = String::new();
    for word in text.split_whitespace() {
        if !line.is_empty() && line.chars().count() + 1 + word.chars().count() > width {
            lines.push(std::mem::take(&mut line));
        }
        if !line.is_empty() {
            line.push(' ');
        }
        line.push_str(word);
    }
    if !line.is_empty() {
        lines.push(line);
    }
    lines
}

/// At most `n` characters of `s`, with an ellipsis if cut.
pub fn clip(s: &str, n: usize) -> String {
    if s.chars().count() <= n {
        s.to_string()
    } else {
        format!("{}…", s.chars().take(n).collect::<String>())
    }
}

/// Width of `content` set at `size_px`, px: an upper estimate from an average advance of 0.62 em
/// per character (0.68 em bold). DejaVu Sans averages about 0.55 em over lower-case text and its
/// widest common glyphs reach about 0.7 em (from memory of the font's metrics), so labels placed
/// with this estimate keep clear of what is beside them.
pub fn text_width_px(content: &str, size_px: f64, bold: bool) -> f64 {
    let em = if bold { 0.68 } else { 0.62 };
    content.chars().count() as f64 * em * size_px
}

/// The font size, at most `size_px` (and never below 9 px), at which `content` fits in
/// `width_px`: a long title is set smaller instead of being cut.
pub fn fitting_font_px(content: &str, size_px: f64, width_px: f64, bold: bool) -> f64 {
    let at_one = text_width_px(content, 1.0, bold).max(1e-9);
    (width_px / at_one).min(size_px).max(9.0)
}

/// A [`Look::Drawing`] `<text>` at (x, y) px in [`FONT`] and ink; `anchor` is "start", "middle"
/// or "end". Control characters become spaces.
pub fn text(x: f64, y: f64, content: &str, size_px: f64, anchor: &str) -> Text {
    Text::new(clean_text(content))
        .set("x", px(x))
        .set("y", px(y))
        .set("font-size", px(size_px))
        .set("text-anchor", anchor)
        .set("font-family", FONT)
        .set("fill", colour::INK)
}

/// A [`Look::Sheet`] `<text>` at (x, y) px: position only, the font comes from its group
/// ([`sheet_font`]).
pub fn bare_text(x: f64, y: f64, content: &str) -> Text {
    Text::new(content).set("x", px(x)).set("y", px(y))
}

/// `node` (a group, or one text) with the sheet look's font: generic sans-serif at `size_px`.
pub fn sheet_font<N: Node>(mut node: N, size_px: f64) -> N {
    node.assign("font-family", "sans-serif");
    node.assign("font-size", size_px);
    node
}

/// A legend entry: label, stroke colour, optional dash pattern.
pub type LegendEntry<'a> = (&'a str, &'a str, Option<&'a str>);

/// A legend: a 28 px line sample and a label per entry, stacked from (x, y) down, 20 px apart.
/// The sheet look writes a dash for every sample ("none" when solid).
pub fn legend<L: AsRef<str>>(
    look: Look,
    x: f64,
    y: f64,
    entries: &[(L, &str, Option<&str>)],
) -> Group {
    let mut g = match look {
        Look::Drawing => Group::new().set("id", "legend"),
        Look::Sheet => sheet_font(Group::new(), 12.0),
    };
    for (k, (label, stroke, dash)) in entries.iter().enumerate() {
        let yy = y + 20.0 * k as f64;
        let sample = rule(x, yy, x + 28.0, yy, stroke).set("stroke-width", 2.5);
        let (sample, label) = match look {
            Look::Drawing => (
                match dash {
                    Some(d) => sample.set("stroke-dasharray", *d),
                    None => sample,
                },
                text(x + 36.0, yy + 4.5, label.as_ref(), 13.0, "start"),
            ),
            Look::Sheet => (
                sample.set("stroke-dasharray", dash.unwrap_or("none")),
                bare_text(x + 34.0, yy + 4.0, label.as_ref()),
            ),
        };
        g = g.add(sample).add(label);
    }
    g
}

/// The caution, wrapped to `chars` characters a line, from baseline `y` down; returns the group
/// and the y of the last baseline. Drawing look: muted 12 px lines 16 px apart; sheet look: red
/// 10 px lines 12 px apart.
pub fn caution_block(look: Look, x: f64, y: f64, chars: usize) -> (Group, f64) {
    let (mut g, pitch) = match look {
        Look::Drawing => (Group::new().set("id", "caution"), 16.0),
        Look::Sheet => (
            sheet_font(Group::new(), 10.0).set("fill", colour::SHEET_CAUTION),
            12.0,
        ),
    };
    let mut yy = y;
    for (k, line) in wrap(CAUTION, chars).iter().enumerate() {
        yy = y + pitch * k as f64;
        g = g.add(match look {
            Look::Drawing => text(x, yy, line, 12.0, "start").set("fill", colour::MUTED),
            Look::Sheet => bare_text(x, yy, line),
        });
    }
    (g, yy)
}

#[cfg(test)]
mod tests {
    use super::*;

    // Wrapping must not lose or reorder words and must respect the width.
    #[test]
    fn wrap_respects_width_and_keeps_words() {
        let lines = wrap(CAUTION, 40);
        assert!(lines.len() > 3);
        assert!(lines.iter().all(|l| l.chars().count() <= 40));
        assert_eq!(
            lines.join(" "),
            CAUTION.split_whitespace().collect::<Vec<_>>().join(" ")
        );
        assert!(wrap("", 10).is_empty());
        // Width counts characters, not bytes: "é" is two bytes.
        assert_eq!(wrap("éé éé", 5), ["éé éé"]);
    }
}
