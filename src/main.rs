//! Command-line shell over the xsheat library: each command is a few library calls. Results go
//! to stdout; diagnostics (warnings, the caution, errors) go to stderr. `--quiet` keeps only
//! the result lines, the caution and errors.
#![warn(clippy::too_many_lines)]

use clap::{Args, Parser, Subcommand};
use std::path::{Path, PathBuf};
use std::process::ExitCode;
use xsheat::mesh::MeshOptions;
use xsheat::run::{self, CheckStatus, Severity};
use xsheat::study::{adaptive, converge, crosscheck, sweep, verify};
use xsheat::{Error, output, report};

#[derive(Parser)]
#[command(
    name = "xsheat",
    version,
    about = "Steady heat conduction through 2D cross-sections by the finite element method"
)]
struct Cli {
    /// Print no warnings, progress or summary table (warnings stay in summary.json); the
    /// caution and errors still go to stderr.
    #[arg(long, global = true)]
    quiet: bool,
    /// When another xsheat run is writing the same --out directory, wait for it to finish
    /// instead of exiting with status 1.
    #[arg(long, global = true)]
    wait: bool,
    /// Worker threads for the parts that run in parallel (sweep variants); default: the
    /// RAYON_NUM_THREADS environment variable, else one per core. Files do not depend on it.
    #[arg(long, global = true, value_name = "N")]
    threads: Option<usize>,
    #[command(subcommand)]
    command: Command,
}

/// The mesh size limit shared by the commands that mesh.
#[derive(Args)]
struct Limit {
    /// Refuse meshes estimated above this many triangles; with --target-error, where adaptive
    /// refinement stops.
    #[arg(long, default_value_t = xsheat::model::DEFAULT_MAX_TRIANGLES)]
    max_triangles: usize,
}

impl Limit {
    fn options(&self) -> xsheat::Result<MeshOptions> {
        MeshOptions::with_max_triangles(self.max_triangles)
    }
}

#[derive(Subcommand)]
enum Command {
    /// Validate a model file and print what it holds.
    Check(CheckArgs),
    /// Mesh only; write the mesh as VTK (.vtu) and print its quality.
    Mesh(MeshArgs),
    /// Mesh, solve and write the field, heat flows, probes and lines into a directory.
    Solve(SolveArgs),
    /// Mesh convergence study: solve on LEVELS meshes (max_area divided by 4 each) and write the
    /// observed order, Richardson extrapolation and GCI of every probe, heat flow and extreme.
    Converge(ConvergeArgs),
    /// Run the built-in verification suite against published reference solutions.
    Verify(VerifyArgs),
    /// Cross-check: solve the grid (finite-difference) model and the element model of the
    /// section and compare them node by node and boundary by boundary.
    Gridcheck(GridcheckArgs),
    /// Cross-check: compare your own grid results (CSV x,y,temperature or nodes.csv) with the element field.
    Compare(CompareArgs),
    /// Draw the pictures (field.svg, field.png) and isotherm files of an existing result set of
    /// solve; the set is re-staged as a whole with its manifest updated.
    Plot(PlotArgs),
    /// Parameter sweep: solve every variant of a plan (model keys and their values) and write
    /// sweep.csv and each variant's files; or merge shard sets of one plan (--collect).
    Sweep(SweepArgs),
    /// Print the JSON Schema (draft 2020-12) of the model file (`model`) or of summary.json
    /// (`summary`, top level only) on stdout, for editors that read JSON Schema for TOML.
    Schema(SchemaArgs),
    /// Write a commented starter model (`wall`, `pipes` or `tunnel`) that solves as written.
    New(NewArgs),
}

#[derive(Args)]
struct NewArgs {
    /// The starter model: wall, pipes or tunnel.
    #[arg(long)]
    template: String,
    /// Write it to this new file (an existing file is never replaced); default: stdout.
    #[arg(long)]
    out: Option<PathBuf>,
}

#[derive(Args)]
struct SchemaArgs {
    /// Which schema: `model` or `summary`.
    kind: String,
}

#[derive(Args)]
struct CheckArgs {
    /// Model file (TOML).
    model: PathBuf,
    #[command(flatten)]
    limit: Limit,
}

