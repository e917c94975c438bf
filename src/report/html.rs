//! The campaign report: one self-contained HTML file (no network: inline SVG figures, inline
//! CSS and a small inline script for sorting the table), plus the shortlist as CSV and JSON.
//!
//! Pure: [`ReportData`] in, text out; `campaign`/`main` gather the data and write the files.
//! The page records any script error in `data-script-errors` on the `<html>` element, so a
//! headless browser test can read it from the rendered DOM.

use serde::Serialize;

use super::figures::{self, Drawing, FigurePoint, TargetMark};

/// One candidate row of the report.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ReportRow {
    pub candidate_id: String,
    /// A reference emitter's name, or empty.
    pub name: String,
    pub canonical_smiles: String,
    pub s1_ev: f64,
    pub t1_ev: f64,
    pub delta_est_ev: f64,
    pub osc_strength: f64,
    /// Calibrated values with 90 % intervals, when a calibration exists.
    pub calibrated: Option<CalibratedView>,
    pub log10_k_risc: f64,
    pub cie_x: f64,
    pub cie_y: f64,
    pub peak_nm: f64,
    /// Desirability score in [0, 1].
    pub score: f64,
    /// Pareto front number (1 = non-dominated), 0 when filtered out.
    pub front: usize,
    pub shortlisted: bool,
    pub reference: bool,
    /// Reason codes of failed filters.
    pub rejected: Vec<String>,
    /// Synthesis effort score and the couplings (e.g. `Buchwald–Hartwig ×2`).
    pub effort: Option<f64>,
    pub couplings: String,
    pub flags: Vec<String>,
}

/// Calibrated values (value, low, high) of S1, ΔEST and f.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct CalibratedView {
    pub s1_ev: (f64, f64, f64),
    pub delta_est_ev: (f64, f64, f64),
    pub osc_strength: (f64, f64, f64),
    pub out_of_domain: bool,
}

/// The in-depth part for one shortlisted candidate.
#[derive(Debug, Clone, PartialEq)]
pub struct ShortlistDetail {
    pub candidate_id: String,
    pub title: String,
    pub torsion: Vec<Vec<(f64, f64)>>,
    pub drawing: Option<Drawing>,
    /// Why it was picked, and the synthesis notes with their cautions.
    pub notes: Vec<String>,
}

/// Everything the page shows.
#[derive(Debug, Clone, PartialEq)]
pub struct ReportData {
    pub title: String,
    /// Lines such as "lumisift 0.1.0", "PPP parameters: …", "store: …".
    pub provenance: Vec<String>,
    /// (name, value) of every setting used (filters, weights, rates, band, calibration).
    pub parameters: Vec<(String, String)>,
    pub target: Option<TargetMark>,
    pub rows: Vec<ReportRow>,
    pub shortlist: Vec<ShortlistDetail>,
    /// Safety cautions, always shown.
    pub cautions: Vec<String>,
    /// Shown at the top when the data is invented (the demo).
    pub banner: Option<String>,
}

/// HTML-escape text.
pub fn esc(s: &str) -> String {
    s.replace('&', "&amp;")
        .replace('<', "&lt;")
        .replace('>', "&gt;")
        .replace('"', "&quot;")
}

fn num(x: f64, digits: usize) -> String {
    if x.is_finite() {
        format!("{x:.digits$}")
    } else {
        "–".into()
    }
}

const STYLE: &str = "body{font-family:sans-serif;margin:1.5em;max-width:1200px;color:#222}\
h1{font-size:1.5em}h2{font-size:1.2em;margin-top:1.6em}\
.banner{background:#fff3cd;border:1px solid #e0c060;padding:.6em}\
.cautions{background:#fbe9e7;border:1px solid #d08070;padding:.6em}\
table{border-collapse:collapse;font-size:.85em}th,td{border:1px solid #ccc;padding:2px 6px}\
th{cursor:pointer;background:#eee}tr.short{background:#e8f4ff}tr.ref{background:#f2f2f2}\
.figs{display:flex;flex-wrap:wrap;gap:1em}.detail{border-top:1px solid #ccc;margin-top:1em}\
code{font-size:.9em}";

