//! The `runnel` command line: parses arguments, calls the library, prints
//! errors in the contract's form and exits with its codes.
#![forbid(unsafe_code)]

use clap::{Parser, Subcommand};
use std::io::{IsTerminal, Write};
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
    /// Check runnel against the published tables and worked examples the tests check; exit 1 if any is off.
    Validate {
        /// Also write validation.md and validation.html into this folder.
        #[arg(long)]
        out: Option<PathBuf>,
    },
    /// Write a commented starter scenario and a small rainfall CSV (never over an existing file).
    Init {
        /// Folder to write into.
        #[arg(default_value = ".")]
        dir: PathBuf,
    },
}

/// Standard output and error that stop quietly when the reader has gone
/// (`runnel run x.toml | head`): a closed pipe is not an error of the run,
/// whose results are already written and whose exit code still holds.
struct Console {
    out_closed: bool,
    err_closed: bool,
}

impl Console {
    fn out(&mut self, text: &str) {
        if !self.out_closed {
            let mut o = std::io::stdout().lock();
            if o.write_all(text.as_bytes())
                .and_then(|()| o.flush())
                .is_err()
            {
                self.out_closed = true;
            }
        }
    }

    fn err(&mut self, text: &str) {
        if !self.err_closed {
            let mut e = std::io::stderr().lock();
            if e.write_all(text.as_bytes())
                .and_then(|()| e.flush())
                .is_err()
            {
                self.err_closed = true;
            }
        }
    }
}

fn main() -> ExitCode {
    let cli = Cli::parse();
    let mut con = Console {
        out_closed: false,
        err_closed: false,
    };
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
            let mut text = String::new();
            for l in &o.lines {
                text.push_str(l);
                text.push('\n');
            }
            text.push_str(&format!("results written to {}\n", o.out_dir.display()));
            con.out(&text);
            for w in &o.warnings {
                con.err(&format!("warning: {w}\n"));
            }
            if let Some(t) = &o.timings {
                con.err(&format!("{t}\n"));
            }
            if o.failed { 1 } else { 0 }
        }),
        Command::Check { scenario } => runnel::cli::check(&scenario).map(|(text, warnings)| {
            con.out(&text);
            for w in &warnings {
                con.err(&format!("warning: {w}\n"));
            }
            0
        }),
        Command::Estimate { scenario } => runnel::cli::estimate(&scenario).map(|text| {
            con.out(&text);
            0
        }),
        Command::Validate { out } => runnel::cli::validate(out.as_deref()).map(|v| {
            con.out(&v.text);
            u8::from(!v.pass)
        }),
        Command::Init { dir } => runnel::cli::init(&dir).map(|files| {
            for f in files {
                con.out(&format!("wrote {}\n", f.display()));
            }
            0
        }),
    };
    match result {
        Ok(code) => ExitCode::from(code),
        Err(e) => {
            con.err(&format!("error: {e}\n"));
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
