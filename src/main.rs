//! The `coercive` command-line runner.
//!
//! `coercive mesh CASE.toml [--svg FILE] [--json]` meshes a case's geometry and prints the
//! quality report; `coercive solve CASE.toml` solves it; `coercive materials [--svg DIR]
//! [--json]` lists the material presets with their sources and plots their curves. Further
//! subcommands join the [`Command`] enum.

use std::path::{Path, PathBuf};
use std::process::ExitCode;
use std::time::Instant;

use clap::{Args, Parser, Subcommand};
use coercive::case::{Case, CaseError};
use coercive::mesh::svg::{mesh_to_svg, SvgOptions};
use coercive::mesh::{Mesh, QualityReport};

/// 2D finite-element magnetostatics for switchable permanent-magnet devices.
#[derive(Parser)]
#[command(name = "coercive", version, about)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

/// The subcommands.
#[derive(Subcommand)]
enum Command {
    /// Mesh a case's geometry and print the mesh quality report.
    Mesh(MeshArgs),
    /// Mesh and solve a case; print unknowns, Newton iterations, residual, energy, co-energy
    /// and the peak |B| of each region; then run the case's `[sweep]`, if any (force on a
    /// body versus the position of a rigid group, by three methods), and its `[rotation]`,
    /// if any (torque and flux linkage versus the rotor angle, or the maps of one phase).
    Solve(SolveArgs),
    /// List the material presets with their key numbers and published sources; with `--svg`,
    /// plot each soft material's B-H curve and each magnet's demagnetisation line.
    Materials(MaterialsArgs),
}

/// Arguments of `coercive materials`.
#[derive(Args)]
struct MaterialsArgs {
    /// Print the list as JSON (SI units: A/m, T, J/m^3).
    #[arg(long)]
    json: bool,
    /// Write one SVG chart per preset, plus `soft-materials.svg` and `magnets.svg`, to this
    /// directory (created if missing).
    #[arg(long, value_name = "DIR")]
    svg: Option<PathBuf>,
}

/// Arguments of `coercive solve`.
#[derive(Args)]
struct SolveArgs {
    /// The case file (TOML) with its material, winding and boundary sections.
    case: PathBuf,
    /// Print the summary as JSON (SI units; energies in J/m for planar cases, J otherwise).
    #[arg(long)]
    json: bool,
    /// Write the tables (CSV, JSON) and charts (SVG) of the case's studies into this folder.
    #[arg(long, value_name = "DIR")]
    out: Option<PathBuf>,
}

/// Arguments of `coercive mesh`.
#[derive(Args)]
struct MeshArgs {
    /// The case file (TOML).
    case: PathBuf,
    /// Write an SVG drawing of the mesh to this file.
    #[arg(long, value_name = "FILE")]
    svg: Option<PathBuf>,
    /// Print the report as JSON (lengths in m, areas in m^2, angles in degrees).
    #[arg(long)]
    json: bool,
    /// Override the case's `[mesh] max_size`, in the case file's length unit.
    #[arg(long, value_name = "SIZE")]
    max_size: Option<f64>,
    /// Override the case's `[mesh] max_triangles` (the guard against runaway meshes).
    #[arg(long, value_name = "N")]
    max_triangles: Option<usize>,
    /// Leave triangle edges out of the SVG (region fills, outlines and curves only).
    #[arg(long)]
    no_edges: bool,
}

/// Writes a line to standard output. Unlike `println!`, a closed pipe (`coercive ... | head`)
/// ends the output quietly instead of panicking.
macro_rules! say {
    ($($arg:tt)*) => {{
        use std::io::Write as _;
        let _ = writeln!(std::io::stdout().lock(), $($arg)*);
    }};
}

fn main() -> ExitCode {
    let cli = Cli::parse();
    let result = match cli.command {
        Command::Mesh(args) => run_mesh(&args),
        Command::Solve(args) => run_solve(&args),
        Command::Materials(args) => run_materials(&args),
    };
    match result {
        Ok(()) => ExitCode::SUCCESS,
        Err(message) => {
            eprintln!("error: {message}");
            ExitCode::FAILURE
        }
    }
}

fn run_materials(args: &MaterialsArgs) -> Result<(), String> {
    let list = coercive::materials::preset_list().map_err(|e| e.to_string())?;
    if let Some(dir) = &args.svg {
        let mut out = coercive::solve::OutputDir::create(dir)?;
        for (file, svg) in coercive::materials::preset_charts(&list).map_err(|e| e.to_string())? {
            out.write(&file, svg)?;
        }
    }
    if args.json {
        say!(
            "{}",
            serde_json::to_string_pretty(&list).expect("the preset list serialises")
        );
    } else {
        say!("{}", coercive::materials::preset_text(&list));
        if let Some(dir) = &args.svg {
            say!("charts: {}", dir.display());
        }
    }
    Ok(())
}

