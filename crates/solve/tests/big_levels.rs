//! The orbit-reduced big-level path against the dense engine on levels both can solve.

mod common;

use common::*;
use rungs_solve::big::critical_temperature_big;
use rungs_solve::{critical_temperature, TcOptions};

#[test]
fn big_path_matches_the_dense_engine() {
    for (stem, lv) in [
        ("square", "plaquette"),
        ("square", "block3"),
        ("simple_cubic", "cube"),
        ("triangular", "triangles"),
    ] {
        let l = shipped(stem);
        let level = level(&l, lv);
        let dense = critical_temperature(&l, &level, TcOptions::default()).unwrap();
        let big = critical_temperature_big(&l, &level, TcOptions::default(), None).unwrap();
        let (td, tb) = (dense.tc.unwrap(), big.tc.unwrap());
        assert!(
            (td / tb - 1.0).abs() < 1e-8,
            "{stem}/{lv}: dense {td} vs big {tb}"
        );
        let (ad, ab) = (dense.amplitude.unwrap(), big.amplitude.unwrap());
        assert!(
            (ad / ab - 1.0).abs() < 1e-3,
            "{stem}/{lv}: amplitude dense {ad} vs big {ab}"
        );
        assert_eq!(big.kind, rungs_solve::ModeKind::Uniform);
    }
}
