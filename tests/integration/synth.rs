//! Tests of `synth`: hand-labelled inter-fragment bonds of candidates assembled from the shipped
//! fragment library.
//!
//! The expected classes are common practice in the donor–acceptor emitter literature (see the
//! module documentation of `lumisift::synth` and `science.md` §i): carbazole, acridan and
//! phenoxazine N–aryl bonds by Buchwald–Hartwig amination unless the aryl ring is activated
//! (nitrile, sulfonyl, carbonyl or azine nitrogen ortho/para), where SNAr of the fluoride or
//! azinyl chloride is the usual metal-free route (multi-carbazolyl dicyanobenzenes from
//! tetrafluorophthalonitrile, Org. Synth. 96, 455–473 (2019)); aryl–aryl bonds by
//! Suzuki–Miyaura; aryl–boron bonds by an aryl-lithium and a haloborane.

use std::path::PathBuf;
use std::sync::OnceLock;

use lumisift::combine::{Arm, Tuple, assemble};
use lumisift::fragments::{Library, load_paths};
use lumisift::model::{Architecture, Candidate};
use lumisift::synth::{
    CautionCode, CouplingClass, EffortParams, GENERAL_NOTICE, SynthPlan, classify_link, plan,
};

fn lib() -> &'static Library {
    static LIB: OnceLock<Library> = OnceLock::new();
    LIB.get_or_init(|| {
        let dir = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("fragments");
        load_paths(&[dir]).expect("shipped fragments load")
    })
}

fn idx(id: &str) -> usize {
    lib()
        .index_of(id)
        .unwrap_or_else(|| panic!("fragment {id} is in the shipped library"))
}

/// A core with one terminal arm per site (`None` = hydrogen).
fn build(arch: Architecture, core: &str, arms: &[Option<&str>]) -> Candidate {
    let t = Tuple {
        architecture: arch,
        core: idx(core),
        arms: arms
            .iter()
            .map(|a| a.map_or(Arm::H, |id| Arm::Terminal(idx(id))))
            .collect(),
    };
    assemble(lib(), &t)
}

fn plan_of(c: &Candidate) -> SynthPlan {
    plan(c, lib(), &EffortParams::default())
}

fn has(p: &SynthPlan, code: CautionCode) -> bool {
    p.cautions.iter().any(|c| c.code == code)
}

/// (acceptor core, donor, expected class of the single bond, why).
const LABELLED_DA: [(&str, &str, CouplingClass, &str); 9] = [
    (
        "4-cyanophenyl",
        "carbazol-9-yl",
        CouplingClass::Snar,
        "para nitrile activates the aryl fluoride",
    ),
    (
        "2-4-dicyanophenyl",
        "9-9-dimethyl-9-10-dihydroacridin-10-yl",
        CouplingClass::Snar,
        "ortho and para nitriles",
    ),
    (
        "4-6-diphenyl-1-3-5-triazin-2-yl",
        "carbazol-9-yl",
        CouplingClass::Snar,
        "azinyl chloride between two ring nitrogens",
    ),
    (
        "4-phenylsulfonylphenyl",
        "phenoxazin-10-yl",
        CouplingClass::Snar,
        "para sulfonyl",
    ),
    (
        "4-benzoylphenyl",
        "carbazol-9-yl",
        CouplingClass::Snar,
        "para carbonyl",
    ),
    (
        "4-4-6-diphenyl-1-3-5-triazin-2-yl-phenyl",
        "phenoxazin-10-yl",
        CouplingClass::BuchwaldHartwig,
        "the phenyl ring carries an aryl, not a strong acceptor group, para",
    ),
    (
        "4-dimesitylborylphenyl",
        "9-9-dimethyl-9-10-dihydroacridin-10-yl",
        CouplingClass::BuchwaldHartwig,
        "a borane para does not count for SNAr; bromoaryl borane + acridan with Pd",
    ),
    (
        "pyridin-4-yl",
        "9-phenylcarbazol-3-yl",
        CouplingClass::SuzukiMiyaura,
        "aryl–aryl",
    ),
    (
        "dimesitylboryl",
        "4-diphenylaminophenyl",
        CouplingClass::OrganometallicBorylation,
        "aryl-lithium on fluorodimesitylborane",
    ),
];

