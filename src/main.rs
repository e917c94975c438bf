//! The `lumisift` command line: argument parsing and printing only.

use std::io::{BufReader, IsTerminal, Write};
use std::path::PathBuf;
use std::process::ExitCode;

use clap::{Parser, Subcommand};

/// The library allocates many small, short-lived vectors per molecule; mimalloc serves them
/// markedly faster than the system allocator on batch runs.
#[global_allocator]
static GLOBAL: mimalloc::MiMalloc = mimalloc::MiMalloc;

/// Screen donor–acceptor emitter candidates for TADF OLEDs.
#[derive(Parser)]
#[command(name = "lumisift", version, about, long_about = None)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Subcommand)]
enum Command {
    /// Facts for a file of SMILES (one per line, optional id after whitespace; `-` for stdin):
    /// canonical SMILES, formula, molecular weight, monoisotopic mass, heavy atoms, rings,
    /// aromatic atoms, as CSV on stdout. Bad lines are reported on stderr; the batch goes on.
    Molinfo {
        /// Input file, or `-` for standard input.
        file: PathBuf,
    },
}

fn main() -> ExitCode {
    let cli = Cli::parse();
    match cli.command {
        Command::Molinfo { file } => molinfo(&file),
    }
}

fn molinfo(file: &PathBuf) -> ExitCode {
    let name = file.display().to_string();
    let stdout = std::io::stdout();
    let out = std::io::BufWriter::new(stdout.lock());
    let stderr = std::io::stderr();
    let mut err = stderr.lock();
    let mut report = |e: &lumisift::report::molinfo::LineError| {
        let _ = match e.column {
            Some(c) => writeln!(err, "{name}:{}:{c}: {}", e.line, e.message),
            None => writeln!(err, "{name}:{}: {}", e.line, e.message),
        };
    };
    let result = if name == "-" {
        let stdin = std::io::stdin();
        lumisift::report::molinfo::run(stdin.lock(), out, &mut report)
    } else {
        match std::fs::File::open(file) {
            Ok(f) => lumisift::report::molinfo::run(
                BufReader::with_capacity(1 << 16, f),
                out,
                &mut report,
            ),
            Err(e) => {
                eprintln!("lumisift: cannot open {name}: {e}");
                return ExitCode::from(2);
            }
        }
    };
    match result {
        Ok(s) => {
            if std::io::stderr().is_terminal() || s.failed > 0 {
                eprintln!(
                    "lumisift molinfo: {} molecules, {} failed, {} blank or comment lines",
                    s.ok, s.failed, s.skipped
                );
            }
            if s.failed > 0 {
                ExitCode::from(1)
            } else {
                ExitCode::SUCCESS
            }
        }
        Err(e) if e.kind() == std::io::ErrorKind::BrokenPipe => ExitCode::SUCCESS,
        Err(e) => {
            eprintln!("lumisift: {name}: {e}");
            ExitCode::from(2)
        }
    }
}
