//! Ray trees: BVHs with eight children per node whose boxes are stored in `f32`, rounded outwards,
//! and tested eight at a time (in one AVX register where the processor has AVX, else in two SSE
//! halves), a few items to a leaf. Ray probes walk one over every triangle and primitive of the
//! world ([`super::ray_index`]) instead of parry's general-purpose BVHs (binary trees of `f64`
//! boxes, one item per leaf, a tree of bodies over a tree per mesh), which their profile showed
//! spending most of its time in box tests.
//!
//! A tree only chooses which items to test; the exact `f64` tests decide. So it must be
//! conservative: it may offer a triangle the ray misses, never skip one it meets. Boxes are rounded
//! outwards when stored, and every box test is padded by more than its rounding can lose
//! ([`TreeRay::new`]): the subtraction, the rounded inverse direction and the product each err by at
//! most an `f32` ulp of the largest magnitude involved (Ize, "Robust BVH Ray Traversal", JCGT 2(2),
//! 2013, §3), and the pad is several times that. Coordinates are stored relative to the tree's
//! centre, so a level far from the origin keeps tight boxes.
//!
//! Built by binned surface-area heuristic (Wald, "On fast Construction of SAH-based Bounding Volume
//! Hierarchies", IEEE Symposium on Interactive Ray Tracing, 2007), each node split three times to
//! give eight children; below [`SAH_DEPTH`] splits it cuts at the median instead, which bounds the
//! depth.

use std::ops::Range;

use arrayvec::ArrayVec;
use glam::DVec3;
use rayon::prelude::*;
use wide::{f32x4, f32x8};

/// Bins per axis of the surface-area heuristic.
const BINS: usize = 12;

/// Binary splits by surface-area heuristic before median splits take over: with at most 2³²
/// items the tree is at most `(SAH_DEPTH + 32) / SPLITS` nodes deep, which sizes the walk's stack.
const SAH_DEPTH: usize = 40;

/// Children per node: boxes tested in one row of lanes.
const WIDTH: usize = 8;

/// Binary splits that make a node's children (`WIDTH` is their power of two).
const SPLITS: usize = WIDTH.trailing_zeros() as usize;

/// A row of lanes, one per child.
type Lanes = f32x8;

/// Room on the walk's stack: at most `(SAH_DEPTH + 32) / SPLITS` nodes deep (rounded up), and each
/// node visited pushes at most `WIDTH` children and pops itself.
const STACK: usize = (WIDTH - 1) * (SAH_DEPTH + 32).div_ceil(SPLITS) + WIDTH;

/// Groups of more items than this are binned along one axis only.
const ONE_AXIS_ITEMS: usize = 256;

/// Subtrees of at least this many items are built on the thread pool, in parallel.
const PARALLEL_ITEMS: usize = 1 << 15;

/// How much a box test is padded beyond rounding, in metres (a tenth of a micrometre, far below
/// any modelled detail).
const SLACK: f64 = 1e-7;

/// A child slot: [`EMPTY`], a node index, or a leaf ([`LEAF_BIT`] set; its first item in
/// [`LEAF_START_BITS`] bits, then how many).
type Child = u32;

/// A slot with nothing in it; its box is a point at +∞, which no ray reaches.
const EMPTY: Child = u32::MAX;

/// Marks a slot that holds a leaf.
const LEAF_BIT: u32 = 1 << 31;

/// Bits of a leaf's first item: a tree holds fewer than 2²⁸ items (the loaders refuse levels of
/// more than [`crate::input::MAX_TRIANGLES`], twenty million, triangles, and a level file of more
/// than [`crate::input::MAX_FILE_BYTES`], which holds far fewer primitives than that).
const LEAF_START_BITS: u32 = 28;

/// `child` of a subtree built on its own, once its nodes are appended `offset` places on.
fn moved(child: Child, offset: u32) -> Child {
    if child == EMPTY || child & LEAF_BIT != 0 {
        child
    } else {
        child + offset
    }
}

/// A leaf of `len` items from position `start` of the leaf order.
fn leaf(start: usize, len: usize) -> Child {
    assert!(start < 1 << LEAF_START_BITS && len < 1 << (31 - LEAF_START_BITS));
    LEAF_BIT | (len as u32) << LEAF_START_BITS | start as u32
}

/// The children's boxes, one coordinate per lane, and what each child holds.
#[derive(Debug, Clone)]
struct WideNode {
    lo: [Lanes; 3],
    hi: [Lanes; 3],
    children: [Child; WIDTH],
}

/// Where a ray tree measures its `f32` coordinates from: the centre of what it holds, and how far
/// from it anything lies (which sizes the box tests' padding).
#[derive(Debug, Clone, Copy)]
pub(crate) struct RayFrame {
    /// The coordinates' origin: the centre of the items' box.
    center: DVec3,
    /// The largest magnitude of any coordinate relative to `center`, with a hair to spare.
    extent: f64,
}

impl RayFrame {
    /// The frame of everything in the box `lo ..= hi`.
    pub fn around(lo: DVec3, hi: DVec3) -> RayFrame {
        if !(lo.is_finite() && hi.is_finite() && lo.cmple(hi).all()) {
            return RayFrame {
                center: DVec3::ZERO,
                extent: 0.0,
            };
        }
        let center = (lo + hi) * 0.5;
        let extent = (lo - center).abs().max((hi - center).abs()).max_element();
        // Stored boxes round outwards, by a hair more than the box.
        RayFrame {
            center,
            extent: extent * (1.0 + 1e-6),
        }
    }
}

