//! The `lumisift` command line: argument parsing and printing only.

use std::io::{BufReader, IsTerminal, Write};
use std::path::{Path, PathBuf};
use std::process::ExitCode;

use clap::{Parser, Subcommand};

use lumisift::campaign::{self, Progress, RunOptions, Shard, Workflow};
use lumisift::colour::{Spectrum, Units};
use lumisift::forster::KAPPA2_ISOTROPIC;
use lumisift::photophysics::{BandParams, RateParams};

mod cli;

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
    /// Run the stages a workflow file names into its campaign store (resumable: run it again
    /// after an interruption and it continues).
    Run {
        workflow: PathBuf,
        /// Run a deterministic share K of N of the work (cluster job arrays), e.g. 3/10.
        #[arg(long)]
        shard: Option<String>,
        /// Write to this store instead of the workflow's (e.g. one file per shard).
        #[arg(long)]
        store: Option<PathBuf>,
        /// Worker threads (default: all cores).
        #[arg(long)]
        threads: Option<usize>,
        /// Plain progress lines instead of a bar, even on a terminal.
        #[arg(long)]
        no_bar: bool,
    },
    /// Combine shard stores into one (the same rows as an unsharded run).
    Merge {
        out: PathBuf,
        #[arg(required = true)]
        shards: Vec<PathBuf>,
    },
    /// Write a store's candidates with provenance as CSV (and optionally a SMILES file).
    Export {
        store: PathBuf,
        /// CSV output (default: stdout).
        #[arg(long)]
        csv: Option<PathBuf>,
        /// Also write `SMILES<TAB>id` lines to this file.
        #[arg(long)]
        smi: Option<PathBuf>,
        /// Also write the stored estimates (π tier, rates, kinetics, colour; one row per
        /// candidate and parameter set) as CSV to this file.
        #[arg(long)]
        estimates: Option<PathBuf>,
        /// Instead of the candidate table, write quantum-chemistry jobs into this folder:
        /// `<id>.xyz` (equilibrium-twist start geometry), `<id>.<ext>` from --template, and
        /// manifest.csv, for the candidates listed in --select.
        #[arg(long, value_name = "DIR", requires_all = ["template", "select"])]
        for_qc: Option<PathBuf>,
        /// Job template with placeholders {{id}}, {{smiles}}, {{formula}}, {{charge}},
        /// {{multiplicity}}, {{natoms}}, {{coords}} (see DEVELOPERS.md); its extension names
        /// the job files.
        #[arg(long, value_name = "FILE")]
        template: Option<PathBuf>,
        /// Candidates to prepare: one per line, by candidate id or SMILES (`#` comments), e.g.
        /// the output of `suggest --write-ids` or a report's shortlist.csv.
        #[arg(long, value_name = "FILE")]
        select: Option<PathBuf>,
    },
    /// One molecule in depth: units and their roles, torsion of each link, excited states
    /// (S1, T1, ΔEST, f, charge-transfer character) at the equilibrium twist, torsion averages.
    Inspect {
        smiles: String,
        /// Fix every link at this twist (degrees) instead of the torsion model.
        #[arg(long)]
        twist: Option<f64>,
        /// Temperature for the Boltzmann distribution over twists and the rates (K).
        #[arg(long, default_value_t = RateParams::default().temperature_k)]
        temperature: f64,
        /// A PPP parameter file of the shipped form (default: the shipped set).
        #[arg(long)]
        params: Option<PathBuf>,
        /// Everything as JSON.
        #[arg(long)]
        json: bool,
        /// Use the coordinates of this XYZ file (heavy atoms in SMILES order, hydrogens
        /// skipped) instead of the built geometry and torsion model.
        #[arg(long, value_name = "FILE")]
        xyz: Option<PathBuf>,
        /// Write the equilibrium geometry (with hydrogens) as XYZ to this file.
        #[arg(long, value_name = "FILE")]
        write_xyz: Option<PathBuf>,
        /// Write the equilibrium geometry (with hydrogens) as an SDF record to this file.
        #[arg(long, value_name = "FILE")]
        write_sdf: Option<PathBuf>,
        /// Refractive index of the host (radiative rate).
        #[arg(long, default_value_t = RateParams::default().refractive_index)]
        refractive_index: f64,
        /// Non-radiative rate of S1 (s⁻¹); 0 = the efficiency is an upper bound.
        #[arg(long, default_value_t = RateParams::default().k_nr_singlet)]
        knr_singlet: f64,
        /// Non-radiative rate of T1 (s⁻¹).
        #[arg(long, default_value_t = RateParams::default().k_nr_triplet)]
        knr_triplet: f64,
        /// Stokes shift (eV) from vertical S1 to the emission peak.
        #[arg(long, default_value_t = BandParams::default().stokes_shift_ev)]
        stokes_shift: f64,
        /// Emission band FWHM (eV).
        #[arg(long, default_value_t = BandParams::default().fwhm_ev)]
        fwhm: f64,
    },
    /// Colour of an emission spectrum or band: CIE 1931 x, y, CIE 1976 u′, v′, peak and
    /// dominant wavelength, excitation purity, distance to a target.
    Colour {
        /// Spectrum CSV: wavelength_nm,intensity per line (# comments, optional header).
        spectrum: Option<PathBuf>,
        /// A Gaussian band in photon energy instead: PEAK_EV:FWHM_EV (e.g. 2.70:0.35).
        #[arg(long, value_name = "PEAK_EV:FWHM_EV")]
        band: Option<String>,
        /// What the file's intensities are: photon counts or energy per nm.
        #[arg(long, value_enum, default_value_t = SpectrumUnits::Photon)]
        units: SpectrumUnits,
        /// Colour target: bt2020-red|green|blue, bt709-red|green|blue, or X,Y.
        #[arg(long)]
        target: Option<String>,
        /// White point for dominant wavelength and purity.
        #[arg(long, value_enum, default_value_t = WhitePoint::D65)]
        white: WhitePoint,
        /// Output as JSON.
        #[arg(long)]
        json: bool,
    },
    /// Förster transfer from a sensitiser to a terminal emitter: spectral overlap J, Förster
    /// radius R₀, and efficiency and rate at a distance.
    Forster {
        /// Donor (sensitiser) emission CSV: wavelength_nm,intensity (used as given; photon
        /// counts per nm is the usual convention), normalised to unit area here.
        donor: PathBuf,
        /// Acceptor (terminal emitter) absorption CSV: wavelength_nm,ε in M⁻¹ cm⁻¹.
        acceptor: PathBuf,
        /// Donor photoluminescence quantum yield (default 1: a project choice, the upper bound
        /// of R₀ when no measured yield is given).
        #[arg(long, default_value_t = 1.0)]
        phi_d: f64,
        /// Refractive index of the medium (default: the rate model's host value).
        #[arg(long, default_value_t = RateParams::default().refractive_index)]
        n: f64,
        /// Orientation factor κ² (default 2/3: isotropic, dynamically averaged).
        #[arg(long, default_value_t = KAPPA2_ISOTROPIC)]
        kappa2: f64,
        /// Donor–acceptor distance (nm) for efficiency and rate.
        #[arg(long)]
        distance: Option<f64>,
        /// Unquenched donor lifetime (s) for the rate.
        #[arg(long)]
        tau_d: Option<f64>,
        /// Output as JSON.
        #[arg(long)]
        json: bool,
    },
    /// Rank sensitiser–emitter pairs: every estimated candidate of a store (its stored emission
    /// band as the donor) against terminal emitters, by Förster radius. Terminal emitters:
    /// absorption CSV files, SMILES estimated here (--emitter-smiles), or the store's own
    /// bright candidates (--from-store); at least one source.
    Pairs {
        store: PathBuf,
        /// Absorption CSV files (wavelength_nm, ε in M⁻¹ cm⁻¹), one per terminal emitter; the
        /// file stem names it.
        emitters: Vec<PathBuf>,
        /// A SMILES file of terminal emitters (`SMILES name` per line; `#` comments): each is
        /// estimated by the π tier and its absorption built from the computed singlets.
        #[arg(long)]
        emitter_smiles: Option<PathBuf>,
        /// Use the store's estimated candidates whose brightest singlet has f ≥ --min-emitter-f
        /// as terminal emitters too (absorption from their stored singlets).
        #[arg(long)]
        from_store: bool,
        /// Brightest-singlet oscillator strength a store candidate needs to serve as a terminal
        /// emitter (a choice of this tool: fluorescent emitters are bright).
        #[arg(long, default_value_t = 0.1)]
        min_emitter_f: f64,
        /// FWHM (eV) of each computed absorption band.
        #[arg(long, default_value_t = lumisift::forster::ABSORPTION_FWHM_EV)]
        absorption_fwhm: f64,
        /// Orientation factor κ² (default 2/3: isotropic, dynamically averaged).
        #[arg(long, default_value_t = KAPPA2_ISOTROPIC)]
        kappa2: f64,
        /// How many pairs to print.
        #[arg(long, default_value_t = 20)]
        top: usize,
        /// Output as JSON.
        #[arg(long)]
        json: bool,
    },
    /// Import quantum-chemistry output files (Gaussian, ORCA, Q-Chem, NWChem, GAMESS, Firefly,
    /// ADF, DALTON, Jaguar, Turbomole; autodetected) and neutral results tables (*.csv) into a
    /// store, each state matched to its candidate (id in the file name, SMILES, or the
    /// geometry's heavy-atom skeleton). Re-importing a file is idempotent. With --show, print
    /// what each file yields without touching any store.
    Ingest {
        /// Only show what the files yield (no store; every path is a file or folder to read).
        #[arg(long)]
        show: bool,
        /// STORE then files or folders (recursive); with --show, files or folders only.
        #[arg(required = true)]
        paths: Vec<PathBuf>,
        /// What the program outputs' energies are (table rows carry their own kind).
        #[arg(long, default_value = "vertical_absorption")]
        kind: String,
        /// Conditions stored with the program outputs (e.g. "gas phase, ground-state geometry").
        #[arg(long)]
        conditions: Option<String>,
        /// Output as JSON.
        #[arg(long)]
        json: bool,
    },
    /// Fit corrections of the π-tier S1, ΔEST and f on the imported results (per kind, never
    /// mixing kinds; model and 90 % intervals chosen by cross-validation grouped by fragment),
    /// and apply them to every estimated candidate.
    Calibrate {
        store: PathBuf,
        /// Only this kind (default: every kind with matched results).
        #[arg(long)]
        kind: Option<String>,
        /// Coverage of the prediction intervals.
        #[arg(long, default_value_t = 0.9)]
        coverage: f64,
        /// Output as JSON.
        #[arg(long)]
        json: bool,
    },
    /// Pick the next candidates to compute: upper confidence bound μ + β·σ on log10 k_TADF
    /// (calibrated where possible), no two picks more similar than the Tanimoto limit.
    Suggest {
        store: PathBuf,
        /// How many to pick.
        #[arg(long, default_value_t = 10)]
        count: usize,
        /// Weight β of the uncertainty.
        #[arg(long, default_value_t = 1.0)]
        beta: f64,
        /// Largest Tanimoto similarity to a computed or already picked candidate.
        #[arg(long, default_value_t = 0.7)]
        max_similarity: f64,
        /// Write `id SMILES` lines here (input for `export --for-qc --select`).
        #[arg(long, value_name = "FILE")]
        write_ids: Option<PathBuf>,
        /// Output as JSON.
        #[arg(long)]
        json: bool,
    },
    /// Rank the store's estimates (calibrated where possible), pick a diverse shortlist with
    /// its coupling chemistry and cautions, and write report.html (self-contained) with
    /// shortlist.csv, .json and .sdf.
    Report(cli::report::ReportArgs),
    /// Fragment library tools.
    Fragments {
        #[command(subcommand)]
        command: FragmentsCommand,
    },
}

