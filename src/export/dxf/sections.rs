//! The fixed parts of a loopwright DXF around its entities: HEADER (units, extents, limits, a
//! view that frames the drawing, brief-derived GUIDs, fixed dates), TABLES (every table head and
//! entry with its own handle and owner), BLOCKS (model and paper space, dimension blocks) and
//! OBJECTS (the root dictionary, layouts, plot style placeholder). Handles of these parts are
//! fixed numbers below [`super::writer::FIRST_FREE_HANDLE`]; the layout follows the DXF 2000
//! reference so that ezdxf's audit finds nothing to fix (`tests/cad_dxf.rs`).

use std::fmt::Write;

use nalgebra::Vector3;

use super::writer::{MODEL_SPACE_RECORD, Writer};

/// Table heads (DXF reference: each table has a handle, owner 0).
const H_LAYER_TABLE: u32 = 0x1;
const H_LTYPE_TABLE: u32 = 0x2;
const H_APPID_TABLE: u32 = 0x3;
const H_DIMSTYLE_TABLE: u32 = 0x4;
const H_STYLE_TABLE: u32 = 0x5;
const H_UCS_TABLE: u32 = 0x6;
const H_VIEW_TABLE: u32 = 0x7;
const H_VPORT_TABLE: u32 = 0x8;
const H_BLOCK_TABLE: u32 = 0x9;
const H_ROOT_DICT: u32 = 0xA;
const H_GROUP_DICT: u32 = 0xC;
const H_LAYOUT_DICT: u32 = 0xD;
const H_PLOTSTYLE_DICT: u32 = 0x12;
const H_PLOTSTYLE_NORMAL: u32 = 0x13;
const H_PAPER_RECORD: u32 = 0x1B;
const H_MODEL_LAYOUT: u32 = 0x1A;
const H_PAPER_LAYOUT: u32 = 0x1E;
const H_VPORT: u32 = 0x23;
const H_STYLE: u32 = 0x29;
const H_APPID: u32 = 0x2A;
const H_DIMSTYLE_STANDARD: u32 = 0x2B;
const H_DIMSTYLE_OURS: u32 = 0x2C;
/// Layers take handles from here (layer "0" first).
const H_FIRST_LAYER: u32 = 0x40;

/// The dimension style loopwright's dimensions use (metres, three decimals).
pub const DIM_STYLE: &str = "LW-METRES";

/// What the fixed parts need to know about the drawing.
pub struct Frame<'a> {
    /// Layers in order with their colour (AutoCAD colour index).
    pub layers: &'a [(&'a str, u8)],
    /// Drawing extents (every entity inside).
    pub min: Vector3<f64>,
    pub max: Vector3<f64>,
    /// Text and arrow size of dimensions, m.
    pub dim_text_m: f64,
    /// 128 bits derived from the brief, for the two GUIDs.
    pub guid_bits: [u64; 2],
}

fn guid(bits: [u64; 2], variant: u64) -> String {
    let a = bits[0] ^ variant.wrapping_mul(0x9E37_79B9_7F4A_7C15);
    let b = bits[1];
    format!(
        "{{{:08X}-{:04X}-{:04X}-{:04X}-{:012X}}}",
        a >> 32,
        (a >> 16) & 0xFFFF,
        a & 0xFFFF,
        b >> 48,
        b & 0xFFFF_FFFF_FFFF
    )
}

/// The whole file: fixed parts around the entities in `w`.
pub fn assemble(mut w: Writer, f: &Frame) -> Vec<u8> {
    // Dimension blocks need BLOCK and ENDBLK handles; take them before the seed is read.
    let block_handles: Vec<(u32, u32)> = (0..w.blocks.len())
        .map(|_| (w.handle(), w.handle()))
        .collect();
    let seed = w.seed();
    let mut o = String::with_capacity(w.out.len() + 16_384);
    header(&mut o, f, seed);
    tables(&mut o, f, &w);
    o.push_str("  0\nSECTION\n  2\nBLOCKS\n");
    for (name, rec, (b, e), paper, body) in [
        ("*Model_Space", MODEL_SPACE_RECORD, (0x18, 0x19), false, ""),
        ("*Paper_Space", H_PAPER_RECORD, (0x1C, 0x1D), true, ""),
    ] {
        block(&mut o, name, rec, b, e, paper, 0, body);
    }
    for (blk, (b, e)) in w.blocks.iter().zip(&block_handles) {
        block(&mut o, &blk.name, blk.record, *b, *e, false, 1, &blk.body);
    }
    o.push_str("  0\nENDSEC\n  0\nSECTION\n  2\nENTITIES\n");
    o.push_str(&w.out);
    o.push_str("  0\nENDSEC\n");
    objects(&mut o);
    o.push_str("  0\nEOF\n");
    w.out.clear();
    o.into_bytes()
}