/// A ray tree over some items (see the module documentation).
#[derive(Debug)]
pub(crate) struct RayTree {
    frame: RayFrame,
    nodes: Vec<WideNode>,
    /// The whole tree: a node, or one leaf when the items fit in one.
    root: Child,
    /// How many items it holds.
    count: usize,
}

/// A ray prepared for a tree's frame: its origin relative to the frame's centre, moved by the pad,
/// and its inverse direction, in `f32` (spread across a node's lanes as each box test needs them).
pub(crate) struct TreeRay {
    /// Origin + pad on every axis: where the boxes' low sides are measured from.
    from_lo: [f32; 3],
    /// Origin − pad on every axis: where the boxes' high sides are measured from.
    from_hi: [f32; 3],
    inv_dir: [f32; 3],
    /// The ray starts too far away for finite `f32` box tests (beyond ~1e30 m), which the padding
    /// argument needs: every item is offered instead.
    beyond_f32: bool,
}

impl TreeRay {
    /// Prepares the ray `from + t * dir` (`dir` a unit vector) for box tests in `frame`.
    ///
    /// Every `f32` step errs by at most one ulp of `m`, the largest magnitude involved (a stored
    /// coordinate, the origin, or their difference is at most `extent + |origin|`): the rounded
    /// origin and pad half an ulp, the subtraction one, the rounded inverse and the product one each
    /// relative to a slab distance no larger than `m / |dir|`. Padding every box by `2⁻¹⁹ m` (16
    /// ulps of `m`) and [`SLACK`] covers them with room to spare. A direction component too small
    /// for an `f32` inverse is given a huge finite one, which moves the ray sideways by less than
    /// the pad over any distance a level holds, and keeps `0 × ∞` (NaN) out of the lanes.
    pub fn new(frame: RayFrame, from: DVec3, dir: DVec3) -> TreeRay {
        let origin = from - frame.center;
        let m = frame.extent + origin.abs().max_element();
        let beyond_f32 = m.is_nan() || m >= 1e30;
        let pad = m * (1.0 / 524_288.0) + SLACK;
        // ±∞ (a zero component) and anything beyond ±1e30 become ±1e30, keeping the sign.
        let inv = (1.0 / dir).clamp(DVec3::splat(-1e30), DVec3::splat(1e30));
        let single = |v: DVec3| [v.x as f32, v.y as f32, v.z as f32];
        TreeRay {
            from_lo: single(origin + pad),
            from_hi: single(origin - pad),
            inv_dir: single(inv),
            beyond_f32,
        }
    }

    /// Which of the node's boxes the ray meets within `0 ..= reach` (bit `k` for child `k`),
    /// and where it enters each.
    #[inline(always)]
    fn entries(&self, node: &WideNode, reach: f32) -> (u32, [f32; WIDTH]) {
        let mut near = Lanes::splat(0.0);
        let mut far = Lanes::splat(reach);
        for k in 0..3 {
            let inv = Lanes::splat(self.inv_dir[k]);
            let a = (node.lo[k] - Lanes::splat(self.from_lo[k])) * inv;
            let b = (node.hi[k] - Lanes::splat(self.from_hi[k])) * inv;
            near = near.fast_max(a.fast_min(b));
            far = far.fast_min(a.fast_max(b));
        }
        (near.simd_le(far).to_bitmask(), near.to_array())
    }

    /// [`TreeRay::entries`] in AVX's eight-lane registers: the same IEEE operations lane by lane
    /// (difference, product, minimum, maximum, `<=`; no lane holds a NaN), so the same answer bit
    /// for bit, in half the instructions of the portable lanes' two halves.
    #[cfg(target_arch = "x86_64")]
    #[target_feature(enable = "avx")]
    fn entries_avx(&self, node: &WideNode, reach: f32) -> (u32, [f32; WIDTH]) {
        use std::arch::x86_64::*;
        // SAFETY: each `Lanes` is eight `f32` in lane order, 32 readable bytes behind the reference.
        let row = |lanes: &Lanes| unsafe { _mm256_loadu_ps(lanes.as_array().as_ptr()) };
        let mut near = _mm256_setzero_ps();
        let mut far = _mm256_set1_ps(reach);
        for k in 0..3 {
            let inv = _mm256_set1_ps(self.inv_dir[k]);
            let (from_lo, from_hi) = (
                _mm256_set1_ps(self.from_lo[k]),
                _mm256_set1_ps(self.from_hi[k]),
            );
            let a = _mm256_mul_ps(_mm256_sub_ps(row(&node.lo[k]), from_lo), inv);
            let b = _mm256_mul_ps(_mm256_sub_ps(row(&node.hi[k]), from_hi), inv);
            near = _mm256_max_ps(near, _mm256_min_ps(a, b));
            far = _mm256_min_ps(far, _mm256_max_ps(a, b));
        }
        let met = _mm256_movemask_ps(_mm256_cmp_ps::<_CMP_LE_OQ>(near, far)) as u32;
        let mut entries = [0.0; WIDTH];
        // SAFETY: `entries` is eight writable `f32`.
        unsafe { _mm256_storeu_ps(entries.as_mut_ptr(), near) };
        (met, entries)
    }
}

