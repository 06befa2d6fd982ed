//! The report's figures as small, deterministic SVG documents.
//!
//! Each figure answers one question and is titled by it. Figures are drawn
//! with plotters' SVG backend from the values the pipeline kept for drawing
//! (`HypothesisResult::plot` / `paired_plot`, already capped), so their size
//! does not grow with n. Every SVG carries a `<title>` and a `<desc>` for
//! screen readers. Colours come from the palette of Okabe & Ito (2008),
//! "Color Universal Design", chosen because it stays distinguishable for
//! the common forms of colour blindness. Jitter is a fixed low-discrepancy
//! sequence, never random, so the same results give the same bytes.
//!
//! **Designed width.** Every figure is drawn for the text block of a
//! single-column A4 page with 2.5 cm margins, 16 cm wide (a Letter page
//! with 1 in margins is 16.5 cm, so the same figure fits): the SVG says
//! `width="16cm"` over a 520-unit view box, so one unit prints as
//! 16/520 cm ≈ 0.87 pt. The smallest text (tick labels) is
//! [`TICK_FONT`]/1.24 ≈ 11.3 units (plotters writes a font's size divided
//! by 1.24), about 9.8 pt printed, above the 8 pt minimum that
//! `tests/render.rs` and the browser test in `tests/reports.rs` check. Axis titles and
//! panel titles are larger. Ticks come from [`super::axis`].

use super::axis::Axis;
use super::view::{FigureRole, FigureView};
use crate::results::{HypothesisResult, PlotData, Results};
use plotters::coord::Shift;
use plotters::element::DashedPathElement;
use plotters::prelude::*;

/// The SVG renderer: one file per figure the view lists.
pub(crate) struct Svg;

impl super::Renderer for Svg {
    fn render(
        &self,
        cx: &super::Context,
        _done: &[super::Output],
    ) -> crate::error::Result<Vec<super::Output>> {
        use rayon::prelude::*;
        // Figures are drawn in parallel, collected in the view's order.
        Ok(cx
            .view
            .figures
            .par_iter()
            .map(|f| super::Output::new(f.file.clone(), draw(cx.results, f)))
            .collect())
    }
}

const BLUE: RGBColor = RGBColor(0x00, 0x72, 0xB2);
const ORANGE: RGBColor = RGBColor(0xE6, 0x9F, 0x00);
const VERMILLION: RGBColor = RGBColor(0xD5, 0x5E, 0x00);
const GREY: RGBColor = RGBColor(0x55, 0x55, 0x55);
const PALETTE: [RGBColor; 2] = [BLUE, ORANGE];

/// Width of every figure's view box, in SVG units.
pub(crate) const VIEW_WIDTH: u32 = 520;
/// The printed width every figure is designed for, in centimetres: the
/// text block of a single-column A4 page with 2.5 cm margins.
pub(crate) const PRINT_WIDTH_CM: f64 = 16.0;
/// plotters font sizes (the SVG gets these divided by 1.24).
const TICK_FONT: f64 = 14.0;
const TITLE_FONT: f64 = 15.0;

fn tick_font() -> TextStyle<'static> {
    TextStyle::from(("sans-serif", TICK_FONT).into_font())
}

fn title_font() -> TextStyle<'static> {
    TextStyle::from(("sans-serif", TITLE_FONT).into_font())
}

