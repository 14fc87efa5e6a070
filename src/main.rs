//! The `lumenrail` command: lay out optical benches and ray-trace them exactly.
//!
//! Exit codes: 0 success; 1 the bench is valid but cannot be traced as asked (the report says why); 2 bad
//! input.

use clap::{Parser, Subcommand};
use lumenrail_bench::{demos, drawer, file, report::Report};
use lumenrail_optics::library;
use std::io::Write;
use std::path::{Path, PathBuf};
use std::process::ExitCode;

/// Lay out optical benches and ray-trace them exactly.
#[derive(Parser)]
#[command(name = "lumenrail", version, about, after_help = lumenrail_workbench::SAFETY, args_conflicts_with_subcommands = true)]
struct Cli {
    /// A bench file to open in the workbench (default: a built-in demo bench).
    file: Option<PathBuf>,
    /// Open the window, let the layout settle, write a PNG of it to this path, and exit.
    #[arg(long, value_name = "OUT.png")]
    screenshot: Option<PathBuf>,
    /// The window's size when it opens, `WIDTHxHEIGHT` in points (default 1400x860, or as last closed).
    #[arg(long, value_name = "WxH", value_parser = parse_size)]
    window: Option<(u32, u32)>,
    /// For the end-to-end tests and screenshots: commands applied once the window is up (`move INDEX MM;
    /// view NAME; restore; save-as PATH; quit`).
    #[arg(long, hide = true)]
    script: Option<String>,
    #[command(subcommand)]
    command: Option<Command>,
}

