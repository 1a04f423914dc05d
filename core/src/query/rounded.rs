//! Exact times of impact of a ball or a capsule moving in a straight line against one triangle, in
//! closed form: the first time the distance from the moving ball's centre (or the capsule's axis)
//! to the triangle falls to the radius. The triangle grown by a ball is the union of a slab over the
//! face, a cylinder round each edge and a ball on each corner (Ericson, Real-Time Collision
//! Detection, 2005, §5.5.7, "Intersecting moving sphere against triangle"); the first entry into the
//! union is the earliest entry into a piece whose contact point lies on that piece's feature.

use glam::DVec3;
use parry3d_f64::query::PointQuery;
use parry3d_f64::query::details::closest_points_segment_segment_with_locations_nD;
use parry3d_f64::shape::Triangle;

/// The smallest root `t ≥ 0` of `a t² + 2 b t + c = 0` with `c > 0` (the start is outside), when the
/// quadratic falls to zero: the time a moving point enters a ball or a cylinder. Written in the form
/// that does not cancel (Press et al., Numerical Recipes, 3rd ed., 2007, §5.6).
fn entry(a: f64, b: f64, c: f64) -> Option<f64> {
    if c <= 0.0 || b >= 0.0 || a <= 0.0 {
        return None;
    }
    let disc = b * b - a * c;
    if disc < 0.0 {
        return None;
    }
    Some(c / (-b + disc.sqrt()))
}

/// When a signed distance `h` from a plane, changing by `s` per metre travelled, first comes within
/// `r` of the plane from the side it starts on; `None` when it starts within `r` or moves away.
fn plane_entry(h: f64, s: f64, r: f64) -> Option<f64> {
    if h > r && s < 0.0 {
        Some((h - r) / -s)
    } else if h < -r && s > 0.0 {
        Some((-h - r) / s)
    } else {
        None
    }
}

/// When a point moving from `p` along unit `d` first comes within `r` of the point `v`.
fn point_ball_entry(p: DVec3, d: DVec3, v: DVec3, r: f64) -> Option<f64> {
    let m = p - v;
    entry(1.0, m.dot(d), m.length_squared() - r * r)
}

/// When a point moving from `p` along unit `d` first comes within `r` of the segment `e0 → e1` at a
/// point strictly between its ends (the ends are balls of their own).
fn point_cylinder_entry(p: DVec3, d: DVec3, e0: DVec3, e1: DVec3, r: f64) -> Option<f64> {
    let e = e1 - e0;
    let ee = e.length_squared();
    if ee == 0.0 {
        return None;
    }
    let m = p - e0;
    let across = |v: DVec3| v - e * (v.dot(e) / ee);
    let (m_across, d_across) = (across(m), across(d));
    let t = entry(
        d_across.length_squared(),
        m_across.dot(d_across),
        m_across.length_squared() - r * r,
    )?;
    let along = (m + d * t).dot(e) / ee;
    (0.0..=1.0).contains(&along).then_some(t)
}

/// When a ball of radius `r` whose centre moves from `p` along unit `d` first touches `triangle`;
/// `None` when it starts touching or never does within `limit`.
pub fn ball_entry(triangle: &Triangle, p: DVec3, d: DVec3, r: f64, limit: f64) -> Option<f64> {
    let [a, b, c] = [triangle.a, triangle.b, triangle.c];
    let mut best = f64::INFINITY;
    // Moving towards the face from above (or below) it, to a radius away.
    if let Some(n) = (b - a).cross(c - a).try_normalize()
        && let Some(t) = plane_entry(n.dot(p - a), n.dot(d), r)
        && inside(triangle, n, p + d * t)
    {
        best = t;
    }
    for (e0, e1) in [(a, b), (b, c), (c, a)] {
        if let Some(t) = point_cylinder_entry(p, d, e0, e1, r) {
            best = best.min(t);
        }
    }
    for v in [a, b, c] {
        if let Some(t) = point_ball_entry(p, d, v, r) {
            best = best.min(t);
        }
    }
    (best <= limit).then_some(best)
}

