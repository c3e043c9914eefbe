//! The `runnel` command line: parses arguments, calls the library, prints
//! errors in the contract's form and exits with its codes.
#![forbid(unsafe_code)]

use clap::{Parser, Subcommand};
use std::io::IsTerminal;
use std::path::PathBuf;
use std::process::ExitCode;

/// Stormwater runoff, detention and outlet sizing by published NRCS methods.
#[derive(Parser)]
#[command(name = "runnel", version, about)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Subcommand)]
enum Command {
    /// Simulate every storm and record for every condition, size ranged outlets, write results.
    Run {
        /// The scenario TOML file.
        scenario: PathBuf,
        /// Results folder (default: output/<scenario stem>/).
        #[arg(long)]
        out: Option<PathBuf>,
        /// No progress bar.
        #[arg(long, short)]
        quiet: bool,
    },
    /// Validate a scenario and print its derived parameters; writes nothing.
    Check {
        /// The scenario TOML file.
        scenario: PathBuf,
    },
    /// Print the TR-55 chapter 6 first-cut storage for each pond and storm.
    Estimate {
        /// The scenario TOML file.
        scenario: PathBuf,
    },
    /// Write a commented starter scenario and a small rainfall CSV.
    Init {
        /// Folder to write into.
        #[arg(default_value = ".")]
        dir: PathBuf,
        /// Overwrite existing files.
        #[arg(long)]
        force: bool,
    },
}

fn main() -> ExitCode {
    let cli = Cli::parse();
    let result = match cli.command {
        Command::Run {
            scenario,
            out,
            quiet,
        } => runnel::cli::run(
            &scenario,
            out.as_deref(),
            !quiet && std::io::stderr().is_terminal(),
        )
        .map(|o| {
            for l in &o.lines {
                println!("{l}");
            }
            println!("results written to {}", o.out_dir.display());
            for w in &o.warnings {
                eprintln!("warning: {w}");
            }
            if o.failed { 1 } else { 0 }
        }),
        Command::Check { scenario } => runnel::cli::check(&scenario).map(|(text, warnings)| {
            print!("{text}");
            for w in &warnings {
                eprintln!("warning: {w}");
            }
            0
        }),
        Command::Estimate { scenario } => runnel::cli::estimate(&scenario).map(|text| {
            print!("{text}");
            0
        }),
        Command::Init { dir, force } => runnel::cli::init(&dir, force).map(|files| {
            for f in files {
                println!("wrote {}", f.display());
            }
            0
        }),
    };
    match result {
        Ok(code) => ExitCode::from(code),
        Err(e) => {
            eprintln!("error: {e}");
            ExitCode::from(e.exit_code() as u8)
        }
    }
}

#[cfg(test)]
mod tests {
    use super::Cli;
    use clap::CommandFactory;

    /// clap's own consistency checks of the argument definitions (duplicate
    /// names, conflicting flags, bad defaults), which otherwise fire only
    /// when the faulty argument is used.
    #[test]
    fn the_command_line_definition_is_consistent() {
        Cli::command().debug_assert();
    }
}