#[derive(Args)]
struct MeshArgs {
    /// Model file (TOML).
    model: PathBuf,
    /// Output file (.vtu): a new path or a regular file, never an input of the run.
    #[arg(long)]
    out: PathBuf,
    #[command(flatten)]
    limit: Limit,
    /// zlib-compress the arrays of the .vtu (smaller file, slower to write).
    #[arg(long)]
    vtk_compress: bool,
    /// Also draw the mesh (triangles by material, worst triangles marked) as NAME.svg beside
    /// the .vtu.
    #[arg(long)]
    plot: bool,
    #[command(flatten)]
    picture: PictureArgs,
}

/// Picture choices shared by solve --plot, mesh --plot and plot.
#[derive(Args)]
struct PictureArgs {
    /// Picture size in pixels, WIDTHxHEIGHT, each 320 to 8000 [default: 1600x1000].
    #[arg(long, value_name = "WxH")]
    plot_size: Option<String>,
    /// Draw heat-flux arrows on the field picture.
    #[arg(long)]
    arrows: bool,
}

impl PictureArgs {
    fn options(&self) -> xsheat::Result<output::plot::PlotOptions> {
        let size = match &self.plot_size {
            Some(s) => output::plot::PlotSize::parse(s)?,
            None => output::plot::PlotSize::default(),
        };
        Ok(output::plot::PlotOptions {
            size,
            arrows: self.arrows,
            probes: true,
        })
    }

    /// Refuses picture options given without the option that draws a picture.
    fn only_with(&self, plot: bool) -> xsheat::Result<()> {
        if !plot && (self.plot_size.is_some() || self.arrows) {
            return Err(Error::input(
                "--plot-size and --arrows apply to pictures: add --plot",
            ));
        }
        Ok(())
    }
}

#[derive(Args)]
struct PlotArgs {
    /// Model file (TOML) the result set was solved from.
    model: PathBuf,
    /// An existing result set of `xsheat solve` of that model.
    dir: PathBuf,
    #[command(flatten)]
    picture: PictureArgs,
    #[command(flatten)]
    limit: Limit,
}

#[derive(Args)]
struct SolveArgs {
    /// Model file (TOML).
    model: PathBuf,
    /// Output directory: new, empty or an earlier xsheat result set; replaced as a whole.
    #[arg(long)]
    out: PathBuf,
    #[command(flatten)]
    limit: Limit,
    /// Refine adaptively until the Zienkiewicz–Zhu estimate (a fraction, e.g. 0.05) is at most
    /// this value.
    #[arg(long, allow_negative_numbers = true)]
    target_error: Option<f64>,
    /// With --target-error: fail (exit 1, nothing written) when refinement stops above the
    /// target instead of writing the best mesh's results with a warning.
    #[arg(long, requires = "target_error")]
    strict: bool,
    /// zlib-compress the arrays of field.vtu (smaller file, slower to write).
    #[arg(long)]
    vtk_compress: bool,
    /// Do not write nodes.csv (field.vtu holds the same points and temperatures).
    #[arg(long)]
    no_nodes_csv: bool,
    /// Also write the reduced system (K.mtx, f.mtx, free_nodes.csv; Matrix Market) into this
    /// directory, its own result set, for comparisons with other solvers.
    #[arg(long, value_name = "DIR")]
    export_matrix: Option<PathBuf>,
    /// Also write a field.vtu into each load case's directory (every case's temperatures are
    /// in DIR/field.vtu as `temperature_c:CASE` either way).
    #[arg(long)]
    case_fields: bool,
    /// Draw the field as field.svg and field.png (and write the isotherm files); the report
    /// page shows the picture.
    #[arg(long)]
    plot: bool,
    #[command(flatten)]
    picture: PictureArgs,
    /// Write the isotherms as isotherms.geojson and isotherms.dxf (also written with --plot).
    #[arg(long)]
    isotherms: bool,
    /// Iteration of a nonlinear model (conductivity tables, radiating boundaries): picard
    /// (lagged conductivity, symmetric, Cholesky) or newton (full Jacobian, LU with tables).
    #[arg(long, value_name = "METHOD", default_value = "picard")]
    nonlinear: String,
    /// Solver of a linear model's reduced system: cholesky (sparse direct), amg (conjugate
    /// gradient preconditioned by smoothed aggregation multigrid: a fraction of the memory),
    /// or auto (amg from 250000 unknowns on, about 500000 triangles).
    #[arg(long, value_name = "SOLVER", default_value = "auto")]
    solver: String,
    /// Solve on this triangle mesh (VTK .vtu with a `material` cell array of the model's
    /// material ids) instead of meshing the model.
    #[arg(long, value_name = "FILE", conflicts_with = "target_error")]
    mesh: Option<PathBuf>,
    /// With --mesh: boundary names from this boundary.vtp of the same points (cell array
    /// `boundary_id`) instead of the model's ring segments.
    #[arg(long, value_name = "FILE", requires = "mesh")]
    mesh_boundary: Option<PathBuf>,
}

