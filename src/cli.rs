//! Command line: parse arguments, run a command, map failures to exit codes.
//!
//! The binary in `main.rs` only calls [`main_with_args`]; everything else lives here so that tests
//! can drive the commands in-process. Exit codes: 0 success, 2 usage error (bad flags, bad brief
//! file or field, any bad input file), 3 infeasible brief (no loop meets the limits), 4 input/output
//! error (including standard output closed or full). Nothing here panics on a closed pipe.

use clap::{Args, Parser, Subcommand};
use std::path::{Path, PathBuf};

use crate::brief::{Brief, BriefError, BriefInput, DEMO_BRIEF_TOML, SpeedText};
use crate::checks::envelope::{EnvelopeTable, MAX_LIMITS_BYTES};
use crate::export::{ExportError, write_design};
use crate::input::{InputError, read_text_bounded};
use crate::optimiser::{Infeasible, design};
use crate::report::{infeasible_message, terminal_summary};

/// Exit code: success.
pub const EXIT_OK: i32 = 0;
/// Exit code: usage error — bad flags, a brief that does not parse or a field out of range.
pub const EXIT_USAGE: i32 = 2;
/// Exit code: the brief is valid but no loop meets its limits.
pub const EXIT_INFEASIBLE: i32 = 3;
/// Exit code: a file could not be read or written, or standard output could not be written (a
/// closed pipe, a full disk).
pub const EXIT_IO: i32 = 4;

#[derive(Debug, Parser)]
#[command(
    name = "loopwright",
    version,
    about = "Vertical-loop geometry for roller-coaster concept studies."
)]
pub struct Cli {
    #[command(subcommand)]
    pub command: Command,
}

// Parsed once per process; boxing the large variant would buy nothing.
#[allow(clippy::large_enum_variant)]
#[derive(Debug, Subcommand)]
pub enum Command {
    /// Design one loop for a brief and write DXF, SVG, CSV and JSON.
    Design(DesignArgs),
    /// Print the built-in demo brief (TOML) to start your own from.
    DemoBrief,
    /// Design one brief with every shape family and compare them side by side.
    Compare(CompareArgs),
    /// Design a grid of briefs (entry speed × max g × min top g × family) in parallel.
    Sweep(SweepArgs),
    /// Merge sweep shard CSVs into the CSV of the whole sweep.
    Merge(MergeArgs),
    /// Check a centreline from a DXF or CSV file: fit it, compute the loads and check the limits.
    Check(CheckArgs),
    /// Assess one loop of a family at given shape parameters and top radius (no search).
    Evaluate(evaluate::EvaluateArgs),
    /// Start the study page: a local web page that designs the brief as you type.
    Serve(ServeArgs),
}

#[derive(Debug, Clone, Args)]
pub struct ServeArgs {
    /// Port to listen on (0: any free port; the URL printed says which).
    #[arg(long, default_value_t = 8765)]
    pub port: u16,
    /// Address to listen on; anything but a loopback address serves other machines (warned).
    #[arg(long, default_value = "127.0.0.1")]
    pub bind: String,
}

/// The axis of a checked file that points up.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum UpArg {
    X,
    Y,
    Z,
}

/// What the points of a checked centreline are.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum PointsArg {
    /// The rail (track) centreline; the heartline is --heartline-height above it.
    Rail,
    /// The rider's heartline.
    Heartline,
}

#[derive(Debug, Clone, Args)]
pub struct CheckArgs {
    /// Centreline file: .dxf (one POLYLINE, LWPOLYLINE or SPLINE, see --layer) or CSV of x,y,z points
    /// in metres, Z up (header x_m,y_m,z_m, or three numeric columns without a header).
    pub path: PathBuf,
    /// Entry speed, losses, heartline height and limits: a brief file after PATH and/or flags.
    #[command(flatten)]
    pub brief: BriefArgs,
    /// DXF layer holding the centreline (required when the file has more than one curve).
    #[arg(long, value_name = "NAME")]
    pub layer: Option<String>,
    /// Whether the points are the rail centreline or the heartline. Default: what the file says
    /// (loopwright's loads CSV and LW-HEARTLINE layer: heartline; LW-RAIL: rail), otherwise rail.
    #[arg(long, value_enum)]
    pub points: Option<PointsArg>,
    /// Which axis of the file points up. Default: detected (a loop drawn in a horizontal plane,
    /// as a 2D elevation in XY, has Y up; otherwise Z).
    #[arg(long, value_enum)]
    pub up: Option<UpArg>,
    /// Smoothing spline tolerance: RMS distance allowed between the points and the fitted curve, m.
    #[arg(long, value_name = "M", default_value_t = crate::geometry::fit::DEFAULT_TOLERANCE_M, allow_hyphen_values = true)]
    pub fit_tolerance: f64,
    /// Folder for the outputs (created if missing).
    #[arg(long, default_value = "loopwright-out")]
    pub out: PathBuf,
    /// Print nothing but errors.
    #[arg(long, short)]
    pub quiet: bool,
}

