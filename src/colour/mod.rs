//! Colour of an emission: CIE 1931 chromaticity (x, y), CIE 1976 UCS (u′, v′), peak and
//! dominant wavelength, excitation purity, and the distance to a colour target.
//!
//! Pure functions; the colour-matching functions are a data table shipped with the crate
//! (`data/cie1931-2deg.csv`: the CIE 1931 2° standard observer as standardised in ISO/CIE
//! 11664-1:2019 and CIE 015:2018 *Colorimetry*; CIE dataset doi:10.25039/CIE.DS.xvudnb9b;
//! 360–830 nm at 1 nm, as tabulated in colour-science 0.4.7; generating script
//! `tests/fixtures/colour/make_colour_fixture.py`).
//!
//! Conventions: a [`Spectrum`] holds spectral *power* per nm (what CIE integration needs). A
//! spectrum given in photon counts per nm is multiplied by hc/λ on the way in. A band is a
//! Gaussian in photon energy (photon counts per eV) with a peak and a FWHM, turned into power per
//! nm by P(λ) = N(E)·E·|dE/dλ|, E = hc/λ. Self-luminous: no illuminant enters X, Y, Z.
//!
//! Formulas: x = X/(X+Y+Z), y = Y/(X+Y+Z) (CIE 015:2018); u′ = 4x/(−2x + 12y + 3),
//! v′ = 9y/(−2x + 12y + 3) (CIE 1976 UCS, CIE 015:2018); dominant wavelength: the
//! spectral-locus point on the ray from the white point through the sample, complementary
//! (reported negative) when the ray meets the purple line; excitation purity = |S − W| / |P − W|
//! (CIE 015:2018).

use std::sync::OnceLock;

/// h·c in eV·nm (CODATA 2018 exact SI constants); the one definition of hc in the crate
/// (`photophysics::HC_EV_CM` is derived from it).
pub const HC_EV_NM: f64 = 1_239.841_984;

/// CIE 1931 2° chromaticity of the D65 white point (ISO/CIE 11664-2; as used by ITU-R BT.709
/// and BT.2020): (0.3127, 0.3290).
pub const D65: (f64, f64) = (0.3127, 0.3290);
/// The equal-energy white point E.
pub const WHITE_E: (f64, f64) = (1.0 / 3.0, 1.0 / 3.0);

/// Named colour targets: the primaries of two open standards (ITU-R BT.2020, Table 3; ITU-R
/// BT.709, item 1.4; values checked against colour-science in the tests).
pub const TARGETS: [(&str, (f64, f64)); 6] = [
    ("bt2020-red", (0.708, 0.292)),
    ("bt2020-green", (0.170, 0.797)),
    ("bt2020-blue", (0.131, 0.046)),
    ("bt709-red", (0.640, 0.330)),
    ("bt709-green", (0.300, 0.600)),
    ("bt709-blue", (0.150, 0.060)),
];

/// A named target or `X,Y`.
pub fn parse_target(s: &str) -> Result<(String, (f64, f64)), String> {
    if let Some((n, xy)) = TARGETS.iter().find(|(n, _)| n.eq_ignore_ascii_case(s)) {
        return Ok((n.to_string(), *xy));
    }
    let parts: Vec<&str> = s.split(',').collect();
    if parts.len() == 2
        && let (Ok(x), Ok(y)) = (
            parts[0].trim().parse::<f64>(),
            parts[1].trim().parse::<f64>(),
        )
        && (0.0..=1.0).contains(&x)
        && (0.0..=1.0).contains(&y)
        && x + y <= 1.0
    {
        return Ok((format!("x={x},y={y}"), (x, y)));
    }
    let names: Vec<&str> = TARGETS.iter().map(|t| t.0).collect();
    Err(format!(
        "target '{s}': expected one of {} or 'X,Y' chromaticity (0–1, X+Y ≤ 1)",
        names.join(", ")
    ))
}

/// The colour-matching functions x̄, ȳ, z̄ on a 1 nm grid.
pub struct Cmf {
    pub start_nm: f64,
    pub xbar: Vec<f64>,
    pub ybar: Vec<f64>,
    pub zbar: Vec<f64>,
}

impl Cmf {
    pub fn wavelength(&self, i: usize) -> f64 {
        self.start_nm + i as f64
    }
    pub fn len(&self) -> usize {
        self.xbar.len()
    }
    pub fn is_empty(&self) -> bool {
        self.xbar.is_empty()
    }
}

/// The shipped CIE 1931 2° table.
pub fn cie1931() -> &'static Cmf {
    static CMF: OnceLock<Cmf> = OnceLock::new();
    CMF.get_or_init(|| {
        let text = include_str!("../../data/cie1931-2deg.csv");
        let mut start = None;
        let (mut xb, mut yb, mut zb) = (Vec::new(), Vec::new(), Vec::new());
        for line in text.lines() {
            if line.starts_with('#') || line.starts_with("wavelength") || line.trim().is_empty() {
                continue;
            }
            let f: Vec<f64> = line
                .split(',')
                .map(|v| v.trim().parse().expect("shipped CMF table is numeric"))
                .collect();
            start.get_or_insert(f[0]);
            xb.push(f[1]);
            yb.push(f[2]);
            zb.push(f[3]);
        }
        Cmf {
            start_nm: start.expect("shipped CMF table is not empty"),
            xbar: xb,
            ybar: yb,
            zbar: zb,
        }
    })
}