/// Draws one figure: the drawing its role names, from the model's plot
/// data, with the view's words.
pub(crate) fn draw(r: &Results, f: &FigureView) -> String {
    let h = &r.hypotheses[f.hypothesis];
    let size = match f.role {
        FigureRole::Qq => (VIEW_WIDTH, 300),
        FigureRole::Methods => (VIEW_WIDTH, 60 + 44 * f.categories.len() as u32),
        _ => (VIEW_WIDTH, 320),
    };
    let mut buf = String::new();
    let drawn = {
        let root = SVGBackend::with_string(&mut buf, size).into_drawing_area();
        let r = root
            .fill(&WHITE)
            .map_err(Into::into)
            .and_then(|_| match f.role {
                FigureRole::Groups => groups(&root, h, f),
                FigureRole::Pairs => pairs(&root, h, f),
                FigureRole::Qq => qq(&root, &h.plot, f),
                FigureRole::Differences => match h.plot.first() {
                    Some(d) => histogram(&root, d, f),
                    None => Ok(()),
                },
                FigureRole::Difference => difference(&root, h, f),
                FigureRole::Methods => methods(&root, h, f),
            });
        r.and_then(|_| root.present().map_err(Into::into))
    };
    if drawn.is_err() {
        buf = placeholder(size);
    }
    label_svg(
        &italic_symbols(&printed_size(&buf, size)),
        &f.id,
        &f.title,
        &f.note,
    )
}

/// Sets the statistic in a test's name in italics inside the drawing, as
/// the text around it does ("Welch's *t* test"; APA Publication Manual,
/// 7th ed., §6.44). plotters writes each label as one `<text>`; the
/// symbol becomes an italic `<tspan>` within it. Run before the `<title>`
/// and `<desc>` are added, which stay plain text.
fn italic_symbols(svg: &str) -> String {
    let mut out = svg.to_string();
    for symbol in ["t", "U"] {
        out = out.replace(
            &format!(" {symbol} test"),
            &format!(" <tspan font-style=\"italic\">{symbol}</tspan> test"),
        );
    }
    out
}

/// Gives the SVG its printed size (see the module comment) in place of
/// plotters' pixel size; the view box keeps the drawing's units.
fn printed_size(svg: &str, size: (u32, u32)) -> String {
    let cm = |units: u32| {
        let v = PRINT_WIDTH_CM * units as f64 / VIEW_WIDTH as f64;
        let s = format!("{v:.2}");
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    };
    svg.replacen(
        &format!("width=\"{}\" height=\"{}\"", size.0, size.1),
        &format!("width=\"{}cm\" height=\"{}cm\"", cm(size.0), cm(size.1)),
        1,
    )
}

type Area<'a> = DrawingArea<SVGBackend<'a>, Shift>;
type DrawResult = Result<(), Box<dyn std::error::Error>>;

fn placeholder(size: (u32, u32)) -> String {
    format!(
        "<svg width=\"{0}\" height=\"{1}\" viewBox=\"0 0 {0} {1}\" xmlns=\"http://www.w3.org/2000/svg\">\n<text x=\"10\" y=\"20\" font-family=\"sans-serif\" font-size=\"12\">This figure could not be drawn for these values.</text>\n</svg>\n",
        size.0, size.1
    )
}

fn xml_escape(s: &str) -> String {
    s.replace('&', "&amp;")
        .replace('<', "&lt;")
        .replace('>', "&gt;")
        .replace('"', "&quot;")
}

/// Puts `<title>` and `<desc>` first inside the `<svg>` element and marks
/// it as an image labelled by them.
pub(crate) fn label_svg(svg: &str, id: &str, title: &str, desc: &str) -> String {
    let Some(end) = svg.find('>') else {
        return svg.to_string();
    };
    let (open, rest) = svg.split_at(end);
    format!(
        "{open} role=\"img\" aria-labelledby=\"{id}-title {id}-desc\">\n<title id=\"{id}-title\">{}</title>\n<desc id=\"{id}-desc\">{}</desc>{}",
        xml_escape(title),
        xml_escape(desc),
        &rest[1..]
    )
}

/// The SVG with the figure's own id in its labels (see [`label_svg`])
/// replaced by one neutral id: the drawing as the rasterisers see it, the
/// same for two figures that draw the same thing under different ids.
/// Only the three places [`label_svg`] writes are touched (the title and
/// description are escaped, so their text cannot hold these tags).
pub(crate) fn neutral_labels(svg: &str, id: &str) -> String {
    let neutral = "figure";
    let mut out = svg.replacen(
        &format!("aria-labelledby=\"{id}-title {id}-desc\">"),
        &format!("aria-labelledby=\"{neutral}-title {neutral}-desc\">"),
        1,
    );
    for part in ["title", "desc"] {
        out = out.replacen(
            &format!("<{part} id=\"{id}-{part}\">"),
            &format!("<{part} id=\"{neutral}-{part}\">"),
            1,
        );
    }
    out
}