/// Sorting by column on header click; errors recorded for tests.
const SCRIPT: &str = "window.addEventListener('error',function(e){var h=document.documentElement;\
h.dataset.scriptErrors=(h.dataset.scriptErrors||'')+e.message+';';});\
document.addEventListener('DOMContentLoaded',function(){\
var t=document.getElementById('candidates');if(!t)return;\
var ths=t.querySelectorAll('th');ths.forEach(function(th,i){th.addEventListener('click',function(){\
var b=t.tBodies[0];var rows=Array.prototype.slice.call(b.rows);var asc=th.dataset.dir!=='asc';\
th.dataset.dir=asc?'asc':'desc';rows.sort(function(a,c){var x=a.cells[i].dataset.v||a.cells[i].textContent;\
var y=c.cells[i].dataset.v||c.cells[i].textContent;var nx=parseFloat(x),ny=parseFloat(y);\
var r=(!isNaN(nx)&&!isNaN(ny))?nx-ny:x.localeCompare(y);return asc?r:-r;});\
rows.forEach(function(r){b.appendChild(r);});});});\
document.documentElement.dataset.ready='1';});";

/// The table of candidates (the non-graphical core of the page; golden-tested).
pub fn table_html(rows: &[ReportRow]) -> String {
    let mut s = String::from(
        "<table id=\"candidates\"><thead><tr><th>#</th><th>candidate</th><th>SMILES</th>\
         <th>S1/eV</th><th>T1/eV</th><th>ΔEST/eV</th><th>f</th><th>calibrated S1 [90 %]</th>\
         <th>log10 k_RISC</th><th>x</th><th>y</th><th>peak/nm</th><th>score</th><th>front</th>\
         <th>effort</th><th>couplings</th><th>status</th></tr></thead><tbody>\n",
    );
    for (k, r) in rows.iter().enumerate() {
        let class = if r.reference {
            " class=\"ref\""
        } else if r.shortlisted {
            " class=\"short\""
        } else {
            ""
        };
        let who = if r.name.is_empty() {
            format!(
                "<code>{}</code>",
                esc(&r.candidate_id[..r.candidate_id.len().min(12)])
            )
        } else {
            esc(&r.name)
        };
        let cal = r.calibrated.as_ref().map_or("–".to_string(), |c| {
            format!(
                "{} [{}, {}]{}",
                num(c.s1_ev.0, 2),
                num(c.s1_ev.1, 2),
                num(c.s1_ev.2, 2),
                if c.out_of_domain {
                    " (outside domain)"
                } else {
                    ""
                }
            )
        });
        let status = if r.reference {
            "reference".to_string()
        } else if r.shortlisted {
            "shortlisted".to_string()
        } else if !r.rejected.is_empty() {
            format!("rejected: {}", r.rejected.join(", "))
        } else {
            "passed".to_string()
        };
        s.push_str(&format!(
            "<tr{class}><td>{}</td><td>{who}</td><td><code>{}</code></td><td>{}</td><td>{}</td>\
             <td>{}</td><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td>{}</td>\
             <td>{}</td><td>{}</td><td>{}</td><td>{}</td><td>{}</td></tr>\n",
            k + 1,
            esc(&r.canonical_smiles),
            num(r.s1_ev, 3),
            num(r.t1_ev, 3),
            num(r.delta_est_ev, 3),
            num(r.osc_strength, 4),
            esc(&cal),
            num(r.log10_k_risc, 2),
            num(r.cie_x, 3),
            num(r.cie_y, 3),
            num(r.peak_nm, 0),
            num(r.score, 3),
            if r.front == 0 {
                "–".into()
            } else {
                r.front.to_string()
            },
            r.effort.map_or("–".into(), |e| num(e, 1)),
            esc(&r.couplings),
            esc(&status),
        ));
    }
    s.push_str("</tbody></table>\n");
    s
}

/// The parameters and provenance section (golden-tested).
pub fn parameters_html(d: &ReportData) -> String {
    let mut s = String::from("<h2 id=\"parameters\">Parameters and versions</h2>\n<ul>\n");
    for p in &d.provenance {
        s.push_str(&format!("<li>{}</li>\n", esc(p)));
    }
    s.push_str("</ul>\n<table id=\"settings\"><tbody>\n");
    for (k, v) in &d.parameters {
        s.push_str(&format!(
            "<tr><td>{}</td><td><code>{}</code></td></tr>\n",
            esc(k),
            esc(v)
        ));
    }
    s.push_str("</tbody></table>\n");
    s
}

