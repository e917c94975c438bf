//! The report's figures as inline SVG, drawn with the `plotters` crate: the CIE 1931
//! chromaticity diagram, ΔEST against oscillator strength with the Pareto front, torsion
//! curves, and 2D structure drawings with the S1 hole and electron populations.
//!
//! Pure: values in, SVG text out. Colours are this tool's own choices: ΔEST on a
//! blue (small) to red (large) ramp, hole populations blue, electron populations orange.

use plotters::prelude::*;

/// One point of a scatter figure.
#[derive(Debug, Clone, PartialEq)]
pub struct FigurePoint {
    pub label: String,
    pub x: f64,
    pub y: f64,
    /// ΔEST (eV) for the colour ramp.
    pub delta_est_ev: f64,
    pub shortlisted: bool,
    /// A reference emitter (drawn as an open black square, labelled).
    pub reference: bool,
}

/// A colour target on the CIE diagram: name, (x, y) and a radius drawn in xy.
#[derive(Debug, Clone, PartialEq)]
pub struct TargetMark {
    pub name: String,
    pub xy: (f64, f64),
    pub radius_xy: f64,
}

/// ΔEST colour ramp over [0, 0.5] eV: blue → red.
fn dest_colour(d: f64) -> RGBColor {
    let t = (d / 0.5).clamp(0.0, 1.0);
    RGBColor(
        (40.0 + 200.0 * t) as u8,
        (90.0 + 40.0 * (1.0 - (2.0 * t - 1.0).abs())) as u8,
        (230.0 - 190.0 * t) as u8,
    )
}

/// Draw into a string; plotters errors become `String`s.
fn svg(
    size: (u32, u32),
    draw: impl FnOnce(&DrawingArea<SVGBackend, plotters::coord::Shift>) -> Result<(), String>,
) -> Result<String, String> {
    let mut s = String::new();
    {
        let root = SVGBackend::with_string(&mut s, size).into_drawing_area();
        root.fill(&WHITE).map_err(|e| e.to_string())?;
        draw(&root)?;
        root.present().map_err(|e| e.to_string())?;
    }
    Ok(s)
}

fn e2s<E: std::fmt::Display>(e: E) -> String {
    e.to_string()
}

/// The CIE 1931 xy diagram: spectral locus 380–700 nm closed by the purple line, Planckian
/// white not drawn; candidates coloured by ΔEST, shortlisted ones ringed, references as
/// squares; the target with its tolerance circle.
pub fn cie_diagram(points: &[FigurePoint], target: Option<&TargetMark>) -> Result<String, String> {
    svg((520, 520), |root| {
        let mut c = ChartBuilder::on(root)
            .caption("CIE 1931 chromaticity (2° observer)", ("sans-serif", 16))
            .margin(12)
            .x_label_area_size(36)
            .y_label_area_size(44)
            .build_cartesian_2d(0.0f64..0.8, 0.0f64..0.9)
            .map_err(e2s)?;
        c.configure_mesh()
            .x_desc("x")
            .y_desc("y")
            .light_line_style(WHITE)
            .draw()
            .map_err(e2s)?;
        let mut locus: Vec<(f64, f64)> = (380..=700)
            .map(|nm| crate::colour::spectral_locus(nm as f64))
            .collect();
        locus.push(locus[0]);
        c.draw_series(LineSeries::new(locus, BLACK.stroke_width(2)))
            .map_err(e2s)?;
        for nm in [450, 470, 490, 510, 530, 560, 600, 650] {
            let (x, y) = crate::colour::spectral_locus(nm as f64);
            c.draw_series(std::iter::once(Text::new(
                format!("{nm}"),
                (x + 0.01, y),
                ("sans-serif", 11).into_font().color(&BLACK.mix(0.7)),
            )))
            .map_err(e2s)?;
        }
        if let Some(t) = target {
            let ring: Vec<(f64, f64)> = (0..=48)
                .map(|k| {
                    let a = k as f64 / 48.0 * std::f64::consts::TAU;
                    (
                        t.xy.0 + t.radius_xy * a.cos(),
                        t.xy.1 + t.radius_xy * a.sin(),
                    )
                })
                .collect();
            c.draw_series(LineSeries::new(ring, BLACK.stroke_width(1)))
                .map_err(e2s)?;
            c.draw_series(std::iter::once(Cross::new(t.xy, 6, BLACK.stroke_width(2))))
                .map_err(e2s)?;
            c.draw_series(std::iter::once(Text::new(
                format!("target {}", t.name),
                (t.xy.0 + 0.015, t.xy.1 - 0.02),
                ("sans-serif", 12),
            )))
            .map_err(e2s)?;
        }
        scatter(&mut c, points)?;
        Ok(())
    })
}