/// True when `q`, seen along the face normal `n`, lies on the triangle (its boundary included).
fn inside(triangle: &Triangle, n: DVec3, q: DVec3) -> bool {
    let [a, b, c] = [triangle.a, triangle.b, triangle.c];
    [(a, b), (b, c), (c, a)]
        .iter()
        .all(|&(u, v)| (v - u).cross(q - u).dot(n) >= 0.0)
}

/// When a capsule (axis `s0 → s1`, radius `r`) moving along unit `d` first touches `triangle`;
/// `None` when it starts touching or never does within `limit`. The axis and the triangle are
/// nearest either at an end of the axis (a ball against the triangle), or at a corner of the
/// triangle against the inside of the axis (the corner moving the other way into the capsule's
/// cylinder), or at the insides of the axis and an edge (their lines a radius apart, which is
/// linear in time for a translation).
pub fn capsule_entry(
    triangle: &Triangle,
    s0: DVec3,
    s1: DVec3,
    d: DVec3,
    r: f64,
    limit: f64,
) -> Option<f64> {
    let mut best = f64::INFINITY;
    for end in [s0, s1] {
        if let Some(t) = ball_entry(triangle, end, d, r, limit) {
            best = best.min(t);
        }
    }
    let [a, b, c] = [triangle.a, triangle.b, triangle.c];
    for v in [a, b, c] {
        if let Some(t) = point_cylinder_entry(v, -d, s0, s1, r) {
            best = best.min(t);
        }
    }
    let f = s1 - s0;
    for (e0, e1) in [(a, b), (b, c), (c, a)] {
        let e = e1 - e0;
        let Some(n) = e.cross(f).try_normalize() else {
            continue;
        };
        let Some(t) = plane_entry(n.dot(s0 - e0), n.dot(d), r) else {
            continue;
        };
        let (on_axis, on_edge) = closest_points_segment_segment_with_locations_nD(
            (&(s0 + d * t), &(s1 + d * t)),
            (&e0, &e1),
        );
        let interior = |l: parry3d_f64::shape::SegmentPointLocation| {
            matches!(l, parry3d_f64::shape::SegmentPointLocation::OnEdge(_))
        };
        if interior(on_axis) && interior(on_edge) {
            best = best.min(t);
        }
    }
    (best <= limit).then_some(best)
}

/// True when the box around `triangle` comes within `r` of the box around the points `s0`, `s1`:
/// a quick test that rules out touching for nearly every triangle a sweep looks at.
fn boxes_near(triangle: &Triangle, s0: DVec3, s1: DVec3, r: f64) -> bool {
    let lo = triangle.a.min(triangle.b).min(triangle.c);
    let hi = triangle.a.max(triangle.b).max(triangle.c);
    (s0.min(s1) - r).cmple(hi).all() && (s0.max(s1) + r).cmpge(lo).all()
}

/// True when a ball of radius `r` at `p` touches or overlaps `triangle`.
pub fn ball_touches(triangle: &Triangle, p: DVec3, r: f64) -> bool {
    if !boxes_near(triangle, p, p, r) {
        return false;
    }
    let q = triangle.project_local_point(p, true).point;
    p.distance_squared(q) <= r * r
}

/// True when a capsule (axis `s0 → s1`, radius `r`) touches or overlaps `triangle`.
pub fn capsule_touches(triangle: &Triangle, s0: DVec3, s1: DVec3, r: f64) -> bool {
    if !boxes_near(triangle, s0, s1, r) {
        return false;
    }
    if ball_touches(triangle, s0, r) || ball_touches(triangle, s1, r) {
        return true;
    }
    let [a, b, c] = [triangle.a, triangle.b, triangle.c];
    let r2 = r * r;
    for (e0, e1) in [(a, b), (b, c), (c, a)] {
        let (on_axis, on_edge) =
            closest_points_segment_segment_with_locations_nD((&s0, &s1), (&e0, &e1));
        let point = |l: parry3d_f64::shape::SegmentPointLocation, p0: DVec3, p1: DVec3| {
            let [wa, wb] = l.barycentric_coordinates();
            p0 * wa + p1 * wb
        };
        if point(on_axis, s0, s1).distance_squared(point(on_edge, e0, e1)) <= r2 {
            return true;
        }
    }
    // The axis may pierce the face with both ends and every edge far away.
    let n = (b - a).cross(c - a);
    let (h0, h1) = (n.dot(s0 - a), n.dot(s1 - a));
    if h0 * h1 < 0.0 {
        let q = s0 + (s1 - s0) * (h0 / (h0 - h1));
        if let Some(n) = n.try_normalize() {
            return inside(triangle, n, q);
        }
    }
    false
}

