//! The SVG of a scan: a 1-D scan as populations (estimates dashed) against
//! the varied value, a 2-D scan as a heat map of the largest spectator
//! population with the tolerance outline.
//!
//! Owns: what a scan plot shows. Must not: write files or compute points.

use crate::error::Error;
use crate::plot::{self, Curve, HeatMap, LinePlot};
use crate::render::scan as fmt;
use crate::scan::{bad, Grid, ScanRow, Spacing};

/// Floor of logarithmic population axes and colour scales.
pub const LOG_FLOOR: f64 = 1e-12;

/// The SVG of a 1-D scan (populations and dashed estimates against the
/// varied value) or a 2-D scan (heat map of the largest spectator
/// population with the tolerance outline).
pub fn scan_plot(
    title: String,
    grid: &Grid,
    level_ids: &[String],
    rows: &[ScanRow],
    tolerance: f64,
    log_y: bool,
) -> Result<String, plot::PlotError> {
    match grid.axes.as_slice() {
        [a] => {
            let mut curves = Vec::new();
            for (k, id) in level_ids.iter().enumerate() {
                curves.push(Curve {
                    name: format!("P({id})"),
                    points: rows
                        .iter()
                        .map(|r| (r.coords[0], r.populations[k]))
                        .collect(),
                    dashed: false,
                    color: k,
                });
                let est: Vec<(f64, f64)> = rows
                    .iter()
                    .filter_map(|r| r.estimates[k].map(|e| (r.coords[0], e)))
                    .collect();
                if !est.is_empty() {
                    curves.push(Curve {
                        name: format!("est({id})"),
                        points: est,
                        dashed: true,
                        color: k,
                    });
                }
            }
            plot::line_svg(&LinePlot {
                title,
                x_label: fmt::axis_label(a),
                x_scale: 1.0,
                log_x: a.spacing == Spacing::Log,
                y_label: "final population".into(),
                curves,
                log_y,
                log_floor: LOG_FLOOR,
                tolerance: Some(tolerance),
            })
        }
        [a, b] => plot::heatmap_svg(&HeatMap {
            title,
            x_label: fmt::axis_label(a),
            y_label: fmt::axis_label(b),
            xs: (0..a.count).map(|i| a.value(i)).collect(),
            ys: (0..b.count).map(|i| b.value(i)).collect(),
            log_x: a.spacing == Spacing::Log,
            log_y: b.spacing == Spacing::Log,
            values: rows.iter().map(|r| r.max_spectator).collect(),
            value_label: "largest spectator population".into(),
            floor: LOG_FLOOR,
            tolerance: Some(tolerance),
        }),
        _ => Err(plot::PlotError::new(
            "plots are drawn for 1-D and 2-D scans only",
        )),
    }
}

/// The plot of a whole scan file (a merged scan): axes, tolerance and
/// levels from its head, rows from its body.
pub fn plot_scan_text(text: &str, log_y: bool) -> Result<Result<String, plot::PlotError>, Error> {
    let cannot = |m: String| bad("--plot", format!("cannot plot this scan: {m}"));
    let t = fmt::split(text).map_err(cannot)?;
    let info = fmt::read_head(&t).map_err(cannot)?;
    if info.axes.len() > 2 {
        return Err(bad("--plot", "plots are drawn for 1-D and 2-D scans only"));
    }
    let grid = Grid::new(info.axes, true)?;
    let rows = t
        .rows
        .iter()
        .map(|l| fmt::parse_row(l, grid.columns().len(), info.level_ids.len(), info.open))
        .collect::<Result<Vec<_>, _>>()
        .map_err(cannot)?;
    Ok(scan_plot(
        format!("Scan of {}", info.scheme_file),
        &grid,
        &info.level_ids,
        &rows,
        info.tolerance,
        log_y,
    ))
}