fn points(rows: &[ReportRow], xy: impl Fn(&ReportRow) -> (f64, f64)) -> Vec<FigurePoint> {
    rows.iter()
        .map(|r| {
            let (x, y) = xy(r);
            FigurePoint {
                label: if r.name.is_empty() {
                    r.candidate_id.chars().take(6).collect()
                } else {
                    r.name.clone()
                },
                x,
                y,
                delta_est_ev: r.delta_est_ev,
                shortlisted: r.shortlisted,
                reference: r.reference,
            }
        })
        .collect()
}

/// The whole page.
pub fn page(d: &ReportData) -> Result<String, String> {
    let cie = figures::cie_diagram(&points(&d.rows, |r| (r.cie_x, r.cie_y)), d.target.as_ref())?;
    let front: Vec<usize> = d
        .rows
        .iter()
        .enumerate()
        .filter(|(_, r)| r.front == 1)
        .map(|(i, _)| i)
        .collect();
    let scatter = figures::dest_vs_f(
        &points(&d.rows, |r| (r.delta_est_ev, r.osc_strength)),
        &front,
    )?;
    let mut s = String::with_capacity(1 << 20);
    s.push_str(&format!(
        "<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\"><title>{}</title>\
         <style>{STYLE}</style><script>{SCRIPT}</script></head><body>\n<h1>{}</h1>\n",
        esc(&d.title),
        esc(&d.title)
    ));
    if let Some(b) = &d.banner {
        s.push_str(&format!("<p class=\"banner\">{}</p>\n", esc(b)));
    }
    s.push_str("<div class=\"cautions\" id=\"cautions\"><strong>Cautions</strong><ul>\n");
    for c in &d.cautions {
        s.push_str(&format!("<li>{}</li>\n", esc(c)));
    }
    s.push_str("</ul></div>\n");
    let n_short = d.rows.iter().filter(|r| r.shortlisted).count();
    s.push_str(&format!(
        "<p>{} candidates, {} shortlisted, {} reference emitters. Values are estimates of \
         this tool's π model unless marked calibrated.</p>\n",
        d.rows.iter().filter(|r| !r.reference).count(),
        n_short,
        d.rows.iter().filter(|r| r.reference).count()
    ));
    s.push_str("<h2>Figures</h2>\n<div class=\"figs\">\n<figure id=\"fig-cie\">");
    s.push_str(&cie);
    s.push_str(
        "<figcaption>Emission colour (CIE 1931 x, y); dots coloured by ΔEST (blue small, red \
         large), shortlisted ringed, references as squares.</figcaption></figure>\n\
         <figure id=\"fig-pareto\">",
    );
    s.push_str(&scatter);
    s.push_str(
        "<figcaption>ΔEST against f; the line joins the first Pareto front.</figcaption>\
         </figure>\n</div>\n",
    );
    s.push_str("<h2>Shortlist</h2>\n");
    for (k, det) in d.shortlist.iter().enumerate() {
        s.push_str(&format!(
            "<div class=\"detail\" id=\"short-{}\"><h3>{}. {}</h3><div class=\"figs\">",
            k + 1,
            k + 1,
            esc(&det.title)
        ));
        if let Some(dr) = &det.drawing {
            s.push_str("<figure class=\"structure\">");
            s.push_str(&figures::structure(
                "S1 hole (blue) and electron (orange)",
                dr,
            )?);
            s.push_str("</figure>");
        }
        if !det.torsion.is_empty() {
            s.push_str("<figure class=\"torsion\">");
            s.push_str(&figures::torsion_curves(
                "torsion energy per link",
                &det.torsion,
            )?);
            s.push_str("</figure>");
        }
        s.push_str("</div><ul>");
        for n in &det.notes {
            s.push_str(&format!("<li>{}</li>", esc(n)));
        }
        s.push_str("</ul></div>\n");
    }
    s.push_str("<h2>All candidates</h2>\n<p>Click a column header to sort.</p>\n");
    s.push_str(&table_html(&d.rows));
    s.push_str(&parameters_html(d));
    s.push_str("</body></html>\n");
    Ok(s)
}
