//! Rendering without any window system: an EGL surfaceless OpenGL context (Mesa's CPU rasteriser on
//! machines without a GPU) draws the viewport offscreen, and the pixels are checked against the
//! analytic projection of the scene.
//!
//! References: the perspective and viewport transforms of Segal, M. & Akeley, K., "The OpenGL Graphics
//! System: A Specification (Version 4.5, Core Profile)", 2016, §13.6 (clip → window coordinates), and
//! its polygon rasterisation rule, §14.6.1: a pixel is covered when its centre lies inside the
//! triangle. The silhouette of a convex solid under a central projection is the convex hull of its
//! projected corners (elementary projective geometry).

use std::sync::Arc;

use plumbline::pictures::Headless;

use glam::{DQuat, DVec2, DVec3};
use plumbline::view::camera::OrbitCamera;
use plumbline::view::framebuffer::Offscreen;
use plumbline::view::level_drawing::LevelDrawing;
use plumbline::view::marks::{MarkSurfaces, Sizing, mark_surfaces};
use plumbline::view::probe_marks::{Emphasis, probe_marks};
use plumbline::view::renderer::{BACKGROUND, FrameInput, FrameKind, Pace, Target};
use plumbline::view::surface::Surface;
use plumbline_core::check::answer_probe;
use plumbline_core::level::{Geometry, Level, LevelObject, Primitive};
use plumbline_core::probe::{Probe, ProbeQuery};
use plumbline_core::query::{Filter, World};
use three_d::Viewport;

const WIDTH: u32 = 320;
const HEIGHT: u32 = 240;

/// The renderer on an EGL surfaceless context (the one `check --pictures` draws with).
fn headless() -> Headless {
    Headless::new().expect("EGL is available (Debian: libegl1 and libgl1-mesa-dri)")
}

fn unit_box_level() -> Level {
    Level {
        up: DVec3::Y,
        objects: vec![LevelObject {
            name: "crate".into(),
            tags: vec![],
            geometry: Geometry::Primitive {
                shape: Primitive::Box {
                    half_extents: DVec3::new(1.0, 0.75, 0.5),
                },
                translation: DVec3::new(0.3, 0.2, -0.1),
                rotation: DQuat::from_rotation_y(0.4),
            },
        }],
    }
}

/// The level's drawing without its ground grid, so that only the level's own pixels differ from
/// the background.
fn without_grid(level: &Level) -> LevelDrawing {
    LevelDrawing {
        grid: Surface::default(),
        ..LevelDrawing::new(level)
    }
}

fn frame(drawing: LevelDrawing, camera: OrbitCamera, marks: MarkSurfaces) -> FrameInput {
    FrameInput {
        camera,
        level: Arc::new(drawing),
        level_revision: 1,
        marks: Arc::new(marks),
        marks_revision: 1,
        moving: false,
    }
}

/// One window frame of `input` drawn into the whole of `target`, at `pace`.
fn draw_into(gl: &mut Headless, target: &Offscreen, input: &FrameInput, pace: Pace) -> FrameKind {
    let viewport = Viewport::new_at_origo(WIDTH, HEIGHT);
    let frame = gl
        .renderer
        .render(Target::Offscreen(target), viewport, input, pace);
    frame.expect("a frame")
}

/// An offscreen target's pixels (rows from the bottom up) with their rows from the top down.
fn top_down(bottom_up: Vec<u8>) -> Vec<u8> {
    let row = WIDTH as usize * 4;
    bottom_up
        .chunks_exact(row)
        .rev()
        .flatten()
        .copied()
        .collect()
}

fn pixel(image: &[u8], x: u32, y: u32) -> [u8; 3] {
    let i = (y * WIDTH + x) as usize * 4;
    [image[i], image[i + 1], image[i + 2]]
}

