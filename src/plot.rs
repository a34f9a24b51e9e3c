//! SVG plots (plotters): populations against time or against a scanned value.
//!
//! Owns: drawing finished numbers into an SVG string. Must not: compute
//! physics or write files (the app writes the string atomically).

use plotters::prelude::*;

/// One curve: a name, points, and whether it is drawn dashed.
#[derive(Debug, Clone, PartialEq)]
pub struct Curve {
    pub name: String,
    pub points: Vec<(f64, f64)>,
    pub dashed: bool,
    /// Colour index shared between an exact curve and its dashed estimate.
    pub color: usize,
}

// Same shape as HeatMap (and the plot specs of pipeline/study.rs): plain data of one plot.
/// What to draw.
#[derive(Debug, Clone, PartialEq)]
pub struct LinePlot {
    pub title: String,
    pub x_label: String,
    /// Multiply x values by this for the axis (e.g. 1e9 to show ns).
    pub x_scale: f64,
    /// Logarithmic x axis (log-spaced scans); every x must be positive.
    pub log_x: bool,
    pub y_label: String,
    pub curves: Vec<Curve>,
    /// Logarithmic population axis (spectators), floor at `log_floor`.
    pub log_y: bool,
    pub log_floor: f64,
    /// Tolerance drawn as a dashed horizontal line.
    pub tolerance: Option<f64>,
}

#[derive(Debug, thiserror::Error)]
#[error("could not draw the plot: {0}")]
pub struct PlotError(String);

impl PlotError {
    pub fn new(message: impl Into<String>) -> Self {
        PlotError(message.into())
    }
}

fn perr<E: std::fmt::Display>(e: E) -> PlotError {
    PlotError(e.to_string())
}

const PALETTE: [RGBColor; 10] = [
    RGBColor(31, 119, 180),
    RGBColor(214, 39, 40),
    RGBColor(44, 160, 44),
    RGBColor(148, 103, 189),
    RGBColor(255, 127, 14),
    RGBColor(140, 86, 75),
    RGBColor(227, 119, 194),
    RGBColor(127, 127, 127),
    RGBColor(188, 189, 34),
    RGBColor(23, 190, 207),
];

fn builder<'a, 'b>(
    root: &'a DrawingArea<SVGBackend<'b>, plotters::coord::Shift>,
    title: &str,
) -> ChartBuilder<'a, 'b, SVGBackend<'b>> {
    let mut b = ChartBuilder::on(root);
    b.caption(title, ("sans-serif", 20))
        .margin(12)
        .x_label_area_size(45)
        .y_label_area_size(70);
    b
}

/// The legend: one row per curve (solid or dashed, in its colour), then the tolerance.
fn legend_column(
    area: &DrawingArea<SVGBackend, plotters::coord::Shift>,
    p: &LinePlot,
) -> Result<(), PlotError> {
    let font = ("sans-serif", 14).into_font();
    let mut y = 60;
    for c in &p.curves {
        let color = PALETTE[c.color % PALETTE.len()];
        if c.dashed {
            for k in 0..3 {
                area.draw(&PathElement::new(
                    vec![(10 + 8 * k, y), (15 + 8 * k, y)],
                    color.stroke_width(2),
                ))
                .map_err(perr)?;
            }
        } else {
            area.draw(&PathElement::new(
                vec![(10, y), (32, y)],
                color.stroke_width(2),
            ))
            .map_err(perr)?;
        }
        area.draw(&Text::new(c.name.clone(), (40, y - 7), font.clone()))
            .map_err(perr)?;
        y += 20;
    }
    if p.tolerance.is_some() {
        for k in 0..3 {
            area.draw(&PathElement::new(
                vec![(10 + 8 * k, y), (14 + 8 * k, y)],
                BLACK,
            ))
            .map_err(perr)?;
        }
        area.draw(&Text::new("tolerance", (40, y - 7), font))
            .map_err(perr)?;
    }
    Ok(())
}

