//! `loopwright evaluate`: one loop of a family at given shape parameters and size, assessed once
//! with the model (no search) — for power users and for external checks (a script can drive it
//! with `--json` and search over the shape itself).

use clap::Args;
use std::path::PathBuf;

use super::{BriefArgs, CliError};
use crate::export::{json::report_json, write_design};
use crate::model::{Curve, EvalFailure, assess};
use crate::report::{CAUTION, terminal_summary};
use crate::shape::family;

/// Largest top radius accepted, m: far beyond any loop, small enough to sample.
const MAX_TOP_RADIUS_M: f64 = 500.0;

#[derive(Debug, Clone, Args)]
pub struct EvaluateArgs {
    #[command(flatten)]
    pub brief: BriefArgs,
    /// The family's shape parameters, comma separated, in the order `design` reports them (none
    /// for a circle; e.g. 0.8 for a clothoid's spiral_fraction).
    #[arg(
        long,
        value_name = "LIST",
        value_delimiter = ',',
        allow_hyphen_values = true
    )]
    pub params: Vec<f64>,
    /// Heartline radius at the top of the loop (the family's size), m.
    #[arg(long, value_name = "M", allow_hyphen_values = true)]
    pub top_radius: f64,
    /// Folder for the outputs (created if missing).
    #[arg(long, default_value = "loopwright-out")]
    pub out: PathBuf,
    /// Print the JSON report (the same as `<name>.json`) to standard output instead of the summary.
    #[arg(long)]
    pub json: bool,
    /// Print nothing but errors.
    #[arg(long, short)]
    pub quiet: bool,
}

/// Run `evaluate`: the text for standard output. A loop failing a limit is written all the same
/// and returns [`CliError::Fails`] (exit 3) with the report; with `--json` the JSON is printed
/// first either way, so that a script always gets it on standard output.
pub fn run_evaluate(args: &EvaluateArgs) -> Result<String, CliError> {
    let brief = args.brief.resolve()?;
    let kind = brief.shape;
    let Some(fam) = family(kind) else {
        return Err(CliError::Usage(format!(
            "the {kind} family takes its size from the ride, not --top-radius\n\
             hint: use `loopwright design` for it"
        )));
    };
    let r = args.top_radius;
    if !(r.is_finite() && r > 0.0 && r <= MAX_TOP_RADIUS_M) {
        return Err(CliError::Usage(format!(
            "--top-radius {r} m is out of range; allowed more than 0 up to {MAX_TOP_RADIUS_M} m"
        )));
    }
    // The family checks the count, bounds and finiteness of the parameters.
    fam.curvature(&args.params, r).map_err(|e| {
        let bounds: Vec<String> = fam
            .shape_labels()
            .iter()
            .zip(fam.shape_bounds())
            .map(|(l, (lo, hi))| format!("{l} in {lo}..{hi}"))
            .collect();
        CliError::Usage(format!(
            "{e}\nhint: --params takes {} value(s): {}",
            bounds.len(),
            if bounds.is_empty() {
                "none".to_string()
            } else {
                bounds.join(", ")
            }
        ))
    })?;
    let curve = Curve::family(kind, &args.params, r);
    let a = assess(&brief, &curve, fam.shape_labels().to_vec(), 1).map_err(|e| match e {
        EvalFailure::Stall(stall) => CliError::Fails(format!(
            "at the entry speed {:.2} m/s {stall}\n{CAUTION}\n",
            brief.entry_speed_m_s
        )),
        other => CliError::Usage(other.to_string()),
    })?;
    let written = write_design(&a, &args.out)?;
    let mut out = if args.json {
        let bytes = report_json(&a)?;
        String::from_utf8_lossy(&bytes).into_owned()
    } else {
        let mut s = terminal_summary(&a);
        s.push_str("wrote:\n");
        for p in written {
            s.push_str(&format!("  {}\n", p.display()));
        }
        s
    };
    if !out.ends_with('\n') {
        out.push('\n');
    }
    if !a.pass() {
        if args.json {
            // The process exits with a code right after: written and flushed here; a closed
            // pipe is not an error worth hiding the failing limit for.
            let _ = super::write_stdout(&out);
            return Err(CliError::Fails(
                "loopwright evaluate: a limit fails (see \"checks\" in the JSON)\n".into(),
            ));
        }
        return Err(CliError::Fails(out));
    }
    Ok(if args.quiet { String::new() } else { out })
}