/// Signed distance (pixels) from `p` to the boundary of a convex polygon: positive inside.
fn inside_distance(p: DVec2, hull: &[DVec2]) -> f64 {
    let centre = hull.iter().copied().sum::<DVec2>() / hull.len() as f64;
    let (a, b) = (hull[0], hull[1]);
    let turn = (b - a).perp_dot(centre - a).signum();
    let mut d = f64::INFINITY;
    for k in 0..hull.len() {
        let (a, b) = (hull[k], hull[(k + 1) % hull.len()]);
        let edge = b - a;
        let normal = DVec2::new(-edge.y, edge.x).normalize() * turn;
        d = d.min((p - a).dot(normal));
    }
    d
}

/// Convex hull (Andrew's monotone chain), corners in order around it.
fn hull(mut points: Vec<DVec2>) -> Vec<DVec2> {
    points.sort_by(|a, b| a.x.total_cmp(&b.x).then(a.y.total_cmp(&b.y)));
    let cross = |o: DVec2, a: DVec2, b: DVec2| (a - o).perp_dot(b - o);
    let mut lower: Vec<DVec2> = Vec::new();
    for p in &points {
        while lower.len() >= 2 && cross(lower[lower.len() - 2], lower[lower.len() - 1], *p) <= 0.0 {
            lower.pop();
        }
        lower.push(*p);
    }
    let mut upper: Vec<DVec2> = Vec::new();
    for p in points.iter().rev() {
        while upper.len() >= 2 && cross(upper[upper.len() - 2], upper[upper.len() - 1], *p) <= 0.0 {
            upper.pop();
        }
        upper.push(*p);
    }
    lower.pop();
    upper.pop();
    lower.extend(upper);
    lower
}

#[test]
fn a_box_covers_exactly_the_pixels_of_its_projected_silhouette() {
    let mut gl = headless();
    let level = unit_box_level();
    let drawing = without_grid(&level);
    let camera = OrbitCamera {
        target: DVec3::new(0.2, 0.1, 0.0),
        distance: 5.0,
        yaw: 0.8,
        pitch: 0.45,
        up: DVec3::Y,
    };
    let image = gl
        .renderer
        .render_image(
            WIDTH,
            HEIGHT,
            &frame(drawing, camera, MarkSurfaces::default()),
        )
        .expect("an offscreen frame");

    let Geometry::Primitive {
        shape: Primitive::Box { half_extents },
        translation,
        rotation,
    } = &level.objects[0].geometry
    else {
        unreachable!()
    };
    let size = DVec2::new(WIDTH as f64, HEIGHT as f64);
    let corners: Vec<DVec2> = (0..8)
        .map(|i| {
            let sign = |bit: usize| if i & bit == 0 { -1.0 } else { 1.0 };
            let local = DVec3::new(sign(1), sign(2), sign(4)) * *half_extents;
            camera
                .project(*translation + *rotation * local, size, 10.0)
                .unwrap()
        })
        .collect();
    let silhouette = hull(corners);

    let (mut covered, mut expected, mut wrong) = (0usize, 0usize, Vec::new());
    for y in 0..HEIGHT {
        for x in 0..WIDTH {
            let centre = DVec2::new(x as f64 + 0.5, y as f64 + 0.5);
            let d = inside_distance(centre, &silhouette);
            let drawn = pixel(&image, x, y) != BACKGROUND;
            covered += drawn as usize;
            expected += (d > 0.0) as usize;
            // Pixels whose centre is within a pixel of the outline may go either way (rounding of
            // f32 vertex positions and of the rasteriser's fixed-point grid).
            if d.abs() > 1.0 && drawn != (d > 0.0) {
                wrong.push((x, y, d));
            }
        }
    }
    assert!(
        expected > 4000,
        "the box fills a good part of the image ({expected} px)"
    );
    assert!(
        wrong.is_empty(),
        "{} pixels disagree, e.g. {:?}",
        wrong.len(),
        &wrong[..wrong.len().min(5)]
    );
    let ratio = covered as f64 / expected as f64;
    assert!(
        (ratio - 1.0).abs() < 0.02,
        "covered {covered} of {expected}"
    );
}

