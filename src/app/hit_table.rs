//! The inspector's table of a probe's hits: one column per fact, numbers right-aligned under a header
//! that carries the unit, long object names shortened with the whole name on hover, yes/no facts as a
//! narrow column of ticks, and every header explaining itself on hover. Clicking a row's number marks
//! that hit in the view, where the same number is drawn beside it.

use std::sync::Arc;

use eframe::egui;
use egui::RichText;
use glam::DVec3;

use super::Selection;
use plumbline_core::check::{Hits, SourceRecord};

/// Radius of a flag's dot, points.
const FLAG_DOT: f32 = 4.0;
/// Object names longer than this many characters are shortened (the whole name shows on hover).
const NAME_CHARS: usize = 18;

/// A column of the hit table.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Column {
    /// Header: a short word or the unit.
    pub head: &'static str,
    /// What the column means, shown on hovering the header.
    pub tip: &'static str,
    /// How its cells are set.
    pub kind: ColumnKind,
}

/// How a column's cells are set.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ColumnKind {
    /// Words, left-aligned.
    Text,
    /// Numbers, right-aligned.
    Number,
    /// Yes or no: a dot for yes, nothing for no.
    Flag,
}

/// One cell: its text and, when the text is shortened or needs a word of explanation, a tooltip.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Cell {
    /// What the cell shows.
    pub text: String,
    /// Shown on hover.
    pub tip: Option<String>,
}

const NUMBER: Column = Column {
    head: "#",
    tip: "The hit's number, as drawn beside it in the view; click to pick it out",
    kind: ColumnKind::Number,
};
const OBJECT: Column = Column {
    head: "object",
    tip: "The object hit; hover a name for the whole of it and the surface's material",
    kind: ColumnKind::Text,
};
const DISTANCE: Column = Column {
    head: "m",
    tip: "Distance from the start, metres",
    kind: ColumnKind::Number,
};
const RAY_T: Column = Column {
    head: "t",
    tip: "Time of impact: the fraction of the way from start to end",
    kind: ColumnKind::Number,
};
const TRIANGLE: Column = Column {
    head: "tri",
    tip: "The triangle, numbered as the file numbers it; hover for its place in the file",
    kind: ColumnKind::Number,
};
const NORMAL: Column = Column {
    head: "normal",
    tip: "Unit normal of the surface, facing the start (±x, ±y, ±z when along an axis)",
    kind: ColumnKind::Text,
};
const BACK_FACE: Column = Column {
    head: "back",
    tip: "A dot when the ray crossed the triangle from behind (a back face)",
    kind: ColumnKind::Flag,
};
const SWEEP_T: Column = Column {
    head: "t",
    tip: "Time of impact: the fraction of the path travelled",
    kind: ColumnKind::Number,
};
const SWEEP_SECONDS: Column = Column {
    head: "s",
    tip: "Time of impact, seconds along the probe's timed path",
    kind: ColumnKind::Number,
};
const INSIDE: Column = Column {
    head: "inside",
    tip: "A dot when the shape already touched or overlapped the object at the start",
    kind: ColumnKind::Flag,
};
const OVERLAPPING: Column = Column {
    head: "overlap",
    tip: "A dot when the shape overlaps the object (the distance is then zero)",
    kind: ColumnKind::Flag,
};
const DEPTH: Column = Column {
    head: "m",
    tip: "Penetration depth, metres",
    kind: ColumnKind::Number,
};
const WAY_OUT: Column = Column {
    head: "way out",
    tip: "The direction that separates the shape from the object soonest",
    kind: ColumnKind::Text,
};
const ACROSS: Column = Column {
    head: "m",
    tip: "Metres from the start to the landing, across the level (not up or down)",
    kind: ColumnKind::Number,
};
const SECONDS_IN_AIR: Column = Column {
    head: "s",
    tip: "Seconds in the air before the landing",
    kind: ColumnKind::Number,
};
const SLOPE: Column = Column {
    head: "°",
    tip: "The slope of the ground landed on, degrees from level",
    kind: ColumnKind::Number,
};
const WALKABLE: Column = Column {
    head: "stand",
    tip: "A dot when a character can stand on that slope (at most the probe's steepest ground)",
    kind: ColumnKind::Flag,
};
const STOPPED_BY: Column = Column {
    head: "stopped by",
    tip: "The object that stopped the walk, if one did (the reason is above)",
    kind: ColumnKind::Text,
};
const WALKED: Column = Column {
    head: "m",
    tip: "Metres walked along the way taken",
    kind: ColumnKind::Number,
};
const STEP: Column = Column {
    head: "step",
    tip: "The most the ground rose from one step to the next, metres",
    kind: ColumnKind::Number,
};
const SLOPE_MET: Column = Column {
    head: "°",
    tip: "The steepest ground stood on, degrees",
    kind: ColumnKind::Number,
};
const FALL: Column = Column {
    head: "fall",
    tip: "The longest fall, metres",
    kind: ColumnKind::Number,
};
const REACHED: Column = Column {
    head: "end",
    tip: "A dot when the character reached the last waypoint",
    kind: ColumnKind::Flag,
};
const RESTS_ON: Column = Column {
    head: "rests on",
    tip: "The object the body touches at the end",
    kind: ColumnKind::Text,
};
const MOVED: Column = Column {
    head: "moved",
    tip: "How far the body ended from where it was put, metres",
    kind: ColumnKind::Number,
};
const TURNED: Column = Column {
    head: "turned",
    tip: "How far the body ended turned from how it was put, degrees",
    kind: ColumnKind::Number,
};
const SETTLED_AFTER: Column = Column {
    head: "s",
    tip: "Seconds until it came to rest (or stopped being followed)",
    kind: ColumnKind::Number,
};
const AT_REST: Column = Column {
    head: "rest",
    tip: "A dot when the body came to rest",
    kind: ColumnKind::Flag,
};
const ENCLOSED: Column = Column {
    head: "enclosed",
    tip: "A dot when the shape is wholly inside the object",
    kind: ColumnKind::Flag,
};