#[derive(Args)]
struct ConvergeArgs {
    /// Model file (TOML).
    model: PathBuf,
    /// Number of meshes, at least 3.
    #[arg(long, default_value_t = 3)]
    levels: usize,
    /// Output directory for convergence.csv and convergence.json.
    #[arg(long)]
    out: PathBuf,
    #[command(flatten)]
    limit: Limit,
}

#[derive(Args)]
struct VerifyArgs {
    /// Also write verify.csv and verify.json into this directory.
    #[arg(long)]
    out: Option<PathBuf>,
}

#[derive(Args)]
struct GridcheckArgs {
    /// Model file (TOML).
    model: PathBuf,
    /// Grid spacing h, m; repeat for a table of the difference against h.
    #[arg(long, required = true, allow_negative_numbers = true)]
    spacing: Vec<f64>,
    /// Check N spacings: the given one halved N−1 times.
    #[arg(long)]
    levels: Option<usize>,
    /// Element model's max_area for the check, m² (default: the model's [mesh] max_area).
    #[arg(long, allow_negative_numbers = true)]
    fe_max_area: Option<f64>,
    /// Output directory (gridcheck.csv, grid.vtu, gridcheck-levels.csv).
    #[arg(long)]
    out: PathBuf,
    #[command(flatten)]
    limit: Limit,
}

#[derive(Args)]
struct CompareArgs {
    /// Model file (TOML).
    model: PathBuf,
    /// CSV whose header starts x,y,temperature, x_m,y_m,temperature_c or node,x_m,y_m,temperature_c
    /// (m, m, °C); further columns are ignored.
    #[arg(long)]
    grid_file: PathBuf,
    /// Element model's max_area for the check, m² (default: the model's [mesh] max_area).
    #[arg(long, allow_negative_numbers = true)]
    fe_max_area: Option<f64>,
    /// Output directory (compare.csv).
    #[arg(long)]
    out: PathBuf,
    #[command(flatten)]
    limit: Limit,
}

#[derive(Args)]
struct SweepArgs {
    /// Plan file (TOML): `model`, `mode` ("grid" or "list") and [[parameters]] with `key`
    /// and `values`.
    #[arg(required_unless_present = "collect")]
    plan: Option<PathBuf>,
    /// Output directory: new, empty or an earlier xsheat result set; replaced as a whole.
    #[arg(long)]
    out: PathBuf,
    /// Run only the variants with index ≡ I−1 (mod N), 1 ≤ I ≤ N (one task of a batch job).
    #[arg(long, conflicts_with = "collect")]
    shard: Option<String>,
    /// Merge the --out sets of the shards of one plan into the set of the whole plan.
    #[arg(long, num_args = 1.., conflicts_with = "plan")]
    collect: Vec<PathBuf>,
    #[command(flatten)]
    limit: Limit,
}

/// Where each kind of text goes: results to stdout, diagnostics to stderr, `--quiet` keeping
/// only result lines, the caution and errors.
struct Console {
    quiet: bool,
    /// `--wait`: wait for another run's lock on an output directory instead of failing.
    wait: bool,
}

impl Console {
    /// A summary table or report (stdout; not with --quiet).
    fn table(&self, text: &str) {
        xsheat::progress::done();
        if !self.quiet {
            print!("{text}");
        }
    }
    /// A result line such as "wrote 3 files to out" (stdout, always).
    fn result(&self, line: &str) {
        xsheat::progress::done();
        println!("{line}");
    }
    /// Warnings (stderr; not with --quiet).
    fn warnings(&self, warnings: &[String]) {
        xsheat::progress::done();
        if !self.quiet {
            eprint!("{}", report::warnings_report(warnings));
        }
    }
    /// The one-line caution (stderr, always).
    fn caution(&self) {
        xsheat::progress::done();
        eprintln!("CAUTION: {}", xsheat::CAUTION);
    }
}

