//! tirtrace command line: batch runs of the core on design documents.

use std::io::Read;
use std::process::ExitCode;

use clap::{Parser, Subcommand};
use tirtrace::quick::QuickDesign;

#[derive(Parser)]
#[command(
    name = "tirtrace",
    version,
    about = "Light-guide calculator: closed-form figures of light pipes and plastic fibres"
)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Subcommand)]
enum Command {
    /// Print the closed-form figures (critical angle, NA, acceptance, leak-free bend radius) of a
    /// quick-look design document as JSON.
    Figures {
        /// The design document (JSON); `-` reads standard input.
        file: String,
    },
    /// List the built-in materials with their sources and wavelength ranges as JSON.
    Materials,
}

fn read_text(file: &str) -> Result<String, String> {
    if file == "-" {
        let mut s = String::new();
        std::io::stdin()
            .read_to_string(&mut s)
            .map_err(|e| format!("could not read standard input: {e}"))?;
        Ok(s)
    } else {
        std::fs::read_to_string(file).map_err(|e| format!("could not read {file}: {e}"))
    }
}

fn run(cli: Cli) -> Result<String, String> {
    match cli.command {
        Command::Figures { file } => {
            let text = read_text(&file)?;
            let design = QuickDesign::from_json(&text).map_err(|e| e.to_string())?;
            let problems = design.problems();
            if let Some(first) = problems.first() {
                let more = problems.len() - 1;
                return Err(if more > 0 {
                    format!("{first} (and {more} more problem(s))")
                } else {
                    first.to_string()
                });
            }
            let figures = design.figures().map_err(|e| e.to_string())?;
            serde_json::to_string_pretty(&figures).map_err(|e| e.to_string())
        }
        Command::Materials => serde_json::to_string_pretty(&tirtrace::index::library::materials())
            .map_err(|e| e.to_string()),
    }
}

fn main() -> ExitCode {
    match run(Cli::parse()) {
        Ok(out) => {
            println!("{out}");
            ExitCode::SUCCESS
        }
        Err(msg) => {
            eprintln!("tirtrace: {msg}");
            ExitCode::FAILURE
        }
    }
}
