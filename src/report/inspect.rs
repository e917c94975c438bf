//! `lumisift inspect`: one molecule's estimate as a human-readable page, as JSON, and its
//! equilibrium geometry as XYZ / SDF text for the user's own quantum-chemistry job.

use std::fmt::Write;

use crate::chem::Molecule;
use crate::geometry::{Coordinates, sdf_block, with_hydrogens, xyz_block};
use crate::pi::estimate::Estimate;

/// What every estimate page says about what the numbers are.
pub const CAUTION: &str = "π-tier estimates (PPP-CIS with a triplet exchange correction and a \
charge-transfer stabilisation fitted to a TDA-PBE0/6-31G reference set): screening numbers, \
not predictions of measured values; n→π* states are not modelled. Quantities listed as \
unvalidated missed the acceptance bar on the reference set and are not to be ranked on.";

/// The photophysics part of the page.
pub fn render_photophysics(a: &crate::photophysics::Assessment, unvalidated: &[String]) -> String {
    let mut s = String::new();
    let r = &a.rates_equilibrium;
    let k = &a.kinetics;
    let _ = writeln!(
        s,
        "\nphotophysics (n = {}, λ = {} eV, T = {} K; H_SO CT–CT {} / CT–LE {} / LE–LE {} cm⁻¹):",
        a.rate_params.refractive_index,
        a.rate_params.reorganisation_ev,
        a.rate_params.temperature_k,
        a.rate_params.soc_ct_ct_cm,
        a.rate_params.soc_ct_le_cm,
        a.rate_params.soc_le_le_cm
    );
    let _ = writeln!(
        s,
        "  thermalised manifolds at equilibrium: k_r {:.2e}  k_ISC {:.2e}  k_RISC {:.2e} s⁻¹",
        r.k_r, r.k_isc, r.k_risc
    );
    let _ = writeln!(
        s,
        "  torsion-averaged (per angle): k_r {:.2e} s⁻¹ (log10 {:.2} ± {:.2}), k_RISC {:.2e} s⁻¹ (log10 {:.2} ± {:.2})",
        a.k_r_averaged.mean,
        a.k_r_averaged.log10_mean,
        a.k_r_averaged.log10_sd,
        a.k_risc_averaged.mean,
        a.k_risc_averaged.log10_mean,
        a.k_risc_averaged.log10_sd
    );
    let e = &a.rates_effective;
    let _ = writeln!(
        s,
        "  effective (average + manifold extras): k_r {:.2e}  k_ISC {:.2e}  k_RISC {:.2e} s⁻¹",
        e.k_r, e.k_isc, e.k_risc
    );
    let _ = writeln!(
        s,
        "  kinetics: τ_prompt {:.3e} s  τ_delayed {:.3e} s  Φ_PF {:.3}  Φ_DF {:.3}  Φ_PL {:.3}  triplet harvesting {:.3}",
        k.tau_prompt_s,
        k.tau_delayed_s,
        k.phi_prompt,
        k.phi_delayed,
        k.phi_pl,
        k.triplet_harvesting
    );
    let _ = writeln!(
        s,
        "  EQE upper bound {:.3} (charge balance {} × photons/exciton {:.3} × outcoupling {}){}",
        k.eqe_bound,
        a.rate_params.charge_balance,
        k.el_photons_per_exciton,
        a.rate_params.outcoupling,
        if k.knr_zero_bound {
            " — the k_nr = 0 bound: no non-radiative rate given"
        } else {
            ""
        }
    );
    if let Some(c) = &a.colour {
        let _ = writeln!(
            s,
            "  colour of the band (peak {:.2} eV = S1 − {} eV, FWHM {} eV): x {:.3} y {:.3}  u′ {:.3} v′ {:.3}  peak {:.0} nm  dominant {:.0} nm",
            a.emission_peak_ev,
            a.band.stokes_shift_ev,
            a.band.fwhm_ev,
            c.x,
            c.y,
            c.u_prime,
            c.v_prime,
            c.peak_nm,
            c.dominant_nm
        );
    }
    if !unvalidated.is_empty() {
        let _ = writeln!(
            s,
            "  (rates and colour inherit the unvalidated quantities above: {})",
            unvalidated.join(", ")
        );
    }
    s
}