/// "wrote 1 file to DIR" / "wrote N files to DIR".
fn wrote(count: usize, dir: &Path) -> String {
    let files = if count == 1 { "file" } else { "files" };
    format!("wrote {count} {files} to {}", dir.display())
}

/// The files a run reads: the model and the files it imports (`[geojson]`, `[drawing]`), none of which an
/// output may replace.
fn inputs<'a>(model: &'a Path, p: &'a run::Prepared) -> Vec<&'a Path> {
    let mut v = vec![model];
    if let Some(i) = &p.model.imported {
        v.extend(i.files.iter().map(PathBuf::as_path));
    }
    v
}

fn check(a: CheckArgs, con: &Console) -> xsheat::Result<()> {
    let o = a.limit.options()?;
    let p = run::prepare(&a.model)?;
    let checked = run::check_model(&p, &o)?;
    con.table(&report::check_report(&p, &checked));
    con.warnings(&p.warnings());
    con.result("model is valid");
    con.caution();
    Ok(())
}

fn mesh(a: MeshArgs, con: &Console) -> xsheat::Result<()> {
    let o = a.limit.options()?;
    a.picture.only_with(a.plot)?;
    if a.picture.arrows {
        return Err(Error::input(
            "--arrows applies to field pictures (solve --plot, plot)",
        ));
    }
    let size = a.picture.options()?.size;
    // Checked before the (possibly long) preparation against the model, and again once the
    // imported files are known.
    output::check_out_file(&a.out, &[&a.model])?;
    if a.plot {
        mesh_picture_path(&a.out, &[&a.model])?;
    }
    let p = run::prepare(&a.model)?;
    let inputs = inputs(&a.model, &p);
    let target = output::check_out_file(&a.out, &inputs)?;
    let picture_target = match a.plot {
        true => Some(mesh_picture_path(&a.out, &inputs)?),
        false => None,
    };
    let m = run::mesh(&p, &o)?;
    let vtk = output::VtkOptions {
        compress: a.vtk_compress,
    };
    let picture = match &picture_target {
        Some(_) => Some(output::plot::mesh_picture(&p.section, &m, size)?),
        None => None,
    };
    output::write_file_atomic(&target, &output::mesh_vtu_with(&m, &vtk)?)?;
    con.table(&report::mesh_report(&p.section, &m));
    con.warnings(&p.warnings());
    con.result(&format!("wrote {}", a.out.display()));
    if let (Some((path, shown)), Some(svg)) = (&picture_target, &picture) {
        output::write_file_atomic(path, svg)?;
        con.result(&format!("wrote {}", shown.display()));
    }
    con.caution();
    Ok(())
}

