//! The stage runner: enumeration into the store, chunk by chunk, resumable and shardable.
//!
//! The tuple stream of a workflow is deterministic. It is cut into chunks of `chunk_size`
//! admitted tuples; chunk `c` belongs to shard `c mod N`. Each chunk is built in parallel (rayon,
//! order-preserving collect) and handed through a bounded channel to one writer thread, which
//! stores its rows and its done-mark in one transaction. A run that is killed (SIGINT or SIGKILL)
//! leaves only whole chunks; running it again skips them. Memory is bounded by the chunks in
//! flight, whatever the size of the library.

use std::ops::ControlFlow;
use std::path::PathBuf;
use std::sync::mpsc::sync_channel;
use std::time::{Duration, Instant};

use rand_chacha::ChaCha20Rng;
use rand_core::{Rng, SeedableRng};
use rayon::prelude::*;
use serde::Serialize;

use super::error::CampaignError;
use super::store::{Chunk, Store, TupleRow};
use super::workflow::{EnumerateStage, ScreenStage, Workflow};
use crate::chem::{candidate_id, canonical_smiles, props};
use crate::combine::{Counts, Enumerator, Tuple, TupleEvent, assemble};
use crate::fragments::{Library, load_paths};

/// `--shard K/N`: run chunk c only when c mod N == K − 1.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Shard {
    pub k: u64,
    pub n: u64,
}

impl Shard {
    pub fn parse(s: &str) -> Result<Shard, String> {
        let (k, n) = s
            .split_once('/')
            .ok_or_else(|| format!("shard '{s}': expected K/N, e.g. 3/10"))?;
        let k: u64 = k
            .trim()
            .parse()
            .map_err(|_| format!("shard '{s}': K is not a number"))?;
        let n: u64 = n
            .trim()
            .parse()
            .map_err(|_| format!("shard '{s}': N is not a number"))?;
        if n == 0 || k == 0 || k > n {
            return Err(format!("shard '{s}': need 1 <= K <= N"));
        }
        Ok(Shard { k, n })
    }

    fn owns(&self, chunk: u64) -> bool {
        chunk % self.n == self.k - 1
    }
}

impl std::fmt::Display for Shard {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "{}/{}", self.k, self.n)
    }
}

/// How progress is shown.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Progress {
    /// A progress bar with rate and ETA (on a terminal).
    Bar,
    /// A plain line every few seconds (logs, batch jobs).
    Lines,
    Quiet,
}

#[derive(Debug, Clone)]
pub struct RunOptions {
    pub shard: Option<Shard>,
    pub progress: Progress,
}

/// What the estimate stage did.
#[derive(Debug, Clone, Default, Serialize)]
pub struct EstimateSummary {
    pub chunks_total: u64,
    pub chunks_this_shard: u64,
    pub chunks_skipped_done: u64,
    pub chunks_written: u64,
    pub candidates_ok: u64,
    /// Candidates whose estimate failed (not parameterised, SCF not converged…), each stored
    /// with its reason.
    pub candidates_failed: u64,
    pub elapsed_s: f64,
}

/// What the fast-tier screen did.
#[derive(Debug, Clone, Default, Serialize)]
pub struct ScreenSummary {
    /// Admitted tuples the fast tier scored (those with a donor–acceptor path).
    pub scored: u64,
    /// Admitted tuples without a donor–acceptor path (never passed).
    pub no_path: u64,
    /// Admitted tuples whose predicted merit is not a finite number (never passed).
    pub non_finite: u64,
    pub passed: u64,
    /// Lowest screen score (the fast tier's ordering key, on the log10 k_TADF scale in s⁻¹)
    /// among the passed tuples.
    pub threshold_merit: f64,
    /// Passed tuples with a fragment the fast model was not fitted on.
    pub passed_unseen_fragment: u64,
    /// Scored tuples whose score the boosted trees refined (their ridge part reached the
    /// model's gate; the others rank below them by the ridge part). None when not counted
    /// (a model scored through the descriptors).
    pub refined: Option<u64>,
    /// The screen score below which tuples were not refined (None: every tuple was). When
    /// `threshold_merit` is below it, the pass reached tuples ordered by the ridge part alone.
    pub gate_score: Option<f64>,
    /// Cards and donor–acceptor pair table (s), scoring pass (s).
    pub cards_s: f64,
    pub scoring_s: f64,
}