/// Tick label: powers of ten as `1e-6` on a logarithmic axis; on a linear
/// one up to six decimals, or the shortest exponent form for very small or
/// large numbers.
fn tick(v: f64, log: bool) -> String {
    if log {
        format!("{v:.0e}")
    } else if v != 0.0 && !(1e-3..1e6).contains(&v.abs()) {
        format!("{v:e}")
    } else {
        let s = format!("{v:.6}");
        let s = s.trim_end_matches('0').trim_end_matches('.');
        if s == "-0" {
            "0".into()
        } else {
            s.to_string()
        }
    }
}

/// Draw a line plot into an SVG document.
pub fn line_svg(p: &LinePlot) -> Result<String, PlotError> {
    let xs = p
        .curves
        .iter()
        .flat_map(|c| c.points.iter().map(|q| q.0 * p.x_scale));
    let (mut x0, mut x1) = xs.fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), x| {
        (a.min(x), b.max(x))
    });
    if !x0.is_finite() || !x1.is_finite() {
        return Err(PlotError("nothing to draw".into()));
    }
    if p.log_x && x0 <= 0.0 {
        return Err(PlotError(
            "a logarithmic x axis needs positive values".into(),
        ));
    }
    if x1 <= x0 {
        if p.log_x {
            x0 /= 2.0;
            x1 *= 2.0;
        } else {
            x0 -= 0.5;
            x1 += 0.5;
        }
    }
    let mut svg = String::new();
    {
        let full = SVGBackend::with_string(&mut svg, (1000, 560)).into_drawing_area();
        full.fill(&WHITE).map_err(perr)?;
        // The chart on the left, the legend in its own column on the right,
        // so no curve is hidden behind it.
        let (root, side) = full.split_horizontally(820);
        legend_column(&side, p)?;
        let floor = p.log_floor.max(1e-300);
        let clamp = |y: f64| if p.log_y { y.max(floor) } else { y };
        macro_rules! draw {
            ($chart:expr) => {{
                let mut chart = $chart;
                chart
                    .configure_mesh()
                    .x_desc(p.x_label.as_str())
                    .y_desc(p.y_label.as_str())
                    .x_label_formatter(&|v: &f64| tick(*v, p.log_x))
                    .y_label_formatter(&|v: &f64| tick(*v, p.log_y))
                    .draw()
                    .map_err(perr)?;
                for c in &p.curves {
                    let color = PALETTE[c.color % PALETTE.len()];
                    let pts: Vec<(f64, f64)> = c
                        .points
                        .iter()
                        .map(|&(x, y)| (x * p.x_scale, clamp(y)))
                        .collect();
                    let style = color.stroke_width(2);
                    if c.dashed {
                        chart
                            .draw_series(DashedLineSeries::new(pts, 6, 4, style))
                            .map_err(perr)?;
                    } else {
                        chart
                            .draw_series(LineSeries::new(pts, style))
                            .map_err(perr)?;
                    }
                }
                if let Some(t) = p.tolerance {
                    let line = vec![(x0, clamp(t)), (x1, clamp(t))];
                    chart
                        .draw_series(DashedLineSeries::new(line, 4, 4, BLACK.stroke_width(1)))
                        .map_err(perr)?;
                }
            }};
        }
        let ymax = p
            .curves
            .iter()
            .flat_map(|c| c.points.iter().map(|q| q.1))
            .fold(floor, f64::max)
            .max(p.tolerance.unwrap_or(floor))
            * 2.0;
        let ylog = floor..ymax.min(2.0);
        match (p.log_x, p.log_y) {
            (false, true) => draw!(builder(&root, &p.title)
                .build_cartesian_2d(x0..x1, ylog.log_scale())
                .map_err(perr)?),
            (false, false) => draw!(builder(&root, &p.title)
                .build_cartesian_2d(x0..x1, 0.0..1.05f64)
                .map_err(perr)?),
            (true, true) => draw!(builder(&root, &p.title)
                .build_cartesian_2d((x0..x1).log_scale(), ylog.log_scale())
                .map_err(perr)?),
            (true, false) => draw!(builder(&root, &p.title)
                .build_cartesian_2d((x0..x1).log_scale(), 0.0..1.05f64)
                .map_err(perr)?),
        }
        full.present().map_err(perr)?;
    }
    Ok(svg)
}