/// Spectral power per nm at increasing wavelengths (nm).
#[derive(Debug, Clone, PartialEq)]
pub struct Spectrum {
    pub wavelength_nm: Vec<f64>,
    pub power: Vec<f64>,
}

/// How the intensities of a spectrum file are expressed.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Units {
    /// Photon counts per nm (what most spectrometers in counting mode give).
    Photon,
    /// Energy (power) per nm.
    Energy,
}

impl Spectrum {
    /// From (wavelength, intensity) pairs; photon counts are converted to power (× hc/λ).
    pub fn new(points: &[(f64, f64)], units: Units) -> Result<Spectrum, String> {
        if points.len() < 2 {
            return Err("a spectrum needs at least two points".into());
        }
        for w in points.windows(2) {
            if w[1].0 <= w[0].0 {
                return Err(format!(
                    "wavelengths must increase: {} nm then {} nm",
                    w[0].0, w[1].0
                ));
            }
        }
        Ok(Spectrum {
            wavelength_nm: points.iter().map(|p| p.0).collect(),
            power: points
                .iter()
                .map(|&(l, v)| match units {
                    Units::Energy => v,
                    Units::Photon => v * HC_EV_NM / l,
                })
                .collect(),
        })
    }

    /// Linear interpolation; zero outside the measured range.
    pub fn at(&self, nm: f64) -> f64 {
        let w = &self.wavelength_nm;
        if nm < w[0] || nm > w[w.len() - 1] {
            return 0.0;
        }
        let k = w.partition_point(|&x| x <= nm).clamp(1, w.len() - 1);
        let (x0, x1) = (w[k - 1], w[k]);
        let t = (nm - x0) / (x1 - x0);
        self.power[k - 1] * (1.0 - t) + self.power[k] * t
    }
}

/// An emission band: Gaussian in photon energy (peak and FWHM in eV), as power per nm on the
/// CMF grid.
pub fn gaussian_band(peak_ev: f64, fwhm_ev: f64) -> Result<Spectrum, String> {
    if !(peak_ev > 0.0 && fwhm_ev > 0.0 && peak_ev.is_finite() && fwhm_ev.is_finite()) {
        return Err(format!(
            "band {peak_ev}:{fwhm_ev}: peak and FWHM must be positive (eV)"
        ));
    }
    let sigma = fwhm_ev / (2.0 * (2.0 * std::f64::consts::LN_2).sqrt());
    let cmf = cie1931();
    let pts: Vec<(f64, f64)> = (0..cmf.len())
        .map(|i| {
            let l = cmf.wavelength(i);
            let e = HC_EV_NM / l;
            let n = (-0.5 * ((e - peak_ev) / sigma).powi(2)).exp();
            (l, n * e * HC_EV_NM / (l * l))
        })
        .collect();
    Spectrum::new(&pts, Units::Energy)
}

/// Everything `colour` reports about one spectrum.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Colour {
    pub x: f64,
    pub y: f64,
    pub u_prime: f64,
    pub v_prime: f64,
    /// Wavelength of the largest spectral power (nm).
    pub peak_nm: f64,
    /// Dominant wavelength (nm); negative = complementary wavelength (purple sample).
    pub dominant_nm: f64,
    pub excitation_purity: f64,
    pub white: (f64, f64),
}

/// CIE 1976 u′, v′ of a chromaticity.
pub fn uv_prime(x: f64, y: f64) -> (f64, f64) {
    let d = -2.0 * x + 12.0 * y + 3.0;
    (4.0 * x / d, 9.0 * y / d)
}

/// Euclidean distance in the u′v′ plane between two chromaticities.
pub fn delta_uv(a: (f64, f64), b: (f64, f64)) -> f64 {
    let (ua, va) = uv_prime(a.0, a.1);
    let (ub, vb) = uv_prime(b.0, b.1);
    ((ua - ub).powi(2) + (va - vb).powi(2)).sqrt()
}

/// Chromaticity of light of one wavelength (nm, on the CMF grid, linearly interpolated).
pub fn spectral_locus(nm: f64) -> (f64, f64) {
    let c = cie1931();
    let f = (nm - c.start_nm).clamp(0.0, (c.len() - 1) as f64);
    let i = (f.floor() as usize).min(c.len() - 2);
    let t = f - i as f64;
    let lerp = |v: &[f64]| v[i] * (1.0 - t) + v[i + 1] * t;
    let (x, y, z) = (lerp(&c.xbar), lerp(&c.ybar), lerp(&c.zbar));
    (x / (x + y + z), y / (x + y + z))
}

