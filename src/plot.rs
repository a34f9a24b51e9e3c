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

/// What to draw.
#[derive(Debug, Clone, PartialEq)]
pub struct LinePlot {
    pub title: String,
    pub x_label: String,
    /// Multiply x values by this for the axis (e.g. 1e9 to show ns).
    pub x_scale: f64,
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

/// Tick label: powers of ten on a log axis, plain decimals otherwise.
fn axis_label(y: f64, log: bool) -> String {
    if log {
        let e = y.log10().round() as i32;
        if (y.log10() - e as f64).abs() < 1e-6 {
            return format!("1e{e}");
        }
        format!("{y:.0e}")
    } else {
        format!("{y:.2}")
    }
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
    if x1 <= x0 {
        x0 -= 0.5;
        x1 += 0.5;
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
                    .y_label_formatter(&|y: &f64| axis_label(*y, p.log_y))
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
        if p.log_y {
            let ymax = p
                .curves
                .iter()
                .flat_map(|c| c.points.iter().map(|q| q.1))
                .fold(floor, f64::max)
                .max(p.tolerance.unwrap_or(floor))
                * 2.0;
            draw!(builder(&root, &p.title)
                .build_cartesian_2d(x0..x1, (floor..ymax.min(2.0)).log_scale())
                .map_err(perr)?);
        } else {
            draw!(builder(&root, &p.title)
                .build_cartesian_2d(x0..x1, 0.0..1.05f64)
                .map_err(perr)?);
        }
        full.present().map_err(perr)?;
    }
    Ok(svg)
}