#[derive(Subcommand)]
enum Command {
    /// Print every figure of a bench: first order, stop and pupils, images, screen spots, aberrations.
    Report {
        /// The bench file (.bench.ron).
        file: PathBuf,
        /// Print JSON for a script instead of text for a person.
        #[arg(long)]
        json: bool,
    },
    /// Validate a bench file or a drawer file: exit 0 when valid, 2 with `file:line:col: message` when not.
    Check {
        /// The bench file (.bench.ron) or drawer file (.drawer.ron, told by its name).
        file: PathBuf,
    },
    /// The drawer, the stock of parts: print the built-in starter drawer, or list a drawer file's items.
    Drawer {
        #[command(subcommand)]
        action: DrawerAction,
    },
    /// Search a drawer for lenses, placed on the bench's rail, that meet the bench's aims; ranked. Exits
    /// 1 (with the nearest misses) when no arrangement meets every aim.
    Arrange {
        /// The bench file (.bench.ron), with its aims.
        file: PathBuf,
        /// The drawer file (.drawer.ron), or `starter` for the built-in starter drawer.
        #[arg(long, value_name = "FILE")]
        drawer: PathBuf,
        /// How many lenses to place: `N` or `A-B`, from 1 to 3.
        #[arg(long, default_value = "1-2", value_parser = parse_parts)]
        parts: (usize, usize),
        /// How many ranked arrangements to show.
        #[arg(long, default_value_t = 5)]
        top: usize,
        /// Print the ranking as JSON.
        #[arg(long)]
        json: bool,
        /// Write the bench with the best arrangement placed to this file.
        #[arg(long, value_name = "OUT.bench.ron")]
        write: Option<PathBuf>,
    },
    /// The mount sheet for the machine shop: each part's reference position from the datum, vertex
    /// positions, spacings, clear apertures beside the diameters, sags, centre and edge thicknesses and the
    /// overall length. Prints it as a text table, or writes it as CSV, an SVG drawing and a DXF.
    MountSheet {
        /// The bench file (.bench.ron).
        file: PathBuf,
        /// Write the sheet as CSV (one row per surface, units in the header).
        #[arg(long, value_name = "OUT.csv")]
        csv: Option<PathBuf>,
        /// Write the assembly drawing as SVG (side view to scale, dimensions from the datum, title block).
        #[arg(long, value_name = "OUT.svg")]
        svg: Option<PathBuf>,
        /// Write the assembly drawing as plain ASCII DXF (layers OUTLINE, AXIS, DIMENSION, APERTURE).
        #[arg(long, value_name = "OUT.dxf")]
        dxf: Option<PathBuf>,
        /// Print the sheet as JSON for a script (lengths always in mm).
        #[arg(long)]
        json: bool,
        /// Show lengths in inches (25.4 mm each) in the text, the CSV, the SVG and the DXF.
        #[arg(long)]
        inch: bool,
        /// Which point of each carrier is its reference position: its centre, or its left or right edge.
        #[arg(long, default_value = "centre", value_parser = ["centre", "left", "right"])]
        datum: String,
        /// Added to each side of the light's footprint for the clear apertures, mm (default 0.5 mm,
        /// common practice).
        #[arg(long, value_name = "MM", default_value_t = lumenrail_bench::mount::DEFAULT_MARGIN_MM)]
        margin: f64,
        /// The date in the drawing's title block (default: today, UTC).
        #[arg(long, value_name = "YYYY-MM-DD")]
        date: Option<String>,
    },
    /// The tolerance run: each lens's and mirror's sensitivities (image shift per mm of position, per
    /// 0.1 mm of decentre and per 0.1° of tilt, and the RMS spot's growth), the budget's RSS and
    /// worst-case stacks against the depth of focus and the screen, and a seeded Monte Carlo. Limits come
    /// from the bench's `tolerances`, else common shop practice.
    Tolerance {
        /// The bench file (.bench.ron).
        file: PathBuf,
        /// Monte Carlo trials (0: none).
        #[arg(long, value_name = "N", default_value_t = lumenrail_bench::tolerance::DEFAULT_TRIALS)]
        trials: usize,
        /// The Monte Carlo's seed: the same seed gives the same result on any machine's thread count.
        #[arg(long, value_name = "S", default_value_t = lumenrail_bench::tolerance::DEFAULT_SEED)]
        seed: u64,
        /// Draw errors from a normal distribution with σ = a/3, truncated at ±a (default: uniform within ±a).
        #[arg(long)]
        normal: bool,
        /// Move the screen to each trial's best focus before measuring its spot.
        #[arg(long)]
        refocus: bool,
        /// Print JSON for a script instead of text for a person.
        #[arg(long)]
        json: bool,
    },
    /// A printable lab sheet for the class (PDF: the bench to scale, parts list, procedure, a blank
    /// readings table, cautions) and, with --answers, the instructor's answer key computed from the bench.
    LabSheet {
        /// The bench file (.bench.ron).
        file: PathBuf,
        /// Which lab.
        #[arg(long, value_parser = ["displacement", "autocollimation", "magnification"])]
        lab: String,
        /// Write the class's sheet here.
        #[arg(long, value_name = "OUT.pdf")]
        pdf: PathBuf,
        /// Write the answer key here (a separate PDF).
        #[arg(long, value_name = "OUT.pdf")]
        answers: Option<PathBuf>,
        /// The paper size.
        #[arg(long, default_value = "a4", value_parser = ["a4", "letter"])]
        paper: String,
    },
    /// List the built-in demo benches, or print one: `lumenrail demos NAME > my.bench.ron`.
    Demos {
        /// The demo to print.
        name: Option<String>,
    },
    /// List the built-in materials with their published sources.
    Materials,
    /// Add Lumenrail to the desktop's application menu: writes the desktop entry (starting this program)
    /// and the icon under the XDG data folder (`~/.local/share`), or under `--data-home`.
    InstallDesktop {
        /// The data folder to write under, instead of `$XDG_DATA_HOME` or `~/.local/share`.
        #[arg(long, value_name = "DIR")]
        data_home: Option<PathBuf>,
    },
    /// Write one analysis view of a bench as a CSV table and/or a PNG picture (drawn without a window), or
    /// the rail drawing as SVG (`--view rail --svg OUT.svg`, with `--text OUT.txt` for the readout's text).
    Export {
        /// The bench file (.bench.ron).
        file: PathBuf,
        /// The view: spot, fan, sweep, colour, field, beam (a laser's 1/e² diameter along the rail), wavefront,
        /// sharpness (the MTF against its diffraction limit), or rail (the bench drawn to scale).
        #[arg(long, value_parser = ["spot", "fan", "sweep", "colour", "field", "beam", "wavefront", "sharpness", "rail"])]
        view: String,
        /// Where to write the rail drawing (with `--view rail`).
        #[arg(long, value_name = "OUT.svg")]
        svg: Option<PathBuf>,
        /// Where to write the readout's figures as text (with `--view rail`).
        #[arg(long, value_name = "OUT.txt")]
        text: Option<PathBuf>,
        /// Where to write the view's data (header row with units, one row per datum).
        #[arg(long, value_name = "OUT.csv")]
        csv: Option<PathBuf>,
        /// Where to write the view's picture (with `--view rail`, the rail drawing as PNG).
        #[arg(long, value_name = "OUT.png")]
        png: Option<PathBuf>,
        /// The rail drawing's size, `WIDTHxHEIGHT` in pixels for the PNG and in points for the SVG
        /// (with `--view rail`; at least 480x240, at most 8000 a side).
        #[arg(long, default_value = "1200x520", value_parser = parse_size)]
        size: (u32, u32),
        /// The plane of the spot and fan views, and the one the wavefront and sharpness views refer the
        /// wavefront to: a screen's name, `best` (best focus) or a rail position in mm (default: for the
        /// spot and fan views the first screen after the last part, else best focus; for the wavefront and
        /// sharpness views the paraxial image).
        #[arg(long)]
        plane: Option<String>,
        /// The spot diagram's pupil pattern: `rings` (6 rings about the centre, 127 rays), `grid` (15
        /// across, 177 rays) or `gauss-rings` (Gauss rings 6 × 12, 72 rays, whose weights integrate the
        /// pupil's area exactly).
        #[arg(long, default_value = "rings", value_parser = ["rings", "grid", "gauss-rings"])]
        grid: String,
    },
}

