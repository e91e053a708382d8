//! Elevation drawing of the loop (placeholder until implemented).

use crate::optimiser::Design;

/// SVG text of the elevation.
pub fn elevation_svg(_design: &Design) -> String {
    String::new()
}
