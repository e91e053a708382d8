//! The study commands: `compare`, `sweep` and `merge` (flags, progress bar, files written).
//!
//! Exit codes as for `design`: 2 usage (bad flags, ranges, files), 3 when no design is feasible
//! (compare), 4 input/output. A sweep in which some designs are infeasible is a successful sweep:
//! those rows carry the reason.

use clap::Args;
use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};
use std::io::IsTerminal;
use std::path::{Path, PathBuf};
use std::time::Instant;

use super::{BriefArgs, CliError};
use crate::brief::{BriefInput, DEMO_BRIEF_TOML, ShapeKind};
use crate::compare::compare;
use crate::export::{ExportError, overlay, study, write_atomic};
use crate::input::{read_bounded, read_text_bounded};
use crate::report::compare_table;
use crate::sweep::{self, AxisText, Shard, SweepInput, SweepSpec};

#[derive(Debug, Clone, Args)]
pub struct CompareArgs {
    /// Brief fields; `--shape` here takes a comma-separated list of families (default: all).
    #[command(flatten)]
    pub brief: BriefArgs,
    /// Folder for the outputs (created if missing).
    #[arg(long, default_value = "loopwright-out")]
    pub out: PathBuf,
    /// Print nothing but errors.
    #[arg(long, short)]
    pub quiet: bool,
}

#[derive(Debug, Clone, Args)]
pub struct SweepArgs {
    /// Sweep file: brief fields plus an optional `[sweep]` table (TOML). Without it, the built-in
    /// demo brief is swept.
    pub file: Option<PathBuf>,
    /// Entry speeds: START..END:COUNT or one value, m/s unless a unit follows (72..108:11 km/h).
    #[arg(long, value_name = "RANGE", allow_hyphen_values = true)]
    pub entry_speed: Option<String>,
    /// Peak normal load limits, g: START..END:COUNT or one value.
    #[arg(long, value_name = "RANGE", allow_hyphen_values = true)]
    pub max_g: Option<String>,
    /// Top normal load limits, g: START..END:COUNT or one value.
    #[arg(long, value_name = "RANGE", allow_hyphen_values = true)]
    pub min_top_g: Option<String>,
    /// Families, comma-separated (default: all).
    #[arg(long, value_name = "LIST")]
    pub shape: Option<String>,
    /// Duration-based acceleration limits (TOML) enforced on every design: a design failing them
    /// is an infeasible row. Overrides `limits_file` in the sweep file.
    #[arg(long, value_name = "FILE")]
    pub limits: Option<PathBuf>,
    /// Heartline sample spacing of each design, m (coarser is faster).
    #[arg(long, value_name = "M", allow_hyphen_values = true)]
    pub spacing: Option<f64>,
    /// File stem of the outputs (default: the brief's name).
    #[arg(long)]
    pub name: Option<String>,
    /// Run only shard I of N (1-based): the designs whose grid index modulo N is I − 1.
    #[arg(long, value_name = "I/N")]
    pub shard: Option<String>,
    /// Worker threads (default: one per core).
    #[arg(long, value_name = "N")]
    pub jobs: Option<usize>,
    /// Folder for the outputs (created if missing).
    #[arg(long, default_value = "loopwright-out")]
    pub out: PathBuf,
    /// No progress bar, print nothing but errors.
    #[arg(long, short)]
    pub quiet: bool,
}

#[derive(Debug, Clone, Args)]
pub struct MergeArgs {
    /// Shard CSVs written by `sweep --shard I/N`.
    #[arg(required = true)]
    pub shards: Vec<PathBuf>,
    /// The merged CSV.
    #[arg(long)]
    pub out: PathBuf,
}

fn write_files(out_dir: &Path, files: Vec<(String, Vec<u8>)>) -> Result<Vec<PathBuf>, CliError> {
    Ok(crate::export::write_files(files, out_dir)?)
}

fn wrote(paths: &[PathBuf]) -> String {
    let mut out = String::from("wrote:\n");
    for p in paths {
        out.push_str(&format!("  {}\n", p.display()));
    }
    out
}