#[test]
fn a_rays_hit_marker_lands_on_the_projected_hit_point() {
    let mut gl = headless();
    let level = unit_box_level();
    let world = World::new(&level).unwrap();
    let probe = Probe {
        id: "sightline".into(),
        label: None,
        filter: Filter::default(),
        query: ProbeQuery::Ray {
            from: DVec3::new(-6.0, 0.35, 0.4),
            to: DVec3::new(6.0, 0.1, -0.3),
            hits: None,
        },
        expect: None,
        from_rule: None,
    };
    let result = answer_probe(&world, &probe);
    let plumbline_core::check::Hits::Ray(hits) = &result.hits else {
        unreachable!()
    };
    let hit_point = DVec3::from(hits[0].point);

    let drawing = without_grid(&level);
    // Looking at the face the ray enters through, from the ray's side.
    let camera = OrbitCamera {
        // Off-centre, so a wrong projection would move the marker.
        target: hit_point + DVec3::new(0.0, 0.7, 1.1),
        distance: 5.0,
        yaw: std::f64::consts::PI + 0.5,
        pitch: 0.35,
        up: DVec3::Y,
    };
    let mut marks = Vec::new();
    probe_marks(&probe, &result, Emphasis::default(), DVec3::Y, &mut marks);
    let sizing = Sizing {
        camera,
        viewport_height: HEIGHT as f64,
        origin: drawing.origin,
    };
    let surfaces = mark_surfaces(&marks, &sizing);
    let image = gl
        .renderer
        .render_image(WIDTH, HEIGHT, &frame(drawing, camera, surfaces))
        .expect("an offscreen frame");

    // Hit markers are yellow (Okabe & Ito); shading keeps red and green high and blue low.
    let mut sum = DVec2::ZERO;
    let mut count = 0.0;
    for y in 0..HEIGHT {
        for x in 0..WIDTH {
            let [r, g, b] = pixel(&image, x, y).map(f64::from);
            if r > 120.0 && g > 110.0 && b < 0.45 * g && (r - g).abs() < 0.2 * r {
                sum += DVec2::new(x as f64 + 0.5, y as f64 + 0.5);
                count += 1.0;
            }
        }
    }
    assert!(count >= 12.0, "the hit marker is visible ({count} px)");
    let expected = camera
        .project(hit_point, DVec2::new(WIDTH as f64, HEIGHT as f64), 10.0)
        .unwrap();
    let found = sum / count;
    assert!(
        found.distance(expected) < 2.5,
        "marker centre {found} vs projected hit {expected}"
    );
}