/// `x` as an `f32` no greater than it.
fn down(x: f64) -> f32 {
    let y = x as f32;
    if f64::from(y) > x { y.next_down() } else { y }
}

/// `x` as an `f32` no less than it.
fn up(x: f64) -> f32 {
    let y = x as f32;
    if f64::from(y) < x { y.next_up() } else { y }
}

/// A box during building: `f32` lanes x, y, z (the fourth kept at 0) measured from the frame's
/// centre, rounded outwards, so that a union of item boxes holds everything the items hold.
#[derive(Debug, Clone, Copy)]
struct Bounds {
    lo: f32x4,
    hi: f32x4,
}

impl Bounds {
    const EMPTY: Bounds = Bounds {
        lo: f32x4::new([f32::INFINITY, f32::INFINITY, f32::INFINITY, 0.0]),
        hi: f32x4::new([f32::NEG_INFINITY, f32::NEG_INFINITY, f32::NEG_INFINITY, 0.0]),
    };

    /// The box `lo ..= hi` (in level coordinates) measured from `center`, rounded outwards.
    fn around(lo: DVec3, hi: DVec3, center: DVec3) -> Bounds {
        let (lo, hi) = (lo - center, hi - center);
        Bounds {
            lo: f32x4::new([down(lo.x), down(lo.y), down(lo.z), 0.0]),
            hi: f32x4::new([up(hi.x), up(hi.y), up(hi.z), 0.0]),
        }
    }

    fn grow(self, other: Bounds) -> Bounds {
        Bounds {
            lo: self.lo.fast_min(other.lo),
            hi: self.hi.fast_max(other.hi),
        }
    }

    fn add(self, p: f32x4) -> Bounds {
        Bounds {
            lo: self.lo.fast_min(p),
            hi: self.hi.fast_max(p),
        }
    }

    /// Half the surface area (0 for an empty box).
    fn half_area(self) -> f64 {
        let [x, y, z, _] = (self.hi - self.lo).fast_max(f32x4::ZERO).to_array();
        let (x, y, z) = (f64::from(x), f64::from(y), f64::from(z));
        x * y + y * z + z * x
    }
}

/// What a group of build items spans: the union of their boxes, and the box around their
/// centroids (which the splits bin).
#[derive(Debug, Clone, Copy)]
struct Extent {
    bounds: Bounds,
    centroids: Bounds,
}

impl Extent {
    const EMPTY: Extent = Extent {
        bounds: Bounds::EMPTY,
        centroids: Bounds::EMPTY,
    };

    fn add(self, item: &BuildItem) -> Extent {
        Extent {
            bounds: self.bounds.grow(item.bounds),
            centroids: self.centroids.add(item.centroid()),
        }
    }

    fn of(items: &[BuildItem]) -> Extent {
        items.iter().fold(Extent::EMPTY, Extent::add)
    }
}

/// The items of a tree to be built, by their boxes, in the order that numbers them.
pub(crate) struct TreeItems {
    frame: RayFrame,
    items: Vec<BuildItem>,
    extent: Extent,
}

impl TreeItems {
    /// Room for `count` items, measured in `frame`.
    pub fn with_capacity(frame: RayFrame, count: usize) -> TreeItems {
        TreeItems {
            frame,
            items: Vec::with_capacity(count),
            extent: Extent::EMPTY,
        }
    }

    /// Adds the next item, inside the box `lo ..= hi`.
    pub fn push(&mut self, lo: DVec3, hi: DVec3) {
        let item = BuildItem {
            bounds: Bounds::around(lo, hi, self.frame.center),
            id: self.items.len() as u32,
        };
        self.extent = self.extent.add(&item);
        self.items.push(item);
    }

    /// Builds the tree, at most `leaf_size` items to a leaf. Leaves refer to positions in the
    /// returned leaf order of the items (item numbers in the order they were pushed).
    pub fn build(self, leaf_size: usize) -> (RayTree, Vec<u32>) {
        // Records, not indices, are partitioned: the build then reads memory in order.
        let TreeItems {
            frame,
            mut items,
            extent,
        } = self;
        let builder = Builder { leaf_size };
        let mut nodes = Vec::new();
        let root = builder.subtree(&mut items, extent, 0, 0, &mut nodes);
        let tree = RayTree {
            frame,
            nodes,
            root,
            count: items.len(),
        };
        (tree, items.into_iter().map(|item| item.id).collect())
    }
}

impl RayTree {
    /// The frame the tree's coordinates are measured in.
    pub fn frame(&self) -> RayFrame {
        self.frame
    }

    /// Calls `leaf(positions, reach)` on every leaf the ray may meet within `reach`, nearest box
    /// first, with the leaf's positions in the leaf order; `leaf` returns the new reach (a
    /// first-hit search shortens it as it finds hits; a leaf whose box starts exactly at the reach
    /// is still visited, so ties are seen).
    pub fn nearest_first(
        &self,
        ray: &TreeRay,
        reach: f64,
        leaf: impl FnMut(Range<usize>, f64) -> f64,
    ) {
        #[cfg(target_arch = "x86_64")]
        if std::arch::is_x86_feature_detected!("avx") {
            // SAFETY: this processor has AVX (just asked).
            unsafe { self.nearest_first_avx(ray, reach, leaf) };
            return;
        }
        self.walk(ray, reach, leaf, |node, limit| ray.entries(node, limit));
    }

