//! Coordinates: a 2D layout of a molecule graph (fused ring systems as regular polygons,
//! substituents and chains at standard angles, idealised bond lengths), 3D by tetrahedral
//! placement at sp3 centres and rigid rotation of units about the bonds that link them, explicit
//! hydrogens, XYZ / SDF (V2000) writers, and an XYZ reader for coordinates made elsewhere.
//!
//! Pure functions on in-memory values; the writers produce strings.
//!
//! Limits: every unit is laid out flat except the substituents of sp3 centres; folded units
//! (phenoxazine, phenothiazine, acridan butterflies) come out planar unless a 3D template is
//! supplied; peri-fused systems use ideal polygons and may carry small ring-closure strains.

mod layout;
mod lengths;
pub mod perceive;
mod readers;
pub mod steric;
mod writers;

pub use layout::{
    Coordinates, branch, hydrogen_coordinates, layout, rotate_about_bond, with_hydrogens,
};
pub use lengths::ideal_length;
pub use readers::{XyzAtom, heavy_atom_coordinates, parse_xyz};
pub use writers::{sdf_block, xyz_block};

/// A 3D point in Å.
pub type Point = [f64; 3];

pub fn sub(a: Point, b: Point) -> Point {
    [a[0] - b[0], a[1] - b[1], a[2] - b[2]]
}

pub(crate) fn add(a: Point, b: Point) -> Point {
    [a[0] + b[0], a[1] + b[1], a[2] + b[2]]
}

pub(crate) fn scale(a: Point, s: f64) -> Point {
    [a[0] * s, a[1] * s, a[2] * s]
}

pub(crate) fn norm(a: Point) -> f64 {
    (a[0] * a[0] + a[1] * a[1] + a[2] * a[2]).sqrt()
}

pub(crate) fn dist(a: Point, b: Point) -> f64 {
    norm(sub(a, b))
}

pub(crate) fn unit(a: Point) -> Point {
    let n = norm(a);
    if n < 1e-12 {
        [1.0, 0.0, 0.0]
    } else {
        scale(a, 1.0 / n)
    }
}

pub fn cross(a: Point, b: Point) -> Point {
    [
        a[1] * b[2] - a[2] * b[1],
        a[2] * b[0] - a[0] * b[2],
        a[0] * b[1] - a[1] * b[0],
    ]
}

pub(crate) fn dot(a: Point, b: Point) -> f64 {
    a[0] * b[0] + a[1] * b[1] + a[2] * b[2]
}