fn finite(v: &[f64]) -> Vec<f64> {
    v.iter().copied().filter(|x| x.is_finite()).collect()
}

/// A padded range around some values (never empty).
fn span(values: impl IntoIterator<Item = f64>) -> (f64, f64) {
    let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
    for v in values.into_iter().filter(|v| v.is_finite()) {
        lo = lo.min(v);
        hi = hi.max(v);
    }
    if !lo.is_finite() {
        return (-1.0, 1.0);
    }
    let pad = if hi > lo {
        (hi - lo) * 0.08
    } else {
        lo.abs().max(1.0) * 0.1
    };
    (lo - pad, hi + pad)
}

fn jitter(i: usize) -> f64 {
    ((i as f64 * 0.618_033_988_749_895).fract() - 0.5) * 0.36
}

/// Applies the report's text sizes and the axes' own tick labels to a mesh.
macro_rules! styled_mesh {
    ($chart:expr) => {
        $chart
            .configure_mesh()
            .label_style(tick_font())
            .axis_desc_style(title_font())
            .light_line_style(WHITE)
            .bold_line_style(WHITE.mix(0.0))
    };
}

/// A categorical axis: one tick per category, at 0, 1, …
fn categories(k: usize) -> Axis {
    Axis {
        lo: -0.5,
        hi: k.max(1) as f64 - 0.5,
        ticks: (0..k.max(1)).map(|i| i as f64).collect(),
        decimals: 0,
    }
}

fn category_label(labels: &[String], x: f64) -> String {
    let i = x.round();
    if (x - i).abs() < 1e-6 && i >= 0.0 {
        labels.get(i as usize).cloned().unwrap_or_default()
    } else {
        String::new()
    }
}

fn groups(area: &Area, h: &HypothesisResult, f: &FigureView) -> DrawResult {
    let sets = &h.plot;
    let k = sets.len().max(1);
    let mut all: Vec<f64> = sets.iter().flat_map(|p| finite(&p.points)).collect();
    all.extend(
        h.groups
            .iter()
            .flat_map(|g| [g.describe.min, g.describe.max]),
    );
    all.extend(h.reference);
    let (lo, hi) = span(all);
    let labels = &f.categories;
    let y = Axis::nice(lo, hi, 6);
    let mut chart = ChartBuilder::on(area)
        .margin(12)
        .x_label_area_size(52)
        .y_label_area_size(72)
        .build_cartesian_2d(categories(k), y)?;
    styled_mesh!(chart)
        .disable_x_mesh()
        .x_label_formatter(&|x| category_label(labels, *x))
        .x_desc(&f.other_axis)
        .y_desc(&f.value_axis)
        .draw()?;
    for (gi, p) in sets.iter().enumerate() {
        let x0 = gi as f64;
        let colour = PALETTE[gi % 2];
        if let Some(g) = h.groups.get(gi).map(|g| &g.describe) {
            let w = 0.28;
            chart.draw_series(std::iter::once(Rectangle::new(
                [(x0 - w, g.q1), (x0 + w, g.q3)],
                GREY.stroke_width(1),
            )))?;
            chart.draw_series(std::iter::once(PathElement::new(
                vec![(x0 - w, g.median), (x0 + w, g.median)],
                GREY.stroke_width(2),
            )))?;
            chart.draw_series(std::iter::once(PathElement::new(
                vec![(x0, g.q3), (x0, g.max)],
                GREY.stroke_width(1),
            )))?;
            chart.draw_series(std::iter::once(PathElement::new(
                vec![(x0, g.q1), (x0, g.min)],
                GREY.stroke_width(1),
            )))?;
        }
        chart.draw_series(
            finite(&p.points)
                .into_iter()
                .enumerate()
                .map(|(i, v)| Circle::new((x0 + jitter(i), v), 3, colour.mix(0.7).filled())),
        )?;
    }
    if let Some(r) = h.reference {
        chart.draw_series(dashed((-0.5, r), (k as f64 - 0.5, r)))?;
    }
    Ok(())
}