/// Brief fields as flags; each overrides the same field of a brief file.
#[derive(Debug, Clone, Default, Args)]
pub struct BriefArgs {
    /// Brief file (TOML). Without it, the flags start from the documented defaults; with neither a
    /// file nor a brief flag, the built-in demo brief is used.
    pub brief: Option<PathBuf>,
    /// Entry speed at the bottom of the loop: a number in m/s, or with a unit: 25m/s, 90km/h, 56mph.
    #[arg(long, value_name = "SPEED", allow_hyphen_values = true)]
    pub entry_speed: Option<String>,
    /// Largest normal load allowed anywhere, g.
    #[arg(long, value_name = "G", allow_hyphen_values = true)]
    pub max_g: Option<f64>,
    /// Smallest normal load allowed at the top of the loop, g.
    #[arg(long, value_name = "G", allow_hyphen_values = true)]
    pub min_top_g: Option<f64>,
    /// Largest rate of change of normal load, g/s; none (also off, inf) for no limit (the default).
    #[arg(long, value_name = "G_PER_S", allow_hyphen_values = true, value_parser = crate::units::parse_limit_or_off)]
    pub max_onset: Option<f64>,
    /// Largest loop height (heartline), m; none (also off, inf) for no limit (the default).
    #[arg(long, value_name = "M", allow_hyphen_values = true, value_parser = crate::units::parse_limit_or_off)]
    pub max_height: Option<f64>,
    /// Smallest heartline radius of curvature anywhere, m (default 4 m, illustrative).
    #[arg(long, value_name = "M", allow_hyphen_values = true)]
    pub min_radius: Option<f64>,
    /// Ask for a loop of this heartline height (lowest peak g) instead of the tallest loop.
    #[arg(long, value_name = "M", allow_hyphen_values = true)]
    pub height: Option<f64>,
    /// Shape family: circle, clothoid or spline.
    #[arg(long, value_name = "FAMILY")]
    pub shape: Option<String>,
    /// Heartline height above the rail centreline, m (default 1.1 m).
    #[arg(long, value_name = "M", allow_hyphen_values = true)]
    pub heartline_height: Option<f64>,
    /// Rolling resistance coefficient μ (0 for none).
    #[arg(long, value_name = "MU", allow_hyphen_values = true)]
    pub rolling_resistance: Option<f64>,
    /// Drag area Cd·A of the train, m² (0 for none).
    #[arg(long, value_name = "M2", allow_hyphen_values = true)]
    pub drag_area: Option<f64>,
    /// Train mass, kg.
    #[arg(long, value_name = "KG", allow_hyphen_values = true)]
    pub mass: Option<f64>,
    /// Air density, kg/m³ (default 1.225, ISA sea level).
    #[arg(long, value_name = "KG_M3", allow_hyphen_values = true)]
    pub air_density: Option<f64>,
    /// Level track drawn before and after the loop, m.
    #[arg(long, value_name = "M", allow_hyphen_values = true)]
    pub lead_length: Option<f64>,
    /// Heartline sample spacing of the reported design, m.
    #[arg(long, value_name = "M", allow_hyphen_values = true)]
    pub spacing: Option<f64>,
    /// Cars in the train (default 1: a point mass); the train moves as one rigid chain.
    #[arg(long, value_name = "N", allow_hyphen_values = true)]
    pub cars: Option<i64>,
    /// Heartline distance between neighbouring cars, m (default 2.5 m, illustrative).
    #[arg(long, value_name = "M", allow_hyphen_values = true)]
    pub car_pitch: Option<f64>,
    /// Spread the loop sideways so the exit passes beside the entry, m (default 2.5 m: one train
    /// envelope width; 0 for a planar loop; negative to the right).
    #[arg(long, value_name = "M", allow_hyphen_values = true)]
    pub lateral_shift: Option<f64>,
    /// Duration-based acceleration limits (TOML, see examples/limits-illustrative.toml); a design
    /// failing them exits 3, writing nothing. Without it the ILLUSTRATIVE built-in table is
    /// reported, not enforced.
    #[arg(long, value_name = "FILE")]
    pub limits: Option<PathBuf>,
    /// File stem of the outputs (default: the brief's name).
    #[arg(long)]
    pub name: Option<String>,
}

