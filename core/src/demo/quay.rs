//! Saltfen Quay: an invented freight yard on a river quay, generated in code. A flat concrete yard
//! with uneven hills behind it, a warehouse and an office with doorways and glazed windows, stairs up
//! to a catwalk, a gantry crane, stacked containers, a thin fence, a culvert a character can just fit
//! through, trees and bushes, and primitive props (bollards, crates, drums).

use glam::{DQuat, DVec3};
use serde_json::{Value, json};

use super::shapes::MeshBuilder;
use crate::level::Mesh;

/// One generated mesh object with its tags.
pub struct MeshObject {
    /// Node name in the `.glb`.
    pub name: String,
    /// Tags (node `extras.tags`).
    pub tags: Vec<&'static str>,
    /// Geometry in level coordinates.
    pub mesh: Mesh,
}

/// Size of the generated terrain: the demo's, or a finer one for large benchmark levels.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Detail {
    /// About 140 thousand triangles.
    Demo,
    /// At least this many triangles in all (terrain made finer to reach it).
    Triangles(usize),
}

/// Layout numbers shared by the geometry and the probe set (metres).
pub mod layout {
    /// The yard is flat concrete at y = 0 over this x range…
    pub const YARD_X: f64 = 64.0;
    /// …from the quay edge at z = QUAY_Z…
    pub const QUAY_Z: f64 = -40.0;
    /// …to the fence at z = FENCE_Z.
    pub const FENCE_Z: f64 = 44.0;
    /// Warehouse footprint [x0, z0, x1, z1], height and wall thickness.
    pub const WAREHOUSE: [f64; 4] = [10.0, 5.0, 40.0, 25.0];
    /// Warehouse wall height.
    pub const WAREHOUSE_HEIGHT: f64 = 8.0;
    /// Wall thickness of both buildings.
    pub const WALL: f64 = 0.3;
    /// Vehicle door in the warehouse's south wall: x range and height.
    pub const VEHICLE_DOOR: [f64; 3] = [18.0, 22.0, 4.5];
    /// Personnel door in the warehouse's south wall: x range and height.
    pub const PERSONNEL_DOOR: [f64; 3] = [30.0, 31.0, 2.2];
    /// West-wall windows of the warehouse: z centres; each 2 m wide, sill 2.5 m, head 3.7 m.
    pub const WAREHOUSE_WINDOWS: [f64; 3] = [9.0, 15.0, 21.0];
    /// Office footprint [x0, z0, x1, z1].
    pub const OFFICE: [f64; 4] = [-40.0, 15.0, -28.0, 25.0];
    /// Office door in its south wall: x range and height.
    pub const OFFICE_DOOR: [f64; 3] = [-34.5, -33.5, 2.2];
    /// Office south windows: x centres; each 2 m wide, sill 1.0 m, head 2.2 m.
    pub const OFFICE_WINDOWS: [f64; 2] = [-37.5, -30.5];
    /// Catwalk deck height (top) along the warehouse's east wall.
    pub const CATWALK_Y: f64 = 4.0;
    /// Catwalk x range (outside the east wall) and z range.
    pub const CATWALK: [f64; 4] = [40.0, 6.0, 41.4, 24.0];
    /// Culvert through the embankment: x range, z centre, inner half width, inner height.
    pub const CULVERT: [f64; 5] = [-52.0, -48.0, -15.0, 0.4, 1.9];
    /// Centre of the boulder in the yard's north-east corner (a closed mesh, 3 x 2 x 2.5 m radii).
    pub const BOULDER: glam::DVec3 = glam::DVec3::new(50.0, 1.0, 30.0);
    /// Embankment the culvert passes through: x range, z range, height.
    pub const EMBANKMENT: [f64; 5] = [-51.0, -49.0, -30.0, 0.0, 3.0];
    /// The spoil bank north of the office's yard: x range, and its profile across z (points (z, y)):
    /// a 55° face to the south (too steep to walk up), a flat top, a 25° back to the north.
    pub const SPOIL_BANK: (f64, f64, [(f64, f64); 4]) = (
        -24.0,
        -16.0,
        [(26.0, 0.0), (27.68, 2.4), (28.68, 2.4), (33.83, 0.0)],
    );
    /// Centre of the stone cairn by the office (a rock that lost a face).
    pub const CAIRN: glam::DVec3 = glam::DVec3::new(-45.0, 0.3, 8.0);
    /// The steel loading plate on the yard: min and max corners.
    pub const LOADING_PLATE: (glam::DVec3, glam::DVec3) = (
        glam::DVec3::new(-6.0, 0.0, -8.0),
        glam::DVec3::new(-3.0, 0.03, -6.0),
    );
}

