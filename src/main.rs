//! Command-line shell over the xsheat library: each command is a few library calls.

use clap::{Parser, Subcommand};
use std::path::PathBuf;
use std::process::ExitCode;
use xsheat::mesh::MeshOptions;
use xsheat::{Error, io, report, run};

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
        model: PathBuf,
        /// Output file (.vtu).
        #[arg(long)]
        out: PathBuf,
        #[arg(long, default_value_t = xsheat::model::DEFAULT_MAX_TRIANGLES)]
        max_triangles: usize,
    },
    /// Mesh, solve and write the field, heat flows, probes and lines into a directory.
    Solve {
        model: PathBuf,
        /// Output directory (created if missing; only the files written are replaced).
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
            let bytes = io::mesh_vtu(&m)?;
            io::write_file_atomic(&out, &bytes)?;
            print!("{}", report::mesh_report(&p.section, &m));
            eprint!("{}", report::warnings_report(&p.warnings()));
            println!("wrote {}", out.display());
            Ok(())
        }
        Command::Solve {
            model,
            out,
            max_triangles,
        } => {
            let p = run::prepare(&model)?;
            let solved = run::solve(p, &opts(max_triangles)?)?;
            let text = report::solve_report(&solved);
            if let Some(e) = run::failed_checks_error(&solved) {
                print!("{text}");
                return Err(e);
            }
            let files = run::output_files(&solved)?;
            let written = files.commit(&out)?;
            print!("{text}");
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