#[derive(Debug, Clone, Args)]
pub struct DesignArgs {
    #[command(flatten)]
    pub brief: BriefArgs,
    /// Folder for the outputs (created if missing).
    #[arg(long, default_value = "loopwright-out")]
    pub out: PathBuf,
    /// Print nothing but errors.
    #[arg(long, short)]
    pub quiet: bool,
}

pub mod evaluate;
pub mod study;
pub use study::{CompareArgs, MergeArgs, SweepArgs};

/// A failure with the exit code it maps to.
#[derive(Debug, thiserror::Error)]
pub enum CliError {
    #[error("{0}")]
    Usage(String),
    #[error("{0}")]
    Infeasible(Box<Infeasible>),
    #[error("{0}")]
    Io(String),
    /// A checked centreline fails a limit (exit code 3, like an infeasible brief); the text is the report.
    #[error("{0}")]
    Fails(String),
}

impl CliError {
    pub fn exit_code(&self) -> i32 {
        match self {
            CliError::Usage(_) => EXIT_USAGE,
            CliError::Infeasible(_) => EXIT_INFEASIBLE,
            CliError::Io(_) => EXIT_IO,
            CliError::Fails(_) => EXIT_INFEASIBLE,
        }
    }
}

impl From<BriefError> for CliError {
    fn from(e: BriefError) -> Self {
        CliError::Usage(format!(
            "{e}\nhint: fix the field in the brief file or pass the flag; see `loopwright design --help`"
        ))
    }
}

impl From<ExportError> for CliError {
    fn from(e: ExportError) -> Self {
        if let ExportError::NotAFolder { .. } = e {
            return CliError::Usage(e.to_string());
        }
        // Only claim the earlier outputs are intact when nothing was replaced.
        let earlier = if e.left_earlier_outputs() {
            "earlier outputs were left as they were"
        } else {
            "run again to write a consistent set"
        };
        CliError::Io(format!(
            "{e}\nhint: check that the --out folder is writable and the disk has space; {earlier}"
        ))
    }
}

/// Largest brief file we read; a brief is a few hundred bytes.
pub const MAX_BRIEF_BYTES: u64 = 1 << 20;

impl From<InputError> for CliError {
    fn from(e: InputError) -> Self {
        if e.is_bad_input() {
            CliError::Usage(e.to_string())
        } else {
            CliError::Io(e.to_string())
        }
    }
}

/// Read a brief file, or the demo brief when none is given (see [`BriefArgs::resolve`] for when
/// the demo applies).
pub fn read_brief_file(path: Option<&Path>) -> Result<BriefInput, CliError> {
    let text = match path {
        None => DEMO_BRIEF_TOML.to_string(),
        Some(p) => read_text_bounded(p, MAX_BRIEF_BYTES, "brief")?,
    };
    BriefInput::from_toml(&text).map_err(|e| {
        let what = path.map_or("the demo brief".to_string(), |p| p.display().to_string());
        CliError::Usage(format!("{what}: {e}"))
    })
}

impl BriefArgs {
    /// The flags as a partial brief.
    pub fn as_input(&self) -> BriefInput {
        BriefInput {
            name: self.name.clone(),
            title: None,
            shape: self.shape.clone(),
            entry_speed: self.entry_speed.clone().map(SpeedText::Text),
            max_g: self.max_g,
            min_top_g: self.min_top_g,
            max_onset_g_s: self.max_onset,
            max_height_m: self.max_height,
            min_radius_m: self.min_radius,
            height_m: self.height,
            heartline_height_m: self.heartline_height,
            rolling_resistance: self.rolling_resistance,
            drag_area_m2: self.drag_area,
            mass_kg: self.mass,
            air_density_kg_m3: self.air_density,
            lead_length_m: self.lead_length,
            spacing_m: self.spacing,
            cars: self.cars,
            car_pitch_m: self.car_pitch,
            lateral_shift_m: self.lateral_shift,
            limits_file: self.limits.as_ref().map(|p| p.display().to_string()),
            // DXF drawing fields are brief-file only.
            gauge_m: None,
            dxf_curves: None,
            profile: None,
        }
    }

