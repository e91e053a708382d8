//! Sweep: a grid of briefs (family × max g × min top g × entry speed) designed in parallel.
//!
//! This stage sits after the optimiser (and reuses [`crate::compare::KeyFigures`]). It owns the
//! grid: parsing axis ranges such as `20..30:11`, numbering every design of the grid, splitting the
//! numbers into shards for array jobs, and running the designs on a rayon pool. Results come back
//! sorted by grid index, and every design is computed on one thread from its own inputs only, so a
//! sweep gives the same numbers whatever the thread count; the export stage formats them with fixed
//! decimals, which makes the CSV byte-identical run to run.
//!
//! Grid order (index 0 first): family outermost, then max g, then min top g, then entry speed
//! innermost, so one curve of the summary plot is one contiguous block of rows.
//!
//! ```
//! use loopwright::sweep::{parse_axis, Shard};
//! assert_eq!(parse_axis("max_g", "4..6:3").unwrap(), vec![4.0, 5.0, 6.0]);
//! assert_eq!(parse_axis("max_g", "4.5").unwrap(), vec![4.5]);
//! assert!(parse_axis("max_g", "6..4:3").is_err());
//! let s = Shard::parse("2/3").unwrap();
//! assert_eq!((0..7).filter(|&i| s.contains(i)).collect::<Vec<_>>(), vec![1, 4]);
//! ```

use rayon::prelude::*;
use serde::{Deserialize, Serialize};

use crate::brief::{Brief, BriefError, BriefInput, ShapeKind, SpeedText};
use crate::compare::KeyFigures;
use crate::optimiser::design_family;

/// Most values one axis may have.
pub const MAX_AXIS_VALUES: usize = 10_000;
/// Most designs one sweep may have (before sharding); a guard against a typo asking for billions.
pub const MAX_DESIGNS: usize = 1_000_000;

/// Most CPU time one sweep job (a whole grid or one shard) may be estimated to take, s: 8 hours
/// (a working night on one machine; illustrative).
/// Above it the grid is refused before it starts (split it into shards for an array job).
pub const MAX_JOB_CPU_S: f64 = 8.0 * 3600.0;

/// A rough estimate of the CPU seconds one design takes, for warnings and the ceiling, not a
/// promise. Figures measured whole-process on the 2-core reference machine (issue 12: clothoid
/// 32 ms, spline 225 ms per design; circle and profile measured here the same way, from memory of
/// those runs) at the default 0.05 m spacing; the cost grows with the number of samples
/// (1/spacing) and, for trains, with the square of the car count (measured here: 6, 12, 24 cars
/// took 6.5, 24 and 88 times one car, fitted by 1 + 0.15 (cars² − 1)).
pub fn estimated_design_s(kind: ShapeKind, spacing_m: f64, cars: usize) -> f64 {
    let base_s = match kind {
        ShapeKind::Circle => 0.02,
        ShapeKind::Clothoid => 0.032,
        ShapeKind::Spline => 0.225,
        ShapeKind::Profile => 0.1,
    };
    let n = cars.max(1) as f64;
    base_s * (0.05 / spacing_m.max(1e-3)) * (1.0 + 0.15 * (n * n - 1.0))
}

/// A sweep definition that cannot be used, and why.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error("sweep {field}: {message}")]
pub struct SweepError {
    pub field: String,
    pub message: String,
}

fn err(field: &str, message: impl Into<String>) -> SweepError {
    SweepError {
        field: field.into(),
        message: message.into(),
    }
}

fn number(field: &str, whole: &str, text: &str) -> Result<f64, SweepError> {
    let v: f64 = text.trim().parse().map_err(|_| {
        err(field, format!("'{whole}': '{text}' is not a number; write START..END:COUNT (e.g. 20..30:11) or one value"))
    })?;
    if !v.is_finite() {
        return Err(err(
            field,
            format!("'{whole}': {} is not a finite number", crate::brief::eng(v)),
        ));
    }
    Ok(v)
}