/// The columns and rows of a probe's hits (rays, sweeps, closest points and overlaps; the
/// whole-level kinds have tables of their own).
pub fn hit_columns(hits: &Hits) -> (Vec<Column>, Vec<Vec<Cell>>) {
    match hits {
        Hits::Ray(h) => (
            vec![NUMBER, OBJECT, DISTANCE, RAY_T, TRIANGLE, NORMAL, BACK_FACE],
            numbered(h, |x| {
                vec![
                    object(&x.object, &x.material),
                    plain(format!("{:.3}", x.distance)),
                    plain(format!("{:.4}", x.t)),
                    triangle(x.triangle, x.source.as_ref()),
                    direction(x.normal.into()),
                    tick(x.back_face),
                ]
            }),
        ),
        Hits::Sweep(h) => {
            let timed = h.iter().any(|x| x.time.is_some());
            (
                vec![
                    NUMBER,
                    OBJECT,
                    DISTANCE,
                    if timed { SWEEP_SECONDS } else { SWEEP_T },
                    NORMAL,
                    INSIDE,
                ],
                numbered(h, |x| {
                    let time = match x.time {
                        Some(s) if timed => format!("{s:.3}"),
                        _ => format!("{:.4}", x.t),
                    };
                    vec![
                        object(&x.object, &x.material),
                        plain(format!("{:.3}", x.distance)),
                        plain(time),
                        direction(x.normal.into()),
                        tick(x.started_inside),
                    ]
                }),
            )
        }
        Hits::Closest(h) => (
            vec![NUMBER, OBJECT, DISTANCE, NORMAL, OVERLAPPING],
            numbered(h, |x| {
                vec![
                    object(&x.object, &x.material),
                    plain(format!("{:.3}", x.distance)),
                    direction(x.normal.into()),
                    tick(x.overlapping),
                ]
            }),
        ),
        Hits::Overlap(h) => (
            vec![NUMBER, OBJECT, DEPTH, WAY_OUT, ENCLOSED],
            numbered(h, |x| {
                vec![
                    object(&x.object, &x.material),
                    plain(format!("{:.3}", x.depth)),
                    direction(x.direction.into()),
                    tick(x.enclosed),
                ]
            }),
        ),
        Hits::Jump(h) => (
            vec![NUMBER, OBJECT, ACROSS, SECONDS_IN_AIR, SLOPE, WALKABLE],
            numbered(h, |x| {
                vec![
                    object(&x.object, &x.material),
                    plain(format!("{:.3}", x.distance)),
                    plain(format!("{:.3}", x.time)),
                    plain(format!("{:.1}", x.slope)),
                    tick(x.walkable),
                ]
            }),
        ),
        Hits::Walk(h) => (
            vec![NUMBER, STOPPED_BY, WALKED, STEP, SLOPE_MET, FALL, REACHED],
            numbered(h, |x| {
                vec![
                    match &x.object {
                        Some(name) => object(name, &None),
                        None => plain("—".into()),
                    },
                    plain(format!("{:.3}", x.length)),
                    plain(format!("{:.3}", x.highest_step)),
                    plain(format!("{:.1}", x.steepest_slope)),
                    plain(format!("{:.3}", x.longest_fall)),
                    tick(x.reached),
                ]
            }),
        ),
        Hits::Settle(h) => (
            vec![NUMBER, RESTS_ON, MOVED, TURNED, SETTLED_AFTER, AT_REST],
            numbered(h, |x| {
                vec![
                    match &x.object {
                        Some(name) => object(name, &None),
                        None => plain("—".into()),
                    },
                    plain(format!("{:.3}", x.moved)),
                    plain(format!("{:.1}", x.turned)),
                    plain(format!("{:.2}", x.time)),
                    tick(x.rests()),
                ]
            }),
        ),
        Hits::Rest(_) | Hits::Sightlines(_) | Hits::Coverage(_) | Hits::Reach(_) => {
            (Vec::new(), Vec::new())
        }
    }
}