fn run_solve(args: &SolveArgs) -> Result<(), String> {
    let name = args.case.display();
    let case = Case::from_file(&args.case).map_err(|e| match e {
        CaseError::Io { .. } => e.to_string(),
        _ => format!("{name}: {e}"),
    })?;
    let geometry = case.geometry().map_err(|e| format!("{name}: {e}"))?;
    let (mesh, _) = case
        .mesh_with_report(&geometry)
        .map_err(|e| format!("{name}: {e}"))?;
    let model =
        coercive::solve::model_from_case(&case, mesh).map_err(|e| format!("{name}: {e}"))?;
    let (_, mut summary) =
        coercive::solve::solve_and_summarise(&model).map_err(|e| format!("{name}: {e}"))?;
    summary.gap_warnings = coercive::solve::drawn_gap_warnings(&case, model.mesh());
    if args.json {
        let mut value = serde_json::to_value(&summary).expect("a summary serialises");
        if case.sweep().is_some() {
            let sweep = coercive::solve::run_sweep(&case).map_err(|e| format!("{name}: {e}"))?;
            if let Some(obj) = value.as_object_mut() {
                obj.insert(
                    "sweep".into(),
                    serde_json::to_value(&sweep).expect("a sweep serialises"),
                );
                obj.insert("cautions".into(), CAUTIONS.join(" ").into());
            }
        }
        if case.rotation().is_some() {
            let rotation =
                coercive::solve::run_rotation(&case).map_err(|e| format!("{name}: {e}"))?;
            write_rotation(&case, &rotation, args)?;
            if let Some(obj) = value.as_object_mut() {
                obj.insert(
                    "rotation".into(),
                    serde_json::to_value(&rotation).expect("a rotation study serialises"),
                );
            }
        }
        if case.switching().is_some() {
            let report = run_switching(&case, args)?;
            if let Some(obj) = value.as_object_mut() {
                obj.insert(
                    "switching".into(),
                    serde_json::to_value(&report).expect("a report serialises"),
                );
                obj.insert(
                    "switching_cautions".into(),
                    coercive::switching::SWITCHING_CAUTIONS.join(" ").into(),
                );
            }
        }
        say!(
            "{}",
            serde_json::to_string_pretty(&value).expect("JSON values serialise")
        );
    } else {
        if let Some(title) = case.title() {
            say!("{title}");
        }
        say!("{summary}");
        if case.sweep().is_some() {
            say!();
            for line in CAUTIONS {
                say!("{line}");
            }
            let sweep = coercive::solve::run_sweep(&case).map_err(|e| format!("{name}: {e}"))?;
            say!();
            say!("{sweep}");
        }
        if case.rotation().is_some() {
            let rotation =
                coercive::solve::run_rotation(&case).map_err(|e| format!("{name}: {e}"))?;
            say!();
            say!("{rotation}");
            write_rotation(&case, &rotation, args)?;
        }
        if case.switching().is_some() {
            let report = run_switching(&case, args)?;
            say!();
            say!("{report}");
        }
    }
    Ok(())
}

/// Writes the files of a `[rotation]` study when `--out` is given.
fn write_rotation(
    case: &Case,
    rotation: &coercive::solve::RotationSummary,
    args: &SolveArgs,
) -> Result<(), String> {
    if let Some(dir) = &args.out {
        let files = coercive::solve::write_rotation_outputs(case, rotation, dir)
            .map_err(|e| format!("{}: {e}", args.case.display()))?;
        eprintln!("wrote {} files to {}", files.len(), dir.display());
    }
    Ok(())
}

/// Runs the case's `[switching]` study and writes its files when `--out` is given.
fn run_switching(
    case: &Case,
    args: &SolveArgs,
) -> Result<coercive::switching::SwitchingReport, String> {
    let name = args.case.display();
    let report = coercive::switching::run_case(case).map_err(|e| format!("{name}: {e}"))?;
    if let Some(dir) = &args.out {
        let title = case.title().unwrap_or("switching study");
        let files = coercive::switching::write_outputs(&report, dir, title)?;
        eprintln!("wrote {} files to {}", files.len(), dir.display());
    }
    Ok(report)
}

/// The magnet-safety cautions printed with every force sweep.
const CAUTIONS: [&str; 5] = [
    "Safety (magnet devices):",
    "  - Pinch hazard: a holding magnet snaps onto steel with the forces below; keep fingers out of the gap and handle large magnets with tools.",
    "  - Strong fields affect pacemakers, implanted defibrillators and other implants, and can erase cards and damage instruments: keep the makers' safety distances.",
    "  - Pulse coils that switch a magnet are driven from charged capacitors: discharge them before touching the circuit.",
    "  - Computed forces are for ideal flat, clean, thick steel: derate for real plates and apply the lifting safety factors of your local codes. These numbers do not replace local codes or licensed engineering practice.",
];