#[derive(Subcommand)]
enum DrawerAction {
    /// Print the built-in starter drawer: `lumenrail drawer starter > my.drawer.ron`.
    Starter,
    /// List a drawer's items, one a line: label, kind, focal length at 587.6 nm, diameter, quantity.
    List {
        /// The drawer file (.drawer.ron).
        file: PathBuf,
    },
}

fn main() -> ExitCode {
    let cli = Cli::parse();
    match cli.command {
        None => match lumenrail_workbench::app::run(cli.file, cli.screenshot, cli.window, cli.script) {
            Ok(()) => ExitCode::SUCCESS,
            Err(e) => {
                eprintln!("lumenrail: {e}");
                if e.contains("DISPLAY") {
                    eprintln!(
                        "lumenrail: no display to open the workbench on; `lumenrail report FILE` works without one"
                    );
                }
                ExitCode::from(2)
            }
        },
        Some(Command::Report { file, json }) => report(&file, json),
        Some(Command::Check { file }) if is_drawer(&file) => check_drawer(&file),
        Some(Command::Check { file }) => check(&file),
        Some(Command::Drawer { action: DrawerAction::Starter }) => {
            print!("{}", drawer::to_text(&drawer::starter()));
            ExitCode::SUCCESS
        }
        Some(Command::Drawer { action: DrawerAction::List { file } }) => drawer_list(&file),
        Some(Command::Demos { name }) => demos_cmd(name.as_deref()),
        Some(Command::Arrange { file, drawer, parts, top, json, write }) => {
            arrange_cmd(&file, &drawer, parts, top, json, write.as_deref())
        }
        Some(Command::Export { file, view, svg, png, text, size, .. }) if view == "rail" => {
            export_rail(&file, RailOutputs { svg: svg.as_deref(), png: png.as_deref(), text: text.as_deref() }, size)
        }
        Some(Command::Export { file, view, csv, png, plane, grid, .. }) => {
            export(&file, &view, csv.as_deref(), png.as_deref(), plane.as_deref(), &grid)
        }
        Some(Command::MountSheet { file, csv, svg, dxf, json, inch, datum, margin, date }) => {
            let to = MountOutputs { csv: csv.as_deref(), svg: svg.as_deref(), dxf: dxf.as_deref() };
            mount_sheet(&file, to, json, inch, &datum, margin, date.as_deref())
        }
        Some(Command::Tolerance { file, trials, seed, normal, refocus, json }) => {
            use lumenrail_bench::tolerance::{Distribution, MonteCarloOptions};
            let distribution = if normal { Distribution::NORMAL } else { Distribution::Uniform };
            tolerance_cmd(&file, MonteCarloOptions { trials, seed, distribution, refocus }, json)
        }
        Some(Command::LabSheet { file, lab, pdf, answers, paper }) => {
            lab_sheet(&file, &lab, &pdf, answers.as_deref(), &paper)
        }
        Some(Command::InstallDesktop { data_home }) => install_desktop(data_home),
        Some(Command::Materials) => {
            for e in library::entries() {
                println!("{:<18} {}\n{:<18} source: {}", e.name, e.description, "", e.source);
            }
            ExitCode::SUCCESS
        }
    }
}