/// What a run did.
#[derive(Debug, Clone, Default, Serialize)]
pub struct RunSummary {
    pub screen: Option<ScreenSummary>,
    pub estimate: Option<EstimateSummary>,
    pub counts: Counts,
    /// Admitted tuples after sampling / the candidate cap.
    pub selected: u64,
    pub chunks_total: u64,
    pub chunks_this_shard: u64,
    pub chunks_skipped_done: u64,
    pub chunks_written: u64,
    pub tuples_written: u64,
    /// Totals in the store after the run.
    pub store_candidates: u64,
    pub store_tuples: u64,
    pub elapsed_s: f64,
    /// Later stages (not run on a shard: they need the whole store).
    pub ingest: Option<super::ingest::IngestSummary>,
    pub calibration: Option<Result<Vec<super::calibration::KindOutcome>, String>>,
    pub shortlist: Option<super::shortlist::ShortlistOutcome>,
    pub report_files: Vec<PathBuf>,
}

/// Parameters that define the enumeration's output: a change makes a new parameter set.
#[derive(Serialize)]
struct ParamKey<'a> {
    stage: &'static str,
    enumerate: &'a EnumerateStage,
    /// The screen's settings and a hash of its model text, when it selects the tuples.
    screen: Option<(&'a ScreenStage, String)>,
    chunk_size: usize,
    library: String,
    canonicaliser: u32,
}

/// Run the stages of `wf`.
pub fn run(wf: &Workflow, opts: &RunOptions) -> Result<RunSummary, CampaignError> {
    let lib = load_paths(&wf.fragments).map_err(CampaignError::Fragments)?;
    let mut summary = RunSummary::default();
    if let Some(stage) = &wf.enumerate
        && wf.stages.iter().any(|s| s == "enumerate")
    {
        summary = run_enumerate(wf, stage, &lib, opts)?;
    }
    if let Some(stage) = &wf.estimate
        && wf.stages.iter().any(|s| s == "estimate")
    {
        summary.estimate = Some(run_estimate(wf, stage, opts)?);
        let store = Store::open_existing(&wf.store)?;
        let (c, t) = store.totals()?;
        summary.store_candidates = c;
        summary.store_tuples = t;
    }
    let listed = |name: &str| wf.stages.iter().any(|s| s == name);
    if opts.shard.is_some()
        && ["ingest", "calibrate", "shortlist", "report"]
            .iter()
            .any(|s| listed(s))
    {
        return Err(CampaignError::Other(
            "ingest, calibrate, shortlist and report need the whole store: run them after              `merge`, without --shard"
                .into(),
        ));
    }
    if let (true, Some(ing)) = (listed("ingest"), &wf.ingest) {
        let mut st = Store::open_existing(&wf.store)?;
        summary.ingest = Some(super::ingest::ingest(
            &mut st,
            &ing.paths,
            &super::ingest::IngestOptions {
                kind: ing.kind,
                conditions: ing.conditions.clone(),
            },
        )?);
    }
    if let (true, Some(cal)) = (listed("calibrate"), &wf.calibrate) {
        let mut st = Store::open_existing(&wf.store)?;
        summary.calibration = Some(
            super::calibration::calibrate_store(&mut st, cal.kind.as_deref(), None, &cal.params)
                .map_err(|e| e.to_string()),
        );
    }
    if let (true, Some(sl)) = (listed("shortlist"), &wf.shortlist) {
        let mut st = Store::open_existing(&wf.store)?;
        let out = super::shortlist::shortlist(&mut st, &lib, sl)?;
        if let (true, Some(rs)) = (listed("report"), &wf.report) {
            let refs = match &rs.references {
                Some(p) => super::report_stage::read_references(p)?,
                None => Vec::new(),
            };
            let provenance = vec![
                format!("lumisift {}", env!("CARGO_PKG_VERSION")),
                format!("workflow {} ({})", wf.name, wf.path.display()),
                format!("store {}", wf.store.display()),
                format!(
                    "canonicaliser v{}, estimate record v{ESTIMATE_RECORD_VERSION}",
                    crate::chem::CANONICALISER_VERSION
                ),
            ];
            let data = super::report_stage::report_data(&out, sl, rs, &refs, provenance)?;
            summary.report_files = super::report_stage::write_report(&rs.out_dir, &data, &out)?;
        }
        summary.shortlist = Some(out);
    }
    Ok(summary)
}