/// The human-readable page.
pub fn render_text(input: &str, canonical: &str, est: &Estimate, temperature_k: f64) -> String {
    let mut s = String::new();
    let _ = writeln!(s, "{input}\ncanonical {canonical}\n");
    let _ = writeln!(s, "units (cut at single bonds between ring systems):");
    let _ = writeln!(
        s,
        "  {:>4} {:<15} {:>6} {:>9} {:>9} {:>9} {:>9}",
        "unit", "role", "atoms", "HOMO/eV", "LUMO/eV", "S1loc/eV", "T1loc/eV"
    );
    for (i, u) in est.units.iter().enumerate() {
        let _ = writeln!(
            s,
            "  {:>4} {:<15} {:>6} {:>9.3} {:>9.3} {:>9.3} {:>9.3}",
            i,
            u.role,
            u.atoms.len(),
            u.homo_ev,
            u.lumo_ev,
            u.local_s1_ev,
            u.local_t1_ev
        );
    }
    if !est.links.is_empty() {
        let _ = writeln!(
            s,
            "\ntorsion (kJ/mol, Boltzmann weight at {temperature_k} K):"
        );
        for l in &est.links {
            let _ = writeln!(
                s,
                "  link atoms {}–{}: equilibrium {:.1}°",
                l.atoms.0 + 1,
                l.atoms.1 + 1,
                l.equilibrium_deg
            );
            if l.scan.len() > 1 {
                let row: Vec<String> = l
                    .scan
                    .iter()
                    .map(|(t, e, w)| format!("{t:.0}°:{e:.1}({w:.2})"))
                    .collect();
                let _ = writeln!(s, "    {}", row.join("  "));
            }
        }
    }
    let _ = writeln!(s, "\nstates at the equilibrium twist (corrected):");
    let _ = writeln!(
        s,
        "  {:<8} {:>8} {:>8} {:>6} {:<6} {:>5} {:>5}",
        "state", "E/eV", "f", "CT", "label", "hole", "elec"
    );
    for (prefix, states) in [("S", &est.singlets), ("T", &est.triplets)] {
        for (k, st) in states.iter().enumerate() {
            let f = if prefix == "S" {
                format!("{:.4}", st.osc_strength)
            } else {
                "-".to_string()
            };
            let _ = writeln!(
                s,
                "  {prefix}{:<7} {:>8.3} {:>8} {:>6.2} {:<6} {:>5} {:>5}",
                k + 1,
                st.energy_ev,
                f,
                st.ct_number,
                st.label,
                st.hole_unit,
                st.electron_unit
            );
        }
    }
    let _ = writeln!(
        s,
        "\nS1 {:.3} eV  T1 {:.3} eV  ΔEST {:.3} eV  f(S1) {:.4}  HOMO {:.3}  LUMO {:.3}  \
         HOMO–LUMO overlap {:.3}",
        est.s1_ev,
        est.t1_ev,
        est.delta_est_ev,
        est.f_s1,
        est.homo_ev,
        est.lumo_ev,
        est.homo_lumo_overlap
    );
    let _ = writeln!(
        s,
        "raw PPP-CIS (no corrections): S1 {:.3} eV  T1 {:.3} eV  ΔEST {:.3} eV",
        est.raw_s1_ev, est.raw_t1_ev, est.raw_delta_est_ev
    );
    let opt = |x: Option<f64>| x.map_or("-".to_string(), |v| format!("{v:.3} eV"));
    let _ = writeln!(
        s,
        "lowest ³LE {} (unit {})  S1 − ³LE {}  S1 − T1(donor) {}  S1 − T1(acceptor) {}",
        opt(est.lowest_3le_ev),
        est.lowest_3le_unit
            .map_or("-".to_string(), |u| u.to_string()),
        opt(est.s1_minus_3le_ev),
        opt(est.s1_minus_donor_t1_ev),
        opt(est.s1_minus_acceptor_t1_ev)
    );
    let _ = writeln!(
        s,
        "torsion-averaged: S1 {:.3} eV  T1 {:.3} eV  ΔEST {:.3} eV  f(S1) {:.4}",
        est.avg_s1_ev, est.avg_t1_ev, est.avg_delta_est_ev, est.avg_f_s1
    );
    if !est.unvalidated.is_empty() {
        let _ = writeln!(
            s,
            "\nunvalidated (missed the reference-set bar; not ranked on): {}",
            est.unvalidated.join(", ")
        );
    }
    for f in &est.flags {
        let _ = writeln!(s, "flag: {f}");
    }
    let _ = writeln!(s, "\nparameters '{}'. {CAUTION}", est.parameters);
    s
}

/// The JSON document of `inspect --json`.
pub fn to_json(
    input: &str,
    canonical: &str,
    candidate_id: &str,
    est: &Estimate,
    photophysics: &crate::photophysics::Assessment,
    temperature_k: f64,
) -> serde_json::Value {
    serde_json::json!({
        "input": input,
        "canonical_smiles": canonical,
        "candidate_id": candidate_id,
        "temperature_k": temperature_k,
        "estimate": est,
        "photophysics": photophysics,
        "caution": CAUTION,
    })
}

/// The equilibrium geometry with hydrogens as XYZ text.
pub fn geometry_xyz(mol: &Molecule, est: &Estimate, comment: &str) -> String {
    let (mh, ch) = with_hydrogens(
        mol,
        &Coordinates {
            points: est.geometry.clone(),
        },
    );
    xyz_block(&mh, &ch, comment)
}

/// The equilibrium geometry with hydrogens as one SDF record carrying S1, T1, ΔEST and f.
pub fn geometry_sdf(mol: &Molecule, est: &Estimate, title: &str) -> String {
    let (mh, ch) = with_hydrogens(
        mol,
        &Coordinates {
            points: est.geometry.clone(),
        },
    );
    sdf_block(
        &mh,
        &ch,
        title,
        &[
            ("S1_eV", format!("{:.4}", est.s1_ev)),
            ("T1_eV", format!("{:.4}", est.t1_ev)),
            ("dEST_eV", format!("{:.4}", est.delta_est_ev)),
            ("f_S1", format!("{:.5}", est.f_s1)),
            ("parameters", est.parameters.clone()),
        ],
    )
}