/// Colour of `spec` with dominant wavelength and purity relative to `white`.
pub fn analyse(spec: &Spectrum, white: (f64, f64)) -> Result<Colour, String> {
    let c = cie1931();
    let (mut x, mut y, mut z) = (0.0, 0.0, 0.0);
    // A spectrum already on the table's grid (bands) is read directly.
    let on_grid = spec.wavelength_nm.len() == c.len() && spec.wavelength_nm[0] == c.start_nm;
    for i in 0..c.len() {
        let p = if on_grid {
            spec.power[i]
        } else {
            spec.at(c.wavelength(i))
        };
        x += p * c.xbar[i];
        y += p * c.ybar[i];
        z += p * c.zbar[i];
    }
    let s = x + y + z;
    if !(s > 0.0 && s.is_finite()) {
        return Err("the spectrum has no power between 360 and 830 nm".into());
    }
    let (cx, cy) = (x / s, y / s);
    let (u, v) = uv_prime(cx, cy);
    let k = (0..spec.power.len())
        .max_by(|&a, &b| spec.power[a].total_cmp(&spec.power[b]))
        .expect("spectrum has points");
    let (dom, purity) = dominant(cx, cy, white);
    Ok(Colour {
        x: cx,
        y: cy,
        u_prime: u,
        v_prime: v,
        peak_nm: spec.wavelength_nm[k],
        dominant_nm: dom,
        excitation_purity: purity,
        white,
    })
}

/// Intersection parameter t ≥ 0 of the ray W + t·d with segment a–b (and the position on it).
fn ray_segment(w: (f64, f64), d: (f64, f64), a: (f64, f64), b: (f64, f64)) -> Option<(f64, f64)> {
    let e = (b.0 - a.0, b.1 - a.1);
    let den = d.0 * e.1 - d.1 * e.0;
    if den.abs() < 1e-15 {
        return None;
    }
    let q = (a.0 - w.0, a.1 - w.1);
    let t = (q.0 * e.1 - q.1 * e.0) / den;
    let u = (q.0 * d.1 - q.1 * d.0) / den;
    (t > 0.0 && (-1e-12..=1.0 + 1e-12).contains(&u)).then_some((t, u))
}

/// Dominant wavelength (negative: complementary) and excitation purity of (x, y).
fn dominant(x: f64, y: f64, w: (f64, f64)) -> (f64, f64) {
    let c = cie1931();
    let d = (x - w.0, y - w.1);
    let dist_s = (d.0 * d.0 + d.1 * d.1).sqrt();
    if dist_s < 1e-12 {
        return (f64::NAN, 0.0);
    }
    let n = c.len();
    static LOCUS: OnceLock<Vec<(f64, f64)>> = OnceLock::new();
    let locus = LOCUS.get_or_init(|| (0..n).map(|i| spectral_locus(c.wavelength(i))).collect());
    let hit = |dir: (f64, f64)| -> Option<(f64, f64)> {
        // (t, wavelength) of the first locus segment the ray meets.
        let mut best: Option<(f64, f64)> = None;
        for i in 0..n - 1 {
            if let Some((t, u)) = ray_segment(w, dir, locus[i], locus[i + 1])
                && best.is_none_or(|b| t < b.0)
            {
                best = Some((t, c.wavelength(i) + u));
            }
        }
        best
    };
    let purple = |dir: (f64, f64)| ray_segment(w, dir, locus[n - 1], locus[0]).map(|(t, _)| t);
    match (hit(d), purple(d)) {
        // The sample sits at t = 1 on the ray W + t·d and the locus at t: purity = 1/t.
        (Some((t, nm)), p) if p.is_none_or(|tp| t <= tp) => (nm, 1.0 / t),
        (_, Some(tp)) => {
            // Purple sample: complementary wavelength on the opposite ray, purity against the
            // purple line.
            let comp = hit((-d.0, -d.1)).map_or(f64::NAN, |h| -h.1);
            (comp, 1.0 / tp)
        }
        _ => (f64::NAN, f64::NAN),
    }
}

/// (wavelength nm, intensity) pairs from CSV text: `wavelength,intensity` per line, `#`
/// comments and blank lines skipped, one optional header line (non-numeric first field).
/// Errors name the 1-based line and what was expected.
pub fn parse_spectrum_csv(text: &str) -> Result<Vec<(f64, f64)>, String> {
    let mut out = Vec::new();
    let mut header_seen = false;
    for (i, line) in text.lines().enumerate() {
        let l = line.trim();
        if l.is_empty() || l.starts_with('#') {
            continue;
        }
        let f: Vec<&str> = l.split([',', '\t', ';']).map(str::trim).collect();
        let num = |s: &str| s.parse::<f64>().ok().filter(|v| v.is_finite());
        match (
            f.first().and_then(|s| num(s)),
            f.get(1).and_then(|s| num(s)),
        ) {
            (Some(w), Some(v)) => {
                if w <= 0.0 || v < 0.0 {
                    return Err(format!(
                        "line {}: expected a positive wavelength (nm) and a non-negative intensity, found '{l}'",
                        i + 1
                    ));
                }
                out.push((w, v));
            }
            (None, _) if !header_seen && out.is_empty() => header_seen = true,
            _ => {
                return Err(format!(
                    "line {}: expected 'wavelength_nm,intensity', found '{l}'",
                    i + 1
                ));
            }
        }
    }
    Ok(out)
}