/// Ordinals (among admitted tuples) to keep: all, the first `max`, or a seeded sample (a bit
/// set over the admitted ordinals: 1 bit per admitted tuple, 12.5 MB at 10^8).
enum Selection {
    All,
    First(u64),
    Sample(Vec<u64>),
}

impl Selection {
    fn keeps(&self, ordinal: u64) -> bool {
        match self {
            Selection::All => true,
            Selection::First(m) => ordinal < *m,
            Selection::Sample(bits) => bits
                .get((ordinal / 64) as usize)
                .is_some_and(|w| w >> (ordinal % 64) & 1 == 1),
        }
    }
}

/// Floyd's algorithm: `k` distinct values from `0..n`, uniformly, with a ChaCha20 stream (stable
/// across platforms and crate versions for a given seed), as a bit set. Bentley & Floyd, Commun.
/// ACM 30, 754 (1987).
fn floyd_sample(n: u64, k: u64, seed: u64) -> Vec<u64> {
    let mut rng = ChaCha20Rng::seed_from_u64(seed);
    let mut bits = vec![0u64; n.div_ceil(64) as usize];
    let set = |bits: &mut Vec<u64>, x: u64| -> bool {
        let (w, b) = ((x / 64) as usize, x % 64);
        let was = bits[w] >> b & 1 == 1;
        bits[w] |= 1 << b;
        !was
    };
    let k = k.min(n);
    for j in (n - k)..n {
        // Uniform in 0..=j by rejection (no modulo bias).
        let span = j + 1;
        let zone = u64::MAX - (u64::MAX % span);
        let t = loop {
            let x = rng.next_u64();
            if x < zone {
                break x % span;
            }
        };
        if !set(&mut bits, t) {
            set(&mut bits, j);
        }
    }
    bits
}

