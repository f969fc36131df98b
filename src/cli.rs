//! The headless command line: trace, check and index lookups.
//!
//! Exit codes: 0 success, 2 bad input (a scene file that does not load, an unknown material,
//! bad arguments), 1 any other failure (such as an output file that cannot be written), 130
//! a trace stopped by Ctrl+C (its partial budget is still printed, marked as partial).
//!
//! While a trace runs, its progress is shown on standard error when that is a terminal.

use std::fmt::Write as _;
use std::io::IsTerminal;
use std::path::{Path, PathBuf};
use std::process::ExitCode;
use std::sync::Arc;
use std::time::{Duration, Instant};

use anyhow::{Context, anyhow};
use clap::{Parser, Subcommand, ValueEnum};
use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};

use raydraft::analysis::{BudgetReport, budget_report};
use raydraft::export;
use raydraft::optics::material::{IndexReference, LINE_D_NM};
use raydraft::optics::{Material, library, library_material};
use raydraft::scene::file::{self, LoadError};
use raydraft::scene::validate::Severity;
use raydraft::scene::{Loaded, MAX_RAYS_PER_SOURCE, Problem, Scene, TraceMode};
use raydraft::trace::{Compiled, Control, Trace, TraceConfig, trace_compiled};

/// Raydraft: a 2D ray-trace sketchpad for prisms, light guides, windows and small lens stacks.
///
/// Geometric optics only (no diffraction, interference or scattering). Not for laser-safety,
/// eye-exposure or concentrated-sunlight hazard calculations. Prototype and measure before
/// relying on a layout.
#[derive(Debug, Parser)]
#[command(name = "raydraft", version, args_conflicts_with_subcommands = true)]
pub struct Cli {
    /// A scene file to open in the editor (without one the editor opens a demo scene).
    pub file: Option<PathBuf>,
    #[command(subcommand)]
    pub command: Option<Command>,
}

#[derive(Debug, Subcommand)]
pub enum Command {
    /// Trace a scene file and print its power budget.
    Trace(TraceArgs),
    /// Check a scene file and list every problem (exit 2 if any is an error).
    Check {
        /// The scene file (.ron).
        file: PathBuf,
    },
    /// Print the refractive index of a library material, or list the library.
    Index(IndexArgs),
    /// Change one number of a scene in steps, trace each time and print a metric as CSV.
    Sweep(SweepArgs),
}

#[derive(Debug, clap::Args)]
pub struct TraceArgs {
    /// The scene file (.ron).
    pub file: PathBuf,
    /// How to follow light (default: the scene's own setting).
    #[arg(long, value_enum)]
    pub mode: Option<ModeArg>,
    /// Rays per source and wavelength, instead of each source's own count.
    #[arg(long, value_name = "N")]
    pub rays: Option<u32>,
    /// Seed for Monte Carlo sampling (default: the scene's own).
    #[arg(long, value_name = "S")]
    pub seed: Option<u64>,
    /// Print the budget as one JSON object instead of text.
    #[arg(long)]
    pub json: bool,
    /// Write a picture of the scene and its rays.
    #[arg(long, value_name = "OUT.svg")]
    pub svg: Option<PathBuf>,
    /// Write detector histograms (irradiance by position, intensity by angle).
    #[arg(long, value_name = "OUT.csv")]
    pub csv: Option<PathBuf>,
    /// Write every stored event of every ray.
    #[arg(long, value_name = "OUT.csv")]
    pub events: Option<PathBuf>,
    /// Threads to trace with, 1 to 256 (default: one per core).
    #[arg(long, value_name = "N")]
    pub threads: Option<usize>,
    /// After the budget, explain stored ray N event by event (indices, angles, Fresnel R and T).
    #[arg(long, value_name = "N", conflicts_with = "json")]
    pub ray: Option<usize>,
    /// Draw the normals, angles of incidence and critical angles along stored ray N into --svg.
    #[arg(long, value_name = "N", requires = "svg")]
    pub annotate_ray: Option<usize>,
}