fn install_desktop(data_home: Option<PathBuf>) -> ExitCode {
    use lumenrail_export::icon;
    let Some(home) = data_home.or_else(icon::data_home) else {
        eprintln!("error: neither XDG_DATA_HOME nor HOME is set; give the folder with --data-home DIR");
        return ExitCode::FAILURE;
    };
    let program = match std::env::current_exe() {
        Ok(p) => p,
        Err(e) => {
            eprintln!("error: cannot tell where this program is: {e}");
            return ExitCode::FAILURE;
        }
    };
    match icon::install(&home, &program) {
        Ok(done) => {
            println!("wrote {}", done.entry.display());
            println!("wrote {}", done.svg.display());
            println!("wrote {}", done.png.display());
            println!("Lumenrail is in the application menu once the desktop rereads it (log out and in if not).");
            ExitCode::SUCCESS
        }
        Err(e) => {
            eprintln!("error: {e}");
            ExitCode::FAILURE
        }
    }
}

fn print_diagnostics(ds: &[file::Diagnostic]) {
    let mut err = std::io::stderr().lock();
    for d in ds {
        let _ = writeln!(err, "{d}");
    }
}

/// Loads a bench, printing its warnings, or its errors and `None`.
fn load(path: &Path) -> Option<file::Loaded> {
    match file::load(path) {
        Ok(l) => {
            print_diagnostics(&l.warnings);
            Some(l)
        }
        Err(e) => {
            print_diagnostics(&e.diagnostics);
            None
        }
    }
}

fn report(path: &Path, json: bool) -> ExitCode {
    let Some(loaded) = load(path) else {
        return ExitCode::from(2);
    };
    let report = Report::of(&loaded.bench);
    let text = if json { report.to_json() } else { report.to_text() };
    let mut out = std::io::stdout().lock();
    let _ = writeln!(out, "{text}");
    if let Some(why) = &report.trace_failure {
        eprintln!("{}: cannot trace as asked: {why}", path.display());
        return ExitCode::from(1);
    }
    ExitCode::SUCCESS
}

/// `WIDTHxHEIGHT` as two whole numbers.
fn parse_size(text: &str) -> Result<(u32, u32), String> {
    let (w, h) =
        text.split_once(['x', 'X', '×']).ok_or_else(|| format!("`{text}` is not WIDTHxHEIGHT, e.g. 1600x700"))?;
    let n = |t: &str| t.trim().parse::<u32>().map_err(|_| format!("`{t}` in `{text}` is not a whole number of pixels"));
    Ok((n(w)?, n(h)?))
}

/// Where `export --view rail` writes its files.
struct RailOutputs<'a> {
    svg: Option<&'a Path>,
    png: Option<&'a Path>,
    text: Option<&'a Path>,
}