    /// Whether any brief field is given as a flag.
    pub fn has_brief_flags(&self) -> bool {
        self.as_input() != BriefInput::default()
    }

    /// The brief file overlaid with the flags, resolved and checked, with the limit table it names
    /// read (so that every command enforces it). Without a file, flags start from the documented
    /// defaults (README brief table), not from the demo: a flag must not inherit the demo's title,
    /// file names or onset limit. Only a command line with neither a file nor a brief flag runs
    /// the demo brief.
    pub fn resolve(&self) -> Result<Brief, CliError> {
        let file = match self.brief.as_deref() {
            None if self.has_brief_flags() => BriefInput::default(),
            path => read_brief_file(path)?,
        };
        let mut brief = file.overlay(self.as_input()).resolve()?;
        attach_limits_table(
            &mut brief,
            self.limits
                .is_none()
                .then_some(self.brief.as_deref())
                .flatten(),
        )?;
        Ok(brief)
    }
}

/// Read the limit table a brief names into `brief.limits_table`. A relative `limits_file` written
/// in a brief file is taken from that file's folder (`brief_file`); one given with `--limits`
/// from the working directory (`brief_file` = `None`).
pub fn attach_limits_table(brief: &mut Brief, brief_file: Option<&Path>) -> Result<(), CliError> {
    let Some(name) = brief.limits_file.as_deref() else {
        return Ok(());
    };
    let path = match brief_file.and_then(Path::parent) {
        Some(dir) if Path::new(name).is_relative() => dir.join(name),
        _ => PathBuf::from(name),
    };
    brief.limits_table = Some(read_limits_file(&path)?);
    Ok(())
}

/// Read and check a duration-based limit table (`--limits` / `limits_file`).
pub fn read_limits_file(path: &Path) -> Result<EnvelopeTable, CliError> {
    // A missing table is a wrong argument (exit 2), like a missing brief field.
    let text = read_text_bounded(path, MAX_LIMITS_BYTES, "limits file").map_err(|e| {
        let hint =
            "hint: check the path; a limits_file in a brief is taken from the brief's folder";
        // A missing table is a wrong argument (exit 2), like a missing brief field.
        let missing = matches!(&e, InputError::Io { source, .. }
            if source.kind() == std::io::ErrorKind::NotFound);
        match CliError::from(e) {
            CliError::Usage(m) => CliError::Usage(format!("{m}\n{hint}")),
            CliError::Io(m) if missing => CliError::Usage(format!("{m}\n{hint}")),
            other => other,
        }
    })?;
    EnvelopeTable::from_toml(&text).map_err(|e| {
        CliError::Usage(format!(
            "{}: {e}\nhint: see examples/limits-illustrative.toml for the format",
            path.display()
        ))
    })
}

/// Work estimated to take longer than this, s, is announced before it starts and shows progress.
pub const LONG_WORK_S: f64 = 180.0;

/// A duration for people: seconds, minutes or hours.
pub fn duration_text(s: f64) -> String {
    if s < 120.0 {
        format!("{s:.0} s")
    } else if s < 7200.0 {
        format!("{:.0} min", s / 60.0)
    } else {
        format!("{:.1} h", s / 3600.0)
    }
}

/// Run `design`: returns the text for standard output.
pub fn run_design(args: &DesignArgs) -> Result<String, CliError> {
    let brief = args.brief.resolve()?;
    let estimate_s = crate::sweep::estimated_design_s(brief.shape, brief.spacing_m, brief.cars);
    // Long work says so first and shows it is alive (a spinner with the elapsed time; the
    // optimiser has no natural count to show).
    let spinner = (estimate_s > LONG_WORK_S && !args.quiet).then(|| {
        write_stderr(&format!(
            "loopwright: this design ({} cars, {} m spacing) is estimated to take about {}\n",
            brief.cars,
            brief.spacing_m,
            duration_text(estimate_s)
        ));
        let bar = indicatif::ProgressBar::new_spinner();
        bar.set_message("designing");
        if let Ok(style) =
            indicatif::ProgressStyle::with_template("{spinner} {msg}, {elapsed} elapsed")
        {
            bar.set_style(style);
        }
        bar.enable_steady_tick(std::time::Duration::from_millis(200));
        bar
    });
    let d = design(&brief).map_err(|e| CliError::Infeasible(Box::new(e)));
    if let Some(bar) = spinner {
        bar.finish_and_clear();
    }
    let d = d?;
    let written = write_design(&d, &args.out)?;
    if args.quiet {
        return Ok(String::new());
    }
    let mut out = terminal_summary(&d);
    out.push_str("wrote:\n");
    for p in written {
        out.push_str(&format!("  {}\n", p.display()));
    }
    Ok(out)
}