/// A grey dashed reference line (zero, the reference value), drawn by
/// plotters' own dash style: 5-pixel dashes, 4-pixel gaps.
fn dashed(
    from: (f64, f64),
    to: (f64, f64),
) -> std::iter::Once<DashedPathElement<std::vec::IntoIter<(f64, f64)>, u32>> {
    std::iter::once(DashedPathElement::new(
        vec![from, to],
        5,
        4,
        GREY.stroke_width(1),
    ))
}

fn qq(area: &Area, sets: &[PlotData], f: &FigureView) -> DrawResult {
    let panels = area.split_evenly((1, sets.len().max(1)));
    for (gi, (panel, p)) in panels.iter().zip(sets).enumerate() {
        let xs = &p.qq.theoretical;
        let sorted = &p.points;
        let (xlo, xhi) = span(xs.iter().copied().chain([-1.0, 1.0]));
        let (ylo, yhi) = span(sorted.iter().copied());
        let (x, y) = (Axis::nice(xlo, xhi, 5), Axis::nice(ylo, yhi, 5));
        let (xlo, xhi) = (x.lo, x.hi);
        let caption = f.categories.get(gi).map_or("", String::as_str);
        let mut chart = ChartBuilder::on(panel)
            .caption(caption, title_font())
            .margin(10)
            .x_label_area_size(48)
            .y_label_area_size(68)
            .build_cartesian_2d(x, y)?;
        styled_mesh!(chart)
            .x_desc(&f.other_axis)
            .y_desc(&f.value_axis)
            .draw()?;
        if let Some(line) = p.qq.line {
            let at = |z: f64| line.intercept + line.slope * z;
            chart.draw_series(std::iter::once(PathElement::new(
                vec![(xlo, at(xlo)), (xhi, at(xhi))],
                GREY.stroke_width(1),
            )))?;
        }
        chart.draw_series(
            xs.iter()
                .zip(sorted.iter())
                .map(|(&x, &y)| Circle::new((x, y), 3, PALETTE[gi % 2].mix(0.8).filled())),
        )?;
    }
    Ok(())
}

/// One interval drawn on a horizontal axis at height `y`: a bar with end
/// marks, an arrow where a side is open, and the estimate as a dot.
fn interval<DB: DrawingBackend>(
    chart: &mut ChartContext<'_, DB, Cartesian2d<Axis, Axis>>,
    y: f64,
    value: f64,
    (low, high): (Option<f64>, Option<f64>),
    (lo, hi): (f64, f64),
    colour: RGBColor,
) -> Result<(), DrawingAreaErrorKind<DB::ErrorType>> {
    let left = low.unwrap_or(lo);
    let right = high.unwrap_or(hi);
    chart.draw_series(std::iter::once(PathElement::new(
        vec![(left, y), (right, y)],
        colour.stroke_width(3),
    )))?;
    let dx = (hi - lo) * 0.025;
    for (bound, edge, dir) in [(low, lo, -1.0), (high, hi, 1.0)] {
        match bound {
            Some(b) => chart.draw_series(std::iter::once(PathElement::new(
                vec![(b, y - 0.08), (b, y + 0.08)],
                colour.stroke_width(3),
            )))?,
            None => chart.draw_series(std::iter::once(Polygon::new(
                vec![
                    (edge, y),
                    (edge - dir * dx, y - 0.07),
                    (edge - dir * dx, y + 0.07),
                ],
                colour.filled(),
            )))?,
        };
    }
    chart.draw_series(std::iter::once(Circle::new((value, y), 6, colour.filled())))?;
    Ok(())
}