#[derive(Clone, Copy, clap::ValueEnum)]
enum SpectrumUnits {
    Photon,
    Energy,
}

#[derive(Clone, Copy, clap::ValueEnum)]
enum WhitePoint {
    D65,
    E,
}

#[derive(Subcommand)]
enum FragmentsCommand {
    /// Validate fragment files (folders of *.toml or files) and print a summary table.
    Check {
        #[arg(required = true)]
        paths: Vec<PathBuf>,
    },
}

fn main() -> ExitCode {
    let cli = Cli::parse();
    match cli.command {
        Command::Molinfo { file } => molinfo(&file),
        Command::Run {
            workflow,
            shard,
            store,
            threads,
            no_bar,
        } => run(&workflow, shard.as_deref(), store, threads, no_bar),
        Command::Merge { out, shards } => merge(&out, &shards),
        Command::Export {
            store,
            for_qc: Some(dir),
            template: Some(template),
            select: Some(select),
            ..
        } => export_for_qc(&store, &dir, &template, &select),
        Command::Export {
            store,
            csv,
            smi,
            estimates,
            ..
        } => export(&store, csv, smi, estimates),
        Command::Fragments {
            command: FragmentsCommand::Check { paths },
        } => fragments_check(&paths),
        Command::Report(args) => cli::report::report_cmd(&args),
        Command::Ingest {
            show: true,
            paths,
            json,
            ..
        } => cli::qc::show(&paths, json),
        Command::Ingest {
            paths,
            kind,
            conditions,
            json,
            ..
        } => match paths.split_first() {
            Some((store, rest)) if !rest.is_empty() => {
                cli::qc::ingest_cmd(store, rest, &kind, conditions, json)
            }
            _ => fail("ingest STORE PATH...: give the store and at least one file or folder"),
        },
        Command::Calibrate {
            store,
            kind,
            coverage,
            json,
        } => cli::qc::calibrate_cmd(&store, kind.as_deref(), coverage, json),
        Command::Suggest {
            store,
            count,
            beta,
            max_similarity,
            write_ids,
            json,
        } => cli::qc::suggest_cmd(
            &store,
            count,
            beta,
            max_similarity,
            write_ids.as_deref(),
            json,
        ),
        Command::Forster {
            donor,
            acceptor,
            phi_d,
            n,
            kappa2,
            distance,
            tau_d,
            json,
        } => forster(&donor, &acceptor, phi_d, n, kappa2, distance, tau_d, json),
        Command::Pairs {
            store,
            emitters,
            emitter_smiles,
            from_store,
            min_emitter_f,
            absorption_fwhm,
            kappa2,
            top,
            json,
        } => pairs(
            &store,
            &EmitterSources {
                spectra: emitters,
                smiles_file: emitter_smiles,
                from_store,
                min_f: min_emitter_f,
                fwhm_ev: absorption_fwhm,
            },
            kappa2,
            top,
            json,
        ),
        Command::Colour {
            spectrum,
            band,
            units,
            target,
            white,
            json,
        } => colour(
            spectrum.as_deref(),
            band.as_deref(),
            units,
            target,
            white,
            json,
        ),
        Command::Inspect {
            smiles,
            twist,
            temperature,
            params,
            json,
            xyz,
            write_xyz,
            write_sdf,
            refractive_index,
            knr_singlet,
            knr_triplet,
            stokes_shift,
            fwhm,
        } => inspect(
            &smiles,
            twist,
            temperature,
            params.as_deref(),
            json,
            InspectFiles {
                xyz,
                write_xyz,
                write_sdf,
            },
            (
                RateParams {
                    refractive_index,
                    temperature_k: temperature,
                    k_nr_singlet: knr_singlet,
                    k_nr_triplet: knr_triplet,
                    ..Default::default()
                },
                BandParams {
                    stokes_shift_ev: stokes_shift,
                    fwhm_ev: fwhm,
                },
            ),
        ),
    }
}