fn scatter<DB: DrawingBackend>(
    c: &mut ChartContext<
        DB,
        Cartesian2d<plotters::coord::types::RangedCoordf64, plotters::coord::types::RangedCoordf64>,
    >,
    points: &[FigurePoint],
) -> Result<(), String>
where
    DB::ErrorType: 'static,
{
    c.draw_series(
        points
            .iter()
            .filter(|p| !p.reference && p.x.is_finite() && p.y.is_finite())
            .map(|p| Circle::new((p.x, p.y), 3, dest_colour(p.delta_est_ev).filled())),
    )
    .map_err(e2s)?;
    c.draw_series(
        points
            .iter()
            .filter(|p| p.shortlisted && p.x.is_finite() && p.y.is_finite())
            .map(|p| Circle::new((p.x, p.y), 7, BLACK.stroke_width(2))),
    )
    .map_err(e2s)?;
    for p in points
        .iter()
        .filter(|p| p.reference && p.x.is_finite() && p.y.is_finite())
    {
        c.draw_series(std::iter::once(
            EmptyElement::at((p.x, p.y))
                + Rectangle::new([(-5, -5), (5, 5)], BLACK.stroke_width(2))
                + Text::new(p.label.clone(), (8, -6), ("sans-serif", 11)),
        ))
        .map_err(e2s)?;
    }
    Ok(())
}

/// ΔEST (x, eV) against oscillator strength (y, log scale) with the Pareto front (larger f,
/// smaller ΔEST) drawn as a step line through `front` (indices into `points`).
pub fn dest_vs_f(points: &[FigurePoint], front: &[usize]) -> Result<String, String> {
    let xmax = points
        .iter()
        .map(|p| p.x)
        .filter(|x| x.is_finite())
        .fold(0.1, f64::max)
        * 1.05;
    svg((560, 420), |root| {
        let mut c = ChartBuilder::on(root)
            .caption("ΔEST against oscillator strength", ("sans-serif", 16))
            .margin(12)
            .x_label_area_size(36)
            .y_label_area_size(54)
            .build_cartesian_2d(0.0f64..xmax, -5.0f64..0.5)
            .map_err(e2s)?;
        c.configure_mesh()
            .x_desc("ΔEST / eV")
            .y_desc("log10 f")
            .draw()
            .map_err(e2s)?;
        let logged: Vec<FigurePoint> = points
            .iter()
            .map(|p| FigurePoint {
                y: (p.y.max(1e-5)).log10(),
                ..p.clone()
            })
            .collect();
        let mut fr: Vec<(f64, f64)> = front
            .iter()
            .filter_map(|&i| logged.get(i).map(|p| (p.x, p.y)))
            .collect();
        fr.sort_by(|a, b| a.0.total_cmp(&b.0));
        c.draw_series(LineSeries::new(fr, BLACK.mix(0.6).stroke_width(2)))
            .map_err(e2s)?;
        scatter(&mut c, &logged)?;
        Ok(())
    })
}

/// Torsion energy curves (kJ/mol against degrees), one line per link.
pub fn torsion_curves(title: &str, curves: &[Vec<(f64, f64)>]) -> Result<String, String> {
    let ymax = curves
        .iter()
        .flatten()
        .map(|p| p.1)
        .filter(|y| y.is_finite())
        .fold(5.0, f64::max)
        .min(200.0);
    svg((360, 240), |root| {
        let mut c = ChartBuilder::on(root)
            .caption(title, ("sans-serif", 13))
            .margin(8)
            .x_label_area_size(30)
            .y_label_area_size(44)
            .build_cartesian_2d(0.0f64..180.0, 0.0f64..ymax)
            .map_err(e2s)?;
        c.configure_mesh()
            .x_desc("twist / °")
            .y_desc("E / kJ mol⁻¹")
            .draw()
            .map_err(e2s)?;
        let palette = [BLUE, RED, GREEN, MAGENTA, CYAN, BLACK];
        for (k, curve) in curves.iter().enumerate() {
            let pts: Vec<(f64, f64)> = curve
                .iter()
                .copied()
                .filter(|p| p.1.is_finite())
                .map(|(x, y)| (x, y.min(ymax)))
                .collect();
            c.draw_series(LineSeries::new(
                pts,
                palette[k % palette.len()].stroke_width(2),
            ))
            .map_err(e2s)?;
        }
        Ok(())
    })
}