fn run_enumerate(
    wf: &Workflow,
    stage: &EnumerateStage,
    lib: &Library,
    opts: &RunOptions,
) -> Result<RunSummary, CampaignError> {
    let started = Instant::now();
    let en = Enumerator::new(lib, &stage.params).map_err(|m| CampaignError::Workflow {
        path: wf.path.clone(),
        message: format!("enumerate: {m}"),
    })?;
    let screen = wf
        .screen
        .as_ref()
        .filter(|_| wf.stages.iter().any(|s| s == "screen"));
    let screen_model = match screen {
        Some(sc) => Some(load_screen_model(wf, sc)?),
        None => None,
    };
    let key = ParamKey {
        stage: "enumerate",
        enumerate: stage,
        screen: screen
            .zip(screen_model.as_ref())
            .map(|(sc, (_, text))| (sc, blake3::hash(text.as_bytes()).to_hex()[..16].to_string())),
        chunk_size: wf.chunk_size,
        library: lib.content_hash(),
        canonicaliser: crate::chem::CANONICALISER_VERSION,
    };
    let params_json = serde_json::to_string(&key).expect("parameters serialise");
    let param_hash = blake3::hash(params_json.as_bytes()).to_hex()[..16].to_string();

    // Pass 1: count (cheap, tuple level) for sampling, totals and progress.
    let mut counts = Counts::default();
    en.for_each(|e| {
        counts.record(&e);
        ControlFlow::Continue(())
    });
    let mut screen_summary = None;
    let selection = if let (Some(sc), Some((model, _))) = (screen, &screen_model) {
        let (bits, summary) = screen_select(&en, lib, sc, model, counts.admitted, opts)?;
        screen_summary = Some(summary);
        Selection::Sample(bits)
    } else if stage.sample > 0 {
        Selection::Sample(floyd_sample(counts.admitted, stage.sample, stage.seed))
    } else if stage.max_candidates > 0 {
        Selection::First(stage.max_candidates)
    } else {
        Selection::All
    };
    let selected = match &selection {
        Selection::All => counts.admitted,
        Selection::First(m) => (*m).min(counts.admitted),
        Selection::Sample(bits) => bits.iter().map(|w| w.count_ones() as u64).sum(),
    };
    let chunk_size = wf.chunk_size as u64;
    let chunks_total = selected.div_ceil(chunk_size);

    let mut store = Store::open_or_create(&wf.store)?;
    let shard_label = opts
        .shard
        .map(|s| s.to_string())
        .unwrap_or_else(|| "1/1".into());
    store.record_run(&wf.path, &wf.text, &params_json, &shard_label)?;
    let counts_json = serde_json::to_string(&counts).expect("counts serialise");
    store.set_stage_status("enumerate", &param_hash, chunks_total, &counts_json)?;
    if let Some(sm) = &screen_summary {
        let json = serde_json::to_string(sm).expect("summary serialises");
        store.set_stage_status("screen", &param_hash, 0, &json)?;
    }
    let done = store.done_chunks("enumerate", &param_hash)?;
    let owned = |c: u64| opts.shard.is_none_or(|s| s.owns(c));
    let chunks_this_shard = (0..chunks_total).filter(|&c| owned(c)).count() as u64;
    let skipped = done
        .iter()
        .filter(|&&c| c < chunks_total && owned(c))
        .count() as u64;
    let todo = chunks_this_shard - skipped;

    // Writer thread, fed by a bounded channel.
    let (tx, rx) = sync_channel::<Chunk>(4);
    let writer = std::thread::spawn(move || -> Result<(Store, u64, u64), CampaignError> {
        let mut chunks = 0;
        let mut rows = 0;
        for chunk in rx {
            store.write_chunk(&chunk)?;
            chunks += 1;
            rows += chunk.rows.len() as u64;
        }
        Ok((store, chunks, rows))
    });

    let progress = Reporter::new("enumerate", opts.progress, todo);
    let mut ordinal = 0u64; // among admitted tuples
    let mut selected_idx = 0u64; // among selected tuples
    let mut pending: Vec<Tuple> = Vec::with_capacity(wf.chunk_size);
    let mut send_error = false;
    let flush = |pending: &mut Vec<Tuple>, chunk: u64| -> bool {
        let rows: Vec<TupleRow> = pending.par_iter().map(|t| build_row(lib, t)).collect();
        pending.clear();
        let ok = tx
            .send(Chunk {
                stage: "enumerate".into(),
                param_hash: param_hash.clone(),
                index: chunk,
                rows,
            })
            .is_ok();
        progress.tick();
        ok
    };
    en.for_each(|e| {
        let TupleEvent::Admitted(t) = e else {
            return ControlFlow::Continue(());
        };
        let keep = selection.keeps(ordinal);
        ordinal += 1;
        if !keep {
            return ControlFlow::Continue(());
        }
        let chunk = selected_idx / chunk_size;
        selected_idx += 1;
        let last_of_chunk = selected_idx.is_multiple_of(chunk_size) || selected_idx == selected;
        if owned(chunk) && !done.contains(&chunk) {
            pending.push(t);
            if last_of_chunk && !flush(&mut pending, chunk) {
                send_error = true;
                return ControlFlow::Break(());
            }
        }
        if selected_idx >= selected {
            ControlFlow::Break(())
        } else {
            ControlFlow::Continue(())
        }
    });
    drop(tx);
    progress.finish();
    let (store, chunks_written, tuples_written) = writer
        .join()
        .map_err(|_| CampaignError::Other("store writer thread panicked".into()))??;
    if send_error {
        return Err(CampaignError::Other("store writer stopped early".into()));
    }
    let (store_candidates, store_tuples) = store.totals()?;
    Ok(RunSummary {
        screen: screen_summary,
        estimate: None,
        counts,
        selected,
        chunks_total,
        chunks_this_shard,
        chunks_skipped_done: skipped,
        chunks_written,
        tuples_written,
        store_candidates,
        store_tuples,
        elapsed_s: started.elapsed().as_secs_f64(),
        ..RunSummary::default()
    })
}