/// Marks against the level and against one another, in flat colours facing the camera: a solid
/// mark in front of the box is drawn whole; one behind the box shows faintly through it (neither
/// the box's own colour nor the mark's); where a solid mark is in front of another solid mark and
/// of a see-through one, only the front mark shows (no faint copy of the hidden marks). The
/// depth rule is the one OpenGL's depth buffer test applies (Segal & Akeley 2016, §17.3, per-fragment
/// operations — the section number from memory: a fragment passes `LEQUAL` when its depth is at
/// most the stored one); the faint drawing of hidden marks is the window's own choice.
#[test]
fn marks_are_hidden_by_the_level_and_by_nearer_marks() {
    let mut gl = headless();
    let level = unit_box_level();
    let drawing = without_grid(&level);
    let centre = DVec3::new(0.3, 0.2, -0.1);
    let camera = OrbitCamera {
        target: centre,
        distance: 7.0,
        yaw: 0.3,
        pitch: 0.2,
        up: DVec3::Y,
    };
    let ahead = (centre - camera.eye()).normalize();
    let right = ahead.cross(DVec3::Y).normalize();
    let up = right.cross(ahead);
    let origin = drawing.origin;
    let square = |surface: &mut Surface, at: DVec3, half: f64, colour: [u8; 4]| {
        let corner = |a: f64, b: f64| at + right * (a * half) + up * (b * half);
        let [p, q, r, t] = [
            corner(-1.0, -1.0),
            corner(1.0, -1.0),
            corner(1.0, 1.0),
            corner(-1.0, 1.0),
        ];
        surface.push([p, q, r], origin, colour);
        surface.push([p, r, t], origin, colour);
    };
    let in_front = centre - ahead * 2.0 - right * 0.3;
    let behind = centre + ahead * 3.0 + right * 0.3;
    let above = centre + up * 2.2;
    let (near, far, farther) = (
        above - ahead * 0.5,
        above + ahead * 0.5,
        above + ahead * 1.0,
    );
    let mut marks = MarkSurfaces::default();
    square(&mut marks.solid, in_front, 0.15, [255, 0, 0, 255]);
    square(&mut marks.solid, behind, 0.15, [0, 255, 0, 255]);
    // Drawn after the nearer mark, so only the depth test can hide it.
    square(&mut marks.solid, near, 0.2, [0, 0, 255, 255]);
    square(&mut marks.solid, far, 0.3, [255, 255, 0, 255]);
    square(&mut marks.see_through, farther, 0.4, [255, 255, 255, 128]);

    let size = DVec2::new(WIDTH as f64, HEIGHT as f64);
    let at = |point: DVec3| {
        let p = camera.project(point, size, 10.0).expect("in view");
        (p.x as u32, p.y as u32)
    };
    // Frames drawn into one target, as a window draws them: in the frame before the last, nearer
    // solid marks cover the spot where the see-through mark lies alone over the background and
    // the nearest solid mark of the last frame; their depth must not hide what is there now.
    let target = Offscreen::new(gl.renderer.context(), WIDTH, HEIGHT).expect("a target");
    let alone = farther + right * 0.35 - up * 0.35;
    let mut earlier = MarkSurfaces::default();
    let eye = camera.eye();
    for spot in [alone, near] {
        let nearer = eye + (spot - eye) * 0.7;
        square(&mut earlier.solid, nearer, 0.1, [255, 0, 255, 255]);
    }
    let mut render = |marks: MarkSurfaces, marks_revision: u64| {
        let input = FrameInput {
            marks_revision,
            ..frame(drawing.clone(), camera, marks)
        };
        draw_into(&mut gl, &target, &input, Pace::AtOnce);
        top_down(target.read_colour())
    };
    let bare = render(MarkSurfaces::default(), 1);
    let before = render(earlier, 2);
    let image = render(marks, 3);
    let look = |image: &[u8], point: DVec3| {
        let (x, y) = at(point);
        pixel(image, x, y)
    };
    let close = |a: [u8; 3], b: [u8; 3]| a.iter().zip(b).all(|(a, b)| a.abs_diff(b) <= 2);
    let shows = |image: &[u8], point: DVec3, colour: [u8; 3], what: &str| {
        let found = look(image, point);
        assert!(close(found, colour), "{what}: {found:?}, not {colour:?}");
    };

    shows(
        &image,
        in_front,
        [255, 0, 0],
        "the mark in front of the box",
    );
    let (box_colour, faint) = (look(&bare, behind), look(&image, behind));
    assert!(
        !close(box_colour, BACKGROUND),
        "the mark behind lies over the box"
    );
    assert!(
        faint[1] > box_colour[1] + 20 && !close(faint, [0, 255, 0]),
        "hidden mark shown faintly: {faint:?} over the box's {box_colour:?}"
    );
    shows(&image, near, [0, 0, 255], "the nearest of the marks above");
    shows(
        &bare,
        near,
        BACKGROUND,
        "the marks above stand clear of the box",
    );
    // Where the see-through mark alone covers the background, it is drawn over it: the nearer
    // solid mark of the frame before hides nothing now.
    shows(&before, alone, [255, 0, 255], "the earlier frame's mark");
    let (under, over) = (look(&bare, alone), look(&image, alone));
    assert!(
        close(under, BACKGROUND) && !close(over, BACKGROUND) && !close(over, [255; 3]),
        "see-through mark over the background: {over:?}"
    );
}