// Same shape as LinePlot (and the scan plot specs): the plain data of another kind of plot.
/// A heat map of a population over a 2-D grid (logarithmic colour scale)
/// with the outline of the cells above a tolerance.
#[derive(Debug, Clone, PartialEq)]
pub struct HeatMap {
    pub title: String,
    pub x_label: String,
    pub y_label: String,
    /// Cell centres along x and y, monotonic (increasing or decreasing).
    pub xs: Vec<f64>,
    pub ys: Vec<f64>,
    pub log_x: bool,
    pub log_y: bool,
    /// One value per cell, x slowest: `values[ix * ys.len() + iy]`.
    pub values: Vec<f64>,
    /// Name of the value (colour bar label, before "log10").
    pub value_label: String,
    /// Values below this are drawn at this (log colour scale).
    pub floor: f64,
    /// Cells above it are outlined.
    pub tolerance: Option<f64>,
}

/// Anchor colours of the colour scale, dark (low) to bright (high); a
/// perceptually ordered blue-green-yellow ramp.
const RAMP: [(f64, f64, f64); 5] = [
    (68.0, 1.0, 84.0),
    (59.0, 82.0, 139.0),
    (33.0, 145.0, 140.0),
    (94.0, 201.0, 98.0),
    (253.0, 231.0, 37.0),
];

/// Colour of s in [0, 1] on the ramp.
fn ramp(s: f64) -> RGBColor {
    let s = if s.is_finite() {
        s.clamp(0.0, 1.0)
    } else {
        0.0
    };
    let x = s * (RAMP.len() - 1) as f64;
    let i = (x.floor() as usize).min(RAMP.len() - 2);
    let f = x - i as f64;
    let (a, b) = (RAMP[i], RAMP[i + 1]);
    let mix = |p: f64, q: f64| (p + (q - p) * f).round().clamp(0.0, 255.0) as u8;
    RGBColor(mix(a.0, b.0), mix(a.1, b.1), mix(a.2, b.2))
}

/// Cell edges around monotonic centres (midpoints; geometric on a log axis;
/// the outer edges mirror the inner ones). A single centre gets a cell of
/// width 1 (linear) or a factor 10 (log).
pub fn cell_edges(centres: &[f64], log: bool) -> Vec<f64> {
    let to = |v: f64| if log { v.log10() } else { v };
    let from = |u: f64| if log { 10f64.powf(u) } else { u };
    let u: Vec<f64> = centres.iter().map(|&v| to(v)).collect();
    let n = u.len();
    if n == 0 {
        return Vec::new();
    }
    if n == 1 {
        return vec![from(u[0] - 0.5), from(u[0] + 0.5)];
    }
    let mut e = Vec::with_capacity(n + 1);
    e.push(u[0] - 0.5 * (u[1] - u[0]));
    for k in 0..n - 1 {
        e.push(0.5 * (u[k] + u[k + 1]));
    }
    e.push(u[n - 1] + 0.5 * (u[n - 1] - u[n - 2]));
    e.into_iter().map(from).collect()
}

/// Segments (in data coordinates) of the boundary between cells above the
/// tolerance and cells at or below it.
pub fn tolerance_outline(
    xe: &[f64],
    ye: &[f64],
    values: &[f64],
    tolerance: f64,
) -> Vec<[(f64, f64); 2]> {
    let (nx, ny) = (xe.len().saturating_sub(1), ye.len().saturating_sub(1));
    if values.len() != nx * ny {
        return Vec::new();
    }
    let above = |ix: usize, iy: usize| values[ix * ny + iy] > tolerance;
    let mut segs = Vec::new();
    for ix in 0..nx {
        for iy in 0..ny {
            if ix + 1 < nx && above(ix, iy) != above(ix + 1, iy) {
                segs.push([(xe[ix + 1], ye[iy]), (xe[ix + 1], ye[iy + 1])]);
            }
            if iy + 1 < ny && above(ix, iy) != above(ix, iy + 1) {
                segs.push([(xe[ix], ye[iy + 1]), (xe[ix + 1], ye[iy + 1])]);
            }
        }
    }
    segs
}

fn span(edges: &[f64]) -> (f64, f64) {
    edges
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &v| {
            (a.min(v), b.max(v))
        })
}