/// `lumenrail export FILE --view rail [--svg OUT.svg] [--png OUT.png] [--text OUT.txt] [--size WxH]`: the
/// rail drawing and the readout.
fn export_rail(path: &Path, to: RailOutputs<'_>, (width, height): (u32, u32)) -> ExitCode {
    let RailOutputs { svg, png, text } = to;
    if svg.is_none() && png.is_none() && text.is_none() {
        eprintln!("lumenrail export: say where to write the rail: --svg OUT.svg, --png OUT.png and/or --text OUT.txt");
        return ExitCode::from(2);
    }
    let Some(loaded) = load(path) else {
        return ExitCode::from(2);
    };
    let evaluation = lumenrail_bench::evaluation::Evaluation::of(&loaded.bench);
    let scene = lumenrail_export::scene::Scene::of(&evaluation);
    let mut outputs: Vec<(&Path, Vec<u8>)> = Vec::new();
    if let Some(p) = svg {
        let size = (f64::from(width), f64::from(height));
        outputs.push((p, lumenrail_export::rail::rail_svg_sized(&evaluation, &scene, size).into_bytes()));
    }
    if let Some(p) = png {
        match lumenrail_export::rail::rail_png(&evaluation, &scene, width, height) {
            Ok(bytes) => outputs.push((p, bytes)),
            Err(e) => {
                eprintln!("lumenrail export: {e}");
                return ExitCode::from(2);
            }
        }
    }
    if let Some(p) = text {
        outputs.push((p, evaluation.report.to_text().into_bytes()));
    }
    for (out, bytes) in outputs {
        if let Err(e) = file::write_atomic(out, &bytes) {
            eprintln!("lumenrail export: {e}");
            return ExitCode::from(2);
        }
        eprintln!("wrote {}", out.display());
    }
    if let Some(why) = &evaluation.report.trace_failure {
        eprintln!("{}: cannot trace as asked: {why}", path.display());
        return ExitCode::from(1);
    }
    ExitCode::SUCCESS
}

/// `lumenrail tolerance FILE [--trials N] [--seed S] [--normal] [--refocus] [--json]`: the run as text or
/// JSON. Exits 1 when the bench cannot be traced or has nothing to tolerance, 2 on bad input.
fn tolerance_cmd(path: &Path, options: lumenrail_bench::tolerance::MonteCarloOptions, json: bool) -> ExitCode {
    use lumenrail_bench::tolerance::{ToleranceRun, monte_carlo};
    let Some(loaded) = load(path) else {
        return ExitCode::from(2);
    };
    let evaluation = lumenrail_bench::evaluation::Evaluation::of(&loaded.bench);
    let (mut run, perturber) = match ToleranceRun::of(&evaluation) {
        Ok(r) => r,
        Err(e) => {
            eprintln!("{}: no tolerance run: {e}", path.display());
            return ExitCode::from(1);
        }
    };
    if options.trials > 0 {
        let progress = lumenrail_bench::arrange::Progress::default();
        match monte_carlo(&perturber, &run.limits, &options, &progress) {
            Ok(mc) => run.monte_carlo = Some(mc),
            Err(e) => {
                eprintln!("{}: the Monte Carlo stopped: {e}", path.display());
                return ExitCode::from(1);
            }
        }
    }
    if json {
        println!("{}", run.to_json());
    } else {
        print!("{}", run.to_text());
    }
    ExitCode::SUCCESS
}

/// Where `mount-sheet` writes its files.
struct MountOutputs<'a> {
    csv: Option<&'a Path>,
    svg: Option<&'a Path>,
    dxf: Option<&'a Path>,
}

/// `lumenrail lab-sheet FILE --lab LAB --pdf OUT [--answers OUT] [--paper a4|letter]`: exits 1 when the
/// bench cannot hold that lab (the message says why), 2 on bad input or a file that cannot be written.
fn lab_sheet(path: &Path, lab: &str, pdf: &Path, answers: Option<&Path>, paper: &str) -> ExitCode {
    use lumenrail_bench::lab::{Lab, LabSheet};
    use lumenrail_export::lab::{Paper, answers_pdf, sheet_pdf};
    let (Some(lab), Some(paper)) = (Lab::from_word(lab), Paper::from_word(paper)) else {
        eprintln!("lumenrail lab-sheet: unknown lab or paper");
        return ExitCode::from(2);
    };
    let Some(loaded) = load(path) else {
        return ExitCode::from(2);
    };
    let evaluation = lumenrail_bench::evaluation::Evaluation::of(&loaded.bench);
    let sheet = match LabSheet::of(&evaluation, lab) {
        Ok(s) => s,
        Err(e) => {
            eprintln!("{}: {e}", path.display());
            return ExitCode::from(1);
        }
    };
    let mut outputs = vec![(pdf, sheet_pdf(&evaluation, &sheet, paper))];
    if let Some(a) = answers {
        outputs.push((a, answers_pdf(&sheet, paper)));
    }
    for (out, bytes) in outputs {
        let written =
            bytes.map_err(|e| e.to_string()).and_then(|b| file::write_atomic(out, &b).map_err(|e| e.to_string()));
        if let Err(e) = written {
            eprintln!("lumenrail lab-sheet: {e}");
            return ExitCode::from(2);
        }
        eprintln!("wrote {}", out.display());
    }
    ExitCode::SUCCESS
}