#[derive(Debug, clap::Args)]
pub struct SweepArgs {
    /// The scene file (.ron).
    pub file: PathBuf,
    /// The number to change, as OBJECT.FIELD (OBJECT a name or id, or `settings`, or
    /// `materials[NAME]`), e.g. `beam.direction_deg` or `guide.shape.notch_depth`.
    #[arg(long, value_name = "OBJECT.FIELD")]
    pub param: String,
    #[arg(long, value_name = "A", allow_negative_numbers = true)]
    pub from: f64,
    #[arg(long, value_name = "B", allow_negative_numbers = true)]
    pub to: f64,
    /// Number of values from A to B inclusive.
    #[arg(long, value_name = "N")]
    pub steps: usize,
    /// detected:NAME, absorbed:NAME, escaped, absorbed, trapped, uniformity:NAME or deviation.
    #[arg(long, value_name = "METRIC")]
    pub metric: String,
}

#[derive(Debug, clap::Args)]
pub struct IndexArgs {
    /// Material name, e.g. pmma or fused-silica.
    #[arg(required_unless_present = "list")]
    pub material: Option<String>,
    /// Wavelength in nm (default: the helium d line, 587.5618 nm).
    #[arg(long, short, value_name = "NM")]
    pub wavelength: Option<f64>,
    /// List the library materials with their valid ranges and sources.
    #[arg(long, conflicts_with_all = ["material", "wavelength"])]
    pub list: bool,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub enum ModeArg {
    /// One path per ray: refract where possible, else reflect by TIR.
    Principal,
    /// Split into reflected and transmitted branches at every interface.
    Tree,
    /// Choose reflection or transmission at random with the Fresnel probabilities.
    #[value(alias = "monte-carlo")]
    Montecarlo,
}

impl From<ModeArg> for TraceMode {
    fn from(m: ModeArg) -> Self {
        match m {
            ModeArg::Principal => TraceMode::Principal,
            ModeArg::Tree => TraceMode::Tree,
            ModeArg::Montecarlo => TraceMode::MonteCarlo,
        }
    }
}

/// Most threads `--threads` may ask for; more only add start-up time.
pub const MAX_THREADS: usize = 256;
/// Exit code of a trace stopped by Ctrl+C (128 + SIGINT, as shells report it).
pub const EXIT_INTERRUPTED: u8 = 130;

/// A failure and the exit code it calls for.
pub struct Failure {
    pub code: u8,
    pub error: anyhow::Error,
}

fn bad_input(error: impl Into<anyhow::Error>) -> Failure {
    Failure { code: 2, error: error.into() }
}

fn other(error: impl Into<anyhow::Error>) -> Failure {
    Failure { code: 1, error: error.into() }
}

/// Runs the parsed command line, printing results to stdout.
pub fn run(cli: Cli) -> Result<ExitCode, Failure> {
    match cli.command {
        Some(Command::Trace(args)) => trace(&args),
        Some(Command::Check { file }) => Ok(check(&file)),
        Some(Command::Index(args)) => index(&args),
        Some(Command::Sweep(args)) => sweep(&args),
        None => {
            if let Some(path) = &cli.file {
                // A file that does not load is reported here, with its line and column, rather
                // than in a window.
                let loaded = load(path)?;
                print_load_warnings(path, &loaded);
            }
            raydraft::app::run(cli.file).map_err(other)?;
            Ok(ExitCode::SUCCESS)
        }
    }
}

fn load(path: &Path) -> Result<Loaded, Failure> {
    file::load(path).map_err(bad_input)
}

fn print_load_warnings(path: &Path, loaded: &Loaded) {
    for w in &loaded.warnings {
        eprintln!("{}", located(path, w));
    }
}

/// A problem as `file:line:col: error: …` (or `file: …` where it has no place).
fn located(path: &Path, p: &Problem) -> String {
    match p.at {
        Some((line, col)) => format!("{}:{line}:{col}: {p}", path.display()),
        None => format!("{}: {p}", path.display()),
    }
}

fn trace(args: &TraceArgs) -> Result<ExitCode, Failure> {
    if let Some(n) = args.rays {
        if n == 0 || n > MAX_RAYS_PER_SOURCE {
            return Err(bad_input(anyhow!("--rays must be from 1 to {MAX_RAYS_PER_SOURCE}, it is {n}")));
        }
    }
    if let Some(n) = args.threads {
        if n == 0 || n > MAX_THREADS {
            return Err(bad_input(anyhow!("--threads must be from 1 to {MAX_THREADS}, it is {n}")));
        }
    }
    check_outputs(args)?;
    // The scene's warnings come back among the trace's own, so they are printed once, below.
    let loaded = load(&args.file)?;
    let scene = &loaded.scene;
    let mut config = TraceConfig::from_scene(scene);
    if let Some(m) = args.mode {
        config.settings.mode = m.into();
    }
    if let Some(s) = args.seed {
        config.settings.seed = s;
    }
    config.rays = args.rays;
    config.threads = args.threads;
    let started = Instant::now();
    let compiled = Compiled::with_checks(scene, loaded.checks.clone());
    let control = Arc::new(Control::new());
    let stop = Arc::clone(&control);
    // Ctrl+C asks the trace to stop and keep what it has; a second one ends the program. If
    // the handler cannot be installed, Ctrl+C simply ends the program as usual.
    let _ = ctrlc::set_handler(move || {
        if stop.is_cancelled() {
            std::process::exit(i32::from(EXIT_INTERRUPTED));
        }
        stop.cancel();
    });
    let result = trace_in_background(scene, &compiled, &config, &control, std::io::stderr().is_terminal());
    let elapsed = started.elapsed();
    let report = budget_report(&result);
    let sinks = [report.launched_w, report.escaped_w, report.absorbed_w, report.trapped_w, report.below_threshold_w];
    if !sinks.iter().chain(report.detected.iter().map(|d| &d.power_w)).all(|w| w.is_finite())
        || !report.closure_error.is_finite()
    {
        return Err(other(anyhow!(
            "the power budget came out not finite (launched {} W); validation should have refused this scene, so please report it",
            report.launched_w
        )));
    }

    let explained = args.ray.or(args.annotate_ray).map(|k| explain(scene, &result, k)).transpose()?;
    if let Some(path) = &args.svg {
        let options = export::svg::SvgOptions { annotate_ray: args.annotate_ray, ..Default::default() };
        let svg = export::svg::render(scene, &result, &options);
        write_output(path, &svg, "picture")?;
    }
    if let Some(path) = &args.csv {
        write_output(path, &export::csv::detectors(scene, &result), "detector table")?;
    }
    if let Some(path) = &args.events {
        write_output(path, &export::csv::events(&result), "event table")?;
    }
    if args.json {
        let mut value = export::json::budget(&report, &result);
        if let Some(fields) = value.as_object_mut() {
            fields.insert("partial".to_owned(), serde_json::Value::Bool(result.cancelled));
            fields.extend(export::json::analysis(scene, &result));
        }
        let text = serde_json::to_string_pretty(&value).map_err(other)?;
        println!("{text}");
    } else {
        print!("{}", budget_text(scene, &args.file, &result, &report, elapsed.as_secs_f64()));
        if let Some(x) = explained.filter(|_| args.ray.is_some()) {
            print!("\n{x}");
        }
    }
    if result.cancelled {
        let (done, total) = control.progress();
        eprintln!("stopped by Ctrl+C after {done} of {total} launched rays; the budget above is partial");
        return Ok(ExitCode::from(EXIT_INTERRUPTED));
    }
    Ok(ExitCode::SUCCESS)
}

/// Runs the trace on another thread while this one shows its progress on standard error
/// (when `show_progress`), until it finishes or `control` stops it.
fn trace_in_background(
    scene: &Scene,
    compiled: &Compiled,
    config: &TraceConfig,
    control: &Control,
    show_progress: bool,
) -> Trace {
    std::thread::scope(|s| {
        let main = std::thread::current();
        let worker = s.spawn(move || {
            let t = trace_compiled(scene, compiled, config, control);
            main.unpark();
            t
        });
        let bar = show_progress.then(|| {
            let style = ProgressStyle::with_template(
                "{spinner} tracing {wide_bar} {human_pos}/{human_len} rays, {eta} left (Ctrl+C stops)",
            )
            .unwrap_or_else(|_| ProgressStyle::default_bar());
            ProgressBar::with_draw_target(None, ProgressDrawTarget::stderr()).with_style(style)
        });
        while !worker.is_finished() {
            let (done, total) = control.progress();
            if let (Some(bar), true) = (&bar, total > 0) {
                bar.set_length(total);
                bar.set_position(done);
            }
            std::thread::park_timeout(Duration::from_millis(100));
        }
        if let Some(bar) = bar {
            bar.finish_and_clear();
        }
        match worker.join() {
            Ok(t) => t,
            Err(panic) => std::panic::resume_unwind(panic),
        }
    })
}

/// Refuses outputs that would overwrite the scene file, and two outputs to one path.
fn check_outputs(args: &TraceArgs) -> Result<(), Failure> {
    let input = std::fs::canonicalize(&args.file).ok();
    let mut seen: Vec<(&str, PathBuf)> = Vec::new();
    for (flag, path) in [("--svg", &args.svg), ("--csv", &args.csv), ("--events", &args.events)] {
        let Some(path) = path else { continue };
        let target = canonical_output(path);
        if input.as_ref() == Some(&target) {
            return Err(bad_input(anyhow!(
                "{flag} {} is the scene file itself and would overwrite it; choose another output path",
                path.display()
            )));
        }
        if let Some((other_flag, _)) = seen.iter().find(|(_, p)| *p == target) {
            return Err(bad_input(anyhow!(
                "{other_flag} and {flag} both write to {}; give each output its own path",
                path.display()
            )));
        }
        seen.push((flag, target));
    }
    Ok(())
}

/// The canonical form of an output path that may not exist yet: its folder made canonical,
/// joined with its file name.
fn canonical_output(path: &Path) -> PathBuf {
    if let Ok(p) = std::fs::canonicalize(path) {
        return p;
    }
    match (path.parent(), path.file_name()) {
        (Some(parent), Some(name)) => {
            let parent = if parent.as_os_str().is_empty() { Path::new(".") } else { parent };
            std::fs::canonicalize(parent).map_or_else(|_| path.to_path_buf(), |d| d.join(name))
        }
        _ => path.to_path_buf(),
    }
}

/// The explanation of stored ray `k`, or what range of rays there is.
fn explain(scene: &Scene, trace: &Trace, k: usize) -> Result<raydraft::analysis::RayExplanation, Failure> {
    raydraft::analysis::explain_ray(scene, trace, k).ok_or_else(|| {
        bad_input(anyhow!(
            "ray {k} was not stored: the trace kept {} rays (numbered from 0); pick one of those",
            trace.rays.len()
        ))
    })
}

/// Runs a parameter sweep and prints `value,metric` CSV; a progress line goes to stderr when
/// it is a terminal.
fn sweep(args: &SweepArgs) -> Result<ExitCode, Failure> {
    use raydraft::analysis::{Metric, ParamPath, sweep_with};
    use std::io::IsTerminal as _;
    let loaded = load(&args.file)?;
    print_load_warnings(&args.file, &loaded);
    let scene = &loaded.scene;
    let param = ParamPath::parse(scene, &args.param).map_err(bad_input)?;
    let metric = Metric::parse(scene, &args.metric).map_err(bad_input)?;
    let tty = std::io::stderr().is_terminal();
    let mut progress = |done: usize, all: usize| {
        if tty {
            eprint!("\rstep {done} of {all}");
        }
    };
    let rows = sweep_with(scene, &param, args.from, args.to, args.steps, &metric, &Control::new(), &mut progress)
        .map_err(bad_input)?;
    if tty {
        eprintln!();
    }
    let mut out = String::from("value,metric\n");
    for (v, m) in rows {
        let _ = writeln!(out, "{v},{m}");
    }
    print!("{out}");
    Ok(ExitCode::SUCCESS)
}

/// Writes an output file atomically: a killed or failed run never leaves a truncated file
/// in place of a good one.
fn write_output(path: &Path, text: &str, what: &str) -> Result<(), Failure> {
    file::write_atomically(path, text.as_bytes(), false)
        .with_context(|| format!("cannot write the {what} to {}", path.display()))
        .map_err(other)
}

/// The power budget as a table people read.
pub fn budget_text(scene: &Scene, path: &Path, trace: &Trace, report: &BudgetReport, seconds: f64) -> String {
    let mut out = String::new();
    let title = if scene.title.is_empty() { "untitled" } else { scene.title.as_str() };
    let _ = writeln!(out, "{title} ({})", path.display());
    let _ = writeln!(
        out,
        "{} trace: {} rays, {} events, {seconds:.2} s",
        export::json::mode_word(trace.mode),
        trace.n_rays,
        trace.n_events
    );
    if trace.cancelled {
        let _ = writeln!(
            out,
            "PARTIAL: the trace was stopped before all rays were traced; the budget covers only the rays traced"
        );
    }
    if trace.mode == TraceMode::Principal {
        let _ = writeln!(
            out,
            "principal mode follows one path per ray without splitting: the budget counts paths, not watts"
        );
    }
    let launched = report.launched_w;
    let pct = |w: f64| {
        if launched > 0.0 { 100.0 * w / launched } else { 0.0 }
    };
    let row = |out: &mut String, indent: usize, label: &str, w: f64| {
        let label = format!("{:indent$}{label}", "");
        let _ = writeln!(out, "  {label:<44} {w:>12.6} W {:>8.3} %", pct(w));
    };
    let _ = writeln!(out, "power budget:");
    row(&mut out, 0, "launched", launched);
    for d in &report.detected {
        row(&mut out, 0, &format!("detected by \"{}\"", d.name), d.power_w);
    }
    row(&mut out, 0, "escaped", report.escaped_w);
    row(&mut out, 0, "absorbed", report.absorbed_w);
    for a in &report.absorbed_by {
        row(&mut out, 2, &a.label, a.power_w);
    }
    row(&mut out, 0, "trapped (still guided at the event limit)", report.trapped_w);
    row(&mut out, 0, "below threshold", report.below_threshold_w);
    let _ = writeln!(out, "  closure error {:.1e} (relative)", report.closure_error);
    if !trace.warnings.is_empty() {
        let _ = writeln!(out, "warnings:");
        for w in &trace.warnings {
            let _ = writeln!(out, "  {w}");
        }
    }
    out
}

/// Checks a file, prints every problem and returns 0 if there is no error, 2 otherwise.
fn check(path: &Path) -> ExitCode {
    match file::load(path) {
        Ok(loaded) => {
            for w in &loaded.warnings {
                println!("{}", located(path, w));
            }
            let n = loaded.warnings.len();
            println!(
                "ok: {}: {} objects, no errors, {n} warning{}",
                path.display(),
                loaded.scene.objects.len(),
                if n == 1 { "" } else { "s" }
            );
            ExitCode::SUCCESS
        }
        Err(LoadError::Invalid { path: shown, problems }) => {
            for p in &problems {
                eprintln!("{}", located(Path::new(&shown), p));
            }
            let errors = problems.iter().filter(|p| p.severity == Severity::Error).count();
            eprintln!("{shown}: {errors} error(s), {} warning(s)", problems.len() - errors);
            ExitCode::from(2)
        }
        Err(e) => {
            // The whole chain, so that the reason a file cannot be read is shown.
            eprintln!("error: {:#}", anyhow::Error::new(e));
            ExitCode::from(2)
        }
    }
}

fn index(args: &IndexArgs) -> Result<ExitCode, Failure> {
    if args.list {
        print!("{}", library_table());
        return Ok(ExitCode::SUCCESS);
    }
    let name = args.material.as_deref().unwrap_or_default();
    let Some(m) = library_material(name) else {
        let names: Vec<String> = library().into_iter().map(|m| m.name).collect();
        return Err(bad_input(anyhow!(
            "no library material is called \"{name}\"; the library has {} (see `raydraft index --list`)",
            names.join(", ")
        )));
    };
    let nm = args.wavelength.unwrap_or(LINE_D_NM);
    if !(nm.is_finite() && nm > 0.0) {
        return Err(bad_input(anyhow!("--wavelength must be a positive number of nanometres, it is {nm}")));
    }
    let rel = m.index_rel_air(nm);
    let abs = m.index_abs(nm);
    if !(rel.is_finite() && abs.is_finite()) {
        return Err(bad_input(anyhow!(
            "the formula for {} gives no index at {nm} nm; its data are valid from {} to {} nm",
            m.name,
            m.valid_nm.0,
            m.valid_nm.1
        )));
    }
    println!("{} at {nm} nm: n = {rel:.6} relative to air, {abs:.6} absolute (vacuum)", m.name);
    if !m.is_in_valid_range(nm) {
        println!(
            "note: {nm} nm is outside the range where the data are valid ({}–{} nm); the value is extrapolated",
            m.valid_nm.0, m.valid_nm.1
        );
    }
    if !m.source.is_empty() {
        println!("source: {}", m.source);
    }
    Ok(ExitCode::SUCCESS)
}

fn library_table() -> String {
    let mut out = String::new();
    let _ = writeln!(out, "{:<22} {:>16}  {:<9} source", "material", "valid (nm)", "tabulated");
    for m in library() {
        let _ = writeln!(out, "{}", library_row(&m));
    }
    out
}

fn library_row(m: &Material) -> String {
    let reference = match m.reference {
        IndexReference::Air => "to air",
        IndexReference::Vacuum => "to vacuum",
    };
    let range = format!("{}–{}", m.valid_nm.0, m.valid_nm.1);
    format!("{:<22} {range:>16}  {reference:<9} {}", m.name, m.source)
}

#[cfg(test)]
mod tests {
    use super::*;
    use raydraft::scene::{BeamSource, Emission, ObjectKind};