use layout::*;

/// A small deterministic random source (SplitMix64; Steele, Lea & Flood, "Fast splittable
/// pseudorandom number generators", OOPSLA 2014), so the same seed gives the same level everywhere.
pub struct Random(u64);

impl Random {
    /// A generator from a seed.
    pub fn new(seed: u64) -> Random {
        Random(seed)
    }

    /// The next value in [0, 1).
    pub fn unit(&mut self) -> f64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^= z >> 31;
        (z >> 11) as f64 / (1u64 << 53) as f64
    }

    /// A value in [lo, hi).
    pub fn range(&mut self, lo: f64, hi: f64) -> f64 {
        lo + (hi - lo) * self.unit()
    }
}

/// Ground height: 0 over the yard, a quay drop to the river bed, uneven hills behind and beside.
pub fn ground_height(x: f64, z: f64) -> f64 {
    if z < QUAY_Z {
        return -4.5;
    }
    let outside = (x.abs() - YARD_X).max(z - FENCE_Z).max(0.0);
    let rise = smoothstep(0.0, 18.0, outside);
    let hills = 2.0
        + 0.05 * outside
        + 1.4 * (0.11 * x + 0.3).sin() * (0.09 * z).cos()
        + 0.7 * (0.23 * x - 0.17 * z).sin()
        + 0.3 * (0.61 * x + 0.47 * z).sin();
    rise * hills
}

fn smoothstep(a: f64, b: f64, x: f64) -> f64 {
    let t = ((x - a) / (b - a)).clamp(0.0, 1.0);
    t * t * (3.0 - 2.0 * t)
}

