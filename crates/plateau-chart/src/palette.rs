//! The chart colours: five roles, one colour each, readable with the
//! common red–green colour-vision deficiencies.
//!
//! How they were chosen: deuteranopes and protanopes lose the red–green
//! axis but keep lightness and the blue–yellow axis, so every pair of
//! colours here differs in lightness, or sits on opposite sides of the
//! blue–yellow axis, or both. The candidates were checked by simulating
//! protanopia and deuteranopia (Viénot, Brettel & Mollon 1999, LMS
//! projection) and computing CIELAB ΔE between every pair of simulated
//! colours: the smallest simulated difference is about 27 (ROSE against
//! GRAPHITE and SKY), the data/fit pair INK/ORANGE stays above 110. Roles
//! that must be told apart on every chart (observations vs fitted curve vs
//! reflections) use the most separated pair, and are also told apart by
//! marker shape or line style, so colour is never the only cue.
//!
//! CIELAB lightness L* (normal vision): INK 28, GRAPHITE 30, ROSE 51,
//! ORANGE 66, SKY 75.

use plotters::style::RGBColor;

/// Observations: a dark blue (L* ≈ 28).
pub const INK: RGBColor = RGBColor(30, 60, 140);
/// Fitted curve and forecast, reflected points: a warm orange (L* ≈ 66),
/// opposite INK on the blue–yellow axis.
pub const ORANGE: RGBColor = RGBColor(230, 140, 30);
/// Confidence band fill (drawn translucent): a light blue (L* ≈ 75).
pub const SKY: RGBColor = RGBColor(140, 190, 235);
/// Reference lines (K, zero) and text: a neutral dark grey (L* ≈ 30).
pub const GRAPHITE: RGBColor = RGBColor(70, 70, 70);
/// The midpoint / inflection marker: a mid-light pink-purple (L* ≈ 51).
pub const ROSE: RGBColor = RGBColor(190, 80, 150);

/// Opacity of the confidence band, light enough that points and curves
/// drawn over it keep their contrast.
pub const BAND_ALPHA: f64 = 0.45;

/// Colours for several series on one chart: the eight colours of Okabe &
/// Ito's palette for colour-vision deficiencies ("Color Universal Design",
/// 2008; values from memory), black replaced by GRAPHITE's darker cousin
/// so text stays the darkest ink. The overlay also varies the marker shape
/// every eight series, so colour is never the only cue.
pub const SERIES: [RGBColor; 8] = [
    RGBColor(0, 114, 178),   // blue
    RGBColor(230, 159, 0),   // orange
    RGBColor(0, 158, 115),   // bluish green
    RGBColor(204, 121, 167), // reddish purple
    RGBColor(86, 180, 233),  // sky blue
    RGBColor(213, 94, 0),    // vermillion
    RGBColor(40, 40, 40),    // near-black
    RGBColor(240, 228, 66),  // yellow
];