fn solve(a: SolveArgs, con: &Console) -> xsheat::Result<()> {
    let o = a.limit.options()?;
    let method = xsheat::solve::nonlinear::Method::parse(&a.nonlinear)?;
    let solver = xsheat::solve::SolverChoice::parse(&a.solver)?;
    if let Some(e) = a.target_error {
        adaptive::check_target_error(e)?;
    }
    a.picture.only_with(a.plot)?;
    let plot = if a.plot {
        Some(a.picture.options()?)
    } else {
        None
    };
    output::ResultDir::check(&a.out, &[&a.model])?;
    let mut matrix_out = match &a.export_matrix {
        Some(dir) => Some(matrix_dir(dir, &a.out, &a.model)?),
        None => None,
    };
    let parse_started = std::time::Instant::now();
    let mut p = run::prepare(&a.model)?;
    p.nonlinear = method;
    p.solver = solver;
    let parse_s = parse_started.elapsed().as_secs_f64();
    let mut refused = inputs(&a.model, &p);
    refused.extend(a.mesh.iter().chain(&a.mesh_boundary).map(PathBuf::as_path));
    let mut out = output::ResultDir::check(&a.out, &refused)?;
    out.lock(con.wait)?;
    if let Some(m) = &mut matrix_out {
        m.lock(con.wait)?;
    }
    let mut solved = match (&a.mesh, a.target_error) {
        (Some(file), _) => {
            let started = std::time::Instant::now();
            let (mesh, notes) = run::read_mesh(&p, file, a.mesh_boundary.as_deref(), &o)?;
            let mut s = run::solve_mesh(p, mesh, started.elapsed().as_secs_f64())?;
            s.warnings.splice(0..0, notes);
            s.mesh_files = Some((
                file.display().to_string(),
                a.mesh_boundary.as_ref().map(|b| b.display().to_string()),
            ));
            s
        }
        (None, Some(e)) => adaptive::solve_adaptive(p, &o, e)?,
        (None, None) => run::solve(p, &o)?,
    };
    solved.timings.parse_s = parse_s;
    report_failed_checks(&solved, con);
    con.table(&report::solve_report(&solved));
    con.warnings(&solved.warnings);
    if let Some(e) = run::failed_checks_error(&solved) {
        con.caution();
        return Err(e);
    }
    if let Some(t) = a
        .target_error
        .filter(|&t| a.strict && !adaptive::target_reached(&solved, t))
    {
        con.caution();
        return Err(Error::run(format!(
            "--strict: adaptive refinement stopped above the target error {t}, no results written (see the warning)"
        )));
    }
    let files = output::SolveFileOptions {
        vtk: output::VtkOptions {
            compress: a.vtk_compress,
        },
        nodes_csv: !a.no_nodes_csv,
        case_fields: a.case_fields,
        plot,
        isotherms: a.isotherms,
    };
    xsheat::progress::stage("writing files");
    let set = output::solve_files_with(&solved, &files)?;
    let matrix = match &matrix_out {
        Some(_) => Some(output::matrix_files(&solved.system, &solved.mesh)?),
        None => None,
    };
    let written = out.commit(&set)?;
    con.result(&wrote(written.len(), &a.out));
    if let (Some(dir), Some(m), Some(set)) = (&a.export_matrix, &mut matrix_out, &matrix) {
        con.result(&wrote(m.commit(set)?.len(), dir));
    }
    con.caution();
    Ok(())
}

/// The picture beside `mesh --out PATH`: PATH with the extension `.svg` (checked like PATH;
/// refused when PATH itself ends in `.svg`). Returns the checked target and the path as shown.
fn mesh_picture_path(out: &Path, inputs: &[&Path]) -> xsheat::Result<(PathBuf, PathBuf)> {
    if out
        .extension()
        .is_some_and(|e| e.eq_ignore_ascii_case("svg"))
    {
        return Err(Error::input(format!(
            "mesh --out {}: with --plot the mesh picture is written beside it as .svg; give the mesh a .vtu name",
            out.display()
        )));
    }
    let shown = out.with_extension("svg");
    let mut refused = inputs.to_vec();
    refused.push(out);
    Ok((output::check_out_file(&shown, &refused)?, shown))
}

/// The `--export-matrix` directory, checked: not the `--out` directory, neither inside the
/// other (committing one would replace the other).
fn matrix_dir(dir: &Path, out: &Path, model: &Path) -> xsheat::Result<output::ResultDir> {
    let abs = |p: &Path| std::path::absolute(p).unwrap_or_else(|_| p.to_path_buf());
    let (d, o) = (abs(dir), abs(out));
    if d.starts_with(&o) || o.starts_with(&d) {
        return Err(Error::input(format!(
            "--export-matrix {}: must not be --out {}, nor inside it or around it",
            dir.display(),
            out.display()
        )));
    }
    output::ResultDir::check(dir, &[model])
}

/// One stderr line per failed self-check (those of severity warning not with --quiet).
fn report_failed_checks(solved: &run::Solved, con: &Console) {
    for c in &solved.checks {
        let label = match (c.status(), c.severity) {
            (CheckStatus::Passed, _) => continue,
            (_, Severity::Warning) if con.quiet => continue,
            (_, Severity::Error) => "ERROR",
            (_, Severity::Warning) => "WARNING",
        };
        xsheat::progress::done();
        eprintln!("{label}: self-check {} failed: {}", c.name, c.detail);
    }
}

fn plot(a: PlotArgs, con: &Console) -> xsheat::Result<()> {
    let options = a.picture.options()?;
    let o = a.limit.options()?;
    output::ResultDir::check(&a.dir, &[&a.model])?;
    let p = run::prepare(&a.model)?;
    let mut out = output::ResultDir::check(&a.dir, &inputs(&a.model, &p))?;
    out.lock(con.wait)?;
    let old = output::read_solve_set(&a.dir)?;
    let solved = run::solve(p, &o)?;
    if let Some(e) = run::failed_checks_error(&solved) {
        con.caution();
        return Err(e);
    }
    let set = output::replot_files(&solved, &old, &a.dir, &options)?;
    let written = out.commit(&set)?;
    con.result(&wrote(written.len(), &a.dir));
    con.caution();
    Ok(())
}