/// Run `compare`: every family (or those listed with `--shape`) on one brief.
pub fn run_compare(args: &CompareArgs) -> Result<String, CliError> {
    let mut flags = args.brief.clone();
    let kinds = match flags.shape.take() {
        None => ShapeKind::ALL.to_vec(),
        // Named as the brief field it is, not as a sweep axis.
        Some(list) => sweep::parse_shapes(&list)
            .map_err(|e| CliError::Usage(format!("brief field 'shape': {}", e.message)))?,
    };
    let brief = flags.resolve()?;
    let c = compare(&brief, &kinds);
    let name = &brief.name;
    let mut files = vec![
        (format!("{name}-compare.csv"), study::compare_csv(&c)?),
        (
            format!("{name}-compare-elevation.svg"),
            overlay::elevation_overlay_svg(&c).into_bytes(),
        ),
        (
            format!("{name}-compare-loads.svg"),
            overlay::loads_overlay_svg(&c).into_bytes(),
        ),
    ];
    // The report last, with its siblings' digests (see `export::publish`).
    let report = study::compare_json_with(&c, crate::export::publish::digests(&files))?;
    files.push((format!("{name}-compare.json"), report));
    let written = write_files(&args.out, files)?;
    let text = if args.quiet {
        String::new()
    } else {
        format!("{}{}", compare_table(&c), wrote(&written))
    };
    if c.feasible_count() == 0 {
        // Nothing meets the brief: still show the table (it says why, family by family).
        let _ = super::write_stdout(&text);
        let first = c.entries.into_iter().find_map(|e| e.result.err());
        return match first {
            Some(inf) => Err(CliError::Infeasible(Box::new(inf))),
            None => Err(CliError::Usage("no shape family to compare".into())),
        };
    }
    Ok(text)
}

/// Largest sweep file we read; a sweep file is a brief plus a short table.
const MAX_SWEEP_FILE_BYTES: u64 = 1 << 20;

fn read_sweep_file(path: Option<&Path>) -> Result<(BriefInput, SweepInput), CliError> {
    let text = match path {
        None => DEMO_BRIEF_TOML.to_string(),
        Some(p) => read_text_bounded(p, MAX_SWEEP_FILE_BYTES, "sweep file")?,
    };
    let what = path.map_or("the demo brief".to_string(), |p| p.display().to_string());
    sweep::parse_sweep_file(&text).map_err(|e| CliError::Usage(format!("{what}: {e}")))
}

/// The sweep a command line asks for (file overlaid with flags), checked.
pub fn sweep_spec(args: &SweepArgs) -> Result<SweepSpec, CliError> {
    // As for `design`: without a sweep file, flags start from the documented defaults, not the
    // demo brief; only a bare `loopwright sweep` sweeps the demo.
    let any_flag = args.entry_speed.is_some()
        || args.max_g.is_some()
        || args.min_top_g.is_some()
        || args.shape.is_some()
        || args.spacing.is_some()
        || args.name.is_some()
        || args.limits.is_some();
    let (file_brief, file_sweep) = match args.file.as_deref() {
        None if any_flag => (BriefInput::default(), SweepInput::default()),
        path => read_sweep_file(path)?,
    };
    let flags = BriefInput {
        name: args.name.clone(),
        spacing_m: args.spacing,
        limits_file: args.limits.as_ref().map(|p| p.display().to_string()),
        ..BriefInput::default()
    };
    let base = file_brief.overlay(flags);
    let flag_sweep = SweepInput {
        entry_speed: args.entry_speed.clone().map(AxisText::Text),
        max_g: args.max_g.clone().map(AxisText::Text),
        min_top_g: args.min_top_g.clone().map(AxisText::Text),
        shapes: args
            .shape
            .as_ref()
            .map(|s| s.split(',').map(str::to_string).collect()),
    };
    let mut spec = SweepSpec::new(base, &file_sweep.overlay(flag_sweep))
        .map_err(|e| CliError::Usage(format!("{e}\nhint: see `loopwright sweep --help`")))?;
    let brief_file = args.file.as_deref().filter(|_| args.limits.is_none());
    super::attach_limits_table(&mut spec.base_brief, brief_file)?;
    Ok(spec)
}

fn progress_bar(total: usize, quiet: bool) -> ProgressBar {
    let bar = ProgressBar::with_draw_target(
        Some(total as u64),
        if quiet || !std::io::stderr().is_terminal() {
            ProgressDrawTarget::hidden()
        } else {
            ProgressDrawTarget::stderr()
        },
    );
    if let Ok(style) =
        ProgressStyle::with_template("{bar:40} {pos}/{len} designs, {elapsed} elapsed, ETA {eta}")
    {
        bar.set_style(style);
    }
    bar
}

