//! A small ASCII DXF (AutoCAD 2000, AC1015) writer: group codes straight into one buffer, handles
//! from one counter, and the entity types loopwright draws (LINE, LWPOLYLINE, 3D POLYLINE, SPLINE,
//! SOLID, TEXT, MTEXT, DIMENSION with its geometry block). The file's fixed parts (header, tables,
//! layouts, dictionaries) are in [`super::sections`]. Every number is written with a fixed count
//! of decimals, so the same drawing always gives the same bytes.

use std::fmt::Write;

use nalgebra::{Vector2, Vector3};

/// Decimals of every number: nanometres in a drawing in metres. Micrometres were not enough: a
/// reader sampling a spline every few centimetres and differentiating twice turned 0.5 µm of
/// rounding into false onset (tens of g/s) at the loop entry.
const DECIMALS: usize = 9;

/// First handle given to entities; the fixed objects of [`super::sections`] use handles below it.
pub const FIRST_FREE_HANDLE: u32 = 0x100;

/// Handle of the model space block record, the owner of every model-space entity.
pub const MODEL_SPACE_RECORD: u32 = 0x17;

/// A cubic B-spline in DXF form: control points and the full knot vector (degree 3).
#[derive(Debug, Clone, PartialEq)]
pub struct Nurbs {
    pub control: Vec<Vector3<f64>>,
    pub knots: Vec<f64>,
}

/// A dimension's geometry block, drawn by the writer (CAD programs show the block as it is).
#[derive(Debug, Clone, PartialEq)]
pub struct DimBlock {
    /// Block record handle.
    pub record: u32,
    /// Block name, `*D<n>`.
    pub name: String,
    /// The block's entities, already encoded, owned by `record`.
    pub body: String,
}

/// One entity buffer with its handle counter.
#[derive(Debug)]
pub struct Writer {
    pub out: String,
    next: u32,
    /// Geometry blocks of the dimensions written so far.
    pub blocks: Vec<DimBlock>,
}

impl Default for Writer {
    fn default() -> Writer {
        Writer::new()
    }
}

impl Writer {
    pub fn new() -> Writer {
        Writer {
            out: String::with_capacity(1 << 16),
            next: FIRST_FREE_HANDLE,
            blocks: Vec::new(),
        }
    }

    /// A fresh handle.
    pub fn handle(&mut self) -> u32 {
        let h = self.next;
        self.next += 1;
        h
    }

    /// The next handle that would be given ($HANDSEED).
    pub fn seed(&self) -> u32 {
        self.next
    }

    fn common(&mut self, kind: &str, layer: &str, owner: u32, class: &str) {
        let h = self.handle();
        let o = &mut self.out;
        let _ = write!(
            o,
            "  0\n{kind}\n  5\n{h:X}\n330\n{owner:X}\n100\nAcDbEntity\n  8\n{layer}\n"
        );
        // Entities inside a dimension block take the dimension's colour (0 = by block).
        if owner != MODEL_SPACE_RECORD {
            o.push_str(" 62\n0\n");
        }
        let _ = write!(o, "100\n{class}\n");
    }

    /// A group code line: the code right-aligned in three columns, as `{code:>3}` (the codes
    /// written here are below 1000).
    fn group_code(&mut self, code: u16) {
        self.out.push_str(match code {
            0..=9 => "  ",
            10..=99 => " ",
            _ => "",
        });
        crate::export::number::push_integer(&mut self.out, u64::from(code));
        self.out.push('\n');
    }

    fn num(&mut self, code: u16, v: f64) {
        self.group_code(code);
        crate::export::number::push_fixed(&mut self.out, v, DECIMALS);
        self.out.push('\n');
    }

    fn int(&mut self, code: u16, v: i64) {
        self.group_code(code);
        let _ = writeln!(self.out, "{v}");
    }

    fn text(&mut self, code: u16, v: &str) {
        self.group_code(code);
        self.out.push_str(v);
        self.out.push('\n');
    }

    fn point(&mut self, code: u16, p: Vector3<f64>) {
        self.num(code, p.x);
        self.num(code + 10, p.y);
        self.num(code + 20, p.z);
    }

    fn point2(&mut self, code: u16, p: Vector2<f64>) {
        self.point(code, Vector3::new(p.x, p.y, 0.0));
    }

    /// A LINE.
    pub fn line(&mut self, layer: &str, owner: u32, a: Vector3<f64>, b: Vector3<f64>) {
        self.common("LINE", layer, owner, "AcDbLine");
        self.point(10, a);
        self.point(11, b);
    }

    /// A filled triangle (SOLID with its third corner doubled), for arrowheads.
    pub fn triangle(&mut self, layer: &str, owner: u32, p: [Vector2<f64>; 3]) {
        self.common("SOLID", layer, owner, "AcDbTrace");
        // SOLID corners are in zig-zag order; a triangle repeats its last corner.
        for (code, q) in [(10, p[0]), (11, p[1]), (12, p[2]), (13, p[2])] {
            self.point2(code, q);
        }
    }

    /// An open LWPOLYLINE in the XY plane.
    pub fn lwpolyline(&mut self, layer: &str, points: &[Vector2<f64>]) {
        self.common("LWPOLYLINE", layer, MODEL_SPACE_RECORD, "AcDbPolyline");
        self.int(90, points.len() as i64);
        self.int(70, 0);
        for p in points {
            self.num(10, p.x);
            self.num(20, p.y);
        }
    }