/// The rows of `hits`, each numbered from 1 before its own cells.
fn numbered<T>(hits: &[T], cells: impl Fn(&T) -> Vec<Cell>) -> Vec<Vec<Cell>> {
    hits.iter()
        .enumerate()
        .map(|(i, hit)| {
            let mut row = vec![plain((i + 1).to_string())];
            row.extend(cells(hit));
            row
        })
        .collect()
}

/// Draws the table; clicking a row's number picks that hit (and clicking it again lets go).
pub fn hits_table(ui: &mut egui::Ui, hits: &Hits, selection: &mut Selection) {
    let (columns, rows) = hit_columns(hits);
    egui::Grid::new("hits")
        .num_columns(columns.len())
        .striped(true)
        .min_col_width(18.0)
        .spacing([10.0, 4.0])
        .show(ui, |ui| {
            for column in &columns {
                aligned(ui, column.kind, |ui| {
                    ui.label(RichText::new(column.head).strong())
                        .on_hover_text(column.tip);
                });
            }
            ui.end_row();
            for (i, row) in rows.iter().enumerate() {
                let picked = selection.hit == Some(i);
                aligned(ui, ColumnKind::Number, |ui| {
                    if ui.selectable_label(picked, &row[0].text).clicked() {
                        selection.hit = if picked { None } else { Some(i) };
                    }
                });
                for (cell, column) in row[1..].iter().zip(&columns[1..]) {
                    aligned(ui, column.kind, |ui| {
                        let shown = match column.kind {
                            ColumnKind::Flag => flag(ui, !cell.text.is_empty()),
                            ColumnKind::Text | ColumnKind::Number => ui.label(&cell.text),
                        };
                        if let Some(tip) = &cell.tip {
                            shown.on_hover_text(tip);
                        }
                    });
                }
                ui.end_row();
            }
        });
}

/// A cell's contents: numbers right-aligned, flags centred, words from the left.
fn aligned(ui: &mut egui::Ui, kind: ColumnKind, add: impl FnOnce(&mut egui::Ui)) {
    let layout = match kind {
        ColumnKind::Text | ColumnKind::Flag => egui::Layout::left_to_right(egui::Align::Center),
        ColumnKind::Number => egui::Layout::right_to_left(egui::Align::Center),
    };
    ui.with_layout(layout, add);
}

/// A flag's cell: a filled dot for yes, nothing for no.
fn flag(ui: &mut egui::Ui, yes: bool) -> egui::Response {
    let (rect, response) = ui.allocate_exact_size(
        egui::vec2(FLAG_DOT * 3.0, FLAG_DOT * 2.0),
        egui::Sense::hover(),
    );
    if yes {
        let colour = ui.visuals().strong_text_color();
        ui.painter().circle_filled(rect.center(), FLAG_DOT, colour);
    }
    response
}

fn plain(text: String) -> Cell {
    Cell { text, tip: None }
}

/// The object's name, shortened in the middle when long (the ends of a name tell objects apart);
/// the whole name and the material on hover.
fn object(name: &str, material: &Option<Arc<str>>) -> Cell {
    let chars: Vec<char> = name.chars().collect();
    let text = if chars.len() > NAME_CHARS {
        let head: String = chars[..NAME_CHARS / 2 - 1].iter().collect();
        let tail: String = chars[chars.len() - NAME_CHARS / 2..].iter().collect();
        format!("{head}…{tail}")
    } else {
        name.to_string()
    };
    let tip = match material {
        Some(m) => Some(format!("{name}\nmaterial: {m}")),
        None if text != name => Some(name.to_string()),
        None => None,
    };
    Cell { text, tip }
}