/// Three rays side by side over a floor, rendered with nothing selected and with the middle one
/// selected. Measured across each ray at its middle: how many pixels it changes (its width on
/// screen, halo included) and how vivid its most vivid pixel is (largest minus smallest channel).
/// What is checked is the window's own rule for emphasis ("common practice" in viewers: the
/// selection is the widest, most saturated line; the rest step back), not a published figure.
#[test]
fn the_selected_ray_is_the_widest_and_most_vivid_line_and_the_others_step_back() {
    use plumbline::view::scene_marks::{SceneMarks, scene_marks};

    let mut gl = headless();
    let level = Level {
        up: DVec3::Y,
        objects: vec![LevelObject {
            name: "floor".into(),
            tags: vec!["ground".into()],
            geometry: Geometry::Primitive {
                shape: Primitive::Box {
                    half_extents: DVec3::new(6.0, 0.1, 6.0),
                },
                translation: DVec3::new(0.0, -0.1, 0.0),
                rotation: DQuat::IDENTITY,
            },
        }],
    };
    let world = World::new(&level).unwrap();
    let lanes = [-1.5, 0.0, 1.5];
    let probes: Vec<Probe> = lanes
        .iter()
        .enumerate()
        .map(|(k, z)| Probe {
            id: format!("lane-{k}").into(),
            label: None,
            filter: Filter::default(),
            query: ProbeQuery::Ray {
                from: DVec3::new(-4.0, 0.5, *z),
                to: DVec3::new(4.0, 0.5, *z),
                hits: None,
            },
            expect: None,
            from_rule: None,
        })
        .collect();
    let results: Vec<_> = probes.iter().map(|p| answer_probe(&world, p)).collect();
    // From above and a little to one side, so the rays run across the picture.
    let camera = OrbitCamera {
        target: DVec3::ZERO,
        distance: 9.0,
        yaw: std::f64::consts::FRAC_PI_2,
        pitch: 1.2,
        up: DVec3::Y,
    };
    // Each picture's marks get a new revision, so the renderer uploads them afresh.
    let mut revision = 0;
    let mut render = |shown: &[usize], selected: Option<usize>| {
        revision += 1;
        let selected_all: Vec<usize> = selected.into_iter().collect();
        let marks = scene_marks(&SceneMarks {
            selected,
            selected_all: &selected_all,
            ..SceneMarks::of(&level, &probes, &results, shown)
        });
        let drawing = without_grid(&level);
        let sizing = Sizing {
            camera,
            viewport_height: HEIGHT as f64,
            origin: drawing.origin,
        };
        let input = FrameInput {
            marks_revision: revision,
            ..frame(drawing, camera, mark_surfaces(&marks, &sizing))
        };
        gl.renderer
            .render_image(WIDTH, HEIGHT, &input)
            .expect("an offscreen frame")
    };
    let bare = render(&[], None);
    let before = render(&[0, 1, 2], None);
    let after = render(&[0, 1, 2], Some(1));

    let size = DVec2::new(WIDTH as f64, HEIGHT as f64);
    let across = |image: &[u8], z: f64| -> (u32, u8) {
        let middle = camera.project(DVec3::new(0.0, 0.5, z), size, 10.0).unwrap();
        let along = camera.project(DVec3::new(1.0, 0.5, z), size, 10.0).unwrap() - middle;
        let normal = DVec2::new(-along.y, along.x).normalize();
        let (mut width, mut vivid) = (0, 0);
        for step in -14..=14 {
            let p = middle + normal * step as f64;
            let (x, y) = (p.x as u32, p.y as u32);
            let (drawn, floor) = (pixel(image, x, y), pixel(&bare, x, y));
            let change: i32 = (0..3)
                .map(|c| (i32::from(drawn[c]) - i32::from(floor[c])).abs())
                .sum();
            if change > 40 {
                width += 1;
                vivid = vivid.max(drawn.iter().max().unwrap() - drawn.iter().min().unwrap());
            }
        }
        (width, vivid)
    };
    let (selected_width, selected_vivid) = across(&after, lanes[1]);
    for k in [0, 2] {
        let (width_before, vivid_before) = across(&before, lanes[k]);
        let (width_after, vivid_after) = across(&after, lanes[k]);
        assert!(width_before >= 2, "lane {k} is drawn ({width_before} px)");
        assert!(
            selected_width > width_before && selected_width > width_after,
            "the selected ray is the widest: {selected_width} px vs lane {k}'s \
             {width_before} px before and {width_after} px after"
        );
        assert!(
            selected_vivid > vivid_after && selected_vivid >= vivid_before,
            "the selected ray is the most vivid: {selected_vivid} vs lane {k}'s {vivid_after}"
        );
        assert!(
            width_after < width_before && vivid_after < vivid_before,
            "lane {k} steps back: {width_before}→{width_after} px, vividness \
             {vivid_before}→{vivid_after}"
        );
    }
    let (plain_width, _) = across(&before, lanes[1]);
    assert!(
        selected_width >= plain_width + 4,
        "selection widens the ray by its halo"
    );
}

