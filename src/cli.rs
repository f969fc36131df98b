//! The headless command line: trace, check and index lookups.
//!
//! Exit codes: 0 success, 2 bad input (a scene file that does not load, an unknown material,
//! bad arguments), 1 any other failure (such as an output file that cannot be written).

use std::fmt::Write as _;
use std::path::{Path, PathBuf};
use std::process::ExitCode;
use std::time::Instant;

use anyhow::{Context, anyhow};
use clap::{Parser, Subcommand, ValueEnum};

use raydraft::analysis::{BudgetReport, budget_report};
use raydraft::export;
use raydraft::optics::material::{IndexReference, LINE_D_NM};
use raydraft::optics::{Material, library, library_material};
use raydraft::scene::file::{self, LoadError};
use raydraft::scene::validate::Severity;
use raydraft::scene::{Loaded, MAX_RAYS_PER_SOURCE, Scene, TraceMode};
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
    /// Threads to trace with (default: one per core).
    #[arg(long, value_name = "N")]
    pub threads: Option<usize>,
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
        None => {
            if let Some(path) = &cli.file {
                // A file that does not load is reported here, with its line and column, rather
                // than in a window.
                let loaded = load(path)?;
                print_load_warnings(&loaded);
            }
            raydraft::app::run(cli.file).map_err(other)?;
            Ok(ExitCode::SUCCESS)
        }
    }
}

fn load(path: &Path) -> Result<Loaded, Failure> {
    file::load(path).map_err(bad_input)
}

fn print_load_warnings(loaded: &Loaded) {
    for w in &loaded.warnings {
        eprintln!("{w}");
    }
}

fn trace(args: &TraceArgs) -> Result<ExitCode, Failure> {
    if let Some(n) = args.rays {
        if n == 0 || n > MAX_RAYS_PER_SOURCE {
            return Err(bad_input(anyhow!("--rays must be from 1 to {MAX_RAYS_PER_SOURCE}, it is {n}")));
        }
    }
    if args.threads == Some(0) {
        return Err(bad_input(anyhow!("--threads must be at least 1")));
    }
    // The scene's warnings come back among the trace's own, so they are printed once, below.
    let loaded = load(&args.file)?;
    let scene = &loaded.scene;
    let mut config = TraceConfig::from_scene(scene);
    if let Some(m) = args.mode {
        config.mode = m.into();
    }
    if let Some(s) = args.seed {
        config.seed = s;
    }
    config.rays = args.rays;
    config.threads = args.threads;
    let started = Instant::now();
    let compiled = Compiled::new(scene);
    let result = trace_compiled(scene, &compiled, &config, &Control::new());
    let elapsed = started.elapsed();
    let report = budget_report(scene, &compiled, &result);

    if let Some(path) = &args.svg {
        let svg = export::svg::render(scene, &result, &export::svg::SvgOptions::default());
        write_output(path, &svg, "picture")?;
    }
    if let Some(path) = &args.csv {
        write_output(path, &export::csv::detectors(scene, &result), "detector table")?;
    }
    if let Some(path) = &args.events {
        write_output(path, &export::csv::events(scene, &result), "event table")?;
    }
    if args.json {
        let value = export::json::budget(&report, &result);
        let text = serde_json::to_string_pretty(&value).map_err(other)?;
        println!("{text}");
    } else {
        print!("{}", budget_text(scene, &args.file, &result, &report, elapsed.as_secs_f64()));
    }
    Ok(ExitCode::SUCCESS)
}

fn write_output(path: &Path, text: &str, what: &str) -> Result<(), Failure> {
    std::fs::write(path, text).with_context(|| format!("cannot write the {what} to {}", path.display())).map_err(other)
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
    for (name, w) in &report.detected {
        row(&mut out, 0, &format!("detected by \"{name}\""), *w);
    }
    row(&mut out, 0, "escaped", report.escaped_w);
    row(&mut out, 0, "absorbed", report.absorbed_w);
    for (name, w) in &report.absorbed_by {
        row(&mut out, 2, name, *w);
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
                println!("{}: {w}", path.display());
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
                eprintln!("{shown}: {p}");
            }
            let errors = problems.iter().filter(|p| p.severity == Severity::Error).count();
            eprintln!("{shown}: {errors} error(s), {} warning(s)", problems.len() - errors);
            ExitCode::from(2)
        }
        Err(e) => {
            eprintln!("error: {e}");
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