fn fail(msg: impl std::fmt::Display) -> ExitCode {
    eprintln!("lumisift: {msg}");
    ExitCode::from(2)
}

fn run(
    path: &Path,
    shard: Option<&str>,
    store: Option<PathBuf>,
    threads: Option<usize>,
    no_bar: bool,
) -> ExitCode {
    let mut wf = match Workflow::load(path) {
        Ok(w) => w,
        Err(e) => return fail(e),
    };
    if let Some(s) = store {
        wf.store = s;
    }
    let shard = match shard.map(Shard::parse).transpose() {
        Ok(s) => s,
        Err(e) => return fail(e),
    };
    if let Some(n) = threads
        && let Err(e) = rayon::ThreadPoolBuilder::new()
            .num_threads(n)
            .build_global()
    {
        return fail(format!("cannot set {n} threads: {e}"));
    }
    let progress = if !no_bar && std::io::stderr().is_terminal() {
        Progress::Bar
    } else {
        Progress::Lines
    };
    match campaign::run(&wf, &RunOptions { shard, progress }) {
        Ok(s) if !wf.stages.iter().any(|x| x == "enumerate") => {
            print_estimate_summary(&s);
            print_later_stages(&s);
            ExitCode::SUCCESS
        }
        Ok(s) => {
            if let Some(sc) = &s.screen {
                eprintln!(
                    "screen: {} tuples scored by the fast tier ({} without a donor–acceptor path, {} outside the model's range); {} passed (screen score ≥ {:.2} on the log10 k_TADF scale; {} with a fragment outside the fitted set); cards and pair table {:.2} s, scoring {:.2} s ({:.0} tuples/s incl. enumeration)",
                    sc.scored,
                    sc.no_path,
                    sc.non_finite,
                    sc.passed,
                    sc.threshold_merit,
                    sc.passed_unseen_fragment,
                    sc.cards_s,
                    sc.scoring_s,
                    (sc.scored + sc.no_path + sc.non_finite) as f64 / sc.scoring_s.max(1e-9)
                );
                let trees = wf.screen.as_ref().is_some_and(|c| c.trees);
                match (trees, sc.refined, sc.gate_score) {
                    (true, Some(r), Some(g)) => eprintln!(
                        "screen: the boosted trees refined {r} scores (ridge part at or above the model's gate, screen score ≥ {g:.2}); {}",
                        if sc.threshold_merit < g {
                            "the pass reaches below the gate, where tuples are ordered by the ridge part alone ([screen] refine_all = true refines every tuple)"
                        } else {
                            "every passed tuple is above the gate"
                        }
                    ),
                    (true, Some(r), None) => eprintln!(
                        "screen: the boosted trees refined every score ({r}; no gate in use: the model has none, [screen] refine_all is set, or the pass fraction is above the share its gate refines)"
                    ),
                    _ => {}
                }
            }
            let c = &s.counts;
            eprintln!(
                "enumerate: {} assignments considered, {} symmetry-equivalent, rejected: {} by mol weight, {} by heavy atoms, {} forbidden pairs, {} pairs not allowed; {} admitted, {} selected",
                c.generated,
                c.symmetry_equivalent,
                c.rejected_mol_weight,
                c.rejected_heavy_atoms,
                c.rejected_forbidden_pair,
                c.rejected_pair_not_allowed,
                c.admitted,
                s.selected
            );
            eprintln!(
                "chunks: {} total, {} in this shard, {} already done, {} written ({} tuples) in {:.1} s",
                s.chunks_total,
                s.chunks_this_shard,
                s.chunks_skipped_done,
                s.chunks_written,
                s.tuples_written,
                s.elapsed_s
            );
            print_estimate_summary(&s);
            eprintln!(
                "store {}: {} candidates from {} tuples ({} duplicates by identity)",
                wf.store.display(),
                s.store_candidates,
                s.store_tuples,
                s.store_tuples.saturating_sub(s.store_candidates)
            );
            print_later_stages(&s);
            ExitCode::SUCCESS
        }
        Err(e) => fail(e),
    }
}