    /// [`RayTree::nearest_first`] with the boxes tested in AVX registers (the walk is compiled
    /// for them; `leaf`, called from it, need not be): the same answers.
    #[cfg(target_arch = "x86_64")]
    #[target_feature(enable = "avx")]
    fn nearest_first_avx(
        &self,
        ray: &TreeRay,
        reach: f64,
        leaf: impl FnMut(Range<usize>, f64) -> f64,
    ) {
        self.walk(ray, reach, leaf, |node, limit| ray.entries_avx(node, limit));
    }

    /// The walk of [`RayTree::nearest_first`], testing a node's boxes with `entries` (see
    /// [`TreeRay::entries`]).
    #[inline(always)]
    fn walk(
        &self,
        ray: &TreeRay,
        reach: f64,
        mut leaf: impl FnMut(Range<usize>, f64) -> f64,
        entries: impl Fn(&WideNode, f32) -> (u32, [f32; WIDTH]),
    ) {
        if ray.beyond_f32 {
            leaf(0..self.count, reach);
            return;
        }
        let mut reach = reach;
        // The reach rounded up to `f32`: a box entered beyond it is entered beyond the reach.
        let mut limit = up(reach);
        // Not zero-filled: a ray visits a handful of the slots (ArrayVec's are left unwritten).
        let mut stack: ArrayVec<(Child, f32), STACK> = ArrayVec::new();
        // The next child to visit when a node met only one (most do): it skips the stack.
        let mut next = Some(self.root);
        loop {
            let child = match next.take() {
                // Entered within the limit it was met under, which is still the limit.
                Some(only) => only,
                None => match stack.pop() {
                    // The limit may have shrunk since it was pushed.
                    Some((_, entry)) if entry > limit => continue,
                    Some((child, _)) => child,
                    None => break,
                },
            };
            if child & LEAF_BIT != 0 {
                let start = (child & ((1 << LEAF_START_BITS) - 1)) as usize;
                let count = ((child & !LEAF_BIT) >> LEAF_START_BITS) as usize;
                reach = leaf(start..start + count, reach);
                limit = up(reach);
                continue;
            }
            let node = &self.nodes[child as usize];
            let (mut met, entries) = entries(node, limit);
            if met != 0 && met & (met - 1) == 0 {
                let k = met.trailing_zeros() as usize;
                next = Some(node.children[k]);
                continue;
            }
            // Pushed farthest first; the nearest is taken straight back as the next to visit.
            let from = stack.len();
            while met != 0 {
                let k = met.trailing_zeros() as usize;
                met &= met - 1;
                let item = (node.children[k], entries[k]);
                stack.push(item);
                let slots = stack.as_mut_slice();
                let mut at = slots.len() - 1;
                while at > from && slots[at - 1].1 < item.1 {
                    slots[at] = slots[at - 1];
                    at -= 1;
                }
                slots[at] = item;
            }
            if stack.len() > from {
                next = stack.pop().map(|(child, _)| child);
            }
        }
    }

    /// Calls `leaf(positions)` on every leaf whose box may overlap the box `lo ..= hi` (level
    /// coordinates), with the leaf's positions in the leaf order. Conservative as the walk of a
    /// ray is: the query box is rounded outwards just as the items' boxes were, and rounding is
    /// monotonic, so boxes that overlap still overlap in `f32`.
    pub fn overlapping(&self, lo: DVec3, hi: DVec3, mut leaf: impl FnMut(Range<usize>)) {
        let query = Bounds::around(lo, hi, self.frame.center);
        let (q_lo, q_hi) = (query.lo.to_array(), query.hi.to_array());
        let mut stack = vec![self.root];
        while let Some(child) = stack.pop() {
            if child == EMPTY {
                continue;
            }
            if child & LEAF_BIT != 0 {
                let start = (child & ((1 << LEAF_START_BITS) - 1)) as usize;
                let count = ((child & !LEAF_BIT) >> LEAF_START_BITS) as usize;
                leaf(start..start + count);
                continue;
            }
            let node = &self.nodes[child as usize];
            let mut met = (0..3).fold(u32::MAX, |met, k| {
                let below = node.lo[k].simd_le(Lanes::splat(q_hi[k]));
                let above = node.hi[k].simd_ge(Lanes::splat(q_lo[k]));
                met & (below & above).to_bitmask()
            });
            while met != 0 {
                let k = met.trailing_zeros() as usize;
                met &= met - 1;
                stack.push(node.children[k]);
            }
        }
    }
}

/// One item during a build: its box and its index.
#[derive(Debug, Clone, Copy)]
struct BuildItem {
    bounds: Bounds,
    id: u32,
}

impl BuildItem {
    /// The centre of its box.
    fn centroid(&self) -> f32x4 {
        (self.bounds.lo + self.bounds.hi) * 0.5
    }
}

/// How a build makes leaves.
struct Builder {
    leaf_size: usize,
}

