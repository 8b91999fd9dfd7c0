//! The drift chart ([`draw_drift`]): the saturation level K estimated from
//! the first m points, with its 95% interval as a bar, against the time of
//! the m-th point (the cutoff), and the all-data estimate as a dashed
//! line. A K that keeps climbing with the cutoff is not yet determined. For
//! the exponential, which has no K, the rate r is drawn instead.

use crate::common::{self, format_value, Scale};
use crate::palette::{GRAPHITE, INK};
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

/// The interval bars: a mid blue dark enough to keep 3:1 against white
/// (contrast 4.5:1; SKY, the band fill, is 2.0:1 and too light for a thin
/// bar).
const BAR: RGBColor = RGBColor(60, 120, 190);

/// One fitted prefix: cutoff, the value drawn, its interval, and whether
/// the value is only a lower bound (a K the prefix does not determine).
#[derive(Debug, Clone, Copy)]
struct Prefix {
    t: f64,
    v: f64,
    ci: Option<(f64, f64)>,
    at_least: bool,
}

/// Draws the drift chart of `rows` (from [`plateau_core::history::drift`]).
///
/// A K the data of a prefix do not determine is drawn as an open marker at
/// what K is at least (its verified profile lower bound, else the fitted
/// curve's level at the cutoff; see
/// [`plateau_core::history::DriftFit::saturation_at_least`]) with an
/// upward arrow, never at its meaningless estimate; the value axis follows
/// the determined estimates and those lower bounds, so nothing drawn is
/// clamped to the frame (only interval bars may run out of it).
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
    let pts: Vec<Prefix> = rows
        .iter()
        .filter_map(|r| {
            let f = r.result.as_ref().ok()?;
            let p = f.params.iter().find(|p| p.name == name)?;
            if !r.cutoff.is_finite() {
                return None;
            }
            if let Some(lo) = f.saturation_at_least(name) {
                return Some(Prefix {
                    t: r.cutoff,
                    v: lo,
                    ci: None,
                    at_least: true,
                });
            }
            p.estimate.is_finite().then_some(Prefix {
                t: r.cutoff,
                v: p.estimate,
                // No interval drawn where the data do not determine it.
                ci: p
                    .ci95
                    .filter(|c| p.identified && c.0.is_finite() && c.1.is_finite()),
                at_least: false,
            })
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
        common::extent(pts.iter().map(|p| p.t)).unwrap_or((0.0, 1.0)),
        0.03,
    );
    // Value axis: every value drawn (determined estimates and lower
    // bounds), the bars up to BAR_OVERSHOOT of that spread beyond it.
    let core = common::extent(pts.iter().map(|p| p.v)).unwrap_or((0.0, 1.0));
    let span = (core.1 - core.0)
        .max(core.1.abs() * 0.05)
        .max(f64::MIN_POSITIVE);
    let lim = (core.0 - BAR_OVERSHOOT * span, core.1 + BAR_OVERSHOOT * span);
    let all = common::extent(
        pts.iter()
            .flat_map(|p| [Some(p.v), p.ci.map(|c| c.0), p.ci.map(|c| c.1)])
            .flatten(),
    )
    .unwrap_or(core);
    // Room above the highest lower bound for its arrow.
    let arrow_room = if pts.iter().any(|p| p.at_least) {
        0.12 * span
    } else {
        0.0
    };
    let y = common::padded(
        (all.0.max(lim.0), all.1.min(lim.1).max(core.1 + arrow_room)),
        0.05,
    );
    let clamp = |v: f64| v.clamp(y.0, y.1);

    area.fill(&WHITE)?;
    let (w, _) = area.dim_in_pixel();
    let labels = ((w as f64 / scale.font(110.0)) as usize).clamp(2, 12);
    let mut chart = ChartBuilder::on(area)
        .margin(scale.px(12.0))
        .margin_right(scale.px(28.0))
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

    let bar = ShapeStyle::from(BAR).stroke_width(scale.px(3.0));
    if pts.iter().any(|p| p.ci.is_some()) {
        chart
            .draw_series(
                pts.iter()
                    .filter_map(|p| p.ci.map(|(lo, hi)| (p.t, lo, hi)))
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
    }

    let final_row = pts[pts.len() - 1];
    let final_label = if final_row.at_least {
        format!(
            "all data: {name} not determined, at least {}",
            format_value(final_row.v)
        )
    } else {
        format!("all data: {name} = {}", format_value(final_row.v))
    };
    chart
        .draw_series(DashedLineSeries::new(
            [(x.0, final_row.v), (x.1, final_row.v)],
            scale.px(6.0),
            scale.px(4.0),
            ShapeStyle::from(GRAPHITE).stroke_width(scale.px(1.2)),
        ))?
        .label(final_label)
        .legend(move |(x, y)| {
            PathElement::new(
                [(x, y), (x + scale.pxi(20.0), y)],
                ShapeStyle::from(GRAPHITE).stroke_width(scale.px(1.2)),
            )
        });

    // The line joins the determined estimates only: a lower bound is not
    // a value the estimate moved through.
    let line = ShapeStyle::from(INK).stroke_width(scale.px(1.5));
    let mut run: Vec<(f64, f64)> = Vec::new();
    for p in &pts {
        if p.at_least {
            if run.len() > 1 {
                chart.draw_series(LineSeries::new(run.drain(..), line))?;
            }
            run.clear();
        } else {
            run.push((p.t, p.v));
        }
    }
    if run.len() > 1 {
        chart.draw_series(LineSeries::new(run, line))?;
    }
    let r = scale.px(3.5);
    if pts.iter().any(|p| !p.at_least) {
        chart
            .draw_series(
                pts.iter()
                    .filter(|p| !p.at_least)
                    .map(|p| Circle::new((p.t, p.v), r, INK.filled())),
            )?
            .label(format!("{name} from the data up to the cutoff"))
            .legend(move |(x, y)| Circle::new((x + scale.pxi(10.0), y), r, INK.filled()));
    }
    if pts.iter().any(|p| p.at_least) {
        let open = ShapeStyle::from(INK).stroke_width(scale.px(1.8));
        let (len, head) = (scale.pxi(18.0), scale.pxi(5.0));
        let ri = r as i32;
        let marker = move |(x, y): (f64, f64)| {
            EmptyElement::at((x, y))
                + Circle::new((0, 0), r, open)
                + PathElement::new([(0, -ri), (0, -ri - len)], open)
                + PathElement::new(
                    [
                        (-head, -ri - len + head),
                        (0, -ri - len),
                        (head, -ri - len + head),
                    ],
                    open,
                )
        };
        chart
            .draw_series(
                pts.iter()
                    .filter(|p| p.at_least)
                    .map(|p| marker((p.t, p.v))),
            )?
            .label(format!("{name} not determined: at least"))
            .legend(move |(x, y)| {
                EmptyElement::at((x + scale.pxi(10.0), y + scale.pxi(4.0)))
                    + Circle::new((0, 0), r, open)
                    + PathElement::new([(0, -ri), (0, -ri - scale.pxi(9.0))], open)
                    + PathElement::new(
                        [
                            (-scale.pxi(3.0), -ri - scale.pxi(6.0)),
                            (0, -ri - scale.pxi(9.0)),
                            (scale.pxi(3.0), -ri - scale.pxi(6.0)),
                        ],
                        open,
                    )
            });
    }
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