fn print_later_stages(s: &campaign::RunSummary) {
    if let Some(i) = &s.ingest {
        eprintln!(
            "ingest: {} file(s), {} state(s) stored; matched {}, ambiguous {}, conflict {}, unmatched {}; {} failed, {} skipped",
            i.files.len(),
            i.states_stored,
            i.matched,
            i.ambiguous,
            i.conflict,
            i.unmatched,
            i.failed,
            i.skipped
        );
        for f in i.files.iter().filter(|f| f.status == "failed") {
            eprintln!(
                "  failed: {}: {}",
                f.path,
                f.message.as_deref().unwrap_or("")
            );
        }
    }
    match &s.calibration {
        Some(Ok(outcomes)) => {
            for o in outcomes {
                match (&o.calibration, &o.error) {
                    (Some(c), _) => {
                        let part = |name: &str, t: &Option<lumisift::calibrate::TargetFit>| {
                            t.as_ref().map_or(format!("{name} not fitted"), |t| {
                                format!("{name} MAE {:.3} (±{:.3})", t.cv.mae, t.half_width)
                            })
                        };
                        eprintln!(
                            "calibrate {}: {} points; cross-validated {}, {}, {}; applied to {} candidates",
                            o.kind,
                            o.n_points,
                            part("S1/eV", &c.s1),
                            part("ΔEST/eV", &c.delta_est),
                            part("log10 f", &c.log10_f),
                            o.applied
                        );
                        for sk in &c.skipped {
                            eprintln!("  skipped: {sk}");
                        }
                    }
                    (None, Some(e)) => {
                        eprintln!(
                            "calibrate {}: {} points, not fitted: {e}",
                            o.kind, o.n_points
                        )
                    }
                    _ => {}
                }
            }
        }
        Some(Err(e)) => eprintln!("calibrate: skipped: {e}"),
        None => {}
    }
    if let Some(sl) = &s.shortlist {
        let kept = sl.ranking.order.len();
        eprintln!(
            "shortlist: {} ranked, {} passed the filters, {} picked ({:?})",
            sl.rows.len(),
            kept,
            sl.picks.len(),
            sl.stop
        );
        for (k, &i) in sl.picks.iter().enumerate() {
            let r = &sl.ranking.rows[i];
            eprintln!(
                "  {}. {}  D = {:.3}  front {}  {}",
                k + 1,
                &sl.info[i].candidate_id[..12],
                r.desirability.unwrap_or(0.0),
                r.front.map_or(0, |f| f + 1),
                sl.info[i].canonical_smiles
            );
        }
        eprintln!("  {}", campaign::report_stage::SAFETY_NOTICE);
    }
    for p in &s.report_files {
        eprintln!("report: wrote {}", p.display());
    }
}