impl Builder {
    /// The subtree of the items `order` (which it reorders) spanning `extent`, whose first one
    /// sits at `start` in the tree's leaf order, `depth` binary splits below the root.
    fn subtree(
        &self,
        order: &mut [BuildItem],
        extent: Extent,
        start: usize,
        depth: usize,
        nodes: &mut Vec<WideNode>,
    ) -> Child {
        if order.len() <= self.leaf_size {
            return leaf(start, order.len());
        }
        // Split in two, then each part in two again, `SPLITS` times: up to `WIDTH` children.
        let mut groups: Vec<(usize, usize, Extent)> = vec![(0, order.len(), extent)];
        for round in 0..SPLITS {
            let mut next = Vec::with_capacity(WIDTH);
            for (from, to, extent) in groups {
                if to - from <= self.leaf_size {
                    next.push((from, to, extent));
                } else {
                    let (cut, halves) = self.split(&mut order[from..to], extent, depth + round);
                    next.push((from, from + cut, halves[0]));
                    next.push((from + cut, to, halves[1]));
                }
            }
            groups = next;
        }
        let mut lo = [[f32::INFINITY; WIDTH]; 3];
        let mut hi = [[f32::INFINITY; WIDTH]; 3];
        for (slot, &(_, _, extent)) in groups.iter().enumerate() {
            let bounds = extent.bounds;
            let (bounds_lo, bounds_hi) = (bounds.lo.to_array(), bounds.hi.to_array());
            for k in 0..3 {
                lo[k][slot] = bounds_lo[k];
                hi[k][slot] = bounds_hi[k];
            }
        }
        let index = nodes.len();
        nodes.push(WideNode {
            lo: lo.map(Lanes::from),
            hi: hi.map(Lanes::from),
            children: [EMPTY; WIDTH],
        });
        let parallel = order.len() >= PARALLEL_ITEMS;
        // The groups as disjoint slices of `order`, with their extents and where each starts in
        // the leaf order.
        let mut parts: Vec<(&mut [BuildItem], Extent, usize)> = Vec::with_capacity(WIDTH);
        let mut rest = order;
        for &(from, to, extent) in &groups {
            let (part, tail) = rest.split_at_mut(to - from);
            parts.push((part, extent, start + from));
            rest = tail;
        }
        let mut children = [EMPTY; WIDTH];
        if parallel {
            // Large subtrees are built on the pool's threads, each into its own nodes, then
            // appended with their node indices moved.
            let built: Vec<(Vec<WideNode>, Child)> = parts
                .into_par_iter()
                .map(|(part, extent, at)| {
                    let mut own = Vec::new();
                    let root = self.subtree(part, extent, at, depth + SPLITS, &mut own);
                    (own, root)
                })
                .collect();
            for (slot, (own, root)) in built.into_iter().enumerate() {
                let offset = nodes.len() as u32;
                children[slot] = moved(root, offset);
                nodes.extend(own.into_iter().map(|mut node| {
                    node.children = node.children.map(|child| moved(child, offset));
                    node
                }));
            }
        } else {
            for (slot, (part, extent, at)) in parts.into_iter().enumerate() {
                children[slot] = self.subtree(part, extent, at, depth + SPLITS, nodes);
            }
        }
        nodes[index].children = children;
        index as Child
    }