    /// A 3D POLYLINE: the POLYLINE, one VERTEX per point and the SEQEND.
    pub fn polyline3d(&mut self, layer: &str, points: &[Vector3<f64>]) {
        self.common("POLYLINE", layer, MODEL_SPACE_RECORD, "AcDb3dPolyline");
        let owner = self.next - 1;
        self.int(66, 1);
        self.point(10, Vector3::zeros());
        self.int(70, 8);
        for p in points {
            let h = self.handle();
            let _ = write!(
                self.out,
                "  0\nVERTEX\n  5\n{h:X}\n330\n{owner:X}\n100\nAcDbEntity\n  8\n{layer}\n100\nAcDbVertex\n100\nAcDb3dPolylineVertex\n"
            );
            self.point(10, *p);
            self.int(70, 32);
        }
        let h = self.handle();
        let _ = write!(
            self.out,
            "  0\nSEQEND\n  5\n{h:X}\n330\n{owner:X}\n100\nAcDbEntity\n  8\n{layer}\n"
        );
    }

    /// A non-rational cubic SPLINE (flag 8: planar is not claimed, so 3D curves stay valid).
    pub fn spline(&mut self, layer: &str, s: &Nurbs) {
        self.common("SPLINE", layer, MODEL_SPACE_RECORD, "AcDbSpline");
        self.int(70, 8);
        self.int(71, 3);
        self.int(72, s.knots.len() as i64);
        self.int(73, s.control.len() as i64);
        self.int(74, 0);
        // Knot and control point tolerances as AutoCAD writes them by default.
        self.num(42, 1e-10);
        self.num(43, 1e-10);
        for k in &s.knots {
            self.num(40, *k);
        }
        for c in &s.control {
            self.point(10, *c);
        }
    }

    /// A single-line TEXT with its left end at `at`, in the XY plane.
    pub fn text_line(&mut self, layer: &str, owner: u32, at: Vector2<f64>, height: f64, s: &str) {
        self.common("TEXT", layer, owner, "AcDbText");
        self.point2(10, at);
        self.num(40, height);
        self.text(1, s);
        self.text(100, "AcDbText");
    }

    #[allow(clippy::too_many_arguments)]
    /// An MTEXT block: `lines` joined with paragraph breaks, placed at `at` by `attach` (1 top left,
    /// 4 middle left, 5 middle centre), rotated `angle_deg`.
    pub fn mtext(
        &mut self,
        layer: &str,
        owner: u32,
        at: Vector2<f64>,
        height: f64,
        attach: i64,
        angle_deg: f64,
        lines: &[String],
    ) {
        self.common("MTEXT", layer, owner, "AcDbMText");
        self.point2(10, at);
        self.num(40, height);
        // Reference width: room for the longest line (a character is under a text height wide),
        // so readers do not wrap it.
        let longest = lines.iter().map(|l| l.chars().count()).max().unwrap_or(1);
        self.num(41, height * (longest + 2) as f64);
        self.int(71, attach);
        self.int(72, 1);
        let all = lines.join("\\P");
        // Group 1 holds the last 250 characters at most; earlier chunks go in group 3.
        let chars: Vec<char> = all.chars().collect();
        let chunks: Vec<String> = chars.chunks(250).map(|c| c.iter().collect()).collect();
        for c in &chunks[..chunks.len().saturating_sub(1)] {
            self.text(3, c);
        }
        self.text(1, chunks.last().map_or("", |s| s.as_str()));
        self.text(7, "Standard");
        self.num(50, angle_deg);
    }

    /// The block of a dimension about to be written: a record handle and a name; entities are
    /// written into it by `draw` through a nested writer that shares this one's handles.
    pub fn dim_block(&mut self, draw: impl FnOnce(&mut Writer, u32)) -> String {
        let record = self.handle();
        let name = format!("*D{}", self.blocks.len() + 1);
        let mut inner = Writer {
            out: String::new(),
            next: self.next,
            blocks: Vec::new(),
        };
        draw(&mut inner, record);
        self.next = inner.next;
        self.blocks.push(DimBlock {
            record,
            name: name.clone(),
            body: inner.out,
        });
        name
    }

    /// A linear DIMENSION (rotated type) between `p1` and `p2`, its line through `line_at` at
    /// `angle_deg`; `block` names its drawn geometry and `measured` is the distance.
    #[allow(clippy::too_many_arguments)]
    pub fn linear_dimension(
        &mut self,
        layer: &str,
        style: &str,
        block: &str,
        p1: Vector2<f64>,
        p2: Vector2<f64>,
        line_at: Vector2<f64>,
        text_at: Vector2<f64>,
        angle_deg: f64,
        measured: f64,
    ) {
        self.common("DIMENSION", layer, MODEL_SPACE_RECORD, "AcDbDimension");
        self.text(2, block);
        self.point2(10, line_at);
        self.point2(11, text_at);
        // Type 0 (rotated, horizontal or vertical) + 32 (the block belongs to this dimension).
        self.int(70, 32);
        self.int(71, 5);
        self.num(42, measured);
        self.text(3, style);
        self.text(100, "AcDbAlignedDimension");
        self.point2(13, p1);
        self.point2(14, p2);
        self.num(50, angle_deg);
        self.text(100, "AcDbRotatedDimension");
    }

    /// A radial DIMENSION from `centre` to `on_curve`.
    #[allow(clippy::too_many_arguments)]
    pub fn radial_dimension(
        &mut self,
        layer: &str,
        style: &str,
        block: &str,
        centre: Vector2<f64>,
        on_curve: Vector2<f64>,
        text_at: Vector2<f64>,
        measured: f64,
    ) {
        self.common("DIMENSION", layer, MODEL_SPACE_RECORD, "AcDbDimension");
        self.text(2, block);
        self.point2(10, centre);
        self.point2(11, text_at);
        // Type 4 (radius) + 32.
        self.int(70, 36);
        self.int(71, 5);
        self.num(42, measured);
        self.text(3, style);
        self.text(100, "AcDbRadialDimension");
        self.point2(15, on_curve);
        self.num(40, 0.0);
    }
}
