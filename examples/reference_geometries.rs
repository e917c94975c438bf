//! Write the tool's own geometries (layout + hydrogens, donor–acceptor link twisted to the
//! requested angle) as XYZ files, for reference quantum-chemistry calculations that must use
//! exactly the geometry the π tier uses.
//!
//! `cargo run --release --example reference_geometries -- LIST.tsv OUT_DIR`
//! where each line of LIST.tsv is `name<TAB>SMILES<TAB>twist_deg[,twist_deg...]` (twist applied
//! to every single, non-ring bond between two ring atoms; `-` for none). Lines starting with `#`
//! are comments. Writes OUT_DIR/<name>_<twist>.xyz (or <name>.xyz without a twist).

use std::io::Write;

use lumisift::chem::parse_smiles;
use lumisift::geometry::{layout, rotate_about_bond, with_hydrogens, xyz_block};
use lumisift::pi::estimate::links;

fn main() {
    let args: Vec<String> = std::env::args().collect();
    if args.len() != 3 {
        eprintln!("usage: reference_geometries LIST.tsv OUT_DIR");
        std::process::exit(2);
    }
    let text = std::fs::read_to_string(&args[1]).expect("readable list");
    let out = std::path::Path::new(&args[2]);
    std::fs::create_dir_all(out).expect("output folder");
    for (ln, line) in text.lines().enumerate() {
        if line.trim().is_empty() || line.starts_with('#') {
            continue;
        }
        let f: Vec<&str> = line.split('\t').collect();
        if f.len() != 3 {
            eprintln!(
                "{}:{}: expected name<TAB>SMILES<TAB>twists",
                args[1],
                ln + 1
            );
            std::process::exit(1);
        }
        let mol = match parse_smiles(f[1]) {
            Ok(m) => m,
            Err(e) => {
                eprintln!("{}:{}: {e}", args[1], ln + 1);
                std::process::exit(1);
            }
        };
        let twists: Vec<Option<f64>> = if f[2].trim() == "-" {
            vec![None]
        } else {
            f[2].split(',')
                .map(|t| Some(t.trim().parse().expect("twist in degrees")))
                .collect()
        };
        for t in twists {
            let mut c = layout(&mol);
            if let Some(t) = t {
                for (a, b) in links(&mol) {
                    rotate_about_bond(&mol, &mut c.points, a, b, t.to_radians());
                }
            }
            let (mh, ch) = with_hydrogens(&mol, &c);
            let name = match t {
                Some(t) => format!("{}_{:03}", f[0], t.round() as i64),
                None => f[0].to_string(),
            };
            let comment = format!(
                "{} {} twist {}",
                f[0],
                f[1],
                t.map_or("-".into(), |x| x.to_string())
            );
            let path = out.join(format!("{name}.xyz"));
            let mut file = std::fs::File::create(&path).expect("writable file");
            file.write_all(xyz_block(&mh, &ch, &comment).as_bytes())
                .unwrap();
        }
    }
}