/// The interval a figure of the difference draws: with equivalence bounds,
/// the 1 − 2α interval the two one-sided tests rest on; otherwise the
/// estimate's own interval.
fn drawn_interval(h: &HypothesisResult) -> (Option<f64>, Option<f64>) {
    match &h.equivalence {
        Some(eq) => (Some(eq.ci_low), Some(eq.ci_high)),
        None => (h.estimate.ci_low, h.estimate.ci_high),
    }
}

fn difference(area: &Area, h: &HypothesisResult, f: &FigureView) -> DrawResult {
    let e = &h.estimate;
    // The value of no difference: 0, or ½ for a probability of superiority.
    let null = e.name.null_value();
    let (low, high) = drawn_interval(h);
    let mut vals = vec![null, e.value];
    vals.extend(low);
    vals.extend(high);
    if let Some(eq) = &h.equivalence {
        vals.extend([eq.low, eq.high]);
    }
    let (lo, hi) = span(vals);
    let x = Axis::nice(lo, hi, 7);
    let (lo, hi) = (x.lo, x.hi);
    let mut chart = ChartBuilder::on(area)
        .margin(14)
        .x_label_area_size(52)
        .y_label_area_size(10)
        .build_cartesian_2d(x, Axis::nice(0.0, 1.0, 2))?;
    styled_mesh!(chart)
        .disable_y_mesh()
        .disable_y_axis()
        .x_desc(&f.value_axis)
        .draw()?;
    chart.draw_series(dashed((null, 0.0), (null, 1.0)))?;
    if let Some(eq) = &h.equivalence {
        for b in [eq.low, eq.high] {
            chart.draw_series((0..20).step_by(3).map(|i| {
                let y = i as f64 / 20.0;
                PathElement::new(vec![(b, y), (b, y + 0.04)], VERMILLION.stroke_width(2))
            }))?;
        }
    }
    interval(&mut chart, 0.5, e.value, (low, high), (lo, hi), BLUE)?;
    Ok(())
}

/// Each method's estimate and interval on one axis: the preregistered
/// method first (blue), every other method below it (grey).
fn methods(area: &Area, h: &HypothesisResult, f: &FigureView) -> DrawResult {
    let tests = crate::render::view::methods_drawn(h);
    let null = h.test.estimate.name.null_value();
    let mut vals = vec![null];
    for t in &tests {
        vals.push(t.estimate.value);
        vals.extend(t.estimate.ci_low);
        vals.extend(t.estimate.ci_high);
    }
    let (lo, hi) = span(vals);
    let x = Axis::nice(lo, hi, 7);
    let (lo, hi) = (x.lo, x.hi);
    let k = tests.len();
    // Rows from the top: row i sits at height k − 1 − i.
    let y = Axis {
        lo: -0.6,
        hi: k as f64 - 0.4,
        ticks: (0..k).map(|i| i as f64).collect(),
        decimals: 0,
    };
    let labels = &f.categories;
    let label = |v: &f64| {
        let i = v.round();
        if (v - i).abs() < 1e-6 && i >= 0.0 && (i as usize) < k {
            labels.get(k - 1 - i as usize).cloned().unwrap_or_default()
        } else {
            String::new()
        }
    };
    let mut chart = ChartBuilder::on(area)
        .margin(12)
        .x_label_area_size(52)
        .y_label_area_size(190)
        .build_cartesian_2d(x, y)?;
    styled_mesh!(chart)
        .disable_y_mesh()
        .y_label_formatter(&label)
        .x_desc(&f.value_axis)
        .draw()?;
    chart.draw_series(dashed((null, -0.6), (null, k as f64 - 0.4)))?;
    for (i, t) in tests.iter().enumerate() {
        let colour = if i == 0 { BLUE } else { GREY };
        let e = &t.estimate;
        let row = (k - 1 - i) as f64;
        interval(
            &mut chart,
            row,
            e.value,
            (e.ci_low, e.ci_high),
            (lo, hi),
            colour,
        )?;
    }
    Ok(())
}

