//! The drift chart ([`draw_drift`]): the saturation level K estimated from
//! the first m points, with its 95% interval as a bar, against the time of
//! the m-th point (the cutoff), and the all-data estimate as a dashed
//! line. A K that keeps climbing with the cutoff is not yet determined. For
//! the exponential, which has no K, the rate r is drawn instead.

use crate::common::{self, format_value, Scale};
use crate::palette::{BAND_ALPHA, GRAPHITE, INK, SKY};
use crate::ChartError;
use plateau_core::history::DriftRow;
use plateau_core::Model;
use plotters::coord::Shift;
use plotters::prelude::*;

/// What the drift chart needs besides the rows.
pub struct DriftInput<'a> {
    /// Formats a time-axis value for tick labels.
    pub format_time: &'a dyn Fn(f64) -> String,
    pub time_caption: &'a str,
    /// Caption of the data's values (K is in their unit).
    pub value_caption: &'a str,
    pub model: Model,
    /// The calendar of the time axis (ticks on natural boundaries); `None`
    /// for plain numbers.
    pub time_axis: Option<plateau_core::data::TimeAxis>,
}

/// Interval bars wider than this multiple of the estimates' spread are cut
/// at the frame, so early prefixes with huge intervals do not flatten the rest.
const BAR_OVERSHOOT: f64 = 0.5;

/// One fitted prefix: cutoff, estimate and its interval.
type Prefix = (f64, f64, Option<(f64, f64)>);

/// Draws the drift chart of `rows` (from [`plateau_core::history::drift`]).
pub fn draw_drift<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    rows: &[DriftRow],
    input: &DriftInput,
) -> Result<(), ChartError> {
    common::check_area(area)?;
    let scale = Scale::of(area);
    let name = if input.model.param_index("K").is_some() {
        "K"
    } else {
        "r"
    };
    let title = format!("{name} as the data arrived ({})", input.model.name());
    // (cutoff, estimate, interval) of every prefix that was fitted.
    let pts: Vec<Prefix> = rows
        .iter()
        .filter_map(|r| {
            let f = r.result.as_ref().ok()?;
            let p = f.params.iter().find(|p| p.name == name)?;
            (r.cutoff.is_finite() && p.estimate.is_finite()).then_some((
                r.cutoff,
                p.estimate,
                // No interval drawn where the data do not determine K.
                p.ci95
                    .filter(|c| p.identified && c.0.is_finite() && c.1.is_finite()),
            ))
        })
        .collect();
    if pts.len() < 2 {
        return common::draw_message(
            area,
            &title,
            "Too few prefixes of the data could be fitted to show how the estimate moved.",
            scale,
        );
    }
    let x = common::padded(
        common::extent(pts.iter().map(|p| p.0)).unwrap_or((0.0, 1.0)),
        0.03,
    );
    // Value axis: the estimates of the later half always, the earlier
    // ones and the bars up to BAR_OVERSHOOT of that spread.
    let late = &pts[pts.len() / 2..];
    let core = common::extent(late.iter().map(|p| p.1)).unwrap_or((0.0, 1.0));
    let span = (core.1 - core.0)
        .max(core.1.abs() * 0.05)
        .max(f64::MIN_POSITIVE);
    let lim = (
        core.0 - BAR_OVERSHOOT * span * 4.0,
        core.1 + BAR_OVERSHOOT * span * 4.0,
    );
    let all = common::extent(
        pts.iter()
            .flat_map(|p| [Some(p.1), p.2.map(|c| c.0), p.2.map(|c| c.1)])
            .flatten(),
    )
    .unwrap_or(core);
    let y = common::padded((all.0.max(lim.0), all.1.min(lim.1)), 0.05);
    let clamp = |v: f64| v.clamp(y.0, y.1);

    area.fill(&WHITE)?;
    let (w, _) = area.dim_in_pixel();
    let labels = ((w as f64 / scale.font(110.0)) as usize).clamp(2, 12);
    let mut chart = ChartBuilder::on(area)
        .margin(scale.px(12.0))
        .caption(&title, scale.text(19.0))
        .x_label_area_size(scale.px(48.0))
        .y_label_area_size(common::value_label_room(y, scale))
        .build_cartesian_2d(common::TimeCoord::new(input.time_axis, x, labels), y.0..y.1)?;
    let format_time = input.format_time;
    let x_fmt = move |v: &f64| format_time(*v);
    let y_fmt = |v: &f64| format_value(*v);
    let y_desc = if name == "K" {
        format!("K ({})", input.value_caption)
    } else {
        "r".to_string()
    };
    chart
        .configure_mesh()
        .x_labels(labels)
        .y_labels(6)
        .x_label_formatter(&x_fmt)
        .y_label_formatter(&y_fmt)
        .x_desc(format!("cutoff: last {} used", input.time_caption))
        .y_desc(y_desc)
        .label_style(scale.text(13.0))
        .axis_desc_style(scale.text(14.0))
        .light_line_style(RGBColor(235, 235, 235))
        .bold_line_style(RGBColor(215, 215, 215))
        .axis_style(ShapeStyle::from(GRAPHITE).stroke_width(scale.px(1.0)))
        .set_all_tick_mark_size(scale.px(4.0))
        .draw()?;

    let bar = ShapeStyle::from(SKY.mix(BAND_ALPHA.max(0.8))).stroke_width(scale.px(3.0));
    chart
        .draw_series(
            pts.iter()
                .filter_map(|&(t, _, c)| c.map(|(lo, hi)| (t, lo, hi)))
                .map(|(t, lo, hi)| PathElement::new([(t, clamp(lo)), (t, clamp(hi))], bar)),
        )?
        .label("95% interval")
        .legend(move |(x, y)| {
            PathElement::new(
                [
                    (x + scale.pxi(10.0), y - scale.pxi(6.0)),
                    (x + scale.pxi(10.0), y + scale.pxi(6.0)),
                ],
                bar,
            )
        });

    let last = pts[pts.len() - 1].1;
    chart
        .draw_series(DashedLineSeries::new(
            [(x.0, last), (x.1, last)],
            scale.px(6.0),
            scale.px(4.0),
            ShapeStyle::from(GRAPHITE).stroke_width(scale.px(1.2)),
        ))?
        .label(format!("all data: {name} = {}", format_value(last)))
        .legend(move |(x, y)| {
            PathElement::new(
                [(x, y), (x + scale.pxi(20.0), y)],
                ShapeStyle::from(GRAPHITE).stroke_width(scale.px(1.2)),
            )
        });

    let line = ShapeStyle::from(INK).stroke_width(scale.px(1.5));
    chart.draw_series(LineSeries::new(pts.iter().map(|p| (p.0, clamp(p.1))), line))?;
    let r = scale.px(3.5);
    chart
        .draw_series(
            pts.iter()
                .map(|p| Circle::new((p.0, clamp(p.1)), r, INK.filled())),
        )?
        .label(format!("{name} from the data up to the cutoff"))
        .legend(move |(x, y)| Circle::new((x + scale.pxi(10.0), y), r, INK.filled()));
    common::legend(&mut chart, SeriesLabelPosition::LowerRight, scale)?;
    Ok(())
}

/// The drift chart as a standalone SVG document.
pub fn render_drift_svg(
    rows: &[DriftRow],
    input: &DriftInput,
    width: u32,
    height: u32,
) -> Result<String, ChartError> {
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, (width, height)).into_drawing_area();
        draw_drift(&root, rows, input)?;
        root.present()?;
    }
    Ok(svg)
}