/// The fast-tier model a screen uses (parsed) and its text (for the parameter hash).
fn load_screen_model(
    wf: &Workflow,
    sc: &ScreenStage,
) -> Result<(crate::fast::FastModel, String), CampaignError> {
    let text = match &sc.model {
        None => crate::fast::model::DEFAULT_MODEL.to_string(),
        Some(p) => std::fs::read_to_string(p).map_err(|e| CampaignError::Workflow {
            path: wf.path.clone(),
            message: format!("screen.model {}: {e}", p.display()),
        })?,
    };
    let model = crate::fast::FastModel::parse(&text).map_err(|e| CampaignError::Workflow {
        path: wf.path.clone(),
        message: format!("screen.model: {e}"),
    })?;
    Ok((model, text))
}

/// Total order on (merit, ordinal) for the screen's heap: larger merit first, then the
/// earlier tuple (deterministic under ties).
#[derive(Clone, Copy, PartialEq)]
struct Ranked {
    merit: f64,
    ordinal: u64,
}

impl Eq for Ranked {}

impl PartialOrd for Ranked {
    fn partial_cmp(&self, o: &Self) -> Option<std::cmp::Ordering> {
        Some(self.cmp(o))
    }
}

impl Ord for Ranked {
    /// "Greater" = better.
    fn cmp(&self, o: &Self) -> std::cmp::Ordering {
        self.merit
            .total_cmp(&o.merit)
            .then_with(|| o.ordinal.cmp(&self.ordinal))
    }
}

/// The fast tier over every admitted tuple: cards for the library (in parallel), then one
/// streaming pass keeping the best ⌈pass_fraction · admitted⌉ tuples in a bounded heap
/// (memory: the heap, not the library). Returns the kept ordinals as a bit set.
fn screen_select(
    en: &Enumerator,
    lib: &Library,
    sc: &ScreenStage,
    model: &crate::fast::FastModel,
    admitted: u64,
    opts: &RunOptions,
) -> Result<(Vec<u64>, ScreenSummary), CampaignError> {
    use std::cmp::Reverse;
    use std::collections::BinaryHeap;
    let t0 = Instant::now();
    // The shipped parameter set: the one the fast model was fitted with.
    let ppp = crate::pi::params::PppParams::default_set();
    // Dimers only for the donors and acceptors the enumeration can use (the shipped cache
    // covers the shipped library at the default settings; anything else is estimated here).
    let cache = crate::fast::pairs::PairCache::shipped();
    let set = crate::fast::CardSet::for_library_with(
        lib,
        &ppp,
        sc.temperature_k,
        &|i| en.admits_fragment(i),
        Some(&cache),
    )
    .ok_or_else(|| CampaignError::Other("screen: the phenyl probe scan failed".into()))?;
    let mut bound = model.bind(&set, sc.refractive_index, sc.temperature_k);
    if !sc.trees {
        bound.drop_trees();
    }
    if sc.refine_all {
        bound.refine_all();
    } else {
        bound.gate_for_pass(sc.pass_fraction);
    }
    let cards_s = t0.elapsed().as_secs_f64();
    let t1 = Instant::now();
    let keep = ((admitted as f64 * sc.pass_fraction).ceil() as u64).max(1) as usize;
    let mut heap: BinaryHeap<Reverse<(Ranked, bool)>> = BinaryHeap::with_capacity(keep + 1);
    let (mut scored, mut no_path, mut non_finite, mut ordinal) = (0u64, 0u64, 0u64, 0u64);
    if opts.progress != Progress::Quiet {
        eprintln!(
            "screen: fast tier over {admitted} admitted tuples, keeping the best {keep} by screen score (log10 k_TADF)"
        );
    }
    let mut screener = crate::fast::Screener::new(&bound, &set);
    en.for_each(|e| {
        let TupleEvent::Admitted(t) = e else {
            return ControlFlow::Continue(());
        };
        let o = ordinal;
        ordinal += 1;
        match screener.score(&t) {
            None => no_path += 1,
            // A prediction outside the model's range (S1 ≤ 0 gives no logarithm) is never
            // passed: NaN would otherwise order above every number.
            Some((merit, _)) if !merit.is_finite() => non_finite += 1,
            Some((merit, unseen)) => {
                scored += 1;
                let r = Ranked { merit, ordinal: o };
                if heap.len() < keep {
                    heap.push(Reverse((r, unseen)));
                } else if heap.peek().is_some_and(|w| r > w.0.0) {
                    heap.pop();
                    heap.push(Reverse((r, unseen)));
                }
            }
        }
        ControlFlow::Continue(())
    });
    let mut bits = vec![0u64; admitted.div_ceil(64) as usize];
    let mut threshold = f64::INFINITY;
    let mut unseen = 0;
    let passed = heap.len() as u64;
    for Reverse((r, u)) in heap {
        bits[(r.ordinal / 64) as usize] |= 1 << (r.ordinal % 64);
        threshold = threshold.min(r.merit);
        unseen += u as u64;
    }
    Ok((
        bits,
        ScreenSummary {
            scored,
            no_path,
            non_finite,
            passed,
            threshold_merit: threshold,
            passed_unseen_fragment: unseen,
            refined: screener.refined(),
            gate_score: bound.gate_score(),
            cards_s,
            scoring_s: t1.elapsed().as_secs_f64(),
        },
    ))
}