    /// Reorders `order` (spanning `extent`) into two non-empty groups, `depth` binary splits below
    /// the root: by the binned surface-area heuristic over the three axes, or below [`SAH_DEPTH`]
    /// (or where the centroids coincide) at the median of the widest axis; returns the size of
    /// the first and the extents of both.
    fn split(&self, order: &mut [BuildItem], extent: Extent, depth: usize) -> (usize, [Extent; 2]) {
        let span = extent.centroids;
        if depth >= SAH_DEPTH {
            return self.median_split(order, span);
        }
        let (span_lo, span_hi) = (span.lo.to_array(), span.hi.to_array());
        let scale = f32x4::new([0, 1, 2, 3].map(|k| {
            if k < 3 && span_hi[k] > span_lo[k] {
                BINS as f32 / (span_hi[k] - span_lo[k])
            } else {
                0.0
            }
        }));
        // Every axis's bin of item `t` (the same arithmetic for binning and for partitioning).
        let last_bin = f32x4::splat((BINS - 1) as f32);
        let bins_of = |item: &BuildItem| {
            let at = (item.centroid() - span.lo) * scale;
            // In 0 ..= BINS - 1 (a centroid is never below the span), so truncation is exact.
            at.fast_min(last_bin).fast_trunc_int().to_array()
        };
        let bin = |x: i32| x as usize;
        // Large groups are binned along their widest axis only, small ones along all three: the
        // build time lies in the many items near the root, the tree's quality near its leaves.
        let extent_of_span = (span.hi - span.lo).to_array();
        let widest = (0..3)
            .max_by(|&a, &b| {
                extent_of_span[a]
                    .total_cmp(&extent_of_span[b])
                    .then(b.cmp(&a))
            })
            .unwrap_or(0);
        let axes: &[usize] = if order.len() > ONE_AXIS_ITEMS {
            &[widest]
        } else {
            &[0, 1, 2]
        };
        let mut bins = [[(Bounds::EMPTY, 0usize); BINS]; 3];
        for item in order.iter() {
            let at = bins_of(item);
            for &axis in axes {
                let slot = &mut bins[axis][bin(at[axis])];
                slot.0 = slot.0.grow(item.bounds);
                slot.1 += 1;
            }
        }
        // (cost, axis, last bin of the first group)
        let mut best: Option<(f64, usize, usize)> = None;
        for &axis in axes {
            if span_hi[axis] <= span_lo[axis] {
                continue;
            }
            let bins = &bins[axis];
            // Cost of cutting after bin `k`: area × count on each side.
            let mut right = [(0.0, 0usize); BINS];
            let mut acc = (Bounds::EMPTY, 0);
            for k in (1..BINS).rev() {
                acc = (acc.0.grow(bins[k].0), acc.1 + bins[k].1);
                right[k] = (acc.0.half_area(), acc.1);
            }
            let mut left = (Bounds::EMPTY, 0);
            for k in 0..BINS - 1 {
                left = (left.0.grow(bins[k].0), left.1 + bins[k].1);
                let (right_area, right_count) = right[k + 1];
                if left.1 == 0 || right_count == 0 {
                    continue;
                }
                let cost = left.0.half_area() * left.1 as f64 + right_area * right_count as f64;
                if best.is_none_or(|(c, _, _)| cost < c) {
                    best = Some((cost, axis, k));
                }
            }
        }
        let Some((_, axis, last)) = best else {
            return self.median_split(order, span);
        };
        // Partitioned in one pass that also measures both sides, for the splits below.
        let mut cut = 0;
        let mut sides = [Extent::EMPTY; 2];
        for k in 0..order.len() {
            let item = order[k];
            if bin(bins_of(&item)[axis]) <= last {
                sides[0] = sides[0].add(&item);
                order.swap(cut, k);
                cut += 1;
            } else {
                sides[1] = sides[1].add(&item);
            }
        }
        (cut, sides)
    }

    /// Cuts `order` at the median of its centroids along the widest axis of their `span`.
    fn median_split(&self, order: &mut [BuildItem], span: Bounds) -> (usize, [Extent; 2]) {
        let extent = (span.hi - span.lo).to_array();
        let axis = (0..3)
            .max_by(|&a, &b| extent[a].total_cmp(&extent[b]).then(b.cmp(&a)))
            .unwrap_or(0);
        let half = order.len() / 2;
        let key = |item: &BuildItem| item.centroid().to_array()[axis];
        order.select_nth_unstable_by(half, |x, y| key(x).total_cmp(&key(y)).then(x.id.cmp(&y.id)));
        let (first, second) = order.split_at(half);
        (half, [Extent::of(first), Extent::of(second)])
    }
}

#[cfg(test)]
mod tests {
    //! The tree must offer every triangle the exact test meets (common practice for conservative
    //! traversal; the padding argument is Ize 2013, §3): checked against a loop over every triangle,
    //! on grids where rays run exactly along box faces and edges and through shared vertices, near
    //! the origin and a thousand kilometres from it.

    use proptest::prelude::*;

    use super::*;
    use crate::query::ShearedRay;

    /// Triangles with corners on an integer grid (so faces and edges line up with box faces and
    /// with each other), scaled and moved; and the grid's points, for rays to start and end at.
    fn grid_soup() -> impl Strategy<Value = (Vec<[DVec3; 3]>, Vec<DVec3>)> {
        let corner = (0..5i32, 0..5i32, 0..5i32);
        (
            prop::collection::vec((corner.clone(), corner.clone(), corner), 1..120),
            prop::sample::select(vec![0.0, 1e6, -3.7e4]),
            prop::sample::select(vec![1.0, 0.25, 3.0]),
        )
            .prop_map(|(corners, offset, scale)| {
                let place = |(x, y, z): (i32, i32, i32)| {
                    DVec3::new(x as f64, y as f64, z as f64) * scale + DVec3::splat(offset)
                };
                let triangles = corners
                    .into_iter()
                    .map(|(a, b, c)| [place(a), place(b), place(c)])
                    .collect();
                let points = (0..125)
                    .map(|k| place((k % 5, k / 5 % 5, k / 25)))
                    .collect();
                (triangles, points)
            })
    }

    fn tree_of(triangles: &[[DVec3; 3]], leaf_size: usize) -> (RayTree, Vec<u32>) {
        let lo = triangles
            .iter()
            .flatten()
            .fold(DVec3::MAX, |a, &b| a.min(b));
        let hi = triangles
            .iter()
            .flatten()
            .fold(DVec3::MIN, |a, &b| a.max(b));
        let mut items = TreeItems::with_capacity(RayFrame::around(lo, hi), triangles.len());
        for [a, b, c] in triangles {
            items.push(a.min(*b).min(*c), a.max(*b).max(*c));
        }
        items.build(leaf_size)
    }