fn run_mesh(args: &MeshArgs) -> Result<(), String> {
    let case = Case::from_file(&args.case).map_err(|e| match e {
        CaseError::Io { .. } => e.to_string(),
        _ => format!("{}: {e}", args.case.display()),
    })?;
    let mut geometry = case
        .geometry()
        .map_err(|e| format!("{}: {e}", args.case.display()))?;
    if let Some(size) = args.max_size {
        if !(size.is_finite() && size > 0.0) {
            return Err(format!(
                "--max-size must be a positive length, got {size} {}",
                case.unit().symbol()
            ));
        }
        geometry.settings.max_size = Some(case.unit().to_metres(size));
    }
    if let Some(n) = args.max_triangles {
        geometry.settings.max_triangles = n;
    }
    let start = Instant::now();
    let (mesh, report) = case
        .mesh_with_report(&geometry)
        .map_err(|e| format!("{}: {e}", args.case.display()))?;
    let seconds = start.elapsed().as_secs_f64();

    if let Some(path) = &args.svg {
        let title = case
            .title()
            .map_or_else(|| args.case.display().to_string(), str::to_string);
        let svg = mesh_to_svg(
            &mesh,
            &SvgOptions {
                show_edges: !args.no_edges,
                title: Some(title),
                ..SvgOptions::default()
            },
        );
        std::fs::write(path, svg).map_err(|e| format!("cannot write {}: {e}", path.display()))?;
    }

    if args.json {
        say!("{}", json_report(&args.case, &mesh, &report, seconds));
    } else {
        print_report(&args.case, &case, &report, seconds, args.svg.as_deref());
    }
    Ok(())
}

/// The JSON report: the quality report's fields (SI units, angles in degrees) plus
/// `region_triangles` (name to count), `case`, `mesh_seconds`, `curves` and `units`.
fn json_report(path: &Path, mesh: &Mesh, report: &QualityReport, seconds: f64) -> String {
    let mut value = serde_json::to_value(report).expect("a quality report serialises");
    if let Some(obj) = value.as_object_mut() {
        let counts: serde_json::Map<String, serde_json::Value> = report
            .regions
            .iter()
            .map(|r| (r.name.clone(), r.triangles.into()))
            .collect();
        obj.insert("region_triangles".into(), counts.into());
        obj.insert("case".into(), path.display().to_string().into());
        obj.insert("mesh_seconds".into(), seconds.into());
        obj.insert("curves".into(), mesh.curves().len().into());
        obj.insert(
            "units".into(),
            serde_json::json!({"length": "m", "area": "m^2", "angle": "deg", "time": "s"}),
        );
    }
    serde_json::to_string_pretty(&value).expect("JSON values serialise")
}

fn print_report(
    path: &Path,
    case: &Case,
    report: &QualityReport,
    seconds: f64,
    svg: Option<&Path>,
) {
    match case.title() {
        Some(t) => say!("case: {} ({t})", path.display()),
        None => say!("case: {}", path.display()),
    }
    say!(
        "mesh: {} triangles, {} nodes in {:.3} s ({:.0} triangles/s)",
        report.triangles,
        report.nodes,
        seconds,
        report.triangles as f64 / seconds.max(1e-9)
    );
    let unit = case.unit();
    say!(
        "angles: min {:.2} deg (at ({:.4}, {:.4}) {}), max {:.2} deg (requested min {:.1} deg; {} triangles below it)",
        report.min_angle_deg,
        unit.from_metres(report.min_angle_at.x),
        unit.from_metres(report.min_angle_at.y),
        unit.symbol(),
        report.max_angle_deg,
        report.requested_min_angle_deg,
        report.triangles_below_min_angle
    );
    say!(
        "size: longest edge at most {:.3} x the local target size",
        report.max_size_ratio
    );
    let width = report
        .regions
        .iter()
        .map(|r| r.name.len())
        .max()
        .unwrap_or(6)
        .max(6);
    say!("regions:");
    for r in &report.regions {
        let area_unit = unit.from_metres(unit.from_metres(r.area));
        say!(
            "  {:<width$}  {:>9} triangles  area {:.6e} m^2 ({:.4} {}^2)  min angle {:.2} deg",
            r.name,
            r.triangles,
            r.area,
            area_unit,
            unit.symbol(),
            r.min_angle_deg
        );
    }
    for a in &report.small_input_angles {
        say!(
            "input angle of {:.2} deg at ({:.6}, {:.6}) {} is kept (smaller than the requested minimum)",
            a.angle_deg,
            unit.from_metres(a.at.x),
            unit.from_metres(a.at.y),
            unit.symbol()
        );
    }
    if let Some(svg) = svg {
        let max = SvgOptions::default().max_triangles_with_edges;
        if report.triangles > max {
            say!(
                "drawing: {} (triangle edges left out above {max} triangles)",
                svg.display()
            );
        } else {
            say!("drawing: {}", svg.display());
        }
    }
}
