//! Command-line shell over the xsheat library: each command is a few library calls.
#![warn(clippy::too_many_lines)]

use clap::{Parser, Subcommand};
use std::path::PathBuf;
use std::process::ExitCode;
use xsheat::mesh::MeshOptions;
use xsheat::study::crosscheck;
use xsheat::{Error, output, report, run};

#[derive(Parser)]
#[command(
    name = "xsheat",
    version,
    about = "Steady heat conduction through 2D cross-sections by the finite element method"
)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Subcommand)]
enum Command {
    /// Validate a model file and print what it holds.
    Check {
        /// Model file (TOML).
        model: PathBuf,
        /// Refuse meshes estimated above this many triangles.
        #[arg(long, default_value_t = xsheat::model::DEFAULT_MAX_TRIANGLES)]
        max_triangles: usize,
    },
    /// Mesh only; write the mesh as VTK (.vtu) and print its quality.
    Mesh {
        /// Model file (TOML).
        model: PathBuf,
        /// Output file (.vtu).
        #[arg(long)]
        out: PathBuf,
        #[arg(long, default_value_t = xsheat::model::DEFAULT_MAX_TRIANGLES)]
        max_triangles: usize,
    },
    /// Mesh, solve and write the field, heat flows, probes and lines into a directory.
    Solve {
        /// Model file (TOML).
        model: PathBuf,
        /// Output directory (created if missing; only the files written are replaced).
        #[arg(long)]
        out: PathBuf,
        /// Largest mesh; with --target-error, where adaptive refinement stops.
        #[arg(long, default_value_t = xsheat::model::DEFAULT_MAX_TRIANGLES)]
        max_triangles: usize,
        /// Refine adaptively until the relative energy-norm error estimate is at most this
        /// fraction (0.05 = 5 %).
        #[arg(long, allow_negative_numbers = true)]
        target_error: Option<f64>,
    },
    /// Mesh convergence study: solve on LEVELS meshes (max_area divided by 4 each) and write the
    /// observed order, Richardson extrapolation and GCI of every probe, heat flow and extreme.
    Converge {
        /// Model file (TOML).
        model: PathBuf,
        /// Number of meshes, at least 3.
        #[arg(long, default_value_t = 3)]
        levels: usize,
        /// Output directory for convergence.csv and convergence.json.
        #[arg(long)]
        out: PathBuf,
        /// Refuse when the finest level is estimated above this many triangles.
        #[arg(long, default_value_t = xsheat::model::DEFAULT_MAX_TRIANGLES)]
        max_triangles: usize,
    },
    /// Run the built-in verification suite against published reference solutions.
    Verify {
        /// Also write verify.csv and verify.json into this directory.
        #[arg(long)]
        out: Option<PathBuf>,
    },
    /// Cross-check: solve the grid (finite-difference) model and the element model of the
    /// section and compare them node by node and boundary by boundary.
    Gridcheck {
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
        #[arg(long, default_value_t = xsheat::model::DEFAULT_MAX_TRIANGLES)]
        max_triangles: usize,
    },
    /// Cross-check: compare your own grid results (CSV x,y,temperature) with the element field.
    Compare {
        /// Model file (TOML).
        model: PathBuf,
        /// CSV with header x,y,temperature (m, m, °C); further columns are ignored.
        #[arg(long)]
        grid_file: PathBuf,
        /// Element model's max_area for the check, m² (default: the model's [mesh] max_area).
        #[arg(long, allow_negative_numbers = true)]
        fe_max_area: Option<f64>,
        /// Output directory (compare.csv).
        #[arg(long)]
        out: PathBuf,
        #[arg(long, default_value_t = xsheat::model::DEFAULT_MAX_TRIANGLES)]
        max_triangles: usize,
    },
}

fn opts(max_triangles: usize) -> xsheat::Result<MeshOptions> {
    if max_triangles == 0 {
        return Err(Error::input("--max-triangles must be at least 1"));
    }
    Ok(MeshOptions {
        max_triangles,
        refine: true,
    })
}