/// Assemble, canonicalise and describe one tuple.
fn build_row(lib: &Library, t: &Tuple) -> TupleRow {
    let cand = assemble(lib, t);
    let smiles = canonical_smiles(&cand.mol);
    let id = candidate_id(&smiles);
    let p = &cand.provenance;
    TupleRow {
        tuple_key: p.tuple_key.clone(),
        architecture: p.architecture.to_string(),
        fragments: p.fragments.join(","),
        candidate_id: id,
        formula: props::formula(&cand.mol),
        // Every fragment was weighed when the library loaded, so all its elements are tabulated.
        mol_weight: props::average_mass(&cand.mol).unwrap_or(f64::NAN),
        heavy_atoms: props::heavy_atom_count(&cand.mol),
        canonical_smiles: smiles,
    }
}

/// Progress display owned by the driver.
struct Reporter {
    label: &'static str,
    mode: Progress,
    bar: Option<indicatif::ProgressBar>,
    total: u64,
    done: std::cell::Cell<u64>,
    start: Instant,
    last: std::cell::Cell<Instant>,
}

impl Reporter {
    fn new(label: &'static str, mode: Progress, total: u64) -> Reporter {
        let bar = (mode == Progress::Bar).then(|| {
            let b = indicatif::ProgressBar::new(total);
            b.set_style(
                indicatif::ProgressStyle::with_template(&format!(
                    "{label} {{bar:40}} {{pos}}/{{len}} chunks  {{per_sec}}  ETA {{eta}}"
                ))
                .expect("valid template"),
            );
            b
        });
        Reporter {
            label,
            mode,
            bar,
            total,
            done: std::cell::Cell::new(0),
            start: Instant::now(),
            last: std::cell::Cell::new(Instant::now()),
        }
    }

    fn tick(&self) {
        self.done.set(self.done.get() + 1);
        match self.mode {
            Progress::Bar => {
                if let Some(b) = &self.bar {
                    b.inc(1);
                }
            }
            Progress::Lines => {
                if self.last.get().elapsed() >= Duration::from_secs(10) {
                    self.last.set(Instant::now());
                    let d = self.done.get();
                    let rate = d as f64 / self.start.elapsed().as_secs_f64().max(1e-9);
                    let eta = (self.total.saturating_sub(d)) as f64 / rate.max(1e-9);
                    eprintln!(
                        "{}: {d}/{} chunks, {rate:.1} chunks/s, ETA {eta:.0} s",
                        self.label, self.total
                    );
                }
            }
            Progress::Quiet => {}
        }
    }

    fn finish(&self) {
        if let Some(b) = &self.bar {
            b.finish_and_clear();
        }
    }
}