fn var_point(o: &mut String, name: &str, p: &[f64]) {
    let _ = write!(o, "  9\n{name}\n");
    for (k, v) in p.iter().enumerate() {
        let _ = write!(o, "{:>3}\n{v:.6}\n", 10 * (k + 1));
    }
}

fn header(o: &mut String, f: &Frame, seed: u32) {
    o.push_str(
        "  0\nSECTION\n  2\nHEADER\n  9\n$ACADVER\n  1\nAC1015\n  9\n$ACADMAINTVER\n 70\n6\n",
    );
    o.push_str("  9\n$DWGCODEPAGE\n  3\nANSI_1252\n");
    var_point(o, "$INSBASE", &[0.0, 0.0, 0.0]);
    var_point(o, "$EXTMIN", &[f.min.x, f.min.y, f.min.z]);
    var_point(o, "$EXTMAX", &[f.max.x, f.max.y, f.max.z]);
    var_point(o, "$LIMMIN", &[f.min.x, f.min.y]);
    var_point(o, "$LIMMAX", &[f.max.x, f.max.y]);
    // Units: $INSUNITS 6 = metres, $MEASUREMENT 1 = metric, decimal lengths to 3 places (mm).
    o.push_str("  9\n$INSUNITS\n 70\n6\n  9\n$MEASUREMENT\n 70\n1\n  9\n$LUNITS\n 70\n2\n  9\n$LUPREC\n 70\n3\n");
    let _ = write!(
        o,
        "  9\n$CLAYER\n  8\n0\n  9\n$TEXTSTYLE\n  7\nStandard\n  9\n$DIMSTYLE\n  2\n{DIM_STYLE}\n"
    );
    // Dates are fixed (J2000.0, Julian day 2451545.0): the file depends on the brief only, so
    // two runs of one brief give the same bytes.
    o.push_str("  9\n$TDCREATE\n 40\n2451545.0\n  9\n$TDUPDATE\n 40\n2451545.0\n");
    let _ = write!(o, "  9\n$HANDSEED\n  5\n{seed:X}\n");
    let _ = write!(
        o,
        "  9\n$FINGERPRINTGUID\n  2\n{}\n  9\n$VERSIONGUID\n  2\n{}\n  0\nENDSEC\n",
        guid(f.guid_bits, 1),
        guid(f.guid_bits, 2)
    );
}

fn table_head(o: &mut String, name: &str, h: u32, n: usize) {
    let _ = write!(
        o,
        "  0\nTABLE\n  2\n{name}\n  5\n{h:X}\n330\n0\n100\nAcDbSymbolTable\n 70\n{n}\n"
    );
}

fn record(o: &mut String, kind: &str, h: u32, owner: u32, class: &str, name: &str) {
    let _ = write!(
        o,
        "  0\n{kind}\n  5\n{h:X}\n330\n{owner:X}\n100\nAcDbSymbolTableRecord\n100\n{class}\n  2\n{name}\n 70\n0\n"
    );
}