/// Parse an axis: `START..END:COUNT` (COUNT evenly spaced values, both ends included) or one value.
///
/// Only the syntax is checked here (finite numbers, START < END, 2 ≤ COUNT ≤ [`MAX_AXIS_VALUES`]);
/// whether each value is allowed for its brief field is checked by [`SweepSpec::new`].
pub fn parse_axis(field: &str, text: &str) -> Result<Vec<f64>, SweepError> {
    let t = text.trim();
    if t.is_empty() {
        return Err(err(
            field,
            "empty; write START..END:COUNT (e.g. 20..30:11) or one value",
        ));
    }
    let Some((start, rest)) = t.split_once("..") else {
        if t.contains(':') {
            return Err(err(
                field,
                format!("'{t}' has a count but no range; write START..END:COUNT, e.g. 20..30:11"),
            ));
        }
        return Ok(vec![number(field, t, t)?]);
    };
    let (end, count) = rest
        .split_once(':')
        .map_or((rest, None), |(e, c)| (e, Some(c)));
    let (a, b) = (number(field, t, start)?, number(field, t, end)?);
    let Some(count) = count else {
        return Err(err(
            field,
            format!("'{t}' has no count; write START..END:COUNT, e.g. {a}..{b}:5"),
        ));
    };
    let n: usize = count.trim().parse().map_err(|_| {
        err(
            field,
            format!("'{t}': count '{count}' is not a whole number from 2 to {MAX_AXIS_VALUES}"),
        )
    })?;
    if !(2..=MAX_AXIS_VALUES).contains(&n) {
        return Err(err(
            field,
            format!(
                "'{t}': count {n} is outside 2 to {MAX_AXIS_VALUES} (one value: write it alone)"
            ),
        ));
    }
    if a >= b {
        return Err(err(
            field,
            format!("'{t}': start {a} is not below end {b}; write the smaller value first"),
        ));
    }
    // Endpoints are exact; the others are start + i·step, computed the same way on every machine.
    Ok((0..n)
        .map(|i| {
            if i + 1 == n {
                b
            } else {
                a + (b - a) * i as f64 / (n - 1) as f64
            }
        })
        .collect())
}

/// Parse an entry-speed axis: as [`parse_axis`], with an optional unit after the whole range
/// (`72..108:11 km/h`); values are returned in m/s.
pub fn parse_speed_axis(field: &str, text: &str) -> Result<Vec<f64>, SweepError> {
    let t = text.trim();
    let unit_at = t
        .rfind(|c: char| c.is_ascii_digit() || c == '.')
        .map_or(0, |i| i + 1);
    let (range, unit) = t.split_at(unit_at);
    if unit.trim().is_empty() {
        return parse_axis(field, t);
    }
    // Only a range that parses on its own has a unit after it; otherwise report the syntax.
    let values = parse_axis(field, range).or_else(|_| parse_axis(field, t))?;
    let factor = crate::units::parse_speed_m_s(&format!("1 {}", unit.trim()))
        .map_err(|m| err(field, format!("'{t}': {m}")))?;
    Ok(values.into_iter().map(|v| v * factor).collect())
}

/// Parse a comma-separated list of families, e.g. `circle,clothoid`.
pub fn parse_shapes(text: &str) -> Result<Vec<ShapeKind>, SweepError> {
    let mut out = Vec::new();
    for part in text.split(',') {
        let k = ShapeKind::parse(part).map_err(|e| err("shape", e.message))?;
        if !out.contains(&k) {
            out.push(k);
        }
    }
    Ok(out)
}

/// A value as written in a `[sweep]` table: a number or a range string.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(untagged)]
pub enum AxisText {
    Number(f64),
    Text(String),
}

impl<'de> Deserialize<'de> for AxisText {
    fn deserialize<D: serde::Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        Ok(
            match crate::brief::number_or_text(
                d,
                "one number or a range text START..END:COUNT such as \"20..30:11\"",
            )? {
                Ok(v) => AxisText::Number(v),
                Err(t) => AxisText::Text(t),
            },
        )
    }
}

impl AxisText {
    fn text(&self) -> String {
        match self {
            AxisText::Number(v) => format!("{v}"),
            AxisText::Text(t) => t.clone(),
        }
    }
}