/// Every mesh object of the quay, in a fixed order.
pub fn mesh_objects(detail: Detail) -> Vec<MeshObject> {
    let mut objects = Vec::new();
    let mut add = |name: &str, tags: Vec<&'static str>, mb: MeshBuilder| {
        objects.push(MeshObject {
            name: name.to_string(),
            tags,
            mesh: mb.finish(),
        });
    };
    add("terrain", vec!["ground"], terrain(detail));
    let mut quay = MeshBuilder::new();
    quay.cuboid(
        DVec3::new(-100.0, -4.5, -41.5),
        DVec3::new(100.0, 0.0, QUAY_Z),
    );
    quay.cuboid(
        DVec3::new(-100.0, 0.0, QUAY_Z - 0.4),
        DVec3::new(100.0, 0.25, QUAY_Z),
    );
    add("quay-wall", vec!["ground"], quay);
    let (warehouse, warehouse_glass) = warehouse();
    add("warehouse", vec!["building"], warehouse);
    for (k, pane) in warehouse_glass.into_iter().enumerate() {
        add(&format!("warehouse-glass-{}", k + 1), vec![], pane);
    }
    let (office, office_glass) = office();
    add("office", vec!["building"], office);
    for (k, pane) in office_glass.into_iter().enumerate() {
        add(&format!("office-glass-{}", k + 1), vec![], pane);
    }
    add("catwalk", vec!["structure"], catwalk());
    add("stairs", vec!["structure"], stairs());
    add("crane", vec!["structure"], crane());
    add("culvert", vec!["vent"], culvert());
    add("embankment", vec!["ground"], embankment());
    add("north-fence", vec!["fence"], fence());
    let mut bank = MeshBuilder::new();
    bank.ridge(SPOIL_BANK.0, SPOIL_BANK.1, &SPOIL_BANK.2);
    add("spoil-bank", vec!["ground"], bank);
    let scatter = scatter();
    for (k, ((x, z), size)) in scatter.trees.iter().zip(&scatter.canopy_sizes).enumerate() {
        let (x, z) = (*x, *z);
        let y = ground_height(x, z) - 0.3;
        let mut trunk = MeshBuilder::new();
        trunk.prism(DVec3::new(x, y, z), 0.25, 4.6, 8);
        add(&format!("tree-{:02}-trunk", k + 1), vec!["tree"], trunk);
        let mut canopy = MeshBuilder::new();
        canopy.blob(
            DVec3::new(x, y + 5.8, z),
            DVec3::new(2.2, 2.8, 2.2) * *size,
            2,
        );
        add(
            &format!("tree-{:02}-canopy", k + 1),
            vec!["foliage"],
            canopy,
        );
    }
    let mut boulder = MeshBuilder::new();
    boulder.blob(BOULDER, DVec3::new(3.0, 2.0, 2.5), 2);
    add("boulder", vec!["rock"], boulder);
    for (k, centre) in scatter.bushes.iter().enumerate() {
        let mut bush = MeshBuilder::new();
        bush.blob(*centre, BUSH_RADII, 1);
        add(&format!("bush-{:02}", k + 1), vec!["foliage"], bush);
    }
    // Two planted faults for lint: a stone cairn that should be closed but lost a face, and a
    // steel plate whose top was exported twice.
    let mut cairn = MeshBuilder::new();
    cairn.blob(CAIRN, DVec3::new(0.8, 0.6, 0.8), 1);
    let mut cairn = cairn.finish();
    cairn.triangles.pop();
    objects.push(MeshObject {
        name: "stone-cairn".into(),
        tags: vec!["rock"],
        mesh: cairn,
    });
    let mut plate = MeshBuilder::new();
    plate.cuboid(LOADING_PLATE.0, LOADING_PLATE.1);
    let mut plate = plate.finish();
    let up: Vec<[u32; 3]> = plate
        .triangles
        .iter()
        .filter(|t| {
            let [a, b, c] = t.map(|i| plate.vertices[i as usize]);
            (b - a).cross(c - a).y > 0.0
        })
        .copied()
        .collect();
    plate.triangles.extend(up);
    objects.push(MeshObject {
        name: "loading-plate".into(),
        tags: vec!["ground"],
        mesh: plate,
    });
    objects
}

fn terrain(detail: Detail) -> MeshBuilder {
    let (x0, x1, z0, z1) = (-100.0, 100.0, -70.0, 100.0);
    let cells = match detail {
        Detail::Demo => (250, 210),
        Detail::Triangles(n) => {
            // Two triangles a cell over a 200 x 170 m area; everything else is about 15 thousand.
            let wanted = (n.saturating_sub(14_000) / 2).max(1) as f64;
            let columns = (wanted * 200.0 / 170.0).sqrt().ceil() as usize;
            (columns, (wanted / columns as f64).ceil() as usize)
        }
    };
    let mut mb = MeshBuilder::new();
    mb.height_grid((x0, x1, cells.0), (z0, z1, cells.1), &ground_height);
    mb
}

/// Which wall of a rectangular building an opening is in.
#[derive(Clone, Copy, PartialEq)]
enum Side {
    South,
    North,
    West,
    East,
}

/// An opening: the wall, the range along it (x for south/north walls, z for west/east), the range
/// of heights, and whether a glass pane fills it (a window) or not (a door).
struct Opening {
    side: Side,
    along: (f64, f64),
    height: (f64, f64),
    glazed: bool,
}

