//! DXF export of the rail centreline and heartline (placeholder until implemented).

use super::ExportError;
use crate::optimiser::Design;

/// DXF bytes of the design.
pub fn dxf_bytes(_design: &Design) -> Result<Vec<u8>, ExportError> {
    Err(ExportError::Encode {
        what: "DXF",
        message: "not implemented yet".into(),
    })
}
