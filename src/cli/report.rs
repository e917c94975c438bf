//! `report STORE`: shortlist and report from an existing store, with a workflow's settings or
//! the defaults.

use std::path::{Path, PathBuf};
use std::process::ExitCode;

use lumisift::campaign::report_stage::{
    ReportSettings, read_references, report_data, write_report,
};
use lumisift::campaign::shortlist::{ShortlistSettings, shortlist};
use lumisift::campaign::store::Store;

use super::fail;

/// Options of `report`.
#[derive(clap::Args)]
pub struct ReportArgs {
    pub store: PathBuf,
    /// Take the [shortlist] and [report] settings and the fragment library from this
    /// workflow (default: built-in defaults and --fragments).
    #[arg(long)]
    pub workflow: Option<PathBuf>,
    /// Fragment library folders or files (for the synthesis plans) when no workflow is given.
    #[arg(long, default_value = "fragments")]
    pub fragments: Vec<PathBuf>,
    /// Output folder (default: the workflow's, or `report/` beside the store).
    #[arg(long)]
    pub out: Option<PathBuf>,
    /// Reference emitters CSV (name,smiles[,measured_delta_est_ev,measured_pl_peak_nm]).
    #[arg(long)]
    pub references: Option<PathBuf>,
    /// Page title.
    #[arg(long)]
    pub title: Option<String>,
}

pub fn report_cmd(a: &ReportArgs) -> ExitCode {
    let (settings, mut rs, fragments) = match &a.workflow {
        Some(p) => match lumisift::campaign::Workflow::load(p) {
            Ok(wf) => (
                wf.shortlist.clone().unwrap_or_default(),
                wf.report.clone().unwrap_or_default(),
                wf.fragments.clone(),
            ),
            Err(e) => return fail(e),
        },
        None => (
            ShortlistSettings::default(),
            ReportSettings::default(),
            a.fragments.clone(),
        ),
    };
    if let Some(o) = &a.out {
        rs.out_dir = o.clone();
    } else if a.workflow.is_none() {
        rs.out_dir = a.store.parent().unwrap_or(Path::new(".")).join("report");
    }
    if let Some(r) = &a.references {
        rs.references = Some(r.clone());
    }
    if let Some(t) = &a.title {
        rs.title = t.clone();
    }
    let lib = match lumisift::fragments::load_paths(&fragments) {
        Ok(l) => l,
        Err(errs) => {
            return fail(format!(
                "fragment library ({}): {} problem(s), first: {}; give --fragments DIR or --workflow FILE",
                fragments
                    .iter()
                    .map(|p| p.display().to_string())
                    .collect::<Vec<_>>()
                    .join(", "),
                errs.len(),
                errs.first().map_or(String::new(), |e| e.to_string())
            ));
        }
    };
    let mut st = match Store::open_existing(&a.store) {
        Ok(s) => s,
        Err(e) => return fail(e),
    };
    let out = match shortlist(&mut st, &lib, &settings) {
        Ok(o) => o,
        Err(e) => return fail(e),
    };
    let refs = match &rs.references {
        Some(p) => match read_references(p) {
            Ok(r) => r,
            Err(e) => return fail(e),
        },
        None => Vec::new(),
    };
    let provenance = vec![
        format!("lumisift {}", env!("CARGO_PKG_VERSION")),
        format!("store {}", a.store.display()),
        match &a.workflow {
            Some(w) => format!("settings from {}", w.display()),
            None => "default shortlist settings".into(),
        },
    ];
    let data = match report_data(&out, &settings, &rs, &refs, provenance) {
        Ok(d) => d,
        Err(e) => return fail(e),
    };
    match write_report(&rs.out_dir, &data, &out) {
        Ok(files) => {
            eprintln!(
                "{} ranked, {} passed the filters, {} shortlisted",
                out.rows.len(),
                out.ranking.order.len(),
                out.picks.len()
            );
            for f in files {
                eprintln!("wrote {}", f.display());
            }
            eprintln!("{}", lumisift::campaign::report_stage::SAFETY_NOTICE);
            ExitCode::SUCCESS
        }
        Err(e) => fail(e),
    }
}
