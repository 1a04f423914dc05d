//! Where the view's probe labels go: beside their markers, farther out in a crowd, never over
//! another label, a marker or a reserved part of the view. In a crowd with no free place a label
//! is left out — except the one that must be shown (the selected probe's), which goes below the
//! labels in its way — so that hundreds of failing probes leave a readable view, not a wall of
//! boxes.

use eframe::egui::{Pos2, Rect, Vec2};

/// How far out from its marker a label is tried to one side, points: beside it first, then
/// farther out (with a leader line). Ours.
const DISTANCES: [f32; 3] = [26.0, 70.0, 130.0];

/// How far out a label is tried above or below its marker, only once no side place is free (its
/// leader line runs straight up or down, past other labels more often). Ours.
const LAST_RESORTS: [f32; 3] = [50.0, 80.0, 190.0];

/// Once this many labels found no free place, the rest are left out without being tried: each try
/// looks at every label and marker, and a crowd of hundreds would otherwise cost a frame. Ours.
const GIVE_UP_AFTER: usize = 40;

/// Room for the verdict's mark left of a label's text, points.
const MARK_ROOM: f32 = 16.0;

/// The box drawn around a label whose text, `size` across, starts at `pos`: the text, the mark
/// left of it and a margin.
pub fn frame_at(pos: Pos2, size: Vec2) -> Rect {
    Rect::from_min_size(
        pos - Vec2::new(MARK_ROOM, 0.0),
        size + Vec2::new(MARK_ROOM, 0.0),
    )
    .expand2(Vec2::new(5.0, 2.0))
}

/// The labels placed so far in one frame of the view.
pub struct LabelPlaces {
    area: Rect,
    markers: Vec<Pos2>,
    taken: Vec<Rect>,
    /// How many labels found no free place.
    crowded: usize,
}

impl LabelPlaces {
    /// For labels inside `area`, kept off every one of `markers` and off the `reserved` parts of
    /// it (other overlays: the legend, the note of labels left out).
    pub fn new(area: Rect, markers: Vec<Pos2>, reserved: &[Rect]) -> LabelPlaces {
        LabelPlaces {
            area,
            markers,
            taken: reserved.to_vec(),
            crowded: 0,
        }
    }