fn print_estimate_summary(s: &campaign::RunSummary) {
    if let Some(e) = &s.estimate {
        eprintln!(
            "estimate: {} chunks ({} in this shard, {} already done, {} written); {} candidates estimated, {} failed (reasons stored) in {:.1} s",
            e.chunks_total,
            e.chunks_this_shard,
            e.chunks_skipped_done,
            e.chunks_written,
            e.candidates_ok,
            e.candidates_failed,
            e.elapsed_s
        );
    }
}

fn merge(out: &Path, shards: &[PathBuf]) -> ExitCode {
    match campaign::merge::merge(out, shards) {
        Ok(s) => {
            eprintln!(
                "merged {} shard(s) into {}: {} candidates, {} tuples",
                s.shards,
                out.display(),
                s.candidates,
                s.tuples
            );
            for (stage, hash, present, total) in &s.incomplete {
                eprintln!(
                    "warning: stage {stage} (parameters {hash}): {present} of {total} chunks present — a shard is missing or unfinished"
                );
            }
            if s.incomplete.is_empty() {
                ExitCode::SUCCESS
            } else {
                ExitCode::from(1)
            }
        }
        Err(e) => fail(e),
    }
}

fn export(
    store: &Path,
    csv: Option<PathBuf>,
    smi: Option<PathBuf>,
    estimates: Option<PathBuf>,
) -> ExitCode {
    use lumisift::report::export as ex;
    let st = match campaign::store::Store::open_existing(store) {
        Ok(s) => s,
        Err(e) => return fail(e),
    };
    if let Err(e) = st.ensure_provenance_index() {
        return fail(e);
    }
    let conn = st.connection();
    let result = match &csv {
        Some(p) => write_to_file(p, |w| ex::candidates_csv(conn, w)),
        None => ex::candidates_csv(conn, std::io::stdout().lock()),
    };
    let n = match result {
        Ok(n) => n,
        Err(e) => return fail(e),
    };
    if let Some(p) = &estimates {
        match write_to_file(p, |w| ex::estimates_csv(conn, w)) {
            Ok(k) => eprintln!("exported {k} estimate rows to {}", p.display()),
            Err(e) => return fail(e),
        }
    }
    if let Some(p) = &smi
        && let Err(e) = write_to_file(p, |w| ex::candidates_smi(conn, w))
    {
        return fail(e);
    }
    eprintln!("exported {n} candidates");
    ExitCode::SUCCESS
}

fn export_for_qc(store: &Path, dir: &Path, template: &Path, select: &Path) -> ExitCode {
    use lumisift::report::qcjobs::{JobTemplate, write_jobs};
    let tpl = match std::fs::read_to_string(template)
        .map_err(|e| e.to_string())
        .and_then(|t| JobTemplate::parse(&t))
    {
        Ok(t) => t,
        Err(e) => return fail(format!("{}: {e}", template.display())),
    };
    let ext = template
        .extension()
        .map_or_else(|| "inp".to_string(), |e| e.to_string_lossy().into_owned());
    // One candidate per line: a line's 32-hex-digit candidate id wherever it stands (so
    // `suggest --write-ids` output and a shortlist.csv both work), else its first token as a
    // SMILES; a CSV file's header line is skipped.
    let is_csv = select
        .extension()
        .is_some_and(|e| e.eq_ignore_ascii_case("csv"));
    let requested: Vec<String> = match std::fs::read_to_string(select) {
        Ok(t) => t
            .lines()
            .skip(usize::from(is_csv))
            .map(str::trim)
            .filter(|l| !l.is_empty() && !l.starts_with('#'))
            .map(|l| {
                let mut tokens = l.split(|c: char| c == ',' || c.is_whitespace());
                l.split(|c: char| c == ',' || c.is_whitespace())
                    .find(|t| t.len() == 32 && t.chars().all(|c| c.is_ascii_hexdigit()))
                    .or_else(|| tokens.find(|t| !t.is_empty()))
                    .unwrap_or_default()
                    .to_string()
            })
            .collect(),
        Err(e) => return fail(format!("{}: {e}", select.display())),
    };
    let st = match campaign::store::Store::open_existing(store) {
        Ok(s) => s,
        Err(e) => return fail(e),
    };
    match write_jobs(st.connection(), &requested, &tpl, dir, &ext) {
        Ok(w) => {
            for (req, why) in &w.failed {
                eprintln!("{}: skipped '{req}': {why}", select.display());
            }
            eprintln!(
                "wrote {} job(s) to {} ({} skipped)",
                w.written.len(),
                dir.display(),
                w.failed.len()
            );
            if w.failed.is_empty() {
                ExitCode::SUCCESS
            } else {
                ExitCode::from(1)
            }
        }
        Err(e) => fail(e),
    }
}