/// Run `sweep`.
pub fn run_sweep(args: &SweepArgs) -> Result<String, CliError> {
    let spec = sweep_spec(args)?;
    let shard = args
        .shard
        .as_deref()
        .map(Shard::parse)
        .transpose()
        .map_err(|e| CliError::Usage(e.to_string()))?;
    let pool = match args.jobs {
        Some(0) => {
            return Err(CliError::Usage(
                "--jobs 0: give at least 1 worker thread".into(),
            ));
        }
        Some(n) if n > 1024 => {
            return Err(CliError::Usage(format!(
                "--jobs {n}: at most 1024 worker threads"
            )));
        }
        Some(n) => rayon::ThreadPoolBuilder::new().num_threads(n).build(),
        None => rayon::ThreadPoolBuilder::new().build(),
    }
    .map_err(|e| CliError::Io(format!("cannot start worker threads: {e}")))?;
    let total = (0..spec.len())
        .filter(|&i| shard.is_none_or(|s| s.contains(i)))
        .count();
    let cpu_s = spec.estimated_cpu_s(shard);
    if cpu_s > sweep::MAX_JOB_CPU_S {
        return Err(CliError::Usage(format!(
            "this sweep of {total} designs would take about {} hours of CPU (estimate), more than the ceiling of {} hours for one job\nhint: use fewer values, a coarser --spacing, or split it with --shard I/N across machines",
            (cpu_s / 3600.0).round(),
            sweep::MAX_JOB_CPU_S / 3600.0
        )));
    }
    let wall_s = cpu_s / pool.current_num_threads() as f64;
    if wall_s > super::LONG_WORK_S && !args.quiet {
        super::write_stderr(&format!(
            "loopwright: {total} designs, estimated {} on {} threads; progress below\n",
            super::duration_text(wall_s),
            pool.current_num_threads()
        ));
    }
    let bar = progress_bar(total, args.quiet);
    let started = Instant::now();
    let rows = pool.install(|| sweep::run(&spec, shard, &|| bar.inc(1)));
    bar.finish_and_clear();
    let seconds = started.elapsed().as_secs_f64();
    let name = &spec.base_brief.name;
    let csv = study::sweep_csv(&rows, spec.len(), &spec.id())?;
    let files = match shard {
        Some(s) => vec![(
            format!("{name}-sweep-shard-{}-of-{}.csv", s.number, s.count),
            csv,
        )],
        None => vec![
            (format!("{name}-sweep.csv"), csv),
            (
                format!("{name}-sweep.svg"),
                overlay::sweep_summary_svg(
                    &rows,
                    &spec.base_brief.title,
                    spec.base_brief.objective,
                )
                .into_bytes(),
            ),
        ],
    };
    let written = write_files(&args.out, files)?;
    if args.quiet {
        return Ok(String::new());
    }
    let feasible = rows.iter().filter(|r| r.result.is_ok()).count();
    let part = shard.map_or(String::new(), |s| {
        format!(
            " (shard {}/{} of {} designs)",
            s.number,
            s.count,
            spec.len()
        )
    });
    Ok(format!(
        "loopwright sweep: {} designs{part}, {feasible} feasible, in {seconds:.1} s\n{}{}\n",
        rows.len(),
        wrote(&written),
        crate::report::CAUTION
    ))
}

/// Largest shard CSV we read: a million rows of the sweep table are about 250 MB; a shard holds a
/// part of a sweep of at most [`sweep::MAX_DESIGNS`] designs.
pub const MAX_SHARD_BYTES: u64 = 512 << 20;

/// Run `merge`.
pub fn run_merge(args: &MergeArgs) -> Result<String, CliError> {
    let mut shards = Vec::new();
    for p in &args.shards {
        let bytes = read_bounded(p, MAX_SHARD_BYTES, "shard")?;
        shards.push((p.display().to_string(), bytes));
    }
    let merged = study::merge_sweep_csv(&shards).map_err(|e| CliError::Usage(e.to_string()))?;
    if let Some(dir) = args.out.parent().filter(|d| !d.as_os_str().is_empty()) {
        std::fs::create_dir_all(dir).map_err(|source| {
            CliError::from(ExportError::Io {
                path: dir.to_path_buf(),
                source,
            })
        })?;
    }
    write_atomic(&args.out, &merged)?;
    Ok(format!(
        "merged {} shards into {}\n{}\n",
        args.shards.len(),
        args.out.display(),
        crate::report::CAUTION
    ))
}