    fn beam_scene() -> Scene {
        let mut scene = Scene::new("beam");
        scene.add(
            "beam",
            ObjectKind::BeamSource(BeamSource {
                center: (0.0, 0.0),
                width: 1.0,
                direction_deg: 0.0,
                emission: Emission::new(2000, 1.0, 550.0),
            }),
        );
        scene
    }

    #[test]
    fn a_background_trace_runs_to_the_end_and_reports_full_progress() {
        let scene = beam_scene();
        let compiled = Compiled::new(&scene);
        let control = Control::new();
        let t = trace_in_background(&scene, &compiled, &TraceConfig::from_scene(&scene), &control, false);
        assert!(!t.cancelled);
        assert_eq!(control.progress(), (2000, 2000));
    }

    #[test]
    fn a_stopped_trace_is_marked_partial() {
        let scene = beam_scene();
        let compiled = Compiled::new(&scene);
        let control = Control::new();
        control.cancel();
        let t = trace_in_background(&scene, &compiled, &TraceConfig::from_scene(&scene), &control, false);
        assert!(t.cancelled);
        let report = budget_report(&t);
        let text = budget_text(&scene, Path::new("beam.ron"), &t, &report, 0.0);
        assert!(text.contains("PARTIAL: the trace was stopped"), "{text}");
        let whole = trace_in_background(&scene, &compiled, &TraceConfig::from_scene(&scene), &Control::new(), false);
        let report = budget_report(&whole);
        assert!(!budget_text(&scene, Path::new("beam.ron"), &whole, &report, 0.0).contains("PARTIAL"));
    }
}