/// Create `path` and hand a buffered writer to `write`; errors name the file when it cannot
/// be created.
fn write_to_file(
    path: &Path,
    write: impl FnOnce(std::io::BufWriter<std::fs::File>) -> Result<u64, String>,
) -> Result<u64, String> {
    let f = std::fs::File::create(path).map_err(|e| format!("{}: {e}", path.display()))?;
    write(std::io::BufWriter::new(f))
}

/// A spectrum CSV file (wavelength_nm,intensity) read, parsed and checked; errors name the
/// file.
fn read_spectrum(path: &Path, units: Units) -> Result<Spectrum, String> {
    std::fs::read_to_string(path)
        .map_err(|e| e.to_string())
        .and_then(|t| lumisift::colour::parse_spectrum_csv(&t))
        .and_then(|pts| Spectrum::new(&pts, units))
        .map_err(|e| format!("{}: {e}", path.display()))
}

/// Files `inspect` reads or writes besides its report.
struct InspectFiles {
    xyz: Option<PathBuf>,
    write_xyz: Option<PathBuf>,
    write_sdf: Option<PathBuf>,
}

fn inspect(
    smiles: &str,
    twist: Option<f64>,
    temperature: f64,
    params: Option<&Path>,
    json: bool,
    files: InspectFiles,
    (rates, band): (RateParams, BandParams),
) -> ExitCode {
    use lumisift::pi::estimate::{EstimateParams, estimate};
    use lumisift::pi::params::PppParams;
    use lumisift::report::inspect as page;
    // Settings first: a bad value must not wait for the estimate.
    if temperature.is_nan() || temperature <= 0.0 {
        return fail("--temperature must be positive (K)");
    }
    if let Err(e) = rates.validate().and_then(|()| band.validate()) {
        return fail(format!("rate/band setting: {e}"));
    }
    let mol = match lumisift::chem::parse_smiles(smiles) {
        Ok(m) => m,
        Err(e) => return fail(format!("SMILES '{smiles}': {e}")),
    };
    let ppp = match params {
        None => PppParams::default_set(),
        Some(p) => match std::fs::read_to_string(p)
            .map_err(|e| e.to_string())
            .and_then(|t| PppParams::parse(&t))
        {
            Ok(x) => x,
            Err(e) => return fail(format!("{}: {e}", p.display())),
        },
    };
    let geometry = match &files.xyz {
        None => None,
        Some(path) => {
            if twist.is_some() {
                return fail("--xyz and --twist exclude each other (the file fixes the twists)");
            }
            match std::fs::read_to_string(path)
                .map_err(|e| e.to_string())
                .and_then(|t| lumisift::geometry::parse_xyz(&t))
                .and_then(|atoms| lumisift::geometry::heavy_atom_coordinates(&mol, &atoms))
            {
                Ok(g) => Some(g),
                Err(e) => return fail(format!("{}: {e}", path.display())),
            }
        }
    };
    let p = EstimateParams {
        temperature_k: temperature,
        twist_deg: twist,
        geometry,
        ..EstimateParams::default()
    };
    let est = match estimate(&mol, &ppp, &p) {
        Ok(e) => e,
        Err(e) => return fail(format!("{smiles}: {e}")),
    };
    let canonical = lumisift::chem::canonical_smiles(&mol);
    let title = format!("{canonical} lumisift equilibrium geometry (estimate, not optimised)");
    if let Some(path) = &files.write_xyz
        && let Err(e) = std::fs::write(path, page::geometry_xyz(&mol, &est, &title))
    {
        return fail(format!("{}: {e}", path.display()));
    }
    if let Some(path) = &files.write_sdf
        && let Err(e) = std::fs::write(path, page::geometry_sdf(&mol, &est, &canonical))
    {
        return fail(format!("{}: {e}", path.display()));
    }
    let photo = lumisift::photophysics::assess(&est, &rates, &band);
    if json {
        let id = lumisift::chem::candidate_id(&canonical);
        let out = page::to_json(smiles, &canonical, &id, &est, &photo, temperature);
        println!(
            "{}",
            serde_json::to_string_pretty(&out).expect("serialisable")
        );
    } else {
        print!(
            "{}",
            page::render_text(smiles, &canonical, &est, temperature)
        );
        print!("{}", page::render_photophysics(&photo, &est.unvalidated));
    }
    ExitCode::SUCCESS
}

/// Where `pairs` takes its terminal emitters from.
struct EmitterSources {
    spectra: Vec<PathBuf>,
    smiles_file: Option<PathBuf>,
    from_store: bool,
    min_f: f64,
    fwhm_ev: f64,
}