/// Walls with openings, and a roof, for a building of footprint [x0, z0, x1, z1]; walls lie inside the
/// footprint. Returns the building and a thin glass pane for every glazed opening.
fn building(
    footprint: [f64; 4],
    height: f64,
    openings: &[Opening],
) -> (MeshBuilder, Vec<MeshBuilder>) {
    let [x0, z0, x1, z1] = footprint;
    let mut mb = MeshBuilder::new();
    let mut panes = Vec::new();
    for side in [Side::South, Side::North, Side::West, Side::East] {
        // The wall as a strip: `along` runs over [a0, a1]; `across` is its thickness range.
        let (a0, a1, across) = match side {
            Side::South => (x0, x1, (z0, z0 + WALL)),
            Side::North => (x0, x1, (z1 - WALL, z1)),
            Side::West => (z0 + WALL, z1 - WALL, (x0, x0 + WALL)),
            Side::East => (z0 + WALL, z1 - WALL, (x1 - WALL, x1)),
        };
        let place = |along: (f64, f64), up: (f64, f64), thickness: (f64, f64)| match side {
            Side::South | Side::North => (
                DVec3::new(along.0, up.0, thickness.0),
                DVec3::new(along.1, up.1, thickness.1),
            ),
            Side::West | Side::East => (
                DVec3::new(thickness.0, up.0, along.0),
                DVec3::new(thickness.1, up.1, along.1),
            ),
        };
        let mut holes: Vec<&Opening> = openings.iter().filter(|o| o.side == side).collect();
        holes.sort_by(|a, b| a.along.0.total_cmp(&b.along.0));
        let mut cursor = a0;
        for hole in holes {
            if hole.along.0 > cursor {
                let (lo, hi) = place((cursor, hole.along.0), (0.0, height), across);
                mb.cuboid(lo, hi);
            }
            if hole.height.0 > 0.0 {
                let (lo, hi) = place(hole.along, (0.0, hole.height.0), across);
                mb.cuboid(lo, hi);
            }
            if hole.glazed {
                let middle = (across.0 + across.1) * 0.5;
                let (lo, hi) = place(hole.along, hole.height, (middle - 0.01, middle + 0.01));
                let mut pane = MeshBuilder::new();
                pane.cuboid(lo, hi);
                panes.push(pane);
            }
            let (lo, hi) = place(hole.along, (hole.height.1, height), across);
            mb.cuboid(lo, hi);
            cursor = hole.along.1;
        }
        if cursor < a1 {
            let (lo, hi) = place((cursor, a1), (0.0, height), across);
            mb.cuboid(lo, hi);
        }
    }
    mb.cuboid(
        DVec3::new(x0 - 0.2, height, z0 - 0.2),
        DVec3::new(x1 + 0.2, height + 0.3, z1 + 0.2),
    );
    (mb, panes)
}

fn warehouse() -> (MeshBuilder, Vec<MeshBuilder>) {
    let mut openings = vec![
        Opening {
            side: Side::South,
            along: (VEHICLE_DOOR[0], VEHICLE_DOOR[1]),
            height: (0.0, VEHICLE_DOOR[2]),
            glazed: false,
        },
        Opening {
            side: Side::South,
            along: (PERSONNEL_DOOR[0], PERSONNEL_DOOR[1]),
            height: (0.0, PERSONNEL_DOOR[2]),
            glazed: false,
        },
        Opening {
            side: Side::East,
            along: (14.0, 15.2),
            height: (CATWALK_Y, CATWALK_Y + 2.2),
            glazed: false,
        },
    ];
    for z in WAREHOUSE_WINDOWS {
        openings.push(Opening {
            side: Side::West,
            along: (z - 1.0, z + 1.0),
            height: (2.5, 3.7),
            glazed: true,
        });
    }
    building(WAREHOUSE, WAREHOUSE_HEIGHT, &openings)
}

fn office() -> (MeshBuilder, Vec<MeshBuilder>) {
    let mut openings = vec![Opening {
        side: Side::South,
        along: (OFFICE_DOOR[0], OFFICE_DOOR[1]),
        height: (0.0, OFFICE_DOOR[2]),
        glazed: false,
    }];
    for x in OFFICE_WINDOWS {
        openings.push(Opening {
            side: Side::South,
            along: (x - 1.0, x + 1.0),
            height: (1.0, 2.2),
            glazed: true,
        });
    }
    building(OFFICE, 4.0, &openings)
}