fn tables(o: &mut String, f: &Frame, w: &Writer) {
    o.push_str("  0\nSECTION\n  2\nTABLES\n");
    // The active viewport frames the whole drawing, so the file opens showing it.
    let (c, size) = ((f.min + f.max) / 2.0, f.max - f.min);
    table_head(o, "VPORT", H_VPORT_TABLE, 1);
    record(
        o,
        "VPORT",
        H_VPORT,
        H_VPORT_TABLE,
        "AcDbViewportTableRecord",
        "*Active",
    );
    let _ = write!(
        o,
        " 10\n0.0\n 20\n0.0\n 11\n1.0\n 21\n1.0\n 12\n{:.6}\n 22\n{:.6}\n 13\n0.0\n 23\n0.0\n 14\n0.5\n 24\n0.5\n 15\n0.5\n 25\n0.5\n 16\n0.0\n 26\n0.0\n 36\n1.0\n 17\n0.0\n 27\n0.0\n 37\n0.0\n 40\n{:.6}\n 41\n1.6\n 42\n50.0\n 43\n0.0\n 44\n0.0\n 50\n0.0\n 51\n0.0\n 71\n0\n 72\n1000\n 73\n1\n 74\n3\n 75\n0\n 76\n0\n 77\n0\n 78\n0\n281\n0\n 65\n0\n146\n0.0\n  0\nENDTAB\n",
        c.x,
        c.y,
        (1.1 * size.y).max(1.1 * size.x / 1.6).max(1.0)
    );
    table_head(o, "LTYPE", H_LTYPE_TABLE, 3);
    for (k, name) in ["ByBlock", "ByLayer", "Continuous"].iter().enumerate() {
        record(
            o,
            "LTYPE",
            0x24 + k as u32,
            H_LTYPE_TABLE,
            "AcDbLinetypeTableRecord",
            name,
        );
        let desc = if *name == "Continuous" {
            "Solid line"
        } else {
            ""
        };
        let _ = write!(o, "  3\n{desc}\n 72\n65\n 73\n0\n 40\n0.0\n");
    }
    o.push_str("  0\nENDTAB\n");
    table_head(o, "LAYER", H_LAYER_TABLE, f.layers.len() + 1);
    for (k, (name, aci)) in std::iter::once(&("0", 7u8)).chain(f.layers).enumerate() {
        record(
            o,
            "LAYER",
            H_FIRST_LAYER + k as u32,
            H_LAYER_TABLE,
            "AcDbLayerTableRecord",
            name,
        );
        let _ = write!(
            o,
            " 62\n{aci}\n  6\nContinuous\n370\n-3\n390\n{H_PLOTSTYLE_NORMAL:X}\n"
        );
    }
    o.push_str("  0\nENDTAB\n");
    table_head(o, "STYLE", H_STYLE_TABLE, 1);
    record(
        o,
        "STYLE",
        H_STYLE,
        H_STYLE_TABLE,
        "AcDbTextStyleTableRecord",
        "Standard",
    );
    o.push_str(" 40\n0.0\n 41\n1.0\n 50\n0.0\n 71\n0\n 42\n2.5\n  3\ntxt\n  4\n\n  0\nENDTAB\n");
    table_head(o, "VIEW", H_VIEW_TABLE, 0);
    o.push_str("  0\nENDTAB\n");
    table_head(o, "UCS", H_UCS_TABLE, 0);
    o.push_str("  0\nENDTAB\n");
    table_head(o, "APPID", H_APPID_TABLE, 1);
    record(
        o,
        "APPID",
        H_APPID,
        H_APPID_TABLE,
        "AcDbRegAppTableRecord",
        "ACAD",
    );
    o.push_str("  0\nENDTAB\n");
    table_head(o, "DIMSTYLE", H_DIMSTYLE_TABLE, 2);
    o.push_str("100\nAcDbDimStyleTable\n");
    let t = f.dim_text_m;
    for (h, name, size, post) in [
        (H_DIMSTYLE_STANDARD, "Standard", 2.5, ""),
        (H_DIMSTYLE_OURS, DIM_STYLE, t, "<> m"),
    ] {
        // DIMSTYLE records carry their handle in group 105 (DXF reference).
        let _ = write!(
            o,
            "  0\nDIMSTYLE\n105\n{h:X}\n330\n{H_DIMSTYLE_TABLE:X}\n100\nAcDbSymbolTableRecord\n100\nAcDbDimStyleTableRecord\n  2\n{name}\n 70\n0\n  3\n{post}\n"
        );
        let _ = write!(
            o,
            " 40\n1.0\n 41\n{size:.6}\n 42\n{:.6}\n 44\n{:.6}\n140\n{size:.6}\n147\n{:.6}\n 77\n1\n271\n3\n277\n2\n340\n{H_STYLE:X}\n",
            size / 2.0,
            size / 2.0,
            size / 4.0
        );
    }
    o.push_str("  0\nENDTAB\n");
    table_head(o, "BLOCK_RECORD", H_BLOCK_TABLE, 2 + w.blocks.len());
    let records = [
        (MODEL_SPACE_RECORD, "*Model_Space", H_MODEL_LAYOUT),
        (H_PAPER_RECORD, "*Paper_Space", H_PAPER_LAYOUT),
    ];
    for (h, name, layout) in records {
        let _ = write!(
            o,
            "  0\nBLOCK_RECORD\n  5\n{h:X}\n330\n{H_BLOCK_TABLE:X}\n100\nAcDbSymbolTableRecord\n100\nAcDbBlockTableRecord\n  2\n{name}\n340\n{layout:X}\n"
        );
    }
    for b in &w.blocks {
        let _ = write!(
            o,
            "  0\nBLOCK_RECORD\n  5\n{:X}\n330\n{H_BLOCK_TABLE:X}\n100\nAcDbSymbolTableRecord\n100\nAcDbBlockTableRecord\n  2\n{}\n340\n0\n",
            b.record, b.name
        );
    }
    o.push_str("  0\nENDTAB\n  0\nENDSEC\n");
}