fn pairs(store: &Path, src: &EmitterSources, kappa2: f64, top: usize, json: bool) -> ExitCode {
    if !(0.0..=4.0).contains(&kappa2) {
        return fail("--kappa2 in [0, 4]");
    }
    if src.spectra.is_empty() && src.smiles_file.is_none() && !src.from_store {
        return fail(
            "no terminal emitters: give absorption CSV files, --emitter-smiles FILE or --from-store",
        );
    }
    if !(src.fwhm_ev > 0.0 && src.fwhm_ev.is_finite()) {
        return fail("--absorption-fwhm must be positive (eV)");
    }
    let mut specs = Vec::new();
    for p in &src.spectra {
        match read_spectrum(p, Units::Energy) {
            Ok(s) => specs.push((
                p.file_stem()
                    .map_or_else(|| p.display().to_string(), |s| s.to_string_lossy().into()),
                s,
            )),
            Err(e) => return fail(e),
        }
    }
    if let Some(path) = &src.smiles_file {
        let text = match std::fs::read_to_string(path) {
            Ok(t) => t,
            Err(e) => return fail(format!("{}: {e}", path.display())),
        };
        let ppp = lumisift::pi::params::PppParams::default_set();
        let mut bad = 0usize;
        for (k, line) in text.lines().enumerate() {
            let line = line.trim();
            if line.is_empty() || line.starts_with('#') {
                continue;
            }
            let mut parts = line.split_whitespace();
            let smi = parts.next().unwrap_or_default();
            let name = parts.collect::<Vec<_>>().join(" ");
            let name = if name.is_empty() {
                format!("line{}", k + 1)
            } else {
                name
            };
            match lumisift::report::pairs::smiles_absorber(smi, &ppp, src.fwhm_ev) {
                Ok(s) => specs.push((name, s)),
                Err(e) => {
                    bad += 1;
                    eprintln!("{}:{}: skipped: {e}", path.display(), k + 1);
                }
            }
        }
        if bad > 0 {
            eprintln!("{bad} terminal emitter line(s) skipped");
        }
    }
    let st = match campaign::store::Store::open_existing(store) {
        Ok(s) => s,
        Err(e) => return fail(e),
    };
    if src.from_store {
        match lumisift::report::pairs::store_absorbers(st.connection(), src.min_f, src.fwhm_ev) {
            Ok((mut a, _)) => specs.append(&mut a),
            Err(e) => return fail(format!("{}: {e}", store.display())),
        }
    }
    if specs.is_empty() {
        return fail("no usable terminal emitter (see the messages above)");
    }
    let (ranked, skipped) =
        match lumisift::report::pairs::rank_pairs(st.connection(), &specs, kappa2) {
            Ok(x) => x,
            Err(e) => return fail(format!("{}: {e}", store.display())),
        };
    if skipped > 0 {
        eprintln!(
            "{skipped} estimate records without photophysics (older layout or failed) skipped"
        );
    }
    let shown: Vec<_> = ranked.iter().take(top).collect();
    if json {
        println!(
            "{}",
            serde_json::to_string_pretty(&shown).expect("serialisable")
        );
    } else {
        println!(
            "{:>4} {:>7} {:>10} {:>6} {:<24} {:<34} {:<16} unvalidated",
            "rank", "R0/nm", "J", "Φ_D", "emitter", "sensitiser id", "parameters"
        );
        for (k, p) in shown.iter().enumerate() {
            println!(
                "{:>4} {:>7.2} {:>10.3e} {:>6.3} {:<24} {:<34} {:<16} {}",
                k + 1,
                p.r0_nm,
                p.overlap_m1_cm1_nm4,
                p.phi_d,
                p.emitter,
                p.candidate_id,
                p.param_hash,
                p.unvalidated.join(",")
            );
        }
        println!(
            "R₀ from the stored emission band and PL-yield bound of each sensitiser (estimates, not \
             measurements)."
        );
    }
    ExitCode::SUCCESS
}

#[allow(clippy::too_many_arguments)]
fn forster(
    donor: &Path,
    acceptor: &Path,
    phi_d: f64,
    n: f64,
    kappa2: f64,
    distance: Option<f64>,
    tau_d: Option<f64>,
    json: bool,
) -> ExitCode {
    use lumisift::forster as fr;
    if !((0.0..=1.0).contains(&phi_d) && n >= 1.0 && (0.0..=4.0).contains(&kappa2)) {
        return fail("--phi-d in [0, 1], --n ≥ 1, --kappa2 in [0, 4]");
    }
    let read = |p: &Path| read_spectrum(p, Units::Energy);
    let (d, a) = match (read(donor), read(acceptor)) {
        (Ok(d), Ok(a)) => (d, a),
        (Err(e), _) | (_, Err(e)) => return fail(e),
    };
    let j = match fr::overlap_integral(&d, &a) {
        Ok(j) => j,
        Err(e) => return fail(format!("{}: {e}", donor.display())),
    };
    let r0 = fr::forster_radius_nm(j, phi_d, n, kappa2);
    let eff = distance.map(|r| fr::efficiency(r, r0));
    let k = distance.zip(tau_d).map(|(r, t)| fr::rate(r, r0, t));
    if json {
        let out = serde_json::json!({
            "overlap_integral_m1_cm1_nm4": j,
            "forster_radius_nm": r0,
            "phi_d": phi_d, "n": n, "kappa2": kappa2,
            "distance_nm": distance, "efficiency": eff, "rate_s1": k,
        });
        println!(
            "{}",
            serde_json::to_string_pretty(&out).expect("serialisable")
        );
    } else {
        println!("overlap integral J = {j:.4e} M⁻¹ cm⁻¹ nm⁴");
        println!("Förster radius R₀ = {r0:.3} nm (κ² {kappa2:.3}, Φ_D {phi_d}, n {n})");
        if let (Some(r), Some(e)) = (distance, eff) {
            println!("at r = {r} nm: transfer efficiency {e:.3}");
        }
        if let Some(k) = k {
            println!("transfer rate {k:.3e} s⁻¹");
        }
    }
    ExitCode::SUCCESS
}