#[test]
fn hand_labelled_single_bonds() {
    for (acc, don, want, why) in LABELLED_DA {
        let c = build(Architecture::DA, acc, &[Some(don)]);
        assert_eq!(c.links.len(), 1);
        let b = classify_link(&c, 0, Some(lib()));
        assert_eq!(b.class, want, "{acc} + {don}: {why}; got {b:?}");
        match want {
            CouplingClass::Snar => {
                assert!(!b.activation.is_empty());
                assert_eq!(
                    b.alternatives,
                    vec![CouplingClass::BuchwaldHartwig, CouplingClass::Ullmann]
                );
            }
            CouplingClass::BuchwaldHartwig => {
                assert!(b.activation.is_empty(), "{acc}: {:?}", b.activation);
                assert_eq!(b.alternatives, vec![CouplingClass::Ullmann]);
            }
            _ => {}
        }
        // The electrophile of a C–N bond is the aryl (acceptor) side, unit 0 here.
        if matches!(want, CouplingClass::Snar | CouplingClass::BuchwaldHartwig) {
            assert_eq!(b.electrophile_unit, Some(0));
        }
        let p = plan_of(&c);
        assert_eq!(p.effort.steps, 1);
        assert_eq!(p.notice, GENERAL_NOTICE);
    }
}

#[test]
fn activation_features_are_named() {
    let c = build(
        Architecture::DA,
        "2-4-dicyanophenyl",
        &[Some("carbazol-9-yl")],
    );
    let b = classify_link(&c, 0, Some(lib()));
    assert_eq!(b.activation, vec!["ortho nitrile", "para nitrile"]);
    let c = build(
        Architecture::DA,
        "4-6-diphenyl-1-3-5-triazin-2-yl",
        &[Some("carbazol-9-yl")],
    );
    assert_eq!(
        classify_link(&c, 0, Some(lib())).activation,
        vec!["ortho ring N", "para ring N"]
    );
}

#[test]
fn borane_plan_cautions_organolithium_and_haloborane() {
    let c = build(
        Architecture::DA,
        "dimesitylboryl",
        &[Some("4-diphenylaminophenyl")],
    );
    let p = plan_of(&c);
    assert!(has(&p, CautionCode::OrganolithiumPyrophoric));
    assert!(has(&p, CautionCode::Haloborane));
    assert!(!has(&p, CautionCode::PalladiumCatalyst));
    assert!(!has(&p, CautionCode::CyanideSourceForNitrile));
    // One step plus the borylation penalty; both fragments on the shelf.
    assert_eq!(p.effort.off_shelf, 0);
    assert!((p.effort.total - 2.0).abs() < 1e-12, "{:?}", p.effort);
}

#[test]
fn nitrile_caution_only_when_a_unit_carries_a_nitrile() {
    let c = build(Architecture::DA, "4-cyanophenyl", &[Some("carbazol-9-yl")]);
    let p = plan_of(&c);
    let cn = p
        .cautions
        .iter()
        .find(|c| c.code == CautionCode::CyanideSourceForNitrile)
        .expect("nitrile caution");
    assert_eq!(cn.applies_to, vec!["4-cyanophenyl"]);
    assert!(cn.text.contains("cyanide"));
    // SNAr: strong base and dipolar aprotic solvent, no palladium.
    assert!(has(&p, CautionCode::StrongBase));
    assert!(has(&p, CautionCode::DipolarAproticSolvent));
    assert!(!has(&p, CautionCode::PalladiumCatalyst));

    let c = build(
        Architecture::DA,
        "4-4-6-diphenyl-1-3-5-triazin-2-yl-phenyl",
        &[Some("phenoxazin-10-yl")],
    );
    let p = plan_of(&c);
    assert!(!has(&p, CautionCode::CyanideSourceForNitrile));
    assert!(has(&p, CautionCode::PalladiumCatalyst));
    assert!(has(&p, CautionCode::PhosphineLigand));
    assert!(has(&p, CautionCode::StrongBase));
}