fn pairs(area: &Area, h: &HypothesisResult, f: &FigureView) -> DrawResult {
    let Some(pp) = &h.paired_plot else {
        return Ok(());
    };
    let pts: Vec<[f64; 2]> = pp
        .pairs
        .iter()
        .copied()
        .filter(|p| p[0].is_finite() && p[1].is_finite())
        .collect();
    let (lo, hi) = span(pts.iter().flat_map(|p| [p[0], p[1]]));
    let labels = &f.categories;
    // Room on the right for the legend of the two line colours.
    let x = Axis {
        lo: -0.3,
        hi: 2.4,
        ticks: vec![0.0, 1.0],
        decimals: 0,
    };
    let mut chart = ChartBuilder::on(area)
        .margin(12)
        .x_label_area_size(52)
        .y_label_area_size(72)
        .build_cartesian_2d(x, Axis::nice(lo, hi, 6))?;
    styled_mesh!(chart)
        .disable_x_mesh()
        .x_label_formatter(&|x| category_label(labels, *x))
        .x_desc(&f.other_axis)
        .y_desc(&f.value_axis)
        .draw()?;
    let legend = f.legend.clone();
    for (colour, rose, words) in [(ORANGE, true, legend.first()), (BLUE, false, legend.get(1))] {
        let anno = chart.draw_series(pts.iter().filter(|p| (p[1] > p[0]) == rose).map(|p| {
            PathElement::new(
                vec![(0.0, p[0]), (1.0, p[1])],
                colour.mix(0.6).stroke_width(1),
            )
        }))?;
        if let Some(w) = words {
            anno.label(w.clone()).legend(move |(x, y)| {
                PathElement::new(vec![(x, y), (x + 18, y)], colour.stroke_width(2))
            });
        }
    }
    chart.draw_series(pts.iter().flat_map(|p| {
        [
            Circle::new((0.0, p[0]), 2, GREY.filled()),
            Circle::new((1.0, p[1]), 2, GREY.filled()),
        ]
    }))?;
    chart
        .configure_series_labels()
        .label_font(tick_font())
        .position(SeriesLabelPosition::UpperRight)
        .background_style(WHITE)
        .border_style(GREY)
        .draw()?;
    Ok(())
}

fn histogram(area: &Area, d: &PlotData, f: &FigureView) -> DrawResult {
    let edges = finite(&d.bin_edges);
    let valid = edges.len() == d.bin_counts.len() + 1 && !d.bin_counts.is_empty();
    let (lo, hi) = if valid {
        span(edges.iter().copied().chain([0.0]))
    } else {
        span(finite(&d.points).into_iter().chain([0.0]))
    };
    let most = d.bin_counts.iter().copied().max().unwrap_or(1);
    let y = Axis::counts(most, 5);
    let top = y.hi;
    let mut chart = ChartBuilder::on(area)
        .margin(12)
        .x_label_area_size(52)
        .y_label_area_size(64)
        .build_cartesian_2d(Axis::nice(lo, hi, 7), y)?;
    styled_mesh!(chart)
        .disable_x_mesh()
        .x_desc(&f.value_axis)
        .y_desc(&f.other_axis)
        .draw()?;
    if valid {
        chart.draw_series(d.bin_counts.iter().enumerate().map(|(i, &c)| {
            Rectangle::new(
                [(edges[i], 0.0), (edges[i + 1], c as f64)],
                BLUE.mix(0.6).filled(),
            )
        }))?;
        chart.draw_series(d.bin_counts.iter().enumerate().map(|(i, &c)| {
            Rectangle::new(
                [(edges[i], 0.0), (edges[i + 1], c as f64)],
                WHITE.stroke_width(1),
            )
        }))?;
    }
    chart.draw_series(dashed((0.0, 0.0), (0.0, top)))?;
    Ok(())
}