/// `lumenrail mount-sheet FILE [--csv OUT] [--svg OUT] [--dxf OUT] [--json] [--inch] [--datum D]
/// [--margin MM] [--date YYYY-MM-DD]`: the text table (or JSON) when no file is asked for, else the files.
/// Exits 1 after writing when the bench cannot be traced (the positions are there, the clear apertures
/// are not).
fn mount_sheet(
    path: &Path,
    to: MountOutputs<'_>,
    json: bool,
    inch: bool,
    datum: &str,
    margin_mm: f64,
    date: Option<&str>,
) -> ExitCode {
    use lumenrail_bench::mount::{Datum, MountOptions, MountSheet};
    use lumenrail_export::mount::{mount_csv, mount_dxf, mount_svg};
    if !margin_mm.is_finite() || margin_mm < 0.0 {
        eprintln!("lumenrail mount-sheet: --margin {margin_mm}: the margin must be a number of mm, 0 or more");
        return ExitCode::from(2);
    }
    let Some(loaded) = load(path) else {
        return ExitCode::from(2);
    };
    let evaluation = lumenrail_bench::evaluation::Evaluation::of(&loaded.bench);
    let options = MountOptions { datum: Datum::from_word(datum).expect("clap checked the datum"), margin_mm };
    let sheet = MountSheet::of(&evaluation, &options);
    let files = to.csv.is_some() || to.svg.is_some() || to.dxf.is_some();
    if json {
        println!("{}", sheet.to_json());
    } else if !files {
        print!("{}", sheet.to_text(inch));
    }
    let today;
    let date = match date {
        Some(d) => d,
        None => {
            today = lumenrail_export::mount::today_utc();
            &today
        }
    };
    let mut outputs: Vec<(&Path, Result<String, lumenrail_export::mount::MountFileError>)> = Vec::new();
    if let Some(p) = to.csv {
        outputs.push((p, mount_csv(&sheet, inch)));
    }
    if let Some(p) = to.svg {
        outputs.push((p, Ok(mount_svg(&sheet, inch, date))));
    }
    if let Some(p) = to.dxf {
        outputs.push((p, mount_dxf(&sheet, inch)));
    }
    for (out, text) in outputs {
        let written = text
            .map_err(|e| e.to_string())
            .and_then(|t| file::write_atomic(out, t.as_bytes()).map_err(|e| e.to_string()));
        if let Err(e) = written {
            eprintln!("lumenrail mount-sheet: {e}");
            return ExitCode::from(2);
        }
        eprintln!("wrote {}", out.display());
    }
    if files {
        for w in &sheet.warnings {
            eprintln!("{}: warning: {}", path.display(), w.words(inch));
        }
    }
    if let Some(why) = &evaluation.report.trace_failure {
        eprintln!("{}: cannot trace as asked: {why}", path.display());
        return ExitCode::from(1);
    }
    ExitCode::SUCCESS
}