fn convergence(a: ConvergeArgs, con: &Console) -> xsheat::Result<()> {
    let o = a.limit.options()?;
    converge::check_levels(a.levels)?;
    output::ResultDir::check(&a.out, &[&a.model])?;
    let p = run::prepare(&a.model)?;
    let mut out = output::ResultDir::check(&a.out, &inputs(&a.model, &p))?;
    out.lock(con.wait)?;
    let study = converge::convergence_study(&p, a.levels, &o)?;
    let written = out.commit(&output::convergence_files(&study)?)?;
    con.table(&report::convergence_report(&study));
    con.warnings(&study.warnings);
    con.result(&wrote(written.len(), &a.out));
    con.caution();
    Ok(())
}

fn verification(a: VerifyArgs, con: &Console) -> xsheat::Result<()> {
    let mut out = match &a.out {
        Some(dir) => {
            let mut d = output::ResultDir::check(dir, &[])?;
            d.lock(con.wait)?;
            Some(d)
        }
        None => None,
    };
    let suite = verify::run_suite()?;
    con.table(&report::verify_report(&suite));
    if let Some(out) = &mut out {
        let written = out.commit(&output::verify_files(&suite)?)?;
        con.result(&wrote(written.len(), out.path()));
    }
    con.caution();
    if !suite.all_passed() {
        return Err(Error::run(format!(
            "verification failed: {} of {} checks outside their tolerance",
            suite.failed(),
            suite.cases.len()
        )));
    }
    Ok(())
}

fn gridcheck(a: GridcheckArgs, con: &Console) -> xsheat::Result<()> {
    let hs = crosscheck::spacings(&a.spacing, a.levels)?;
    let o = a.limit.options()?;
    crosscheck::check_fe_max_area(a.fe_max_area)?;
    output::ResultDir::check(&a.out, &[&a.model])?;
    let p = run::prepare(&a.model)?;
    let mut out = output::ResultDir::check(&a.out, &inputs(&a.model, &p))?;
    out.lock(con.wait)?;
    let check = crosscheck::grid_check(p, &o, a.fe_max_area, &hs)?;
    let written = out.commit(&output::gridcheck_outputs(&check)?)?;
    con.table(&report::gridcheck_report(&check));
    con.warnings(&check.warnings);
    con.result(&wrote(written.len(), &a.out));
    con.caution();
    Ok(())
}

fn compare(a: CompareArgs, con: &Console) -> xsheat::Result<()> {
    let o = a.limit.options()?;
    crosscheck::check_fe_max_area(a.fe_max_area)?;
    output::ResultDir::check(&a.out, &[&a.model, &a.grid_file])?;
    let p = run::prepare(&a.model)?;
    let mut refused = inputs(&a.model, &p);
    refused.push(&a.grid_file);
    let mut out = output::ResultDir::check(&a.out, &refused)?;
    let user = crosscheck::read_user_grid(&a.grid_file)?;
    out.lock(con.wait)?;
    let solved = crosscheck::solve_element(p, &o, a.fe_max_area)?;
    let c = crosscheck::compare(&solved, &user, a.fe_max_area.is_some())?;
    let written = out.commit(&output::compare_outputs(&c)?)?;
    con.table(&report::compare_report(&c));
    con.warnings(&c.warnings);
    con.result(&wrote(written.len(), &a.out));
    con.caution();
    Ok(())
}