/// A 2D structure drawing: atoms at (x, y) Å, bonds with their order (1, 2, 3; aromatic
/// drawn from the Kekulé orders given), heteroatom symbols, and per-atom S1 hole (blue) and
/// electron (orange) populations as translucent discs, area ∝ population.
#[derive(Debug, Clone, PartialEq)]
pub struct Drawing {
    pub atoms: Vec<(String, f64, f64)>,
    pub bonds: Vec<(usize, usize, u8)>,
    pub hole: Vec<f64>,
    pub electron: Vec<f64>,
}

pub fn structure(title: &str, d: &Drawing) -> Result<String, String> {
    if d.atoms.is_empty() {
        return Err("no atoms to draw".into());
    }
    let (mut x0, mut x1, mut y0, mut y1) = (f64::MAX, f64::MIN, f64::MAX, f64::MIN);
    for a in &d.atoms {
        x0 = x0.min(a.1);
        x1 = x1.max(a.1);
        y0 = y0.min(a.2);
        y1 = y1.max(a.2);
    }
    let span = (x1 - x0).max(y1 - y0).max(1.0) + 2.0;
    let (cx, cy) = ((x0 + x1) / 2.0, (y0 + y1) / 2.0);
    let px = 360u32;
    let scale = px as f64 / span;
    svg((px, px + 20), |root| {
        let (_, area) = root.split_vertically(20);
        root.draw(&Text::new(title.to_string(), (6, 4), ("sans-serif", 12)))
            .map_err(e2s)?;
        let to = |x: f64, y: f64| -> (i32, i32) {
            (
                ((x - cx) * scale + px as f64 / 2.0) as i32,
                (-(y - cy) * scale + px as f64 / 2.0) as i32,
            )
        };
        for (pop, colour) in [
            (&d.hole, RGBColor(40, 100, 230)),
            (&d.electron, RGBColor(240, 140, 20)),
        ] {
            for (k, a) in d.atoms.iter().enumerate() {
                let p = pop.get(k).copied().unwrap_or(0.0);
                if p > 0.005 {
                    let r = (p.sqrt() * scale * 1.6) as i32;
                    area.draw(&Circle::new(
                        to(a.1, a.2),
                        r.max(2),
                        colour.mix(0.45).filled(),
                    ))
                    .map_err(e2s)?;
                }
            }
        }
        for &(i, j, order) in &d.bonds {
            let (a, b) = (&d.atoms[i], &d.atoms[j]);
            let (p, q) = (to(a.1, a.2), to(b.1, b.2));
            let (dx, dy) = ((q.0 - p.0) as f64, (q.1 - p.1) as f64);
            let len = (dx * dx + dy * dy).sqrt().max(1.0);
            let (nx, ny) = (-dy / len * 3.0, dx / len * 3.0);
            let offsets: &[f64] = match order {
                2 => &[-1.0, 1.0],
                3 => &[-1.5, 0.0, 1.5],
                _ => &[0.0],
            };
            for o in offsets {
                let (ox, oy) = ((nx * o) as i32, (ny * o) as i32);
                area.draw(&PathElement::new(
                    vec![(p.0 + ox, p.1 + oy), (q.0 + ox, q.1 + oy)],
                    BLACK.stroke_width(2),
                ))
                .map_err(e2s)?;
            }
        }
        for a in &d.atoms {
            if a.0 != "C" {
                let (x, y) = to(a.1, a.2);
                area.draw(&Circle::new((x, y), 8, WHITE.filled()))
                    .map_err(e2s)?;
                area.draw(&Text::new(
                    a.0.clone(),
                    (x - 4 * a.0.len() as i32, y - 7),
                    ("sans-serif", 14).into_font().color(&BLACK),
                ))
                .map_err(e2s)?;
            }
        }
        Ok(())
    })
}

impl Drawing {
    /// The drawing of a SMILES in the geometry stage's 2D layout (x, y of its coordinates;
    /// atoms in parse order, as the estimate stage numbers them), with per-atom populations
    /// (empty slices draw none).
    pub fn from_smiles(smiles: &str, hole: &[f64], electron: &[f64]) -> Result<Drawing, String> {
        let mol = crate::chem::parse_smiles(smiles).map_err(|e| format!("{smiles}: {e}"))?;
        let c = crate::geometry::layout(&mol);
        let atoms = mol
            .atoms()
            .map(|a| {
                let p = c.points[a.index()];
                (mol.atom(a).symbol().to_string(), p[0], p[1])
            })
            .collect();
        let bonds = mol
            .graph
            .edge_indices()
            .filter_map(|e| {
                let (a, b) = mol.graph.edge_endpoints(e)?;
                Some((a.index(), b.index(), mol.bond(e).order as u8))
            })
            .collect();
        Ok(Drawing {
            atoms,
            bonds,
            hole: hole.to_vec(),
            electron: electron.to_vec(),
        })
    }
}
