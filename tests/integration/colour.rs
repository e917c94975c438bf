//! Colour against colour-science 0.4.7 (fixture `tests/fixtures/colour/colour_reference.json`,
//! made by `make_colour_fixture.py` beside it) and published standards.

use lumisift::colour::{
    D65, Spectrum, TARGETS, Units, WHITE_E, analyse, delta_uv, gaussian_band, spectral_locus,
};

fn fixture() -> serde_json::Value {
    let p = std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/fixtures/colour/colour_reference.json");
    serde_json::from_str(&std::fs::read_to_string(p).unwrap()).unwrap()
}

#[test]
fn spectral_locus_matches_colour_science() {
    for m in fixture()["monochromatic"].as_array().unwrap() {
        let nm = m["wavelength_nm"].as_f64().unwrap();
        let (x, y) = spectral_locus(nm);
        assert!((x - m["x"].as_f64().unwrap()).abs() < 1e-3, "{nm} nm x {x}");
        assert!((y - m["y"].as_f64().unwrap()).abs() < 1e-3, "{nm} nm y {y}");
    }
}

#[test]
fn gaussian_bands_match_colour_science() {
    for b in fixture()["gaussian_bands"].as_array().unwrap() {
        let g = |k: &str| b[k].as_f64().unwrap();
        let c = analyse(&gaussian_band(g("peak_ev"), g("fwhm_ev")).unwrap(), D65).unwrap();
        let tag = format!("{}:{}", g("peak_ev"), g("fwhm_ev"));
        assert!((c.x - g("x")).abs() < 1e-3, "{tag} x {} vs {}", c.x, g("x"));
        assert!((c.y - g("y")).abs() < 1e-3, "{tag} y {} vs {}", c.y, g("y"));
        assert!((c.u_prime - g("u_prime")).abs() < 1e-3, "{tag} u'");
        assert!((c.v_prime - g("v_prime")).abs() < 1e-3, "{tag} v'");
        assert!(
            (c.peak_nm - g("peak_wavelength_nm")).abs() <= 1.0,
            "{tag} peak"
        );
        // colour-science reports the nearest 1 nm locus sample; ours interpolates.
        assert!(
            (c.dominant_nm - g("dominant_nm")).abs() <= 1.0,
            "{tag} dominant {} vs {}",
            c.dominant_nm,
            g("dominant_nm")
        );
        assert!(
            (c.excitation_purity - g("excitation_purity")).abs() < 0.01,
            "{tag} purity {} vs {}",
            c.excitation_purity,
            g("excitation_purity")
        );
    }
}

#[test]
fn equal_energy_spectrum_is_white_e() {
    // CIE 15: an equal-energy spectrum has chromaticity (1/3, 1/3) by construction of the CMFs
    // (the tabulated functions integrate to equal areas within their 1 nm rounding).
    let flat: Vec<(f64, f64)> = (360..=830).map(|l| (l as f64, 1.0)).collect();
    let c = analyse(&Spectrum::new(&flat, Units::Energy).unwrap(), WHITE_E).unwrap();
    assert!(
        (c.x - 1.0 / 3.0).abs() < 1e-3 && (c.y - 1.0 / 3.0).abs() < 1e-3,
        "{c:?}"
    );
}

#[test]
fn standard_primaries_are_as_published() {
    // ITU-R BT.2020 and BT.709 primaries (from the standards; cross-checked with colour-science).
    let f = fixture();
    for (set, names) in [
        (
            "bt2020_primaries_xy",
            ["bt2020-red", "bt2020-green", "bt2020-blue"],
        ),
        (
            "bt709_primaries_xy",
            ["bt709-red", "bt709-green", "bt709-blue"],
        ),
    ] {
        for (k, name) in names.iter().enumerate() {
            let ours = TARGETS.iter().find(|t| t.0 == *name).unwrap().1;
            let theirs = &f[set][k];
            assert!(
                (ours.0 - theirs[0].as_f64().unwrap()).abs() < 1e-9,
                "{name}"
            );
            assert!(
                (ours.1 - theirs[1].as_f64().unwrap()).abs() < 1e-9,
                "{name}"
            );
        }
    }
    let w = &f["white_point_d65_xy"];
    assert!((D65.0 - w[0].as_f64().unwrap()).abs() < 1e-4);
    assert!((D65.1 - w[1].as_f64().unwrap()).abs() < 1e-4);
}

#[test]
fn photon_counts_are_weighted_by_photon_energy() {
    // The same numbers read as photon counts carry less power at long wavelengths: the
    // chromaticity moves towards blue (x falls) relative to reading them as energy.
    let pts: Vec<(f64, f64)> = (400..=700).map(|l| (l as f64, 1.0)).collect();
    let e = analyse(&Spectrum::new(&pts, Units::Energy).unwrap(), D65).unwrap();
    let p = analyse(&Spectrum::new(&pts, Units::Photon).unwrap(), D65).unwrap();
    assert!(p.x < e.x);
    // Δu′v′ of a colour to itself is zero and symmetric otherwise.
    assert_eq!(delta_uv((e.x, e.y), (e.x, e.y)), 0.0);
    assert!((delta_uv((e.x, e.y), (p.x, p.y)) - delta_uv((p.x, p.y), (e.x, e.y))).abs() < 1e-15);
}