#[test]
fn identical_arms_are_one_step_different_arms_are_not() {
    // Four carbazoles on a tetrafluorophthalonitrile-type core: one SNAr step.
    let cz = Some("carbazol-9-yl");
    let c = build(
        Architecture::DnA,
        "phthalonitrile-3-4-5-6-tetrayl",
        &[cz, cz, cz, cz],
    );
    let p = plan_of(&c);
    assert_eq!(p.bonds.len(), 4);
    assert!(p.bonds.iter().all(|b| b.class == CouplingClass::Snar));
    assert_eq!(p.effort.steps, 1);
    assert_eq!(p.steps[0].bonds, vec![0, 1, 2, 3]);
    // Two different donors on a two-site core: two steps.
    let c = build(
        Architecture::DAD,
        "benzophenone-4-4-diyl",
        &[Some("carbazol-9-yl"), Some("phenoxazin-10-yl")],
    );
    let p = plan_of(&c);
    assert_eq!(p.effort.steps, 2);
    assert!(p.bonds.iter().all(|b| b.class == CouplingClass::Snar));
}

#[test]
fn bridged_candidate_has_a_suzuki_and_an_amination_step() {
    let t = Tuple {
        architecture: Architecture::DBA,
        core: idx("4-6-diphenyl-1-3-5-triazin-2-yl"),
        arms: vec![Arm::Bridged {
            bridge: idx("1-4-phenylene"),
            core_site: 0,
            terminal: idx("carbazol-9-yl"),
        }]
        .into(),
    };
    let c = assemble(lib(), &t);
    let p = plan_of(&c);
    let mut classes: Vec<CouplingClass> = p.bonds.iter().map(|b| b.class).collect();
    classes.sort();
    assert_eq!(
        classes,
        vec![CouplingClass::BuchwaldHartwig, CouplingClass::SuzukiMiyaura]
    );
    assert_eq!(p.effort.steps, 2);
}

#[test]
fn off_shelf_fragments_raise_the_effort() {
    let c = build(
        Architecture::DA,
        "3-5-dicyanopyridin-2-yl",
        &[Some("carbazol-9-yl")],
    );
    let p = plan_of(&c);
    assert_eq!(p.effort.off_shelf, 1);
    let shelf: Vec<(String, Option<bool>)> = p
        .fragments
        .iter()
        .map(|f| (f.id.clone(), f.on_shelf))
        .collect();
    assert_eq!(
        shelf,
        vec![
            ("3-5-dicyanopyridin-2-yl".to_string(), Some(false)),
            ("carbazol-9-yl".to_string(), Some(true)),
        ]
    );
    // 1 step + 1 off-shelf fragment, SNAr without penalty.
    assert_eq!(p.bonds[0].class, CouplingClass::Snar);
    assert!((p.effort.total - 2.0).abs() < 1e-12);
}

#[test]
fn fragment_without_handle_is_unclassified_with_reason() {
    let c = build(
        Architecture::DA,
        "5-phenyl-1-3-4-oxadiazol-2-yl",
        &[Some("9-phenylcarbazol-3-yl")],
    );
    let p = plan_of(&c);
    assert_eq!(p.bonds[0].class, CouplingClass::Unclassified);
    assert!(
        p.bonds[0].reason.contains("no coupling handle"),
        "{}",
        p.bonds[0].reason
    );
    assert!(p.bonds[0].reagents.is_empty());
    // Without the library the structure rule applies: aryl–aryl.
    assert_eq!(
        classify_link(&c, 0, None).class,
        CouplingClass::SuzukiMiyaura
    );
    assert!((p.effort.total - 3.0).abs() < 1e-12, "{:?}", p.effort);
}

#[test]
fn notice_is_always_present_and_serialised() {
    for (acc, don, _, _) in LABELLED_DA {
        let p = plan_of(&build(Architecture::DA, acc, &[Some(don)]));
        let json = serde_json::to_value(&p).unwrap();
        assert_eq!(json["notice"], GENERAL_NOTICE);
        assert!(json["bonds"][0]["class"].is_string());
    }
    for needed in [
        "safety data sheets",
        "chemical hygiene plan",
        "local regulations",
        "qualified supervision",
        "estimates",
    ] {
        assert!(GENERAL_NOTICE.contains(needed), "{needed}");
    }
}