#[allow(clippy::too_many_arguments)]
fn block(o: &mut String, name: &str, rec: u32, b: u32, e: u32, paper: bool, flags: u8, body: &str) {
    let ps = if paper { " 67\n1\n" } else { "" };
    let _ = write!(
        o,
        "  0\nBLOCK\n  5\n{b:X}\n330\n{rec:X}\n100\nAcDbEntity\n{ps}  8\n0\n100\nAcDbBlockBegin\n  2\n{name}\n 70\n{flags}\n 10\n0.0\n 20\n0.0\n 30\n0.0\n  3\n{name}\n  1\n\n"
    );
    o.push_str(body);
    let _ = write!(
        o,
        "  0\nENDBLK\n  5\n{e:X}\n330\n{rec:X}\n100\nAcDbEntity\n{ps}  8\n0\n100\nAcDbBlockEnd\n"
    );
}

fn layout(o: &mut String, h: u32, name: &str, tab: u8, record: u32) {
    let flags = if tab == 0 { 1024 } else { 0 };
    let _ = write!(
        o,
        "  0\nLAYOUT\n  5\n{h:X}\n330\n{H_LAYOUT_DICT:X}\n100\nAcDbPlotSettings\n  1\n\n  4\nA3\n  6\n\n 40\n7.5\n 41\n20.0\n 42\n7.5\n 43\n20.0\n 44\n420.0\n 45\n297.0\n 46\n0.0\n 47\n0.0\n 48\n0.0\n 49\n0.0\n140\n0.0\n141\n0.0\n142\n1.0\n143\n1.0\n 70\n{flags}\n 72\n1\n 73\n0\n 74\n5\n  7\n\n 75\n16\n 76\n0\n 77\n2\n 78\n300\n147\n1.0\n148\n0.0\n149\n0.0\n100\nAcDbLayout\n  1\n{name}\n 70\n1\n 71\n{tab}\n 10\n0.0\n 20\n0.0\n 11\n420.0\n 21\n297.0\n 12\n0.0\n 22\n0.0\n 32\n0.0\n 14\n0.0\n 24\n0.0\n 34\n0.0\n 15\n0.0\n 25\n0.0\n 35\n0.0\n146\n0.0\n 13\n0.0\n 23\n0.0\n 33\n0.0\n 16\n1.0\n 26\n0.0\n 36\n0.0\n 17\n0.0\n 27\n1.0\n 37\n0.0\n 76\n1\n330\n{record:X}\n"
    );
}

fn objects(o: &mut String) {
    let _ = write!(
        o,
        "  0\nSECTION\n  2\nOBJECTS\n  0\nDICTIONARY\n  5\n{H_ROOT_DICT:X}\n330\n0\n100\nAcDbDictionary\n281\n1\n  3\nACAD_GROUP\n350\n{H_GROUP_DICT:X}\n  3\nACAD_LAYOUT\n350\n{H_LAYOUT_DICT:X}\n  3\nACAD_PLOTSTYLENAME\n350\n{H_PLOTSTYLE_DICT:X}\n"
    );
    let _ = write!(
        o,
        "  0\nDICTIONARY\n  5\n{H_GROUP_DICT:X}\n330\n{H_ROOT_DICT:X}\n100\nAcDbDictionary\n281\n1\n"
    );
    let _ = write!(
        o,
        "  0\nDICTIONARY\n  5\n{H_LAYOUT_DICT:X}\n330\n{H_ROOT_DICT:X}\n100\nAcDbDictionary\n281\n1\n  3\nModel\n350\n{H_MODEL_LAYOUT:X}\n  3\nLayout1\n350\n{H_PAPER_LAYOUT:X}\n"
    );
    let _ = write!(
        o,
        "  0\nACDBDICTIONARYWDFLT\n  5\n{H_PLOTSTYLE_DICT:X}\n330\n{H_ROOT_DICT:X}\n100\nAcDbDictionary\n281\n1\n  3\nNormal\n350\n{H_PLOTSTYLE_NORMAL:X}\n100\nAcDbDictionaryWithDefault\n340\n{H_PLOTSTYLE_NORMAL:X}\n  0\nACDBPLACEHOLDER\n  5\n{H_PLOTSTYLE_NORMAL:X}\n330\n{H_PLOTSTYLE_DICT:X}\n"
    );
    layout(o, H_MODEL_LAYOUT, "Model", 0, MODEL_SPACE_RECORD);
    layout(o, H_PAPER_LAYOUT, "Layout1", 1, H_PAPER_RECORD);
    o.push_str("  0\nENDSEC\n");
}
