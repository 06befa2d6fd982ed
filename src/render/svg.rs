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
        Ok(cx
            .view
            .figures
            .iter()
            .map(|f| super::Output::new(f.file.clone(), draw(cx.results, f)))
            .collect())
    }
}

const BLUE: RGBColor = RGBColor(0x00, 0x72, 0xB2);
const ORANGE: RGBColor = RGBColor(0xE6, 0x9F, 0x00);
const VERMILLION: RGBColor = RGBColor(0xD5, 0x5E, 0x00);
const GREY: RGBColor = RGBColor(0x55, 0x55, 0x55);
const PALETTE: [RGBColor; 2] = [BLUE, ORANGE];

/// Draws one figure: the drawing its role names, from the model's plot
/// data, with the view's words.
pub(crate) fn draw(r: &Results, f: &FigureView) -> String {
    let h = &r.hypotheses[f.hypothesis];
    let size = match f.role {
        FigureRole::Qq => (520, 280),
        _ => (520, 300),
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
            });
        r.and_then(|_| root.present().map_err(Into::into))
    };
    if drawn.is_err() {
        buf = placeholder(size);
    }
    label_svg(&buf, &f.id, &f.title, &f.note)
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
fn label_svg(svg: &str, id: &str, title: &str, desc: &str) -> String {
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
    let mut chart = ChartBuilder::on(area)
        .margin(12)
        .x_label_area_size(28)
        .y_label_area_size(56)
        .build_cartesian_2d(-0.5f64..(k as f64 - 0.5), lo..hi)?;
    chart
        .configure_mesh()
        .disable_x_mesh()
        .x_labels(k)
        .x_label_formatter(&|x| {
            let i = x.round();
            if (x - i).abs() < 1e-6 && i >= 0.0 {
                labels.get(i as usize).cloned().unwrap_or_default()
            } else {
                String::new()
            }
        })
        .y_desc(&f.value_axis)
        .light_line_style(WHITE)
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
        let caption = f.categories.get(gi).map_or("", String::as_str);
        let mut chart = ChartBuilder::on(panel)
            .caption(caption, ("sans-serif", 14))
            .margin(10)
            .x_label_area_size(30)
            .y_label_area_size(48)
            .build_cartesian_2d(xlo..xhi, ylo..yhi)?;
        chart
            .configure_mesh()
            .x_desc(&f.other_axis)
            .x_labels(5)
            .y_labels(5)
            .light_line_style(WHITE)
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

fn difference(area: &Area, h: &HypothesisResult, f: &FigureView) -> DrawResult {
    let e = &h.estimate;
    // The value of no difference: 0, or ½ for a probability of superiority.
    let null = e.name.null_value();
    let mut vals = vec![null, e.value];
    vals.extend(e.ci_low);
    vals.extend(e.ci_high);
    if let Some(eq) = &h.equivalence {
        vals.extend([eq.low, eq.high, eq.ci_low, eq.ci_high]);
    }
    let (lo, hi) = span(vals);
    let mut chart = ChartBuilder::on(area)
        .margin(14)
        .x_label_area_size(34)
        .y_label_area_size(10)
        .build_cartesian_2d(lo..hi, 0f64..1f64)?;
    chart
        .configure_mesh()
        .disable_y_mesh()
        .disable_y_axis()
        .x_desc(&f.value_axis)
        .light_line_style(WHITE)
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
    let y = 0.5;
    let left = e.ci_low.unwrap_or(lo);
    let right = e.ci_high.unwrap_or(hi);
    chart.draw_series(std::iter::once(PathElement::new(
        vec![(left, y), (right, y)],
        BLUE.stroke_width(3),
    )))?;
    let dx = (hi - lo) * 0.025;
    for (bound, edge, dir) in [(e.ci_low, lo, -1.0), (e.ci_high, hi, 1.0)] {
        match bound {
            Some(b) => chart.draw_series(std::iter::once(PathElement::new(
                vec![(b, y - 0.08), (b, y + 0.08)],
                BLUE.stroke_width(3),
            )))?,
            None => chart.draw_series(std::iter::once(Polygon::new(
                vec![
                    (edge, y),
                    (edge - dir * dx, y - 0.07),
                    (edge - dir * dx, y + 0.07),
                ],
                BLUE.filled(),
            )))?,
        };
    }
    chart.draw_series(std::iter::once(Circle::new((e.value, y), 6, BLUE.filled())))?;
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
    let mut chart = ChartBuilder::on(area)
        .margin(12)
        .x_label_area_size(28)
        .y_label_area_size(56)
        .build_cartesian_2d(-0.3f64..1.3f64, lo..hi)?;
    chart
        .configure_mesh()
        .disable_x_mesh()
        .x_labels(2)
        .x_label_formatter(&|x| {
            if x.abs() < 1e-6 {
                labels.first().cloned().unwrap_or_default()
            } else if (x - 1.0).abs() < 1e-6 {
                labels.get(1).cloned().unwrap_or_default()
            } else {
                String::new()
            }
        })
        .y_desc(&f.value_axis)
        .light_line_style(WHITE)
        .draw()?;
    chart.draw_series(pts.iter().map(|p| {
        let colour = if p[1] > p[0] { ORANGE } else { BLUE };
        PathElement::new(
            vec![(0.0, p[0]), (1.0, p[1])],
            colour.mix(0.6).stroke_width(1),
        )
    }))?;
    chart.draw_series(pts.iter().flat_map(|p| {
        [
            Circle::new((0.0, p[0]), 2, GREY.filled()),
            Circle::new((1.0, p[1]), 2, GREY.filled()),
        ]
    }))?;
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
    let top = d.bin_counts.iter().copied().max().unwrap_or(1).max(1) as f64 * 1.1;
    let mut chart = ChartBuilder::on(area)
        .margin(12)
        .x_label_area_size(34)
        .y_label_area_size(44)
        .build_cartesian_2d(lo..hi, 0f64..top)?;
    chart
        .configure_mesh()
        .disable_x_mesh()
        .x_desc(&f.value_axis)
        .y_desc(&f.other_axis)
        .light_line_style(WHITE)
        .draw()?;
    if valid {
        chart.draw_series(d.bin_counts.iter().enumerate().map(|(i, &c)| {
            Rectangle::new(
                [(edges[i], 0.0), (edges[i + 1], c as f64)],
                BLUE.mix(0.6).filled(),
            )
        }))?;
    }
    chart.draw_series(dashed((0.0, 0.0), (0.0, top)))?;
    Ok(())
}
