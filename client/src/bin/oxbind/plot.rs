//! SVG plots of dissociation curves, drawn with the `plotters` crate.

use std::path::Path;

use oxbind_client::v1::Curve;
use plotters::prelude::*;

/// One curve to draw.
#[derive(Debug, Clone)]
pub(crate) struct Series {
    /// Legend text.
    pub(crate) label: String,
    /// Unit of the PO2 axis (UCUM code).
    pub(crate) po2_unit: String,
    /// (PO2, saturation fraction) points.
    pub(crate) points: Vec<(f64, f64)>,
    /// The curve's P50, in `po2_unit`.
    pub(crate) p50: Option<f64>,
}

impl Series {
    /// A series from a sampled curve.
    pub(crate) fn from_curve(label: &str, curve: &Curve) -> Self {
        Self {
            label: label.to_owned(),
            po2_unit: curve.po2_unit.clone(),
            points: curve
                .points
                .iter()
                .map(|p| (p.po2, p.saturation_fraction))
                .collect(),
            p50: curve.p50.as_ref().map(|q| q.value),
        }
    }
}

/// Colours for the curves, in order (the first is the standard curve).
const COLOURS: [RGBColor; 6] = [
    RGBColor(40, 40, 40),
    RGBColor(0, 114, 178),
    RGBColor(213, 94, 0),
    RGBColor(0, 158, 115),
    RGBColor(204, 121, 167),
    RGBColor(230, 159, 0),
];

/// Draw `series` into an SVG file at `path`: PO2 on x, saturation in % on
/// y, a filled circle and a label at each curve's P50, and a legend.
pub(crate) fn write_svg(path: &Path, title: &str, series: &[Series]) -> Result<(), String> {
    draw(path, title, series).map_err(|e| format!("drawing {}: {e}", path.display()))
}

fn draw(
    path: &Path,
    title: &str,
    series: &[Series],
) -> Result<(), Box<dyn std::error::Error + 'static>> {
    let x_max = series
        .iter()
        .flat_map(|s| s.points.iter().map(|p| p.0))
        .filter(|x| x.is_finite())
        .fold(0.0_f64, f64::max);
    let x_max = if x_max > 0.0 { x_max } else { 100.0 };
    let unit = series
        .first()
        .map(|s| s.po2_unit.clone())
        .unwrap_or_else(|| "mm[Hg]".to_owned());

    let root = SVGBackend::new(path, (960, 640)).into_drawing_area();
    root.fill(&WHITE)?;
    let mut chart = ChartBuilder::on(&root)
        .caption(title, ("sans-serif", 24))
        .margin(20)
        .x_label_area_size(50)
        .y_label_area_size(60)
        .build_cartesian_2d(0.0..x_max, 0.0..100.0)?;
    chart
        .configure_mesh()
        .x_desc(format!("oxygen tension PO2 ({unit})"))
        .y_desc("oxygen saturation SO2 (%)")
        .light_line_style(WHITE.mix(0.0))
        .draw()?;
    for (i, s) in series.iter().enumerate() {
        let colour = COLOURS[i % COLOURS.len()];
        chart
            .draw_series(LineSeries::new(
                s.points.iter().map(|&(x, y)| (x, y * 100.0)),
                colour.stroke_width(2),
            ))?
            .label(s.label.clone())
            .legend(move |(x, y)| Rectangle::new([(x, y - 5), (x + 18, y + 5)], colour.filled()));
        if let Some(p50) = s.p50.filter(|p| p.is_finite()) {
            chart.draw_series(std::iter::once(Circle::new(
                (p50, 50.0),
                5,
                colour.filled(),
            )))?;
            chart.draw_series(std::iter::once(Text::new(
                format!("P50 {p50:.1}"),
                (p50, 50.0 - 4.0 - 3.5 * i as f64),
                ("sans-serif", 13).into_font().color(&colour),
            )))?;
        }
    }
    chart
        .configure_series_labels()
        .position(SeriesLabelPosition::LowerRight)
        .background_style(WHITE.mix(0.9))
        .border_style(BLACK)
        .draw()?;
    root.present()?;
    Ok(())
}