fn export(
    path: &Path,
    view: &str,
    csv: Option<&Path>,
    png: Option<&Path>,
    plane: Option<&str>,
    grid: &str,
) -> ExitCode {
    use lumenrail_bench::views::{Plane, ViewKind, ViewRequest, Views};
    use lumenrail_optics::sampling::Grid;
    if csv.is_none() && png.is_none() {
        eprintln!("lumenrail export: say where to write the view: --csv OUT.csv and/or --png OUT.png");
        return ExitCode::from(2);
    }
    let kind = ViewKind::from_word(view).expect("clap checked the view's name");
    let Some(loaded) = load(path) else {
        return ExitCode::from(2);
    };
    let bench = &loaded.bench;
    let plane = match plane {
        None => Plane::Auto,
        Some("best") => Plane::BestFocus,
        Some(p) => match p.parse::<f64>() {
            Ok(z) if z.is_finite() => Plane::At(z),
            _ if bench.part(p).is_some() => Plane::Screen(p.to_string()),
            _ => {
                eprintln!("lumenrail export: --plane {p}: not a part of the bench, `best`, or a rail position in mm");
                return ExitCode::from(2);
            }
        },
    };
    let grid = match grid {
        "grid" => Grid::Grid { across: 15 },
        "gauss-rings" => Grid::GaussRings { rings: 6, arms: 12 },
        _ => Grid::Rings { rings: 6 },
    };
    let evaluation = lumenrail_bench::evaluation::Evaluation::of(bench);
    if let Some(why) = &evaluation.report.trace_failure {
        eprintln!("{}: cannot trace as asked: {why}", path.display());
        return ExitCode::from(1);
    }
    let views = Views::only(&evaluation, &ViewRequest { plane, grid }, &[kind]);
    for n in &views.notes {
        eprintln!("{}: {n}", path.display());
    }
    let mut outputs: Vec<(&Path, Option<Vec<u8>>)> = Vec::new();
    if let Some(p) = csv {
        outputs.push((p, lumenrail_export::csv::view_csv(&views, kind).map(String::into_bytes)));
    }
    if let Some(p) = png {
        let has_data = lumenrail_export::csv::view_csv(&views, kind).is_some();
        let picture = lumenrail_export::plots::view_png(&views, kind, &bench.title);
        outputs.push((p, has_data.then(|| lumenrail_export::plots::encode_png(&picture)).flatten()));
    }
    for (out, bytes) in outputs {
        let Some(bytes) = bytes else {
            eprintln!("{}: the {view} view has nothing to show", path.display());
            return ExitCode::from(1);
        };
        if let Err(e) = file::write_atomic(out, &bytes) {
            eprintln!("lumenrail export: {e}");
            return ExitCode::from(2);
        }
        eprintln!("wrote {}", out.display());
    }
    ExitCode::SUCCESS
}

fn check(path: &Path) -> ExitCode {
    match file::load(path) {
        Ok(l) => {
            print_diagnostics(&l.warnings);
            println!("{}: valid ({} parts, {} warnings)", path.display(), l.bench.parts.len(), l.warnings.len());
            ExitCode::SUCCESS
        }
        Err(e) => {
            print_diagnostics(&e.diagnostics);
            ExitCode::from(2)
        }
    }
}

/// Whether `path` names a drawer file (by its extension).
fn is_drawer(path: &Path) -> bool {
    path.file_name().is_some_and(|n| n.to_string_lossy().ends_with(drawer::EXTENSION))
}

/// Loads a drawer, printing its warnings, or its errors and `None`.
fn load_drawer(path: &Path) -> Option<drawer::LoadedDrawer> {
    match drawer::load(path) {
        Ok(l) => {
            print_diagnostics(&l.warnings);
            Some(l)
        }
        Err(e) => {
            print_diagnostics(&e.diagnostics);
            None
        }
    }
}

fn check_drawer(path: &Path) -> ExitCode {
    let Some(l) = load_drawer(path) else {
        return ExitCode::from(2);
    };
    println!("{}: valid ({} items, {} warnings)", path.display(), l.drawer.items.len(), l.warnings.len());
    ExitCode::SUCCESS
}

/// `lumenrail drawer list FILE`: one line per item.
fn drawer_list(path: &Path) -> ExitCode {
    let Some(l) = load_drawer(path) else {
        return ExitCode::from(2);
    };
    let items = &l.drawer.items;
    let label_width = items.iter().map(|i| i.label.chars().count()).max().unwrap_or(0);
    let mut out = std::io::stdout().lock();
    for item in items {
        let focal = match item.focal_mm(lumenrail_optics::material::D_LINE_NM) {
            Some(f) => format!("f {f:>9.3} mm"),
            None => format!("f {:>9}   ", "none"),
        };
        let _ = writeln!(
            out,
            "{:<label_width$}  {:<9}  {focal}  diameter {:>5} mm  quantity {}",
            item.label,
            item.kind_word(),
            item.mechanical_diameter_mm,
            item.quantity
        );
    }
    ExitCode::SUCCESS
}

