//! What the charts share: input validation ([`observations`]), the
//! size-aware [`Scale`], axis ranges, the chart frame with its mesh
//! ([`frame`]), the compact value formatter and the centered message used
//! when a chart has nothing to show.

use crate::palette::GRAPHITE;
use crate::{ChartError, ChartInput};
use plateau_core::data::TimeAxis;
use plotters::coord::ranged1d::{DefaultFormatting, KeyPointHint};
use plotters::coord::types::RangedCoordf64;
use plotters::coord::Shift;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

/// A drawing area smaller than this (either side, in pixels) cannot hold
/// axes, labels and a plot, and is refused rather than drawn garbled.
pub const MIN_SIDE: u32 = 48;

/// The chart's Cartesian context in axis units.
pub type Chart<'a, 'b, DB> = ChartContext<'a, DB, Cartesian2d<TimeCoord, RangedCoordf64>>;

/// The time axis: a linear `f64` coordinate whose tick marks are given
/// (labelled `bold` ones, finer `light` grid lines), so a dated axis ticks
/// on calendar boundaries ([`time_ticks`]).
#[derive(Clone)]
pub struct TimeCoord {
    inner: RangedCoordf64,
    bold: Vec<f64>,
    light: Vec<f64>,
}

impl TimeCoord {
    /// The axis over `x` with the ticks of `axis` (plotters' evenly
    /// spaced numbers for plain numbers), at most `labels` labelled.
    pub fn new(axis: Option<TimeAxis>, x: (f64, f64), labels: usize) -> TimeCoord {
        let (bold, light) = time_ticks(axis, x, labels);
        TimeCoord {
            inner: (x.0..x.1).into(),
            bold,
            light,
        }
    }
}

impl Ranged for TimeCoord {
    type FormatOption = DefaultFormatting;
    type ValueType = f64;

    fn map(&self, value: &f64, limit: (i32, i32)) -> i32 {
        self.inner.map(value, limit)
    }

    fn key_points<Hint: KeyPointHint>(&self, hint: Hint) -> Vec<f64> {
        if hint.weight().allow_light_points() {
            self.light.clone()
        } else {
            self.bold.clone()
        }
    }

    fn range(&self) -> std::ops::Range<f64> {
        self.inner.range()
    }
}

/// Pixel sizes relative to a reference chart of 800 × 500 pixels.
///
/// `s = min(width / 800, height / 500)`, clamped to [0.4, 10]: a chart
/// drawn on a canvas twice as large in each direction (device pixel ratio
/// 2) gets twice the font and marker sizes and so looks the same once the
/// browser scales it down.
#[derive(Debug, Clone, Copy)]
pub struct Scale {
    pub s: f64,
}

impl Scale {
    pub fn of<DB: DrawingBackend>(area: &DrawingArea<DB, Shift>) -> Scale {
        let (w, h) = area.dim_in_pixel();
        let s = (w as f64 / 800.0).min(h as f64 / 500.0).clamp(0.4, 10.0);
        Scale { s }
    }

    /// A font size in pixels for a base size at the reference scale.
    pub fn font(self, base: f64) -> f64 {
        base * self.s
    }

    /// A length in whole pixels (at least 1).
    pub fn px(self, base: f64) -> u32 {
        (base * self.s).round().max(1.0) as u32
    }

    pub fn pxi(self, base: f64) -> i32 {
        self.px(base) as i32
    }

    pub fn text(self, base: f64) -> TextStyle<'static> {
        ("sans-serif", self.font(base)).into_font().color(&GRAPHITE)
    }
}

/// The finite observations `(t, y)` of the input, in input order.
pub fn observations(input: &ChartInput) -> Result<Vec<(f64, f64)>, ChartError> {
    if input.times.len() != input.values.len() {
        return Err(ChartError::InvalidInput(format!(
            "{} times but {} values",
            input.times.len(),
            input.values.len()
        )));
    }
    let pts: Vec<(f64, f64)> = input
        .times
        .iter()
        .zip(input.values)
        .filter(|(t, y)| t.is_finite() && y.is_finite())
        .map(|(&t, &y)| (t, y))
        .collect();
    if pts.is_empty() {
        return Err(ChartError::InvalidInput(
            "no finite observation to draw".into(),
        ));
    }
    Ok(pts)
}

/// Refuses drawing areas too small to hold a chart.
pub fn check_area<DB: DrawingBackend>(area: &DrawingArea<DB, Shift>) -> Result<(), ChartError> {
    let (w, h) = area.dim_in_pixel();
    if w < MIN_SIDE || h < MIN_SIDE {
        return Err(ChartError::InvalidInput(format!(
            "a {w} × {h} pixel area is too small for a chart (at least {MIN_SIDE} × {MIN_SIDE})"
        )));
    }
    Ok(())
}

