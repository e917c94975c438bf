//! Cis/trans and tetrahedral stereo in the canonical string. Expected configurations are worked
//! from the OpenSMILES specification (section 3.5: `F/C=C/F` is trans, `F/C=C\F` cis; a mark
//! reads in the direction the bond is written).

use lumisift::chem::{canonical_smiles, parse_smiles};

fn canon(s: &str) -> String {
    canonical_smiles(&parse_smiles(s).unwrap_or_else(|e| panic!("{s}: {e}")))
}

fn same(group: &[&str]) {
    let c0 = canon(group[0]);
    for s in group {
        assert_eq!(canon(s), c0, "{s} vs {}", group[0]);
        // The canonical string reads back to itself.
        assert_eq!(canon(&canon(s)), canon(s), "{s}");
    }
}

#[test]
fn trans_and_cis_difluoroethene_in_all_spellings() {
    // trans: F/C=C/F. In the branch form C(/F) the first bond is written from C to F, so its
    // mark reverses: C(\F)=C/F is again trans.
    let trans = ["F/C=C/F", "F\\C=C\\F", "C(/F)=C\\F", "C(\\F)=C/F"];
    let cis = ["F/C=C\\F", "F\\C=C/F", "C(\\F)=C\\F", "C(/F)=C/F"];
    same(&trans);
    same(&cis);
    assert_ne!(canon(trans[0]), canon(cis[0]));
    // No marks: no configuration, a third string.
    assert_ne!(canon("FC=CF"), canon(trans[0]));
    assert_ne!(canon("FC=CF"), canon(cis[0]));
}

#[test]
fn stilbenes_keep_their_configuration_whatever_the_atom_order() {
    let e = [
        "c1ccccc1/C=C/c1ccccc1",
        "c1ccc(cc1)/C=C/c1ccccc1",
        "C(=C/c1ccccc1)\\c1ccccc1",
        "c1ccccc1\\C=C\\c1ccccc1",
    ];
    let z = ["c1ccccc1/C=C\\c1ccccc1", "C(=C\\c1ccccc1)\\c1ccccc1"];
    same(&e);
    same(&z);
    assert_ne!(canon(e[0]), canon(z[0]));
}

#[test]
fn conjugated_dienes_share_marks() {
    // (2E,4E)- and (2Z,4E)-hexa-2,4-diene.
    same(&["C/C=C/C=C/C", "C\\C=C\\C=C\\C"]);
    same(&["C/C=C\\C=C\\C", "C\\C=C/C=C/C"]);
    assert_ne!(canon("C/C=C/C=C/C"), canon("C/C=C\\C=C\\C"));
}

#[test]
fn a_folded_hydrogen_hands_its_mark_to_the_other_substituent() {
    // H trans to F across the bond means the two F are cis.
    assert_eq!(canon("[H]/C(F)=C/F"), canon("F/C=C\\F"));
}

#[test]
fn marks_on_bonds_that_cannot_be_stereo_are_dropped() {
    // Two equal substituents on one end: no configuration.
    assert_eq!(canon("CC(C)=C/F"), canon("CC(C)=CF"));
    assert_eq!(canon("F/C=C/[H]"), canon("C=CF"));
    // A mark on only one side says nothing.
    assert_eq!(canon("F/C=CF"), canon("FC=CF"));
}

#[test]
fn tetrahedral_marks_need_a_tetrahedral_centre() {
    // sp2 carbon with a chirality mark: dropped.
    assert_eq!(canon("B1[C@@H]=[n+]1"), canon("B1[CH]=[n+]1"));
    // A sulfoxide is a real centre (lone pair as the fourth group).
    assert_ne!(canon("C[S@](=O)CC"), canon("C[S@@](=O)CC"));
    same(&["C[S@](=O)CC", "CC[S@@](=O)C"]);
}