/// Draw a heat map with a colour bar into an SVG document.
pub fn heatmap_svg(h: &HeatMap) -> Result<String, PlotError> {
    let (nx, ny) = (h.xs.len(), h.ys.len());
    if nx == 0 || ny == 0 || h.values.len() != nx * ny {
        return Err(PlotError("nothing to draw".into()));
    }
    if h.values
        .iter()
        .chain(&h.xs)
        .chain(&h.ys)
        .any(|v| !v.is_finite())
    {
        return Err(PlotError("a non-finite value".into()));
    }
    if (h.log_x && h.xs.iter().any(|&v| v <= 0.0)) || (h.log_y && h.ys.iter().any(|&v| v <= 0.0)) {
        return Err(PlotError("a logarithmic axis needs positive values".into()));
    }
    let floor = h.floor.max(1e-300);
    let logs: Vec<f64> = h.values.iter().map(|&v| v.max(floor).log10()).collect();
    let hi = logs.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    let lo = logs.iter().copied().fold(f64::INFINITY, f64::min);
    let (lo, hi) = if hi - lo < 1e-9 {
        (lo - 0.5, hi + 0.5)
    } else {
        (lo, hi)
    };
    let xe = cell_edges(&h.xs, h.log_x);
    let ye = cell_edges(&h.ys, h.log_y);
    let (x0, x1) = span(&xe);
    let (y0, y1) = span(&ye);
    let outline = h
        .tolerance
        .map(|t| tolerance_outline(&xe, &ye, &h.values, t))
        .unwrap_or_default();
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, (900, 620)).into_drawing_area();
        root.fill(&WHITE).map_err(perr)?;
        let (main, bar) = root.split_horizontally(770);
        macro_rules! draw {
            ($chart:expr) => {{
                let mut chart = $chart;
                chart
                    .configure_mesh()
                    .disable_mesh()
                    .x_desc(h.x_label.as_str())
                    .y_desc(h.y_label.as_str())
                    .x_label_formatter(&|v: &f64| tick(*v, h.log_x))
                    .y_label_formatter(&|v: &f64| tick(*v, h.log_y))
                    .draw()
                    .map_err(perr)?;
                chart
                    .draw_series((0..nx).flat_map(|ix| {
                        let (xe, ye, logs) = (&xe, &ye, &logs);
                        (0..ny).map(move |iy| {
                            let c = ramp((logs[ix * ny + iy] - lo) / (hi - lo));
                            Rectangle::new([(xe[ix], ye[iy]), (xe[ix + 1], ye[iy + 1])], c.filled())
                        })
                    }))
                    .map_err(perr)?;
                if let Some(t) = h.tolerance {
                    chart
                        .draw_series(
                            outline
                                .iter()
                                .map(|s| PathElement::new(s.to_vec(), WHITE.stroke_width(3))),
                        )
                        .map_err(perr)?;
                    chart
                        .draw_series(
                            outline
                                .iter()
                                .map(|s| PathElement::new(s.to_vec(), BLACK.stroke_width(1))),
                        )
                        .map_err(perr)?
                        .label(format!("tolerance {t:.1e}"))
                        .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 20, y)], BLACK));
                    chart
                        .configure_series_labels()
                        .background_style(WHITE.mix(0.85))
                        .border_style(BLACK)
                        .position(SeriesLabelPosition::UpperRight)
                        .draw()
                        .map_err(perr)?;
                }
            }};
        }
        match (h.log_x, h.log_y) {
            (false, false) => draw!(builder(&main, &h.title)
                .build_cartesian_2d(x0..x1, y0..y1)
                .map_err(perr)?),
            (true, false) => draw!(builder(&main, &h.title)
                .build_cartesian_2d((x0..x1).log_scale(), y0..y1)
                .map_err(perr)?),
            (false, true) => draw!(builder(&main, &h.title)
                .build_cartesian_2d(x0..x1, (y0..y1).log_scale())
                .map_err(perr)?),
            (true, true) => draw!(builder(&main, &h.title)
                .build_cartesian_2d((x0..x1).log_scale(), (y0..y1).log_scale())
                .map_err(perr)?),
        }
        let mut cb = ChartBuilder::on(&bar)
            .margin_top(44)
            .margin_bottom(57)
            .margin_right(8)
            .y_label_area_size(62)
            .build_cartesian_2d(0.0..1.0f64, lo..hi)
            .map_err(perr)?;
        cb.configure_mesh()
            .disable_mesh()
            .disable_x_axis()
            .y_desc(format!("log10 {}", h.value_label))
            .label_style(("sans-serif", 13))
            .axis_desc_style(("sans-serif", 14))
            .draw()
            .map_err(perr)?;
        let steps = 100;
        cb.draw_series((0..steps).map(|k| {
            let a = lo + (hi - lo) * k as f64 / steps as f64;
            let b = lo + (hi - lo) * (k + 1) as f64 / steps as f64;
            Rectangle::new(
                [(0.0, a), (1.0, b)],
                ramp((k as f64 + 0.5) / steps as f64).filled(),
            )
        }))
        .map_err(perr)?;
        if let Some(t) = h.tolerance {
            let lt = t.max(floor).log10();
            if lt > lo && lt < hi {
                cb.draw_series(std::iter::once(PathElement::new(
                    vec![(0.0, lt), (1.0, lt)],
                    BLACK.stroke_width(2),
                )))
                .map_err(perr)?;
            }
        }
        root.present().map_err(perr)?;
    }
    Ok(svg)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn tick_labels_are_short() {
        assert_eq!(tick(1e-6, true), "1e-6");
        assert_eq!(tick(0.1 + 0.2, false), "0.3");
        assert_eq!(tick(-80.0, false), "-80");
        assert_eq!(tick(0.0, false), "0");
        assert_eq!(tick(2.5e-7, false), "2.5e-7");
    }

    #[test]
    fn cell_edges_are_midpoints_linear_and_geometric() {
        assert_eq!(
            cell_edges(&[0.0, 1.0, 2.0], false),
            vec![-0.5, 0.5, 1.5, 2.5]
        );
        let e = cell_edges(&[1.0, 100.0], true);
        approx::assert_relative_eq!(e[0], 0.1, max_relative = 1e-12);
        approx::assert_relative_eq!(e[1], 10.0, max_relative = 1e-12);
        approx::assert_relative_eq!(e[2], 1000.0, max_relative = 1e-12);
        // Decreasing centres keep their order.
        assert_eq!(cell_edges(&[2.0, 1.0], false), vec![2.5, 1.5, 0.5]);
        assert_eq!(cell_edges(&[3.0], false), vec![2.5, 3.5]);
    }

    #[test]
    fn outline_separates_cells_above_tolerance() {
        // 2 x 2 cells, only (1, 1) above: two segments around it.
        let xe = [0.0, 1.0, 2.0];
        let ye = [0.0, 1.0, 2.0];
        let segs = tolerance_outline(&xe, &ye, &[0.0, 0.0, 0.0, 1.0], 0.5);
        assert_eq!(
            segs,
            vec![[(1.0, 1.0), (1.0, 2.0)], [(1.0, 1.0), (2.0, 1.0)]]
        );
        assert!(tolerance_outline(&xe, &ye, &[1.0; 4], 0.5).is_empty());
    }

    #[test]
    fn heatmap_draws_cells_and_refuses_bad_input() {
        let h = HeatMap {
            title: "t".into(),
            x_label: "x".into(),
            y_label: "y".into(),
            xs: vec![1.0, 2.0, 3.0],
            ys: vec![1e-9, 1e-8],
            log_x: false,
            log_y: true,
            values: vec![1e-6, 1e-5, 1e-4, 1e-3, 1e-2, 0.0],
            value_label: "max spectator population".into(),
            floor: 1e-12,
            tolerance: Some(1e-3),
        };
        let svg = heatmap_svg(&h).unwrap();
        // Six cells plus 100 colour-bar steps are filled rectangles.
        assert!(
            svg.matches("<rect").count() >= 106,
            "{}",
            svg.matches("<rect").count()
        );
        assert!(svg.contains("tolerance 1.0e-3"));
        let mut bad = h.clone();
        bad.values.pop();
        assert!(heatmap_svg(&bad).is_err());
        let mut neg = h.clone();
        neg.log_x = true;
        neg.xs[0] = -1.0;
        assert!(heatmap_svg(&neg).is_err());
        assert_eq!(ramp(0.0), RGBColor(68, 1, 84));
        assert_eq!(ramp(1.0), RGBColor(253, 231, 37));
    }
}