/// The smallest and largest of the finite numbers in `it`.
pub fn extent(it: impl IntoIterator<Item = f64>) -> Option<(f64, f64)> {
    it.into_iter()
        .filter(|v| v.is_finite())
        .fold(None, |acc, v| match acc {
            None => Some((v, v)),
            Some((lo, hi)) => Some((lo.min(v), hi.max(v))),
        })
}

/// `[lo, hi]` widened by `frac` of its span on each side; a zero span (one
/// point, a flat line) becomes a unit-sized window around the value so the
/// axis mapping never divides by zero.
pub fn padded((lo, hi): (f64, f64), frac: f64) -> (f64, f64) {
    let span = hi - lo;
    if !(span > 0.0 && span.is_finite()) {
        let half = if lo.abs() > 0.0 { 0.05 * lo.abs() } else { 0.5 };
        return (lo - half, lo + half);
    }
    (lo - frac * span, hi + frac * span)
}

/// `x` evenly spaced values from `a` to `b`, both included.
pub fn linspace(a: f64, b: f64, n: usize) -> Vec<f64> {
    if n < 2 {
        return vec![a];
    }
    let step = (b - a) / (n - 1) as f64;
    (0..n)
        .map(|i| if i + 1 == n { b } else { a + step * i as f64 })
        .collect()
}

/// A value as people read it everywhere in Plateau (the CLI's tables, the
/// page): `plateau_study::numbers::number`, four significant digits with
/// thousands separators (`1234567 → "1,234,567"`, `0.0456 → "0.0456"`).
pub fn format_value(v: f64) -> String {
    plateau_study::numbers::number(v)
}

/// Room for the value axis's labels: the widest of the range's ends as
/// [`format_value`] writes them (ticks lie between them), at about 0.6 em
/// a character, and never less than the 72 px of short labels.
pub fn value_label_room((lo, hi): (f64, f64), scale: Scale) -> u32 {
    let chars = format_value(lo)
        .chars()
        .count()
        .max(format_value(hi).chars().count());
    scale.px((chars as f64 * 0.6 * 13.0 + 20.0).max(72.0))
}

/// Splits `text` into lines of at most about `width` characters at spaces.
pub fn wrap(text: &str, width: usize) -> Vec<String> {
    let width = width.max(10);
    let mut lines = Vec::new();
    let mut line = String::new();
    for word in text.split_whitespace() {
        if !line.is_empty() && line.chars().count() + 1 + word.chars().count() > width {
            lines.push(std::mem::take(&mut line));
        }
        if !line.is_empty() {
            line.push(' ');
        }
        line.push_str(word);
    }
    if !line.is_empty() {
        lines.push(line);
    }
    lines
}

/// The forecast part of a fitted curve: dashed, labelled "forecast" in the
/// legend, in one style for every chart.
pub fn forecast_line<'a, DB: DrawingBackend + 'a, I>(
    chart: &mut Chart<'a, '_, DB>,
    points: I,
    stroke: ShapeStyle,
    scale: Scale,
) -> Result<(), ChartError>
where
    I: IntoIterator<Item = (f64, f64)>,
    I::IntoIter: Clone,
{
    chart
        .draw_series(DashedLineSeries::new(
            points,
            scale.px(9.0),
            scale.px(6.0),
            stroke,
        ))?
        .label("forecast")
        .legend(move |(x, y)| {
            let dash = scale.pxi(7.0);
            EmptyElement::at((x, y))
                + PathElement::new([(0, 0), (dash, 0)], stroke)
                + PathElement::new(
                    [(dash + scale.pxi(5.0), 0), (2 * dash + scale.pxi(5.0), 0)],
                    stroke,
                )
        });
    Ok(())
}

/// The legend box, in one style for every chart.
/// Lines of text (each with its font size in points) stacked down from the
/// top-left corner `at` of the plotting area, inset by a small margin.
pub fn text_block<'a, DB: DrawingBackend + 'a>(
    chart: &mut Chart<'a, '_, DB>,
    at: (f64, f64),
    lines: Vec<(String, f64)>,
    scale: Scale,
) -> Result<(), ChartError> {
    let mut dy = scale.pxi(8.0);
    for (text, size) in lines {
        chart.draw_series(std::iter::once(
            EmptyElement::at(at)
                + Text::new(
                    text,
                    (scale.pxi(10.0), dy),
                    scale.text(size).pos(Pos::new(HPos::Left, VPos::Top)),
                ),
        ))?;
        dy += scale.pxi(size * 1.35);
    }
    Ok(())
}

pub fn legend<'a, DB: DrawingBackend + 'a>(
    chart: &mut Chart<'a, '_, DB>,
    position: SeriesLabelPosition,
    scale: Scale,
) -> Result<(), ChartError> {
    chart
        .configure_series_labels()
        .position(position)
        .margin(scale.px(10.0))
        .legend_area_size(scale.px(28.0))
        .label_font(scale.text(13.0))
        .background_style(WHITE.mix(0.85))
        .border_style(ShapeStyle::from(RGBColor(200, 200, 200)).stroke_width(scale.px(1.0)))
        .draw()?;
    Ok(())
}

