//! No probe a user can write panics the query core: extreme but finite numbers, tiny and huge
//! shapes, degenerate paths. Each probe is answered or reported as an error.

use crate::common;

use common::{LevelBuilder, box_mesh};
use glam::DVec3;
use plumbline_core::check::answer_probe;
use plumbline_core::probe::parse_probe_set;
use proptest::prelude::*;

fn number() -> impl Strategy<Value = f64> {
    prop_oneof![
        Just(0.0),
        Just(-0.0),
        Just(1.0),
        Just(-1.0),
        Just(1e-300),
        Just(1e300),
        Just(-1e300),
        Just(1e15),
        Just(1e6),
        -10.0f64..10.0,
    ]
}

fn point() -> impl Strategy<Value = [f64; 3]> {
    [number(), number(), number()]
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 400, ..ProptestConfig::default() })]

    #[test]
    fn extreme_probes_never_panic(a in point(), b in point(), c in point(), size in number(), kind in 0usize..6) {
        let (v, t) = box_mesh(DVec3::ZERO, DVec3::ONE);
        let world = LevelBuilder::new().mesh("block", v, t).world();
        let fmt = |p: [f64; 3]| format!("[{:e}, {:e}, {:e}]", p[0], p[1], p[2]);
        let r = format!("{:e}", size.abs());
        let probe = match kind {
            0 => format!(r#"{{"id": "p", "kind": "ray", "from": {}, "to": {}, "hits": "all"}}"#, fmt(a), fmt(b)),
            1 => format!(r#"{{"id": "p", "kind": "sweep", "shape": {{"type": "sphere", "radius": {r}}}, "path": [{}, {}, {}], "clearance": true}}"#, fmt(a), fmt(b), fmt(c)),
            2 => format!(r#"{{"id": "p", "kind": "sweep", "shape": {{"type": "box", "half_extents": [{r}, 1, {r}]}}, "path": [{}, {}], "hits": "all"}}"#, fmt(a), fmt(b)),
            3 => format!(r#"{{"id": "p", "kind": "closest", "shape": {{"type": "capsule", "radius": {r}, "half_height": 1}}, "at": {}, "max_distance": {r}}}"#, fmt(a)),
            4 => format!(r#"{{"id": "p", "kind": "closest", "shape": {{"type": "point"}}, "at": {}, "max_distance": 1e300}}"#, fmt(a)),
            _ => format!(r#"{{"id": "p", "kind": "overlap", "shape": {{"type": "cylinder", "radius": {r}, "half_height": {r}}}, "at": {}}}"#, fmt(a)),
        };
        let text = format!(r#"{{"plumbline": "probes", "version": 1, "level": "x.level.json", "probes": [{probe}]}}"#);
        // Either the probe set is refused with a message, or every probe gets an answer or an error.
        if let Ok(set) = parse_probe_set(std::path::Path::new("fuzz.probes.json"), &text) {
            for p in &set.probes {
                let _ = answer_probe(&world, p);
            }
        }
    }
}