/// Largest fitting tolerance accepted, m.
const MAX_FIT_TOLERANCE_M: f64 = 0.5;

/// Brief flags that describe how to design a loop, not a given centreline: `check` refuses them
/// rather than dropping them silently.
fn refuse_design_only_flags(b: &BriefArgs) -> Result<(), CliError> {
    let given: Vec<&str> = [
        ("--shape", b.shape.is_some()),
        ("--height", b.height.is_some()),
        ("--spacing", b.spacing.is_some()),
        ("--lead-length", b.lead_length.is_some()),
        ("--lateral-shift", b.lateral_shift.is_some()),
    ]
    .into_iter()
    .filter_map(|(flag, set)| set.then_some(flag))
    .collect();
    if given.is_empty() {
        return Ok(());
    }
    Err(CliError::Usage(format!(
        "{} cannot apply to `check`: the centreline in the file fixes the shape, size, leads and sideways spread\n\
         hint: drop the flag; `check` takes the entry speed, losses, heartline height, train and limits from the brief",
        given.join(", ")
    )))
}

/// Run `check`: returns the text for standard output.
pub fn run_check(args: &CheckArgs) -> Result<String, CliError> {
    use crate::geometry::fit::PointsAre;
    use crate::import::{ImportError, read_centreline_as};
    use crate::model::{Curve, Drawing, EvalFailure, assess};
    let tol = args.fit_tolerance;
    if !(tol.is_finite() && tol > 0.0 && tol <= MAX_FIT_TOLERANCE_M) {
        return Err(CliError::Usage(format!(
            "--fit-tolerance {tol} m is out of range; allowed more than 0 up to {MAX_FIT_TOLERANCE_M} m"
        )));
    }
    refuse_design_only_flags(&args.brief)?;
    let mut brief = args.brief.resolve()?;
    if args.brief.name.is_none() && args.brief.brief.is_none() {
        // No brief named the run: name the outputs after the centreline file.
        let stem: String = args
            .path
            .file_stem()
            .map(|s| {
                s.to_string_lossy()
                    .chars()
                    .map(|c| {
                        if c.is_ascii_alphanumeric() || c == '-' || c == '_' {
                            c
                        } else {
                            '_'
                        }
                    })
                    .take(58)
                    .collect()
            })
            .unwrap_or_default();
        brief.name = if stem.is_empty() { "loop".into() } else { stem };
    }
    // The outputs carry "-check" so that checking a design's own files in its folder never
    // overwrites them.
    brief.name.push_str("-check");
    let wanted = args.points.map(|p| match p {
        PointsArg::Rail => PointsAre::Rail,
        PointsArg::Heartline => PointsAre::Heartline,
    });
    let imported =
        read_centreline_as(&args.path, args.layer.as_deref(), wanted).map_err(|e| match e {
            ImportError::Io { .. } => CliError::Io(e.to_string()),
            ImportError::Format { .. } => CliError::Usage(e.to_string()),
        })?;
    let up = args.up.map(|u| match u {
        UpArg::X => crate::import::Up::X,
        UpArg::Y => crate::import::Up::Y,
        UpArg::Z => crate::import::Up::Z,
    });
    let imported = crate::import::orient(imported, up);
    let file = args.path.display().to_string();
    let drawing = Drawing {
        points_m: imported.points_m,
        // The importer refuses a request the file contradicts, so these agree when both say.
        points_are: imported.points_are.or(wanted).unwrap_or(PointsAre::Rail),
        tolerance_m: tol,
        file: file.clone(),
        source: imported.source,
    };
    let checked =
        assess(&brief, &Curve::Drawing(&drawing), Vec::new(), 0).map_err(|e| match e {
            EvalFailure::Stall(stall) => CliError::Fails(format!(
                "{file}: at the entry speed {:.2} m/s {stall}\n{}",
                brief.entry_speed_m_s,
                crate::report::CAUTION
            )),
            other => CliError::Usage(format!("{file}: {other}")),
        })?;
    let written = write_design(&checked, &args.out)?;
    let mut out = crate::report::check_summary(&checked);
    if let Some(note) = mixed_set_note(&args.path) {
        out.push_str(&note);
    }
    out.push_str("wrote:\n");
    for p in written {
        out.push_str(&format!("  {}\n", p.display()));
    }
    if !checked.pass() {
        return Err(CliError::Fails(out));
    }
    Ok(if args.quiet { String::new() } else { out })
}