fn catwalk() -> MeshBuilder {
    let [cx0, cz0, cx1, cz1] = CATWALK;
    let mut mb = MeshBuilder::new();
    mb.cuboid(
        DVec3::new(cx0, CATWALK_Y - 0.2, cz0),
        DVec3::new(cx1, CATWALK_Y, cz1),
    );
    // Railing on the open side: posts every 2 m, a mid rail and a top rail.
    let mut z = cz0;
    while z <= cz1 + 1e-9 {
        mb.cuboid(
            DVec3::new(cx1 - 0.05, CATWALK_Y, z - 0.025),
            DVec3::new(cx1, CATWALK_Y + 1.0, z + 0.025),
        );
        z += 2.0;
    }
    for y in [CATWALK_Y + 0.5, CATWALK_Y + 0.95] {
        mb.cuboid(
            DVec3::new(cx1 - 0.05, y, cz0),
            DVec3::new(cx1, y + 0.05, cz1),
        );
    }
    mb
}

/// Twenty solid steps of 0.2 m rise and 0.3 m run climbing north to the catwalk's south end.
fn stairs() -> MeshBuilder {
    let [cx0, cz0, cx1, _] = CATWALK;
    let mut mb = MeshBuilder::new();
    for k in 1..=20 {
        let z1 = cz0 - 0.3 * (20 - k) as f64;
        mb.cuboid(
            DVec3::new(cx0, 0.0, z1 - 0.3),
            DVec3::new(cx1, 0.2 * k as f64, z1),
        );
    }
    mb
}

/// The gantry crane. Its south legs stand 12 cm into the first row of containers: a fault left in
/// on purpose for lint to find.
fn crane() -> MeshBuilder {
    let mut mb = MeshBuilder::new();
    for x in [-12.0, 12.0] {
        for z in [-38.5, -32.5] {
            mb.cuboid(
                DVec3::new(x - 0.4, 0.0, z - 0.4),
                DVec3::new(x + 0.4, 10.0, z + 0.4),
            );
        }
        mb.cuboid(
            DVec3::new(x - 0.4, 10.0, -39.0),
            DVec3::new(x + 0.4, 11.0, -32.0),
        );
    }
    for z in [-38.5, -32.5] {
        mb.cuboid(
            DVec3::new(-13.0, 10.0, z - 0.5),
            DVec3::new(13.0, 11.0, z + 0.5),
        );
    }
    mb.cuboid(DVec3::new(-1.2, 7.8, -36.4), DVec3::new(1.2, 10.0, -34.6));
    mb
}

fn culvert() -> MeshBuilder {
    let [x0, x1, zc, half, h] = CULVERT;
    let t = 0.15;
    let mut mb = MeshBuilder::new();
    mb.cuboid(
        DVec3::new(x0, 0.0, zc - half - t),
        DVec3::new(x1, h, zc - half),
    );
    mb.cuboid(
        DVec3::new(x0, 0.0, zc + half),
        DVec3::new(x1, h, zc + half + t),
    );
    mb.cuboid(
        DVec3::new(x0, h, zc - half - t),
        DVec3::new(x1, h + t, zc + half + t),
    );
    mb
}

fn embankment() -> MeshBuilder {
    let [x0, x1, z0, z1, h] = EMBANKMENT;
    let [_, _, zc, half, ch] = CULVERT;
    let outer = half + 0.15;
    let mut mb = MeshBuilder::new();
    mb.cuboid(DVec3::new(x0, 0.0, z0), DVec3::new(x1, h, zc - outer));
    mb.cuboid(DVec3::new(x0, 0.0, zc + outer), DVec3::new(x1, h, z1));
    mb.cuboid(
        DVec3::new(x0, ch + 0.15, zc - outer),
        DVec3::new(x1, h, zc + outer),
    );
    mb
}

/// A 1.8 m fence of 2 cm mesh panels between posts along the yard's north edge, open at the gate.
fn fence() -> MeshBuilder {
    let mut mb = MeshBuilder::new();
    let mut x = -YARD_X;
    while x < YARD_X - 1e-9 {
        let next = x + 2.5;
        mb.cuboid(
            DVec3::new(x - 0.04, 0.0, FENCE_Z - 0.04),
            DVec3::new(x + 0.04, 1.9, FENCE_Z + 0.04),
        );
        let in_gate = x >= -5.0 && next <= 5.0;
        if !in_gate {
            mb.cuboid(
                DVec3::new(x + 0.04, 0.05, FENCE_Z - 0.01),
                DVec3::new(next - 0.04, 1.8, FENCE_Z + 0.01),
            );
        }
        x = next;
    }
    mb.cuboid(
        DVec3::new(x - 0.04, 0.0, FENCE_Z - 0.04),
        DVec3::new(x + 0.04, 1.9, FENCE_Z + 0.04),
    );
    mb
}