/// Clears `area`, sets its title and builds the axes with the input's
/// captions and label formatters.
pub fn frame<'a, 'b, DB: DrawingBackend>(
    area: &'a DrawingArea<DB, Shift>,
    input: &'b ChartInput,
    title: &str,
    y_caption: &str,
    x: (f64, f64),
    y: (f64, f64),
    scale: Scale,
) -> Result<Chart<'a, 'b, DB>, ChartError> {
    area.fill(&WHITE)?;
    let (w, _) = area.dim_in_pixel();
    let labels = ((w as f64 / scale.font(110.0)) as usize).clamp(2, 12);
    let mut chart = ChartBuilder::on(area)
        .margin(scale.px(12.0))
        .caption(title, scale.text(19.0))
        .x_label_area_size(scale.px(48.0))
        .y_label_area_size(value_label_room(y, scale))
        .build_cartesian_2d(TimeCoord::new(input.time_axis, x, labels), y.0..y.1)?;
    let format_time = input.format_time;
    let x_fmt = move |v: &f64| format_time(*v);
    let y_fmt = |v: &f64| format_value(*v);
    chart
        .configure_mesh()
        .x_labels(labels)
        .y_labels(6)
        .x_label_formatter(&x_fmt)
        .y_label_formatter(&y_fmt)
        .x_desc(input.time_caption)
        .y_desc(y_caption)
        .label_style(scale.text(13.0))
        .axis_desc_style(scale.text(14.0))
        .light_line_style(RGBColor(235, 235, 235))
        .bold_line_style(RGBColor(215, 215, 215))
        .axis_style(ShapeStyle::from(GRAPHITE).stroke_width(scale.px(1.0)))
        .set_all_tick_mark_size(scale.px(4.0))
        .draw()?;
    Ok(chart)
}

/// Tick marks of the time axis on `x`, at most `labels` labelled (bold)
/// and a finer set of light grid lines: on natural calendar boundaries for
/// a dated axis ([`TimeAxis::ticks`]), else plotters' evenly spaced numbers.
pub fn time_ticks(axis: Option<TimeAxis>, x: (f64, f64), labels: usize) -> (Vec<f64>, Vec<f64>) {
    let numeric = |n: usize| RangedCoordf64::from(x.0..x.1).key_points(n);
    match axis.and_then(|a| a.ticks(x.0, x.1, labels)) {
        Some(bold) => {
            let light = axis
                .and_then(|a| a.ticks(x.0, x.1, 4 * labels))
                .unwrap_or_else(|| bold.clone());
            (bold, light)
        }
        None => (numeric(labels), numeric(4 * labels)),
    }
}

/// Clears `area` and writes `message` in its middle: the chart for an
/// analysis that does not apply.
pub fn draw_message<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    title: &str,
    message: &str,
    scale: Scale,
) -> Result<(), ChartError> {
    area.fill(&WHITE)?;
    let (w, h) = area.dim_in_pixel();
    let center = Pos::new(HPos::Center, VPos::Center);
    area.draw(&Text::new(
        title.to_string(),
        ((w / 2) as i32, scale.pxi(24.0)),
        scale.text(19.0).pos(center),
    ))?;
    let chars = (w as f64 / (0.55 * scale.font(15.0))) as usize;
    let lines = wrap(message, chars.saturating_sub(4));
    let line_h = scale.font(22.0);
    let top = h as f64 / 2.0 - line_h * (lines.len() as f64 - 1.0) / 2.0;
    for (i, line) in lines.iter().enumerate() {
        area.draw(&Text::new(
            line.clone(),
            ((w / 2) as i32, (top + line_h * i as f64) as i32),
            scale.text(15.0).pos(center),
        ))?;
    }
    Ok(())
}

/// The time formatter used when a caller has no time kind: the number with
/// up to two decimals.
pub fn plain_time(t: f64) -> String {
    let s = format!("{t:.2}");
    s.trim_end_matches('0').trim_end_matches('.').to_string()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn values_are_compact() {
        // The study layer's rules (checked there); here only that the
        // charts use them.
        assert_eq!(format_value(1_234_567.0), "1,234,567");
        assert_eq!(format_value(2_500_000.0), "2,500,000");
        assert_eq!(format_value(0.0456), "0.0456");
        assert_eq!(format_value(-3.0e12), "-3e12");
        assert_eq!(format_value(-0.0), "0");
        assert_eq!(plain_time(2024.50), "2024.5");
    }

    #[test]
    fn padding_never_gives_an_empty_range() {
        let (a, b) = padded((3.0, 3.0), 0.05);
        assert!(a < b);
        let (a, b) = padded((0.0, 0.0), 0.05);
        assert!(a < b);
        assert_eq!(linspace(0.0, 1.0, 3), vec![0.0, 0.5, 1.0]);
        assert_eq!(wrap("aa bb cc dd", 10), vec!["aa bb cc", "dd"]);
    }
}