/// A note when the checked file belongs to a loopwright output set (a JSON report beside it
/// lists it) whose files do not match the report's SHA-256: a set mixed by an interrupted or
/// concurrent run, or a file edited since. Not an error: checking an edited drawing is normal.
fn mixed_set_note(path: &Path) -> Option<String> {
    let dir = path
        .parent()
        .filter(|d| !d.as_os_str().is_empty())
        .unwrap_or(Path::new("."));
    let name = path.file_name()?.to_string_lossy().into_owned();
    // A design's files share its stem; its report is `<stem>.json`.
    let stem = ["-loads.csv", "-cars.csv", ".dxf"]
        .iter()
        .find_map(|suffix| name.strip_suffix(suffix))?;
    let report = dir.join(format!("{stem}.json"));
    let bytes = crate::input::read_bounded(&report, 64 << 20, "report").ok()?;
    let differ = crate::export::publish::verify_report(&report, &bytes);
    (!differ.is_empty()).then(|| {
        format!(
            "note: {} differ from the SHA-256 listed in {}: the folder holds files of different runs, or edited files\n",
            differ.join(", "),
            report.display()
        )
    })
}

/// Run a parsed command.
pub fn run(cli: &Cli) -> Result<String, CliError> {
    match &cli.command {
        Command::Design(a) => run_design(a),
        Command::DemoBrief => Ok(DEMO_BRIEF_TOML.to_string()),
        Command::Compare(a) => study::run_compare(a),
        Command::Sweep(a) => study::run_sweep(a),
        Command::Merge(a) => study::run_merge(a),
        Command::Check(a) => run_check(a),
        Command::Evaluate(a) => evaluate::run_evaluate(a),
        Command::Serve(a) => crate::serve::run(&a.bind, a.port)
            .map(|()| String::new())
            .map_err(|e| match e {
                crate::serve::ServeError::BadAddress(_) => CliError::Usage(e.to_string()),
                crate::serve::ServeError::Listen { .. } => CliError::Io(e.to_string()),
            }),
    }
}

/// Parse `args`, run, print, and return the exit code.
pub fn main_with_args<I, T>(args: I) -> i32
where
    I: IntoIterator<Item = T>,
    T: Into<std::ffi::OsString> + Clone,
{
    let cli = match Cli::try_parse_from(args) {
        Ok(c) => c,
        Err(e) => {
            let code = if e.use_stderr() { EXIT_USAGE } else { EXIT_OK };
            let _ = e.print();
            return code;
        }
    };
    match run(&cli) {
        Ok(text) => match write_stdout(&text) {
            Ok(()) => EXIT_OK,
            Err(e) => {
                // Standard output is gone (a closed pipe) or full: say so where we still can.
                write_stderr(&format!("loopwright: cannot write standard output: {e}\n"));
                EXIT_IO
            }
        },
        Err(e) => {
            match &e {
                CliError::Infeasible(inf) => {
                    write_stderr(&format!("loopwright: {}", infeasible_message(inf)))
                }
                CliError::Fails(report) => write_stderr(report),
                other => write_stderr(&format!("loopwright: {other}\n")),
            }
            e.exit_code()
        }
    }
}

/// Write to standard output and flush, returning the error instead of panicking as `print!`
/// does on a closed pipe or a full disk.
pub fn write_stdout(text: &str) -> std::io::Result<()> {
    use std::io::Write;
    let mut out = std::io::stdout().lock();
    out.write_all(text.as_bytes())?;
    out.flush()
}

/// Write to standard error; a failure is ignored, as there is nowhere left to report it (the
/// exit code still says what happened).
pub fn write_stderr(text: &str) {
    use std::io::Write;
    let mut err = std::io::stderr().lock();
    let _ = err.write_all(text.as_bytes());
    let _ = err.flush();
}