    /// Which of the tree's items the ray `from + t * dir` (`t` in `0..=reach`) is offered. The
    /// walk with the portable box test visits the same leaves in the same order as
    /// [`RayTree::nearest_first`] (which tests boxes in AVX registers where it can).
    fn offered(tree: &RayTree, order: &[u32], from: DVec3, dir: DVec3, reach: f64) -> Vec<bool> {
        let ray = TreeRay::new(tree.frame(), from, dir);
        let mut visits = Vec::new();
        tree.nearest_first(&ray, reach, |range, reach| {
            visits.push(range);
            reach
        });
        let mut portable = Vec::new();
        let visit = |range, reach| {
            portable.push(range);
            reach
        };
        tree.walk(&ray, reach, visit, |node, limit| ray.entries(node, limit));
        assert_eq!(visits, portable, "the two box tests disagree");
        let mut offered = vec![false; order.len()];
        for &i in visits.into_iter().flat_map(|range| &order[range]) {
            offered[i as usize] = true;
        }
        offered
    }

    /// The triangles the exact test meets on `from → from + dir * len` that the tree does not offer.
    fn missed(
        triangles: &[[DVec3; 3]],
        (tree, order): &(RayTree, Vec<u32>),
        from: DVec3,
        dir: DVec3,
        len: f64,
    ) -> Vec<usize> {
        let exact = ShearedRay::new(from, dir);
        let offered = offered(tree, order, from, dir, len);
        (0..triangles.len())
            .filter(|&i| {
                let [a, b, c] = triangles[i];
                exact.intersect(a, b, c, len).is_some() && !offered[i]
            })
            .collect()
    }

    /// A side of a box for the lane tests: on a small grid (rays run along it), or nothing (an
    /// empty slot's +∞).
    #[cfg(target_arch = "x86_64")]
    fn side() -> impl Strategy<Value = f32> {
        prop::sample::select(vec![-2.0, -1.0, -0.5, 0.0, 0.5, 1.0, 2.0, f32::INFINITY])
    }

