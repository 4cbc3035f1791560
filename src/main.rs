//! Command-line shell over the xsheat library: each command is a few library calls. Results go
//! to stdout; diagnostics (warnings, the caution, errors) go to stderr. `--quiet` keeps only
//! the result lines, the caution and errors.
#![warn(clippy::too_many_lines)]

use clap::{Args, Parser, Subcommand};
use std::path::{Path, PathBuf};
use std::process::ExitCode;
use xsheat::mesh::MeshOptions;
use xsheat::run::{self, CheckStatus, Severity};
use xsheat::study::{adaptive, converge, crosscheck, verify};
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
    /// Also write a field.vtu into each load case's directory (every case's temperatures are
    /// in DIR/field.vtu as `temperature_c:CASE` either way).
    #[arg(long)]
    case_fields: bool,
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
        if !self.quiet {
            print!("{text}");
        }
    }
    /// A result line such as "wrote 3 files to out" (stdout, always).
    fn result(&self, line: &str) {
        println!("{line}");
    }
    /// Warnings (stderr; not with --quiet).
    fn warnings(&self, warnings: &[String]) {
        if !self.quiet {
            eprint!("{}", report::warnings_report(warnings));
        }
    }
    /// The one-line caution (stderr, always).
    fn caution(&self) {
        eprintln!("CAUTION: {}", xsheat::CAUTION);
    }
}

/// "wrote 1 file to DIR" / "wrote N files to DIR".
fn wrote(count: usize, dir: &Path) -> String {
    let files = if count == 1 { "file" } else { "files" };
    format!("wrote {count} {files} to {}", dir.display())
}

fn check(a: CheckArgs, con: &Console) -> xsheat::Result<()> {
    let o = a.limit.options()?;
    let p = run::prepare(&a.model)?;
    let coarse = run::check_model(&p, &o)?;
    con.table(&report::check_report(&p, &coarse));
    con.warnings(&p.warnings());
    con.result("model is valid");
    con.caution();
    Ok(())
}

fn mesh(a: MeshArgs, con: &Console) -> xsheat::Result<()> {
    let o = a.limit.options()?;
    let target = output::check_out_file(&a.out, &[&a.model])?;
    let p = run::prepare(&a.model)?;
    let m = run::mesh(&p, &o)?;
    output::write_file_atomic(&target, &output::mesh_vtu(&m)?)?;
    con.table(&report::mesh_report(&p.section, &m));
    con.warnings(&p.warnings());
    con.result(&format!("wrote {}", a.out.display()));
    con.caution();
    Ok(())
}

fn solve(a: SolveArgs, con: &Console) -> xsheat::Result<()> {
    let o = a.limit.options()?;
    if let Some(e) = a.target_error {
        adaptive::check_target_error(e)?;
    }
    let mut out = output::ResultDir::check(&a.out, &[&a.model])?;
    let p = run::prepare(&a.model)?;
    out.lock(con.wait)?;
    let solved = match a.target_error {
        Some(e) => adaptive::solve_adaptive(p, &o, e)?,
        None => run::solve(p, &o)?,
    };
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
    let written = out.commit(&output::solve_files_with(&solved, a.case_fields)?)?;
    con.result(&wrote(written.len(), &a.out));
    con.caution();
    Ok(())
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
        eprintln!("{label}: self-check {} failed: {}", c.name, c.detail);
    }
}

fn convergence(a: ConvergeArgs, con: &Console) -> xsheat::Result<()> {
    let o = a.limit.options()?;
    converge::check_levels(a.levels)?;
    let mut out = output::ResultDir::check(&a.out, &[&a.model])?;
    let p = run::prepare(&a.model)?;
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
    let mut out = output::ResultDir::check(&a.out, &[&a.model])?;
    let p = run::prepare(&a.model)?;
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
    let mut out = output::ResultDir::check(&a.out, &[&a.model, &a.grid_file])?;
    let p = run::prepare(&a.model)?;
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

fn execute(cli: Cli) -> xsheat::Result<()> {
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
    }
}

fn main() -> ExitCode {
    let cli = Cli::parse();
    match execute(cli) {
        Ok(()) => ExitCode::SUCCESS,
        Err(e) => {
            eprintln!("error: {e}");
            ExitCode::from(e.exit_code() as u8)
        }
    }
}