fn colour(
    spectrum: Option<&Path>,
    band: Option<&str>,
    units: SpectrumUnits,
    target: Option<String>,
    white: WhitePoint,
    json: bool,
) -> ExitCode {
    use lumisift::colour as col;
    let (label, spec) = match (spectrum, band) {
        (Some(_), Some(_)) | (None, None) => {
            return fail("give a spectrum file or --band PEAK_EV:FWHM_EV (one of the two)");
        }
        (Some(path), None) => {
            let units = match units {
                SpectrumUnits::Photon => Units::Photon,
                SpectrumUnits::Energy => Units::Energy,
            };
            match read_spectrum(path, units) {
                Ok(s) => (path.display().to_string(), s),
                Err(e) => return fail(e),
            }
        }
        (None, Some(b)) => {
            let parsed = b.split_once(':').and_then(|(p, w)| {
                Some((p.trim().parse::<f64>().ok()?, w.trim().parse::<f64>().ok()?))
            });
            match parsed
                .ok_or_else(|| format!("--band '{b}': expected PEAK_EV:FWHM_EV"))
                .and_then(|(p, w)| col::gaussian_band(p, w))
            {
                Ok(s) => (format!("Gaussian band {b} eV"), s),
                Err(e) => return fail(e),
            }
        }
    };
    let wp = match white {
        WhitePoint::D65 => col::D65,
        WhitePoint::E => col::WHITE_E,
    };
    let c = match col::analyse(&spec, wp) {
        Ok(c) => c,
        Err(e) => return fail(format!("{label}: {e}")),
    };
    let tgt = match target.as_deref().map(col::parse_target).transpose() {
        Ok(t) => t,
        Err(e) => return fail(e),
    };
    let dist = tgt.as_ref().map(|(_, xy)| col::delta_uv((c.x, c.y), *xy));
    if json {
        let out = serde_json::json!({
            "source": label,
            "colour": c,
            "target": tgt.as_ref().map(|(n, xy)| serde_json::json!({"name": n, "x": xy.0, "y": xy.1, "delta_u_prime_v_prime": dist})),
            "observer": "CIE 1931 2°",
        });
        println!(
            "{}",
            serde_json::to_string_pretty(&out).expect("serialisable")
        );
    } else {
        println!("{label}");
        println!("  CIE 1931 2°   x {:.4}  y {:.4}", c.x, c.y);
        println!("  CIE 1976 UCS  u′ {:.4}  v′ {:.4}", c.u_prime, c.v_prime);
        println!("  peak {:.0} nm", c.peak_nm);
        let dom = if c.dominant_nm < 0.0 {
            format!("complementary {:.1} nm", -c.dominant_nm)
        } else {
            format!("{:.1} nm", c.dominant_nm)
        };
        println!(
            "  dominant wavelength {dom}, excitation purity {:.3} (white {:.4}, {:.4})",
            c.excitation_purity, wp.0, wp.1
        );
        if let (Some((n, xy)), Some(d)) = (&tgt, dist) {
            println!("  target {n} ({:.4}, {:.4}): Δu′v′ {d:.4}", xy.0, xy.1);
        }
    }
    ExitCode::SUCCESS
}

fn fragments_check(paths: &[PathBuf]) -> ExitCode {
    match lumisift::fragments::load_paths(paths) {
        Ok(lib) => {
            println!(
                "{:<46} {:<9} {:>5} {:>6} {:>9} {:<14} {:<5}",
                "id", "role", "sites", "heavy", "MW", "handle", "shelf"
            );
            for f in &lib.fragments {
                println!(
                    "{:<46} {:<9} {:>5} {:>6} {:>9.3} {:<14} {:<5}",
                    f.id,
                    f.role.as_str(),
                    f.site_count(),
                    f.heavy_atoms,
                    f.mass_without_sites,
                    f.handle.as_str(),
                    if f.on_shelf { "yes" } else { "no" }
                );
            }
            let mut by_role = std::collections::BTreeMap::new();
            for f in &lib.fragments {
                *by_role.entry((f.role, f.site_count())).or_insert(0usize) += 1;
            }
            println!();
            println!("{} fragments, all valid:", lib.fragments.len());
            for ((role, sites), n) in by_role {
                println!("  {n:>4} {role} with {sites} site(s)");
            }
            ExitCode::SUCCESS
        }
        Err(errors) => {
            for e in &errors {
                eprintln!("{e}");
            }
            eprintln!("{} problem(s) found", errors.len());
            ExitCode::from(1)
        }
    }
}

fn molinfo(file: &Path) -> ExitCode {
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