fn execute(cli: Cli) -> xsheat::Result<()> {
    match cli.command {
        Command::Check {
            model,
            max_triangles,
        } => {
            let p = run::prepare(&model)?;
            let o = opts(max_triangles)?;
            let coarse = run::mesh(&p, &MeshOptions { refine: false, ..o })?;
            print!("{}", report::check_report(&p, &coarse));
            eprint!("{}", report::warnings_report(&p.warnings()));
            println!("model is valid");
            Ok(())
        }
        Command::Mesh {
            model,
            out,
            max_triangles,
        } => {
            let p = run::prepare(&model)?;
            let m = run::mesh(&p, &opts(max_triangles)?)?;
            let bytes = output::mesh_vtu(&m)?;
            output::write_file_atomic(&out, &bytes)?;
            print!("{}", report::mesh_report(&p.section, &m));
            eprint!("{}", report::warnings_report(&p.warnings()));
            println!("wrote {}", out.display());
            Ok(())
        }
        Command::Solve {
            model,
            out,
            max_triangles,
            target_error,
        } => {
            let o = opts(max_triangles)?;
            if let Some(e) = target_error
                && !(e.is_finite() && e > 0.0 && e < 1.0)
            {
                return Err(Error::input(format!(
                    "--target-error = {e}: give a fraction between 0 and 1 (0.05 = 5 %)"
                )));
            }
            let p = run::prepare(&model)?;
            let solved = match target_error {
                Some(e) => xsheat::study::adaptive::solve_adaptive(p, &o, e)?,
                None => run::solve(p, &o)?,
            };
            let text = report::solve_report(&solved);
            eprintln!("CAUTION: {}", xsheat::CAUTION);
            for c in solved.checks.iter().filter(|c| !c.passed) {
                eprintln!(
                    "{}: self-check {} failed: {}",
                    if c.severity == "error" {
                        "ERROR"
                    } else {
                        "WARNING"
                    },
                    c.name,
                    c.detail
                );
            }
            if let Some(e) = run::failed_checks_error(&solved) {
                print!("{text}");
                return Err(e);
            }
            let files = output::solve_files(&solved)?;
            let written = files.commit(&out)?;
            print!("{text}");
            println!("wrote {} files to {}", written.len(), out.display());
            Ok(())
        }
        Command::Converge {
            model,
            levels,
            out,
            max_triangles,
        } => {
            use xsheat::study::converge;
            let o = opts(max_triangles)?;
            if levels < 3 {
                return Err(Error::input(format!(
                    "--levels = {levels}: a convergence study needs at least 3 levels"
                )));
            }
            let p = run::prepare(&model)?;
            let study = converge::convergence_study(&p, levels, &o)?;
            let written = output::convergence_files(&study)?.commit(&out)?;
            print!("{}", report::convergence_report(&study));
            eprintln!("CAUTION: {}", xsheat::CAUTION);
            eprint!("{}", report::warnings_report(&study.warnings));
            println!("wrote {} files to {}", written.len(), out.display());
            Ok(())
        }
        Command::Verify { out } => {
            use xsheat::study::verify;
            let suite = verify::run_suite()?;
            print!("{}", report::verify_report(&suite));
            if let Some(dir) = out {
                let written = output::verify_files(&suite)?.commit(&dir)?;
                println!("wrote {} files to {}", written.len(), dir.display());
            }
            if !suite.all_passed() {
                return Err(Error::run(format!(
                    "verification failed: {} of {} checks outside their tolerance",
                    suite.failed(),
                    suite.cases.len()
                )));
            }
            Ok(())
        }
        Command::Gridcheck {
            model,
            spacing,
            levels,
            fe_max_area,
            out,
            max_triangles,
        } => {
            let hs = crosscheck::spacings(&spacing, levels)?;
            let o = opts(max_triangles)?;
            let p = run::prepare(&model)?;
            let check = crosscheck::grid_check(p, &o, fe_max_area, &hs)?;
            let written = output::gridcheck_outputs(&check)?.commit(&out)?;
            print!("{}", report::gridcheck_report(&check));
            eprint!("{}", report::warnings_report(&check.warnings));
            println!("wrote {} files to {}", written.len(), out.display());
            Ok(())
        }
        Command::Compare {
            model,
            grid_file,
            fe_max_area,
            out,
            max_triangles,
        } => {
            let o = opts(max_triangles)?;
            let p = run::prepare(&model)?;
            let user = crosscheck::read_user_grid(&grid_file)?;
            let solved = crosscheck::solve_element(p, &o, fe_max_area)?;
            let c = crosscheck::compare(&solved, &user, fe_max_area.is_some())?;
            let written = output::compare_outputs(&c)?.commit(&out)?;
            print!("{}", report::compare_report(&c));
            eprint!("{}", report::warnings_report(&c.warnings));
            println!("wrote {} files to {}", written.len(), out.display());
            Ok(())
        }
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
