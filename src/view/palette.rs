//! Colours of the viewport: muted surface tones for the level, so that probe colours stand out, and
//! probe state colours from a published colour-blind-safe palette. Colour is never the only cue: every
//! state also has its own marker shape and word (see [`StateMark`]).

use plumbline_core::check::Verdict;

/// An sRGB colour, 8 bits per channel.
pub type Rgb = [u8; 3];

/// Okabe, M. & Ito, K. (2008), "Color Universal Design (CUD): how to make figures and presentations
/// that are friendly to colorblind people", the eight-colour set. Values as published.
pub mod okabe_ito {
    use super::Rgb;
    /// Orange.
    pub const ORANGE: Rgb = [230, 159, 0];
    /// Sky blue.
    pub const SKY_BLUE: Rgb = [86, 180, 233];
    /// Bluish green.
    pub const BLUISH_GREEN: Rgb = [0, 158, 115];
    /// Yellow.
    pub const YELLOW: Rgb = [240, 228, 66];
    /// Blue.
    pub const BLUE: Rgb = [0, 114, 178];
    /// Vermillion.
    pub const VERMILLION: Rgb = [213, 94, 0];
    /// Reddish purple.
    pub const REDDISH_PURPLE: Rgb = [204, 121, 167];
}

/// The marker shape and word that go with a verdict's colour.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum StateMark {
    /// Passed: a round marker, "pass".
    Round,
    /// Failed: a square marker, "FAIL".
    Square,
    /// No expectation: a diamond marker, "unchecked".
    Diamond,
    /// Could not be answered: a cross marker, "error".
    Cross,
}

/// The colour of a probe in a given state.
pub fn verdict_colour(verdict: Verdict) -> Rgb {
    match verdict {
        Verdict::Pass => okabe_ito::BLUISH_GREEN,
        Verdict::Fail => okabe_ito::VERMILLION,
        Verdict::Unchecked => okabe_ito::SKY_BLUE,
        Verdict::Error => okabe_ito::REDDISH_PURPLE,
    }
}

/// The marker shape of a probe in a given state.
pub fn verdict_mark(verdict: Verdict) -> StateMark {
    match verdict {
        Verdict::Pass => StateMark::Round,
        Verdict::Fail => StateMark::Square,
        Verdict::Unchecked => StateMark::Diamond,
        Verdict::Error => StateMark::Cross,
    }
}

/// The word shown beside a probe's marker in lists and labels (failures in capitals).
pub fn verdict_word(verdict: Verdict) -> &'static str {
    match verdict {
        Verdict::Pass => "pass",
        Verdict::Fail => "FAIL",
        Verdict::Unchecked => "unchecked",
        Verdict::Error => "error",
    }
}

/// Hit points and contact points.
pub const HIT: Rgb = okabe_ito::YELLOW;
/// Surface normals at hits.
pub const NORMAL: Rgb = okabe_ito::BLUE;
/// The selected probe's outline and the point of least clearance.
pub const SELECTED: Rgb = okabe_ito::ORANGE;
/// Probes whose answer changed when the level was reloaded, and the news of it.
pub const CHANGED: Rgb = okabe_ito::YELLOW;
/// Messages about something that went wrong (a failed save, an invalid field).
pub const WARNING: Rgb = okabe_ito::ORANGE;
/// Volumes (regions that block nothing), drawn see-through, and where probes enter and leave them.
pub const VOLUME: Rgb = okabe_ito::BLUE;
/// How opaque volumes are drawn, 0–255: enough to see them, little enough to see through.
pub const VOLUME_ALPHA: u8 = 56;
/// Ground too steep to stand on, in a reach map: a quiet grey, apart from the verdict colours.
pub const STEEP: Rgb = [150, 150, 150];
/// Handles of the selected probe and points being placed: near white, apart from every state colour.
pub const HANDLE: Rgb = [245, 245, 245];
/// The outline of the triangle under the pointer.
pub const HOVER_OUTLINE: Rgb = [250, 250, 250];
/// The dark backing behind labels, the axis marker and the hover note in the view, so text reads
/// against any level colour.
pub const BACKING: Rgb = [20, 22, 28];

/// Surface tones for well-known tags; anything else gets one of [`SPARE_TONES`] by its tag's name.
const TAG_TONES: &[(&str, Rgb)] = &[
    ("ground", [150, 154, 134]),
    ("terrain", [150, 154, 134]),
    ("building", [214, 204, 188]),
    ("structure", [150, 156, 166]),
    ("glass", [176, 214, 222]),
    ("foliage", [128, 146, 104]),
    ("tree", [140, 118, 96]),
    ("fence", [120, 124, 130]),
    ("vent", [110, 104, 118]),
];

/// Quiet tones for tags without a fixed tone (picked by name, so the same tag keeps its tone).
const SPARE_TONES: &[Rgb] = &[
    [178, 148, 128],
    [138, 158, 170],
    [170, 160, 120],
    [150, 140, 160],
    [126, 150, 140],
    [180, 170, 150],
];

/// The surface tone of an object without tags.
const UNTAGGED: Rgb = [182, 178, 172];

/// The surface tone of an object, by its first tag.
pub fn tag_tone(tags: &[String]) -> Rgb {
    let Some(tag) = tags.first() else {
        return UNTAGGED;
    };
    if let Some((_, tone)) = TAG_TONES.iter().find(|(name, _)| name == tag) {
        return *tone;
    }
    spare_tone(tag)
}

/// The surface tone of a material, by its name (the same name keeps its tone).
pub fn material_tone(name: &str) -> Rgb {
    spare_tone(name)
}

/// One of [`SPARE_TONES`], picked by a stable hash of a name (FNV-1a, the same on every run and
/// platform).
fn spare_tone(name: &str) -> Rgb {
    let hash = name.bytes().fold(0x811c_9dc5_u32, |h, b| {
        (h ^ b as u32).wrapping_mul(0x0100_0193)
    });
    SPARE_TONES[hash as usize % SPARE_TONES.len()]
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_state_has_its_own_colour_mark_and_word() {
        let all = [
            Verdict::Pass,
            Verdict::Fail,
            Verdict::Unchecked,
            Verdict::Error,
        ];
        for (i, a) in all.iter().enumerate() {
            for b in &all[i + 1..] {
                assert_ne!(verdict_colour(*a), verdict_colour(*b));
                assert_ne!(verdict_mark(*a), verdict_mark(*b));
                assert_ne!(verdict_word(*a), verdict_word(*b));
            }
        }
    }

    #[test]
    fn a_tag_keeps_its_tone() {
        let tags = vec!["crate".to_string()];
        assert_eq!(tag_tone(&tags), tag_tone(&tags));
        assert_eq!(tag_tone(&["glass".to_string()]), [176, 214, 222]);
    }
}