/// The π-tier estimate of every candidate in the store, chunk by chunk (resumable, shardable),
/// results keyed by (candidate, "estimate", parameter hash).
fn run_estimate(
    wf: &Workflow,
    stage: &super::workflow::EstimateStage,
    opts: &RunOptions,
) -> Result<EstimateSummary, CampaignError> {
    use crate::pi::estimate::{EstimateParams, estimate};
    use crate::pi::params::{DEFAULT_PARAMS, PppParams};
    let started = Instant::now();
    let params_text = match &stage.params {
        None => DEFAULT_PARAMS.to_string(),
        Some(p) => std::fs::read_to_string(p).map_err(|e| CampaignError::Workflow {
            path: wf.path.clone(),
            message: format!("estimate.params {}: {e}", p.display()),
        })?,
    };
    let ppp = PppParams::parse(&params_text).map_err(|e| CampaignError::Workflow {
        path: wf.path.clone(),
        message: format!("estimate.params: {e}"),
    })?;
    #[derive(Serialize)]
    struct Key<'a> {
        stage: &'static str,
        settings: &'a super::workflow::EstimateStage,
        ppp: String,
        chunk_size: usize,
        result_version: u32,
    }
    let key = serde_json::to_string(&Key {
        stage: "estimate",
        settings: stage,
        ppp: blake3::hash(params_text.as_bytes()).to_hex()[..16].to_string(),
        chunk_size: wf.chunk_size,
        result_version: ESTIMATE_RECORD_VERSION,
    })
    .expect("serialisable");
    let param_hash = blake3::hash(key.as_bytes()).to_hex()[..16].to_string();
    let mut store = Store::open_existing(&wf.store)?;
    let shard_label = opts
        .shard
        .map(|s| s.to_string())
        .unwrap_or_else(|| "1/1".into());
    store.record_run(&wf.path, &wf.text, &key, &shard_label)?;
    let size = wf.chunk_size as u64;
    let chunks_total = store.max_seq()?.div_ceil(size);
    store.set_stage_status("estimate", &param_hash, chunks_total, "{}")?;
    let done = store.done_chunks("estimate", &param_hash)?;
    let owned = |c: u64| opts.shard.is_none_or(|s| s.owns(c));
    let mine: Vec<u64> = (0..chunks_total).filter(|&c| owned(c)).collect();
    let todo: Vec<u64> = mine.iter().copied().filter(|c| !done.contains(c)).collect();
    let ep = EstimateParams {
        temperature_k: stage.temperature_k,
        twist_deg: stage.twist_deg,
        scan_step_deg: stage.scan_step_deg,
        n_states: stage.n_states,
        ..EstimateParams::default()
    };
    let progress = Reporter::new("estimate", opts.progress, todo.len() as u64);
    let (mut ok, mut failed, mut written) = (0u64, 0u64, 0u64);
    for &c in &todo {
        // Candidates are numbered from 1.
        let rows = store.candidates_in(1 + c * size, 1 + (c + 1) * size)?;
        let results: Vec<(String, String, bool)> = rows
            .par_iter()
            .map(|(id, smiles)| {
                let out = crate::chem::parse_smiles(smiles)
                    .map_err(|e| format!("SMILES: {e}"))
                    .and_then(|m| estimate(&m, &ppp, &ep).map_err(|e| e.to_string()));
                match out {
                    Ok(est) => (
                        id.clone(),
                        estimate_record(&est, &stage.rates, &stage.band),
                        true,
                    ),
                    Err(e) => (
                        id.clone(),
                        serde_json::json!({ "version": ESTIMATE_RECORD_VERSION, "error": e })
                            .to_string(),
                        false,
                    ),
                }
            })
            .collect();
        ok += results.iter().filter(|r| r.2).count() as u64;
        failed += results.iter().filter(|r| !r.2).count() as u64;
        let pairs: Vec<(String, String)> = results.into_iter().map(|(a, b, _)| (a, b)).collect();
        store.write_results("estimate", &param_hash, c, &pairs)?;
        written += 1;
        progress.tick();
    }
    progress.finish();
    Ok(EstimateSummary {
        chunks_total,
        chunks_this_shard: mine.len() as u64,
        chunks_skipped_done: (mine.len() - todo.len()) as u64,
        chunks_written: written,
        candidates_ok: ok,
        candidates_failed: failed,
        elapsed_s: started.elapsed().as_secs_f64(),
    })
}

/// Version of the stored estimate record; part of the stage's parameter hash, so a store
/// holding older records recomputes instead of mixing layouts (2: raw values, ³LE gaps,
/// states, per-angle samples, validation and flags; 3: photophysics with default rate and
/// band settings; 4: effective rates dilute the S1/T1 pair by its Boltzmann share of the
/// thermalised manifold; later additions that do not change a field's meaning, such as the S1
/// hole/electron populations per atom, keep the version).
pub const ESTIMATE_RECORD_VERSION: u32 = 4;