fn demos_cmd(name: Option<&str>) -> ExitCode {
    match name {
        None => {
            for d in demos::DEMOS {
                println!("{:<28} {}", d.name, d.summary());
            }
            ExitCode::SUCCESS
        }
        Some(n) => match demos::find(n) {
            Some(d) => {
                print!("{}", d.text);
                ExitCode::SUCCESS
            }
            None => {
                let mut near: Vec<(usize, &str)> =
                    demos::DEMOS.iter().map(|d| (library::edit_distance(n, d.name), d.name)).collect();
                near.sort();
                eprintln!("no demo is named \"{n}\"; did you mean \"{}\"? (`lumenrail demos` lists them)", near[0].1);
                ExitCode::from(2)
            }
        },
    }
}

/// `N` or `A-B` lenses, each from 1 to 3.
fn parse_parts(text: &str) -> Result<(usize, usize), String> {
    let (a, b) = text.split_once('-').unwrap_or((text, text));
    let n = |t: &str| t.trim().parse::<usize>().ok().filter(|n| (1..=3).contains(n));
    match (n(a), n(b)) {
        (Some(a), Some(b)) if a <= b => Ok((a, b)),
        _ => Err(format!("`{text}` is not 1, 2, 3 or a range such as 1-3")),
    }
}

/// `lumenrail arrange BENCH --drawer FILE`: the ranked arrangements; exit 1 when none meets every aim.
fn arrange_cmd(
    path: &Path,
    drawer_path: &Path,
    parts: (usize, usize),
    top: usize,
    json: bool,
    write: Option<&Path>,
) -> ExitCode {
    use lumenrail_bench::arrange::{Options, Progress, apply, arrange};
    let Some(loaded) = load(path) else {
        return ExitCode::from(2);
    };
    let drawer = if drawer_path == Path::new("starter") {
        drawer::starter()
    } else {
        match load_drawer(drawer_path) {
            Some(d) => d.drawer,
            None => return ExitCode::from(2),
        }
    };
    let options = Options { min_parts: parts.0, max_parts: parts.1, top: top.max(1), ..Options::default() };
    let found = match arrange(&loaded.bench, &drawer, &options, &Progress::default()) {
        Ok(f) => f,
        Err(e) => {
            eprintln!("{}: {e}", path.display());
            return ExitCode::from(2);
        }
    };
    let best_meets = found.candidates.first().is_some_and(|c| c.meets_all());
    if json {
        println!("{}", serde_json::to_string_pretty(&found).expect("the ranking serialises"));
    } else {
        let heading = if best_meets {
            "Arrangements that meet every aim first"
        } else {
            "No arrangement meets every aim; the nearest misses"
        };
        println!("{heading} ({} choices of lenses, {} traced exactly)", found.combinations, found.traced);
        for (k, c) in found.candidates.iter().enumerate() {
            let placed: Vec<String> = c
                .parts
                .iter()
                .map(|p| format!("\"{}\"{} at {:.3} mm", p.label, if p.turned { " turned round" } else { "" }, p.at_mm))
                .collect();
            let rms = c.rms_on_axis_um.map_or_else(|| "—".to_string(), |r| format!("{r:.2} µm"));
            let len = c.total_length_mm.map_or_else(|| "—".to_string(), |l| format!("{l:.1} mm"));
            println!(
                "\n{}. {} ({} of {} aims met; RMS on axis {rms}; length {len})",
                k + 1,
                placed.join(", "),
                c.met,
                c.aims.len()
            );
            for a in &c.aims {
                println!("   {}", a.line());
            }
        }
    }
    if let (Some(out), Some(best)) = (write, found.candidates.first()) {
        let bench = apply(&loaded.bench, &drawer, best);
        if let Err(e) = file::save(&bench, out) {
            eprintln!("lumenrail arrange: {e}");
            return ExitCode::from(2);
        }
        eprintln!("wrote {}", out.display());
    }
    if best_meets { ExitCode::SUCCESS } else { ExitCode::from(1) }
}