fn triangle(number: Option<u32>, source: Option<&SourceRecord>) -> Cell {
    Cell {
        text: number.map_or("—".into(), |t| t.to_string()),
        tip: source.map(SourceRecord::describe),
    }
}

/// A unit direction: the axis name when it lies along one, else its components.
fn direction(v: DVec3) -> Cell {
    let axes = [
        (DVec3::X, "+x"),
        (DVec3::NEG_X, "-x"),
        (DVec3::Y, "+y"),
        (DVec3::NEG_Y, "-y"),
        (DVec3::Z, "+z"),
        (DVec3::NEG_Z, "-z"),
    ];
    let exact = format!("{:.6}, {:.6}, {:.6}", v.x, v.y, v.z);
    match axes.iter().find(|(axis, _)| v.distance(*axis) < 1e-9) {
        Some((_, name)) => Cell {
            text: name.to_string(),
            tip: Some(exact),
        },
        None => Cell {
            text: format!("{:.2} {:.2} {:.2}", v.x, v.y, v.z),
            tip: Some(exact),
        },
    }
}

fn tick(yes: bool) -> Cell {
    plain(if yes { "•" } else { "" }.to_string())
}

#[cfg(test)]
mod tests {
    use super::*;
    use plumbline_core::check::{OverlapRecord, RayHitRecord};

    fn ray_hit(object: &str, back_face: bool) -> RayHitRecord {
        RayHitRecord {
            object: object.into(),
            tags: Vec::<String>::new().into(),
            distance: 5.0,
            t: 0.125,
            point: [5.0, 0.0, 0.0],
            normal: [-1.0, 0.0, 0.0],
            triangle: Some(140),
            source: Some(SourceRecord {
                file: Some("warehouse.obj".into()),
                line: Some(812),
                face: Some(140),
                fan: None,
                mesh: None,
                primitive: None,
                triangle: None,
            }),
            material: Some("brick".into()),
            back_face,
        }
    }

    #[test]
    fn a_ray_hit_has_one_column_per_fact() {
        let hits = Hits::Ray(vec![
            ray_hit("yard/warehouse", false),
            ray_hit("yard/warehouse", true),
        ]);
        let (columns, rows) = hit_columns(&hits);
        let heads: Vec<&str> = columns.iter().map(|c| c.head).collect();
        assert_eq!(heads, ["#", "object", "m", "t", "tri", "normal", "back"]);
        let texts: Vec<&str> = rows[1].iter().map(|c| c.text.as_str()).collect();
        assert_eq!(
            texts,
            ["2", "yard/warehouse", "5.000", "0.1250", "140", "-x", "•"]
        );
        assert_eq!(rows[0][6].text, "");
        assert_eq!(
            rows[0][4].tip.as_deref(),
            Some("warehouse.obj line 812 (face 140)")
        );
        assert_eq!(
            rows[0][1].tip.as_deref(),
            Some("yard/warehouse\nmaterial: brick")
        );
        assert!(rows.iter().all(|r| r.len() == columns.len()));
    }

    #[test]
    fn long_names_keep_both_ends_and_show_whole_on_hover() {
        let name = "harbour/east-quay/crane-07/counterweight";
        let cell = object(name, &None);
        assert_eq!(cell.text.chars().count(), NAME_CHARS);
        assert!(cell.text.starts_with("harbour/"));
        assert!(cell.text.ends_with("eight"));
        assert_eq!(cell.tip.as_deref(), Some(name));
        assert_eq!(object("crate-3", &None).tip, None);
    }

    #[test]
    fn directions_off_an_axis_show_their_components() {
        let d = DVec3::new(1.0, 0.0, -1.0).normalize();
        assert_eq!(direction(d).text, "0.71 0.00 -0.71");
        assert_eq!(direction(DVec3::Y).text, "+y");
    }

    #[test]
    fn overlaps_read_depth_way_out_and_enclosure() {
        let hits = Hits::Overlap(vec![OverlapRecord {
            object: "drum".into(),
            tags: Vec::<String>::new().into(),
            depth: 0.25,
            direction: [0.0, 1.0, 0.0],
            point: [0.0; 3],
            enclosed: true,
            material: None,
        }]);
        let (columns, rows) = hit_columns(&hits);
        let heads: Vec<&str> = columns.iter().map(|c| c.head).collect();
        assert_eq!(heads, ["#", "object", "m", "way out", "enclosed"]);
        let texts: Vec<&str> = rows[0].iter().map(|c| c.text.as_str()).collect();
        assert_eq!(texts, ["1", "drum", "0.250", "+y", "•"]);
    }
}