/// The `[sweep]` table of a sweep file, as written.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct SweepInput {
    pub entry_speed: Option<AxisText>,
    pub max_g: Option<AxisText>,
    pub min_top_g: Option<AxisText>,
    /// Families, e.g. `["circle", "clothoid"]`; all when absent.
    pub shapes: Option<Vec<String>>,
}

impl SweepInput {
    /// Fields set in `over` replace those in `self` (flags over a file).
    pub fn overlay(self, over: SweepInput) -> SweepInput {
        SweepInput {
            entry_speed: over.entry_speed.or(self.entry_speed),
            max_g: over.max_g.or(self.max_g),
            min_top_g: over.min_top_g.or(self.min_top_g),
            shapes: over.shapes.or(self.shapes),
        }
    }
}

/// Split a sweep file into its brief fields and its `[sweep]` table. A plain brief (no table) is a
/// valid sweep file too.
pub fn parse_sweep_file(text: &str) -> Result<(BriefInput, SweepInput), SweepError> {
    use crate::brief::toml_error;
    let mut table: toml::Table = toml::from_str(text).map_err(|e| {
        err(
            "(file)",
            format!("not valid TOML: {}", toml_error(text, &e)),
        )
    })?;
    // Errors are taken from a parse of the text itself where possible, so that they carry the
    // line and column (a detached value has none).
    #[derive(Deserialize)]
    struct SweepOnly {
        sweep: Option<SweepInput>,
    }
    let sweep = match toml::from_str::<SweepOnly>(text) {
        Ok(s) => s.sweep.unwrap_or_default(),
        Err(e) => return Err(err("[sweep]", toml_error(text, &e))),
    };
    table.remove("sweep");
    let brief: BriefInput =
        toml::Value::Table(table)
            .try_into()
            .map_err(|e: toml::de::Error| {
                // The same fields parsed from the text locate the error, unless the parse stops first
                // at the `sweep` key a brief does not know.
                match toml::from_str::<BriefInput>(text) {
                    Err(located) if !located.message().contains("`sweep`") => {
                        err("(brief fields)", toml_error(text, &located))
                    }
                    _ => err("(brief fields)", toml_error(text, &e)),
                }
            })?;
    Ok((brief, sweep))
}

/// One design of the grid.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct SweepPoint {
    /// Grid index, 0-based.
    pub index: usize,
    pub kind: ShapeKind,
    pub entry_speed_m_s: f64,
    pub max_g: f64,
    pub min_top_g: f64,
}

/// A checked sweep: the base brief and the values of each axis.
#[derive(Debug, Clone, PartialEq)]
pub struct SweepSpec {
    /// Brief fields shared by every design (its shape, speed and limits are replaced per point).
    pub base: BriefInput,
    pub base_brief: Brief,
    pub shapes: Vec<ShapeKind>,
    pub entry_speed_m_s: Vec<f64>,
    pub max_g: Vec<f64>,
    pub min_top_g: Vec<f64>,
}