#[test]
fn a_big_level_at_rest_is_drawn_a_part_per_frame_and_ends_as_if_drawn_whole() {
    // Common practice for progressive drawing: while parts are pending the last complete image
    // (the proxy's) stays on screen, and the parts, drawn in order into one depth buffer, leave
    // exactly the image one draw of the whole level gives.
    let mut gl = headless();
    let level = plumbline_core::demo::large_level(420_000);
    let drawing = LevelDrawing::new(&level);
    assert!(drawing.proxy.is_some(), "a level this big has a proxy");
    let camera = OrbitCamera {
        target: (drawing.min + drawing.max) * 0.5,
        distance: drawing.radius() * 1.6,
        yaw: 0.7,
        pitch: 0.5,
        up: drawing.up,
    };
    let still = frame(drawing, camera, MarkSurfaces::default());
    let whole = gl
        .renderer
        .render_image(WIDTH, HEIGHT, &still)
        .expect("the whole level");
    let moving = FrameInput {
        moving: true,
        ..still.clone()
    };
    let proxy = gl
        .renderer
        .render_image(WIDTH, HEIGHT, &moving)
        .expect("the proxy");
    assert_ne!(whole, proxy, "the proxy is not the full level");

    let target = Offscreen::new(gl.renderer.context(), WIDTH, HEIGHT).expect("an offscreen target");
    // A new revision: the level is uploaded afresh, with nothing of it drawn yet.
    let input = FrameInput {
        level_revision: 2,
        ..still
    };
    // One window frame into the target: how it was drawn, and whether parts are pending.
    let mut next_frame = || {
        let kind = draw_into(&mut gl, &target, &input, Pace::PartPerFrame);
        (kind, gl.renderer.drawing_in_parts())
    };
    let mut kinds = Vec::new();
    let last = loop {
        let (kind, in_parts) = next_frame();
        kinds.push(kind);
        let image = top_down(target.read_colour());
        if !in_parts {
            break image;
        }
        assert_eq!(
            image,
            proxy,
            "frame {}: the proxy's image is shown while parts are drawn",
            kinds.len()
        );
        assert!(kinds.len() < 10, "the parts end: {kinds:?}");
    };
    assert_eq!(kinds[0], FrameKind::Proxy, "{kinds:?}");
    assert_eq!(kinds.last(), Some(&FrameKind::Level), "{kinds:?}");
    assert!(
        kinds.len() >= 3
            && kinds[1..kinds.len() - 1]
                .iter()
                .all(|k| *k == FrameKind::LevelPart),
        "the proxy, then at least two parts: {kinds:?}"
    );
    assert!(
        last == whole,
        "the parts drawn in turn give the whole level's image"
    );
    let (again, _) = next_frame();
    assert_eq!(
        again,
        FrameKind::MarksOnly,
        "then the level comes from its cache"
    );
}