fn sweep(a: SweepArgs, con: &Console) -> xsheat::Result<()> {
    if !a.collect.is_empty() {
        return sweep_collect(a, con);
    }
    let o = a.limit.options()?;
    let shard = match &a.shard {
        Some(s) => sweep::Shard::parse(s)?,
        None => sweep::Shard::ALL,
    };
    let plan_path = a
        .plan
        .ok_or_else(|| Error::input("sweep: give a PLAN file, or --collect DIR…"))?;
    let plan = sweep::Plan::load(&plan_path)?;
    let mut out = output::ResultDir::check(&a.out, &[&plan_path, &plan.model_path])?;
    out.lock(con.wait)?;
    let t0 = std::time::Instant::now();
    let variants = sweep::run_sweep(&plan, &o, shard, output::variant_files);
    let run = output::SweepRun {
        shard: shard.to_string(),
        threads: sweep::threads(),
        wall_s: t0.elapsed().as_secs_f64(),
    };
    let summary = output::SweepSummary::of(&plan, &variants, run);
    let failed: Vec<String> = variants
        .iter()
        .filter(|v| v.status != sweep::Status::Ok)
        .map(|v| format!("variant {}: {}", v.index, output::status_cell(&v.status)))
        .collect();
    let written = out.commit(&output::sweep_files(&summary, variants)?)?;
    con.table(&report::sweep_report(&summary));
    con.warnings(&failed);
    con.result(&wrote(written.len(), &a.out));
    con.caution();
    sweep_failures(&summary)
}

/// `sweep --collect DIR… --out DIR`.
fn sweep_collect(a: SweepArgs, con: &Console) -> xsheat::Result<()> {
    let inputs: Vec<&Path> = a.collect.iter().map(PathBuf::as_path).collect();
    let mut out = output::ResultDir::check(&a.out, &inputs)?;
    let t0 = std::time::Instant::now();
    let (mut summary, set) = output::collect_sweep(
        &a.collect,
        output::SweepRun {
            shard: "collected".into(),
            threads: 0,
            wall_s: 0.0,
        },
    )?;
    out.lock(con.wait)?;
    summary.run.wall_s = t0.elapsed().as_secs_f64();
    let written = out.commit(&set)?;
    con.table(&report::sweep_report(&summary));
    con.result(&wrote(written.len(), &a.out));
    con.caution();
    sweep_failures(&summary)
}

/// Exit 1 after writing when a variant failed.
fn sweep_failures(s: &output::SweepSummary) -> xsheat::Result<()> {
    if s.failed.is_empty() {
        return Ok(());
    }
    let list: Vec<String> = s.failed.iter().map(usize::to_string).collect();
    Err(Error::run(format!(
        "{} of {} variants failed: {} (status in sweep.csv)",
        s.failed.len(),
        s.in_this_set.len(),
        list.join(", ")
    )))
}

fn new_model(a: &NewArgs, con: &Console) -> xsheat::Result<()> {
    let text = xsheat::model::templates::template(&a.template)?;
    match &a.out {
        None => print!("{text}"),
        Some(path) => {
            if std::fs::symlink_metadata(path).is_ok() {
                return Err(Error::input(format!(
                    "new --out {}: the file exists; `new` writes a new file only (choose another name or remove it)",
                    path.display()
                )));
            }
            let target = output::check_out_file(path, &[])?;
            output::write_file_atomic(&target, text.as_bytes())?;
            con.result(&format!(
                "wrote {} (template {}); solve it with: xsheat solve {} --out DIR",
                path.display(),
                a.template,
                path.display()
            ));
        }
    }
    Ok(())
}

fn schema(a: &SchemaArgs) -> xsheat::Result<()> {
    print!("{}", output::schema_text(&a.kind)?);
    Ok(())
}

fn execute(cli: Cli) -> xsheat::Result<()> {
    xsheat::set_threads(cli.threads)?;
    if !cli.quiet {
        xsheat::progress::install_terminal();
    }
    let con = Console {
        quiet: cli.quiet,
        wait: cli.wait,
    };
    match cli.command {
        Command::Check(a) => check(a, &con),
        Command::Mesh(a) => mesh(a, &con),
        Command::Solve(a) => solve(a, &con),
        Command::Converge(a) => convergence(a, &con),
        Command::Verify(a) => verification(a, &con),
        Command::Gridcheck(a) => gridcheck(a, &con),
        Command::Compare(a) => compare(a, &con),
        Command::Plot(a) => plot(a, &con),
        Command::Sweep(a) => sweep(a, &con),
        Command::Schema(a) => schema(&a),
        Command::New(a) => new_model(&a, &con),
    }
}

fn main() -> ExitCode {
    xsheat::alloc::fix_mmap_threshold();
    let cli = Cli::parse();
    match execute(cli) {
        Ok(()) => ExitCode::SUCCESS,
        Err(e) => {
            xsheat::progress::done();
            eprintln!("error: {e}");
            ExitCode::from(e.exit_code() as u8)
        }
    }
}