impl SweepSpec {
    /// Check a sweep: the base brief resolves, every axis parses and each value is allowed for
    /// its field on its own. Combinations that contradict (min top g not below max g) are not an
    /// error: those designs are reported infeasible with the reason.
    pub fn new(base: BriefInput, sweep: &SweepInput) -> Result<SweepSpec, SweepSetupError> {
        let base_brief = base.resolve()?;
        let axis = |field: &str,
                    given: &Option<AxisText>,
                    default: f64,
                    speed: bool|
         -> Result<Vec<f64>, SweepError> {
            match given {
                None => Ok(vec![default]),
                Some(t) if speed => parse_speed_axis(field, &t.text()),
                Some(t) => parse_axis(field, &t.text()),
            }
        };
        let entry_speed_m_s = axis(
            "entry_speed",
            &sweep.entry_speed,
            base_brief.entry_speed_m_s,
            true,
        )?;
        let max_g = axis("max_g", &sweep.max_g, base_brief.max_g, false)?;
        let min_top_g = axis("min_top_g", &sweep.min_top_g, base_brief.min_top_g, false)?;
        let shapes = match &sweep.shapes {
            None => ShapeKind::ALL.to_vec(),
            Some(list) if list.is_empty() => {
                return Err(err("shapes", "empty list; name at least one family").into());
            }
            Some(list) => parse_shapes(&list.join(","))?,
        };
        // Each value on its own, with the other limit at the end of its range that cannot
        // contradict it, so only the field's own range is tested.
        for &v in &entry_speed_m_s {
            let mut b = base.clone();
            b.entry_speed = Some(SpeedText::Number(v));
            b.resolve()
                .map_err(|e| axis_value_error("entry_speed", v, e))?;
        }
        for &v in &max_g {
            let mut b = base.clone();
            (b.max_g, b.min_top_g) = (Some(v), Some(-1.5));
            b.resolve().map_err(|e| axis_value_error("max_g", v, e))?;
        }
        for &v in &min_top_g {
            let mut b = base.clone();
            (b.max_g, b.min_top_g) = (Some(20.0), Some(v));
            b.resolve()
                .map_err(|e| axis_value_error("min_top_g", v, e))?;
        }
        let spec = SweepSpec {
            base,
            base_brief,
            shapes,
            entry_speed_m_s,
            max_g,
            min_top_g,
        };
        let total = spec
            .shapes
            .len()
            .checked_mul(spec.max_g.len())
            .and_then(|n| n.checked_mul(spec.min_top_g.len()))
            .and_then(|n| n.checked_mul(spec.entry_speed_m_s.len()));
        match total {
            Some(n) if n <= MAX_DESIGNS => Ok(spec),
            _ => Err(err(
                "grid",
                format!(
                    "{} × {} × {} × {} designs is more than {MAX_DESIGNS}; use fewer values or split the study",
                    spec.shapes.len(),
                    spec.max_g.len(),
                    spec.min_top_g.len(),
                    spec.entry_speed_m_s.len()
                ),
            )
            .into()),
        }
    }

    /// Estimated CPU seconds of the designs `shard` runs (all without a shard); see
    /// [`estimated_design_s`].
    pub fn estimated_cpu_s(&self, shard: Option<Shard>) -> f64 {
        let per_family = self.len() / self.shapes.len().max(1);
        let share = shard.map_or(1.0, |s| 1.0 / s.count as f64);
        self.shapes
            .iter()
            .map(|&k| {
                estimated_design_s(k, self.base_brief.spacing_m, self.base_brief.cars)
                    * per_family as f64
                    * share
            })
            .sum()
    }

    /// Number of designs in the whole grid.
    pub fn len(&self) -> usize {
        self.shapes.len() * self.max_g.len() * self.min_top_g.len() * self.entry_speed_m_s.len()
    }

    /// Whether the grid is empty (never, for a checked spec).
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }

    /// The design at grid index `index` (< [`SweepSpec::len`]).
    pub fn point(&self, index: usize) -> SweepPoint {
        let (nv, nt, ng) = (
            self.entry_speed_m_s.len(),
            self.min_top_g.len(),
            self.max_g.len(),
        );
        let v = index % nv;
        let t = (index / nv) % nt;
        let g = (index / (nv * nt)) % ng;
        let f = index / (nv * nt * ng);
        SweepPoint {
            index,
            kind: self.shapes[f],
            entry_speed_m_s: self.entry_speed_m_s[v],
            max_g: self.max_g[g],
            min_top_g: self.min_top_g[t],
        }
    }

    /// The full brief of one design.
    pub fn brief_at(&self, p: &SweepPoint) -> Result<Brief, BriefError> {
        let mut b = self.base.clone();
        b.shape = Some(p.kind.name().to_string());
        b.entry_speed = Some(SpeedText::Number(p.entry_speed_m_s));
        b.max_g = Some(p.max_g);
        b.min_top_g = Some(p.min_top_g);
        let mut brief = b.resolve()?;
        // The limit table was read once, for the base brief; every design enforces it.
        brief.limits_table = self.base_brief.limits_table.clone();
        Ok(brief)
    }

    /// A fingerprint of everything that decides the results (not the name or title), so that
    /// `merge` can refuse shards of different sweeps. FNV-1a, 64 bit, over a canonical text.
    pub fn id(&self) -> String {
        let mut base = self.base_brief.clone();
        base.name = String::new();
        base.title = String::new();
        let bits = |v: &[f64]| {
            v.iter()
                .map(|x| format!("{:016x}", x.to_bits()))
                .collect::<Vec<_>>()
                .join(",")
        };
        let canon = format!(
            "{}|{:?}|{}|{}|{}",
            serde_json::to_string(&base).unwrap_or_default(),
            self.shapes,
            bits(&self.entry_speed_m_s),
            bits(&self.max_g),
            bits(&self.min_top_g)
        );
        // A limit table decides feasibility too (it is not part of the brief's echo).
        let canon = match &self.base_brief.limits_table {
            Some(t) => format!(
                "{canon}|limits:{}",
                serde_json::to_string(t).unwrap_or_default()
            ),
            None => canon,
        };
        let mut h: u64 = 0xcbf2_9ce4_8422_2325;
        for byte in canon.bytes() {
            h ^= u64::from(byte);
            h = h.wrapping_mul(0x0000_0100_0000_01b3);
        }
        format!("{h:016x}")
    }
}