    proptest! {
        /// The AVX box test gives the portable one's answer bit for bit (the same IEEE operations
        /// lane by lane): which boxes are met and where each is entered, on boxes with sides on
        /// a grid the rays start on and run along, empty slots, and axis-parallel directions.
        #[cfg(target_arch = "x86_64")]
        #[test]
        fn avx_box_tests_match_the_portable_lanes(
            lo in prop::array::uniform3(prop::array::uniform8(side())),
            grow in prop::array::uniform3(prop::array::uniform8(prop::sample::select(vec![0.0f32, 0.5, 1.0]))),
            from in prop::array::uniform3(prop::sample::select(vec![-1.0, 0.0, 0.5, 3.0])),
            dir in prop::array::uniform3(-2i32..=2),
            reach in prop::sample::select(vec![0.0, 0.5, 3.0, 1e6]),
        ) {
            prop_assume!(dir != [0, 0, 0]);
            // On a processor without AVX there is nothing to compare.
            if std::arch::is_x86_feature_detected!("avx") {
                let hi: [[f32; WIDTH]; 3] =
                    std::array::from_fn(|k| std::array::from_fn(|i| lo[k][i] + grow[k][i]));
                let node = WideNode {
                    lo: lo.map(Lanes::from),
                    hi: hi.map(Lanes::from),
                    children: [EMPTY; WIDTH],
                };
                let frame = RayFrame::around(DVec3::splat(-2.0), DVec3::splat(3.0));
                let dir = DVec3::new(dir[0].into(), dir[1].into(), dir[2].into()).normalize();
                let ray = TreeRay::new(frame, DVec3::from_array(from), dir);
                let limit = up(reach);
                // SAFETY: this processor has AVX (just asked).
                let (avx_met, avx_entries) = unsafe { ray.entries_avx(&node, limit) };
                let (met, entries) = ray.entries(&node, limit);
                prop_assert_eq!(avx_met, met);
                prop_assert_eq!(avx_entries.map(f32::to_bits), entries.map(f32::to_bits));
            }
        }
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(300))]

        #[test]
        fn the_tree_offers_every_triangle_a_ray_meets(
            (triangles, points) in grid_soup(),
            leaf_size in 1usize..5,
            ends in prop::collection::vec((0usize..125, 0usize..125, 0.0..1.5f64), 12),
        ) {
            let built = tree_of(&triangles, leaf_size);
            let (tree, order) = &built;
            for (from, to, stretch) in ends {
                let (from, to) = (points[from], points[to]);
                if from == to {
                    continue;
                }
                // Rays from grid point to grid point (along faces and edges, through vertices),
                // some stopped short of or carried past the second point.
                let len = from.distance(to) * stretch.max(0.5);
                let dir = (to - from).normalize();
                let exact = ShearedRay::new(from, dir);
                let boxes = TreeRay::new(tree.frame(), from, dir);
                let missed = missed(&triangles, &built, from, dir, len);
                prop_assert!(missed.is_empty(), "{missed:?} met by {from} -> {to} but not offered");
                // The first-hit search (reach shrinking to just past the best) finds the same
                // nearest distance as the loop over every triangle, and every triangle there.
                let nearest = triangles
                    .iter()
                    .filter_map(|&[a, b, c]| exact.intersect(a, b, c, len))
                    .fold(None, |m: Option<f64>, d| Some(m.map_or(d, |m| m.min(d))));
                let mut best: Option<f64> = None;
                let mut at_best = Vec::new();
                tree.nearest_first(&boxes, len, |range, reach| {
                    for &i in &order[range] {
                        let [a, b, c] = triangles[i as usize];
                        if let Some(d) = exact.intersect(a, b, c, reach) {
                            if best.is_none_or(|b| d < b) {
                                at_best.clear();
                            }
                            if best.is_none_or(|b| d <= b) {
                                best = Some(d);
                                at_best.push(i);
                            }
                        }
                    }
                    best.map_or(reach, |d| d.next_up().min(reach))
                });
                prop_assert_eq!(best, nearest);
                if let Some(d) = nearest {
                    let mut everywhere: Vec<u32> = (0..triangles.len() as u32)
                        .filter(|&i| {
                            let [a, b, c] = triangles[i as usize];
                            exact.intersect(a, b, c, len) == Some(d)
                        })
                        .collect();
                    at_best.sort_unstable();
                    at_best.dedup();
                    everywhere.sort_unstable();
                    prop_assert_eq!(at_best, everywhere);
                }
            }
        }

        #[test]
        fn a_box_query_offers_every_triangle_whose_box_overlaps_it(
            (triangles, points) in grid_soup(),
            leaf_size in 1usize..5,
            boxes in prop::collection::vec((0usize..125, 0usize..125), 12),
        ) {
            // Query boxes with corners on the grid: many only touch a triangle's box at a face,
            // an edge or a corner, which still counts as overlapping.
            let (tree, order) = tree_of(&triangles, leaf_size);
            for (a, b) in boxes {
                let (lo, hi) = (points[a].min(points[b]), points[a].max(points[b]));
                let mut offered = vec![false; triangles.len()];
                tree.overlapping(lo, hi, |range| {
                    for &i in &order[range] {
                        offered[i as usize] = true;
                    }
                });
                let missed: Vec<usize> = (0..triangles.len())
                    .filter(|&i| {
                        let [p, q, r] = triangles[i];
                        let (t_lo, t_hi) = (p.min(q).min(r), p.max(q).max(r));
                        t_lo.cmple(hi).all() && t_hi.cmpge(lo).all() && !offered[i]
                    })
                    .collect();
                prop_assert!(missed.is_empty(), "{missed:?} overlap {lo}..{hi} but not offered");
            }
        }
    }

    #[test]
    fn a_tree_built_in_parallel_offers_every_triangle_a_ray_meets() {
        // Enough triangles that the top of the tree is built on the thread pool
        // (PARALLEL_ITEMS), on a grid so that rays graze shared edges and vertices.
        let mut state = 12345u64;
        let mut next = |n: u64| {
            state = state
                .wrapping_mul(6364136223846793005)
                .wrapping_add(1442695040888963407);
            (state >> 33) % n
        };
        let mut corner = || DVec3::new(next(40) as f64, next(40) as f64, next(8) as f64) * 0.5;
        let triangles: Vec<[DVec3; 3]> = (0..3 * PARALLEL_ITEMS)
            .map(|_| [corner(), corner(), corner()])
            .collect();
        let built = tree_of(&triangles, 4);
        for _ in 0..200 {
            let (from, to) = (corner(), corner());
            if from == to {
                continue;
            }
            let len = from.distance(to);
            let missed = missed(&triangles, &built, from, (to - from) / len, len);
            assert!(
                missed.is_empty(),
                "{missed:?} met by {from} -> {to} but not offered"
            );
        }
    }

    #[test]
    fn a_ray_from_beyond_f32_range_is_offered_every_triangle() {
        // From 1e40 m away the ray's origin is beyond f32 (the f64 triangle test still works):
        // the padding argument needs finite lanes, so the tree offers every item instead.
        let triangles = vec![[DVec3::ZERO, DVec3::X, DVec3::Y]; 5];
        let (tree, order) = tree_of(&triangles, 4);
        let from = DVec3::new(0.25, 0.25, 1e40);
        let offered = offered(&tree, &order, from, DVec3::NEG_Z, 2e40);
        assert_eq!(offered, vec![true; 5]);
        assert!(
            ShearedRay::new(from, DVec3::NEG_Z)
                .intersect(DVec3::ZERO, DVec3::X, DVec3::Y, 2e40)
                .is_some()
        );
    }

    #[test]
    fn a_ray_along_an_axis_through_shared_corners_is_offered_every_face_there() {
        // Eight triangles fanned around the vertex (1, 1, 0) of a flat grid; a ray straight down the
        // z axis through that vertex meets all of them (Woop et al. 2013: a vertex hit counts for
        // every triangle that has it), and must be offered all of them.
        let v = |x: f64, y: f64| DVec3::new(x, y, 0.0);
        let centre = v(1.0, 1.0);
        let ring = [
            v(0.0, 0.0),
            v(1.0, 0.0),
            v(2.0, 0.0),
            v(2.0, 1.0),
            v(2.0, 2.0),
            v(1.0, 2.0),
            v(0.0, 2.0),
            v(0.0, 1.0),
        ];
        let triangles: Vec<[DVec3; 3]> = (0..8)
            .map(|k| [centre, ring[k], ring[(k + 1) % 8]])
            .collect();
        let (tree, order) = tree_of(&triangles, 1);
        let offered = offered(&tree, &order, DVec3::new(1.0, 1.0, 5.0), DVec3::NEG_Z, 10.0);
        assert_eq!(offered, vec![true; 8]);
    }
}