/// Where the trees and bushes stand, drawn from one random sequence.
pub struct Scatter {
    /// Tree positions (x, z).
    pub trees: Vec<(f64, f64)>,
    /// Each tree's canopy size factor.
    pub canopy_sizes: Vec<f64>,
    /// Bush centres.
    pub bushes: Vec<DVec3>,
}

/// The radii of every bush.
pub const BUSH_RADII: DVec3 = DVec3::new(1.1, 0.75, 0.9);

/// Trees along the yard's west edge and on the hills, and a row of bushes along the fence.
pub fn scatter() -> Scatter {
    let mut random = Random::new(0x5A17_F3E2);
    let trees = tree_spots(&mut random);
    let canopy_sizes = trees.iter().map(|_| random.range(0.85, 1.2)).collect();
    let bushes = (0..12)
        .map(|k| {
            let x = -58.0 + 10.0 * k as f64 + random.range(-1.5, 1.5);
            DVec3::new(x, 0.35, FENCE_Z - 1.4)
        })
        .collect();
    Scatter {
        trees,
        canopy_sizes,
        bushes,
    }
}

/// Tree positions: a row along the yard's west edge and a scatter on the hills.
fn tree_spots(random: &mut Random) -> Vec<(f64, f64)> {
    let mut spots: Vec<(f64, f64)> = (0..5).map(|k| (-60.0, -30.0 + 15.0 * k as f64)).collect();
    while spots.len() < 34 {
        let (x, z) = (random.range(-92.0, 92.0), random.range(52.0, 96.0));
        if spots.iter().all(|(a, b)| (a - x).hypot(b - z) > 7.0) {
            spots.push((x, z));
        }
    }
    spots
}

/// A container: name, centre; all are 6.06 x 2.59 x 2.44 m boxes lying along X.
pub fn containers() -> Vec<(String, DVec3)> {
    let mut random = Random::new(0xC0_47A1);
    let mut out = Vec::new();
    for z in [-31.0, -27.9, -19.1, -16.0] {
        for x in [-21.0, -14.5, -8.0] {
            let stack = 1 + (random.unit() * 3.0) as usize;
            for level in 0..stack {
                let k = out.len() + 1;
                out.push((
                    format!("container-{k:02}"),
                    DVec3::new(x, 1.295 + 2.59 * level as f64, z),
                ));
            }
        }
    }
    out
}

/// Container half extents.
pub const CONTAINER_HALF: [f64; 3] = [3.03, 1.295, 1.22];

/// Crates (0.6 m cubes resting on a floor): name and centre.
pub fn crates() -> Vec<(&'static str, DVec3)> {
    vec![
        ("crate-1", DVec3::new(4.0, 0.3, -10.0)),
        ("crate-2", DVec3::new(-2.0, 0.3, 8.0)),
        ("crate-3", DVec3::new(25.0, 0.3, 15.0)),
        ("crate-4", DVec3::new(-45.0, 0.3, 30.0)),
        ("crate-5", DVec3::new(40.7, CATWALK_Y + 0.3, 20.0)),
        ("crate-6", DVec3::new(-33.0, 0.3, 20.0)),
    ]
}

/// Bollards along the quay edge: name and centre (capsules 1 m tall).
pub fn bollards() -> Vec<(String, DVec3)> {
    (0..13)
        .map(|k| {
            (
                format!("bollard-{:02}", k + 1),
                DVec3::new(-48.0 + 8.0 * k as f64, 0.5, QUAY_Z + 0.8),
            )
        })
        .collect()
}

/// Drums (cylinders 0.9 m tall): name and centre.
pub fn drums() -> Vec<(&'static str, DVec3)> {
    vec![
        ("drum-1", DVec3::new(8.0, 0.45, 3.0)),
        ("drum-2", DVec3::new(8.7, 0.45, 3.4)),
        ("drum-3", DVec3::new(-26.0, 0.45, 13.0)),
    ]
}