#[cfg(test)]
mod tests {
    use super::*;

    fn floor_triangle() -> Triangle {
        Triangle::new(
            DVec3::new(0.0, 0.0, 0.0),
            DVec3::new(4.0, 0.0, 0.0),
            DVec3::new(0.0, 0.0, 4.0),
        )
    }

    /// A ball dropped onto the face lands when its centre is a radius above it; one moving at the
    /// corner along the diagonal touches the corner when its centre is a radius away; one passing
    /// an edge exactly a radius from its line grazes it where the edge begins, and one passing
    /// farther never touches (elementary geometry).
    #[test]
    fn a_ball_meets_the_face_an_edge_and_a_corner_where_geometry_says() {
        let t = floor_triangle();
        let face = ball_entry(&t, DVec3::new(1.0, 3.0, 1.0), -DVec3::Y, 0.5, 10.0);
        assert!((face.unwrap() - 2.5).abs() < 1e-12);
        // Towards the corner at the origin from (-3, 0, -3) along the diagonal: the corner is
        // 3√2 away, so contact at 3√2 − r.
        let d = DVec3::new(1.0, 0.0, 1.0).normalize();
        let corner = ball_entry(&t, DVec3::new(-3.0, 0.0, -3.0), d, 0.5, 10.0);
        assert!((corner.unwrap() - (18f64.sqrt() - 0.5)).abs() < 1e-12);
        // Along x at height 0.3 and z = -0.4, towards nothing but the edge z = 0 beside it: the
        // distance to the edge line is 0.5 = r exactly, so it grazes from x = 0 on (at t = 2).
        let edge = ball_entry(&t, DVec3::new(-2.0, 0.3, -0.4), DVec3::X, 0.5, 10.0);
        assert!((edge.unwrap() - 2.0).abs() < 1e-9, "{edge:?}");
        // And a ball passing farther away than its radius never touches.
        assert!(ball_entry(&t, DVec3::new(-2.0, 0.3, -0.5), DVec3::X, 0.5, 10.0).is_none());
    }

    /// A capsule lying along z, moving down onto the face, lands when its axis is a radius above;
    /// one standing upright moving sideways into the triangle's edge meets it at the distance from
    /// its axis to the edge minus the radius (elementary geometry).
    #[test]
    fn a_capsule_meets_the_face_and_an_edge_where_geometry_says() {
        let t = floor_triangle();
        let (s0, s1) = (DVec3::new(1.0, 2.0, 0.5), DVec3::new(1.0, 2.0, 2.0));
        let down = capsule_entry(&t, s0, s1, -DVec3::Y, 0.25, 10.0);
        assert!((down.unwrap() - 1.75).abs() < 1e-12);
        // Upright axis from y = -1 to 1 at (-1, ·, 1), moving +x: the edge x = 0 (from the origin
        // to (0, 0, 4)) is 1 away, so contact after 1 − r.
        let (u0, u1) = (DVec3::new(-1.0, -1.0, 1.0), DVec3::new(-1.0, 1.0, 1.0));
        let side = capsule_entry(&t, u0, u1, DVec3::X, 0.25, 10.0);
        assert!((side.unwrap() - 0.75).abs() < 1e-12);
        assert!(capsule_touches(
            &t,
            u0 + DVec3::X * 0.8,
            u1 + DVec3::X * 0.8,
            0.25
        ));
        assert!(!capsule_touches(
            &t,
            u0 + DVec3::X * 0.7,
            u1 + DVec3::X * 0.7,
            0.25
        ));
    }
}