/// The stored record of one estimate (field names carry units).
fn estimate_record(
    e: &crate::pi::estimate::Estimate,
    rates: &crate::photophysics::RateParams,
    band: &crate::photophysics::BandParams,
) -> String {
    let s1 = e.singlets.first();
    let t1 = e.triplets.first();
    let states = |v: &[crate::pi::estimate::StateInfo]| -> Vec<serde_json::Value> {
        v.iter()
            .map(|s| {
                serde_json::json!({
                    "energy_ev": s.energy_ev,
                    "osc_strength": s.osc_strength,
                    "ct_number": s.ct_number,
                    "label": s.label,
                })
            })
            .collect()
    };
    serde_json::json!({
        "version": ESTIMATE_RECORD_VERSION,
        "s1_ev": e.s1_ev,
        "t1_ev": e.t1_ev,
        "delta_est_ev": e.delta_est_ev,
        "osc_strength": e.f_s1,
        "avg_s1_ev": e.avg_s1_ev,
        "avg_t1_ev": e.avg_t1_ev,
        "avg_delta_est_ev": e.avg_delta_est_ev,
        "avg_osc_strength": e.avg_f_s1,
        "raw_s1_ev": e.raw_s1_ev,
        "raw_t1_ev": e.raw_t1_ev,
        "lowest_3le_ev": e.lowest_3le_ev,
        "s1_minus_3le_ev": e.s1_minus_3le_ev,
        "homo_ev": e.homo_ev,
        "lumo_ev": e.lumo_ev,
        "homo_lumo_overlap": e.homo_lumo_overlap,
        "twists_deg": e.twists_deg,
        "s1_label": s1.map(|s| s.label),
        "s1_ct_number": s1.map(|s| s.ct_number),
        "t1_label": t1.map(|s| s.label),
        "t1_ct_number": t1.map(|s| s.ct_number),
        "singlets": states(&e.singlets),
        "triplets": states(&e.triplets),
        "angle_samples": e.angle_samples,
        // Torsion energy scan of each link (θ/°, E/kJ mol⁻¹, Boltzmann weight): report curves.
        "links": e.links,
        // Equilibrium-twist heavy-atom coordinates (Å, 3 decimals, SMILES atom order).
        "geometry": e.geometry.iter().map(|p| p.map(|c| (c * 1e3).round() / 1e3)).collect::<Vec<_>>(),
        // Per atom (molecule order, hydrogens implicit), 4 decimals: for structure drawings.
        "s1_hole_by_atom": e.s1_hole_by_atom.iter().map(|x| (x * 1e4).round() / 1e4).collect::<Vec<_>>(),
        "s1_electron_by_atom": e.s1_electron_by_atom.iter().map(|x| (x * 1e4).round() / 1e4).collect::<Vec<_>>(),
        "unvalidated": e.unvalidated,
        "flags": e.flags,
        "parameters": e.parameters,
        "photophysics": crate::photophysics::assess(e, rates, band),
    })
    .to_string()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn floyd_sample_picks_exactly_k_distinct_values_reproducibly() {
        for (n, k) in [
            (10u64, 10u64),
            (1000, 1),
            (1000, 333),
            (100_000, 5000),
            (7, 20),
        ] {
            let a = floyd_sample(n, k, 42);
            let count: u64 = a.iter().map(|w| w.count_ones() as u64).sum();
            assert_eq!(count, k.min(n));
            assert_eq!(a, floyd_sample(n, k, 42), "same seed, same sample");
            if k < n && k > 0 {
                assert_ne!(a, floyd_sample(n, k, 43), "another seed, another sample");
            }
            // Nothing beyond n.
            for x in n..(a.len() as u64 * 64) {
                assert_eq!(a[(x / 64) as usize] >> (x % 64) & 1, 0);
            }
        }
        // Roughly uniform: each half of 0..10^5 gets about half of a 10^4 sample.
        let s = floyd_sample(100_000, 10_000, 7);
        let low: u64 = (0..50_000u64)
            .filter(|&x| s[(x / 64) as usize] >> (x % 64) & 1 == 1)
            .count() as u64;
        assert!((4_700..=5_300).contains(&low), "{low}");
    }
}