/// Why a sweep could not be set up.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum SweepSetupError {
    #[error("{0}")]
    Brief(#[from] BriefError),
    #[error("{0}")]
    Sweep(#[from] SweepError),
}

fn axis_value_error(field: &str, v: f64, e: BriefError) -> SweepSetupError {
    err(
        field,
        format!(
            "value {} cannot be used: {}",
            crate::brief::eng(v),
            e.message
        ),
    )
    .into()
}

/// Which part of a grid one job runs: grid indices with `index % count == number − 1`.
///
/// Round-robin rather than blocks, so that shards of a grid whose cost varies along an axis (slow
/// and fast families) take similar time.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Shard {
    /// 1-based shard number.
    pub number: usize,
    pub count: usize,
}

impl Shard {
    /// Parse `I/N` with 1 ≤ I ≤ N.
    pub fn parse(text: &str) -> Result<Shard, SweepError> {
        let bad = |m: String| err("shard", m);
        let (i, n) = text.trim().split_once('/').ok_or_else(|| {
            bad(format!(
                "'{text}' is not I/N; e.g. --shard 2/8 runs the second of eight shards"
            ))
        })?;
        let parse = |s: &str| {
            s.trim()
                .parse::<usize>()
                .map_err(|_| bad(format!("'{text}': '{s}' is not a whole number")))
        };
        let (number, count) = (parse(i)?, parse(n)?);
        if count == 0 || count > MAX_DESIGNS {
            return Err(bad(format!(
                "'{text}': the shard count {count} must be from 1 to {MAX_DESIGNS}"
            )));
        }
        if number == 0 || number > count {
            return Err(bad(format!(
                "'{text}': the shard number {number} must be from 1 to {count} (shards count from 1)"
            )));
        }
        Ok(Shard { number, count })
    }

    /// Whether this shard runs grid index `index`.
    pub fn contains(&self, index: usize) -> bool {
        index % self.count == self.number - 1
    }
}

/// The outcome of one design of the grid.
#[derive(Debug, Clone, PartialEq)]
pub struct SweepRow {
    pub point: SweepPoint,
    /// Key figures, or why the design is infeasible (or why its brief is contradictory).
    pub result: Result<KeyFigures, String>,
}

/// Design one grid point.
pub fn run_point(spec: &SweepSpec, index: usize) -> SweepRow {
    let point = spec.point(index);
    let result = match spec.brief_at(&point) {
        Err(e) => Err(e.to_string()),
        Ok(brief) => design_family(&brief, point.kind)
            .map(|d| KeyFigures::of(&d))
            .map_err(|e| e.to_string()),
    };
    SweepRow { point, result }
}

/// Run the grid (or one shard of it) on the current rayon pool; `done` is called after each design
/// (for a progress bar). Rows come back sorted by grid index.
pub fn run(spec: &SweepSpec, shard: Option<Shard>, done: &(dyn Fn() + Sync)) -> Vec<SweepRow> {
    let indices: Vec<usize> = (0..spec.len())
        .filter(|&i| shard.is_none_or(|s| s.contains(i)))
        .collect();
    // `collect` on an indexed parallel iterator keeps input order, so rows are in grid order.
    indices
        .into_par_iter()
        .map(|i| {
            let row = run_point(spec, i);
            done();
            row
        })
        .collect()
}
