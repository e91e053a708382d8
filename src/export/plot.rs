//! Loads-versus-arc-length plot (placeholder until implemented).

use crate::optimiser::Design;

/// SVG text of the loads plot.
pub fn loads_svg(_design: &Design) -> String {
    String::new()
}