/// The changes the edited level makes: a container moved into the gate's sightline, the warehouse
/// personnel door narrowed by a half-open door leaf, and crate 2 lifted 0.3 m off the ground.
pub struct Edits {
    /// Which container moves, and where to.
    pub moved_container: (&'static str, DVec3),
    /// The door leaf's centre and half extents.
    pub door_leaf: (DVec3, [f64; 3]),
    /// Which crate is lifted, and by how much.
    pub lifted_crate: (&'static str, f64),
}

/// The edits of the edited demo level.
pub fn edits() -> Edits {
    Edits {
        moved_container: ("container-03", DVec3::new(10.0, 1.295, -15.0)),
        door_leaf: (
            DVec3::new(PERSONNEL_DOOR[0] + 0.2, 1.05, WAREHOUSE[1] - 0.05),
            [0.2, 1.05, 0.025],
        ),
        lifted_crate: ("crate-2", 0.3),
    }
}

/// The level file of the quay: the `.glb` of meshes plus primitive props, with a tag rule for glass.
/// With `edited`, the three [`edits`] are applied.
pub fn level_file(glb_name: &str, edited: bool) -> Value {
    let e = edits();
    let mut objects = vec![json!({"name": "yard", "mesh": glb_name})];
    for (name, mut at) in containers() {
        if edited && name == e.moved_container.0 {
            at = e.moved_container.1;
        }
        objects.push(
            json!({"name": name, "tags": ["container"], "translation": at.to_array(),
            "shape": {"type": "box", "half_extents": CONTAINER_HALF}}),
        );
    }
    for (name, mut at) in crates() {
        if edited && name == e.lifted_crate.0 {
            at.y += e.lifted_crate.1;
        }
        objects.push(
            json!({"name": name, "tags": ["pickup", "prop"], "translation": at.to_array(),
            "shape": {"type": "box", "half_extents": [0.3, 0.3, 0.3]}}),
        );
    }
    let (name, at) = FLOATING_CRATE;
    objects.push(
        json!({"name": name, "tags": ["pickup", "prop"], "translation": at.to_array(),
        "shape": {"type": "box", "half_extents": [0.3, 0.3, 0.3]}}),
    );
    for (name, at) in bollards() {
        objects.push(
            json!({"name": name, "tags": ["bollard"], "translation": at.to_array(),
            "shape": {"type": "capsule", "radius": 0.15, "half_height": 0.35}}),
        );
    }
    for (name, at) in drums() {
        objects.push(json!({"name": name, "tags": ["drum", "prop"], "translation": at.to_array(),
            "rotation": DQuat::IDENTITY.to_array(), "shape": {"type": "cylinder", "radius": 0.3, "half_height": 0.45}}));
    }
    for (name, at) in spawn_pads() {
        objects.push(
            json!({"name": name, "tags": ["spawn"], "translation": at.to_array(),
            "shape": {"type": "cylinder", "radius": 0.3, "half_height": 0.02}}),
        );
    }
    for (name, at, half) in lookouts() {
        objects.push(
            json!({"name": name, "tags": ["lookout"], "translation": at.to_array(),
            "shape": {"type": "box", "half_extents": half}}),
        );
    }
    for (name, tags, at, half) in volumes() {
        objects.push(json!({"name": name, "tags": tags, "volume": true,
            "translation": at.to_array(), "shape": {"type": "box", "half_extents": half}}));
    }
    if edited {
        let (at, half) = e.door_leaf;
        objects.push(
            json!({"name": "personnel-door-leaf", "tags": ["door"], "translation": at.to_array(),
            "shape": {"type": "box", "half_extents": half}}),
        );
    }
    json!({
        "plumbline": "level",
        "version": 1,
        "up": [0.0, 1.0, 0.0],
        "tag_rules": [{"match": "*glass*", "tags": ["glass"]}],
        "objects": objects,
        "lint": lint_section(),
    })
}

/// The quay's volumes (boxes that block nothing): name, tags, centre and half extents. A no-camera
/// zone around the crane's cab above the camera's path along the quay, a checkpoint at the foot of
/// the catwalk stairs, and the river below the quay (its bottom kept a little off the river bed, so
/// the two are told apart in the view).
pub fn volumes() -> Vec<(&'static str, Vec<&'static str>, DVec3, [f64; 3])> {
    vec![
        (
            "no-camera-cab",
            vec!["no-camera"],
            DVec3::new(0.0, 9.3, -36.5),
            [3.0, 1.2, 1.5],
        ),
        (
            "checkpoint-stairs",
            vec!["checkpoint"],
            DVec3::new(40.7, 1.5, -1.0),
            [1.0, 1.5, 0.5],
        ),
        (
            "river",
            vec!["water"],
            DVec3::new(0.0, -2.7, QUAY_Z - 11.5),
            [100.0, 1.7, 10.0],
        ),
    ]
}

/// What the quay's level file tells lint: rocks must be closed, and the findings its authors
/// accept, each with the reason.
fn lint_section() -> Value {
    json!({
        "closed": {"tags": ["rock"]},
        "props": {"tags": ["prop"]},
        "allow": [
            {"finding": "overlap",
             "objects": ["yard/terrain", "yard/tree-*", "yard/bush-*", "yard/boulder", "yard/stone-*"],
             "why": "trees, bushes and rocks are set into the ground, and each canopy sits on its trunk"},
            {"finding": "overlap", "objects": ["yard/terrain", "yard/quay-wall", "yard/north-fence"],
             "why": "the quay's bank and the fence's east end meet the terrain's slope below ground"},
            {"finding": "duplicate-faces", "objects": ["yard/catwalk", "yard/crane"],
             "why": "railings and crane beams are boxes that overlap where they join"},
            {"finding": "slivers", "objects": ["yard/quay-wall"],
             "why": "the quay's kerb is one 200 m box, so its 25 cm faces are long thin triangles"}
        ]
    })
}

/// Spawn pads (flat discs 0.6 m across on the floor, tagged `spawn`): name and centre. One lies in
/// a bush by the fence, on purpose.
pub fn spawn_pads() -> Vec<(String, DVec3)> {
    let bush = scatter().bushes[4];
    vec![
        ("spawn-pad-east".into(), DVec3::new(30.0, 0.02, -20.0)),
        ("spawn-pad-west".into(), DVec3::new(-40.0, 0.02, -5.0)),
        ("spawn-pad-warehouse".into(), DVec3::new(15.0, 0.02, 20.0)),
        ("spawn-pad-office".into(), DVec3::new(-37.0, 0.02, 22.0)),
        ("spawn-pad-hedge".into(), DVec3::new(bush.x, 0.02, bush.z)),
    ]
}

/// Lookout platforms (thin boxes tagged `lookout`; a spot stands 1.7 m above each): name, centre
/// and half extents.
pub fn lookouts() -> Vec<(&'static str, DVec3, [f64; 3])> {
    let hill = |x: f64, z: f64| {
        // Level on the slope, its highest corner just into the ground (within lint's tolerance).
        let top = [(-0.5, -0.5), (-0.5, 0.5), (0.5, -0.5), (0.5, 0.5)]
            .map(|(dx, dz)| ground_height(x + dx, z + dz))
            .into_iter()
            .fold(f64::MIN, f64::max);
        DVec3::new(x, top + 0.045, z)
    };
    vec![
        (
            "lookout-gate",
            DVec3::new(0.0, 0.05, QUAY_Z + 3.0),
            [0.5, 0.05, 0.5],
        ),
        (
            "lookout-crane",
            DVec3::new(12.0, 11.05, -35.5),
            [0.4, 0.05, 0.5],
        ),
        (
            "lookout-catwalk",
            DVec3::new(40.7, CATWALK_Y + 0.05, 23.0),
            [0.3, 0.05, 0.3],
        ),
        (
            "lookout-warehouse-roof",
            DVec3::new(25.0, 8.35, 10.0),
            [0.5, 0.05, 0.5],
        ),
        ("lookout-hill", hill(-6.0, 80.0), [0.5, 0.05, 0.5]),
    ]
}

/// The crate that floats a quarter of a metre above the yard, on purpose: name and centre.
pub const FLOATING_CRATE: (&str, DVec3) = ("crate-7", DVec3::new(12.0, 0.55, 2.0));