    /// Where the text of a label `size` across goes for the marker at `at`: the first free place
    /// beside it, then farther out; when none is free, below the labels in its way if it `must`
    /// be shown, else `None` (left out).
    pub fn place(&mut self, at: Pos2, size: Vec2, must: bool) -> Option<Pos2> {
        if !must && self.crowded >= GIVE_UP_AFTER {
            return None;
        }
        let (w, h) = (size.x, size.y);
        let free = |pos: Pos2| {
            let frame = frame_at(pos, size);
            self.area.contains_rect(frame)
                && !self.taken.iter().any(|r| r.intersects(frame))
                && !self.markers.iter().any(|m| frame.expand(6.0).contains(*m))
        };
        let sides = DISTANCES.into_iter().flat_map(|d| {
            [
                Vec2::new(d, -h - d * 0.3),
                Vec2::new(d, d * 0.3),
                Vec2::new(-w - d, -h - d * 0.3),
                Vec2::new(-w - d, d * 0.3),
            ]
        });
        let above_or_below = LAST_RESORTS
            .into_iter()
            .flat_map(|d| [Vec2::new(-w * 0.5, -h - d), Vec2::new(-w * 0.5, d)]);
        let beside = sides
            .chain(above_or_below)
            .map(|d| at + d)
            .find(|p| free(*p));
        if beside.is_none() {
            self.crowded += 1;
        }
        let pos = match beside {
            Some(pos) => pos,
            None if must => {
                let mut pos = at + Vec2::new(DISTANCES[0], -h - DISTANCES[0] * 0.3);
                while let Some(below) = self
                    .taken
                    .iter()
                    .find(|r| r.intersects(frame_at(pos, size)))
                {
                    pos.y = below.bottom() + 3.0;
                }
                pos
            }
            None => return None,
        };
        self.taken.push(frame_at(pos, size));
        Some(pos)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn area() -> Rect {
        Rect::from_min_size(Pos2::ZERO, Vec2::new(800.0, 600.0))
    }

    const SIZE: Vec2 = Vec2::new(120.0, 16.0);

    /// Placed labels never cover each other or a marker, and stay inside the view; in a crowd
    /// some are left out rather than stacked (common practice for map and chart labels).
    #[test]
    fn a_crowd_leaves_labels_out_instead_of_stacking_them() {
        let markers: Vec<Pos2> = (0..200)
            .map(|k| Pos2::new(300.0 + (k % 20) as f32 * 9.0, 250.0 + (k / 20) as f32 * 9.0))
            .collect();
        let mut places = LabelPlaces::new(area(), markers.clone(), &[]);
        let placed: Vec<Option<Pos2>> = markers
            .iter()
            .map(|&m| places.place(m, SIZE, false))
            .collect();
        let frames: Vec<Rect> = placed
            .iter()
            .flatten()
            .map(|&p| frame_at(p, SIZE))
            .collect();
        assert!(frames.len() >= 4, "some labels fit around the crowd");
        assert!(frames.len() < markers.len(), "not every label fits");
        for (k, a) in frames.iter().enumerate() {
            assert!(area().contains_rect(*a));
            assert!(markers.iter().all(|m| !a.expand(6.0).contains(*m)));
            assert!(frames[k + 1..].iter().all(|b| !a.intersects(*b)));
        }
    }

    /// The label that must be shown is, even in a crowd: below those in its way, over none.
    #[test]
    fn the_label_that_must_be_shown_goes_below_those_in_its_way() {
        let at = Pos2::new(400.0, 300.0);
        let mut places = LabelPlaces::new(area(), vec![at], &[]);
        let others: Vec<Pos2> = (0..40)
            .filter_map(|_| places.place(at, SIZE, false))
            .collect();
        assert!(places.place(at, SIZE, false).is_none(), "the crowd is full");
        let shown = places.place(at, SIZE, true).expect("always placed");
        let frame = frame_at(shown, SIZE);
        assert!(others.iter().all(|&o| !frame_at(o, SIZE).intersects(frame)));
    }

    /// No label covers the reserved part of the view, not even the one that must be shown.
    #[test]
    fn no_label_covers_the_reserved_part() {
        let reserved = Rect::from_min_size(Pos2::ZERO, Vec2::new(400.0, 200.0));
        let mut places = LabelPlaces::new(area(), Vec::new(), &[reserved]);
        let at = Pos2::new(60.0, 80.0);
        let labels: Vec<Pos2> = (0..30)
            .filter_map(|k| places.place(at, SIZE, k == 29))
            .collect();
        assert!(!labels.is_empty());
        assert!(
            labels
                .iter()
                .all(|&p| !frame_at(p, SIZE).intersects(reserved))
        );
    }

    /// Once a crowd has turned many labels away, the rest are not tried (the frame stays cheap),
    /// but the label that must be shown still is.
    #[test]
    fn a_full_crowd_stops_trying() {
        let at = Pos2::new(400.0, 300.0);
        let mut places = LabelPlaces::new(area(), vec![at], &[]);
        let fit = (0..100).take_while(|_| places.place(at, SIZE, false).is_some());
        assert!(fit.count() < 100, "the crowd fills");
        for _ in 1..GIVE_UP_AFTER {
            assert!(places.place(at, SIZE, false).is_none());
        }
        // Far from the crowd, with room to spare: not tried any more.
        assert!(places.place(Pos2::new(100.0, 500.0), SIZE, false).is_none());
        assert!(places.place(Pos2::new(100.0, 500.0), SIZE, true).is_some());
    }
}
