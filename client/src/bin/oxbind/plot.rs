//! SVG plots of dissociation curves, drawn with the `plotters` crate.
//!
//! Each curve's P50 is marked with a dot on the curve and stated, with its
//! unit, in the curve's legend entry: labels never sit on the curves or on
//! one another.

use std::path::Path;

use oxbind_client::v1::Curve;
use plotters::prelude::*;

/// One curve to draw.
#[derive(Debug, Clone)]
pub(crate) struct Series {
    /// Legend text (the P50 is added to it).
    pub(crate) label: String,
    /// Unit of the PO2 axis (UCUM code).
    pub(crate) po2_unit: String,
    /// (PO2, saturation fraction) points.
    pub(crate) points: Vec<(f64, f64)>,
    /// The curve's P50, in `po2_unit`.
    pub(crate) p50: Option<f64>,
    /// A coverage band: (PO2, low, high saturation fraction) points.
    pub(crate) band: Option<Vec<(f64, f64, f64)>>,
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
            band: None,
        }
    }

    /// The same series with a coverage band shaded around it.
    pub(crate) fn with_band(self, band: Option<Vec<(f64, f64, f64)>>) -> Self {
        Self { band, ..self }
    }

    /// The legend text: the label and the P50 with its unit.
    fn legend(&self) -> String {
        match self.p50.filter(|p| p.is_finite()) {
            Some(p50) => {
                let decimals = if self.po2_unit == "kPa" { 2 } else { 1 };
                format!("{}: P50 {p50:.decimals$} {}", self.label, self.po2_unit)
            }
            None => self.label.clone(),
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

/// Draw `series` into an SVG file at `path`: PO2 on x, functional
/// saturation in % on y, each curve's coverage band (if any) shaded in its
/// colour, a dot at each curve's P50, and a legend giving each curve's P50
/// with its unit.
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
        .y_desc("functional oxygen saturation SO2 (%)")
        .light_line_style(WHITE.mix(0.0))
        .draw()?;
    // Bands first, so that every curve is drawn over them.
    for (i, s) in series.iter().enumerate() {
        if let Some(band) = s.band.as_ref().filter(|b| b.len() > 1) {
            let colour = COLOURS[i % COLOURS.len()];
            let outline: Vec<(f64, f64)> = band
                .iter()
                .map(|&(x, low, _)| (x, low * 100.0))
                .chain(band.iter().rev().map(|&(x, _, high)| (x, high * 100.0)))
                .collect();
            chart.draw_series(std::iter::once(Polygon::new(
                outline,
                colour.mix(0.2).filled(),
            )))?;
        }
    }
    for (i, s) in series.iter().enumerate() {
        let colour = COLOURS[i % COLOURS.len()];
        chart
            .draw_series(LineSeries::new(
                s.points.iter().map(|&(x, y)| (x, y * 100.0)),
                colour.stroke_width(2),
            ))?
            .label(s.legend())
            .legend(move |(x, y)| Rectangle::new([(x, y - 5), (x + 18, y + 5)], colour.filled()));
        if let Some(p50) = s.p50.filter(|p| p.is_finite()) {
            chart.draw_series(std::iter::once(Circle::new(
                (p50, 50.0),
                5,
                colour.filled(),
            )))?;
        }
    }
    chart
        .configure_series_labels()
        .position(SeriesLabelPosition::LowerRight)
        .label_font(("sans-serif", 14))
        .background_style(WHITE.mix(0.9))
        .border_style(BLACK)
        .draw()?;
    root.present()?;
    Ok(())
}
