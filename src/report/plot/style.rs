//! The house style of every figure: the bundled font, colours, line and marker styles, error
//! values, and the canvas that figures are drawn on and encoded from.

use std::error::Error as StdError;
use std::sync::OnceLock;

use image::ImageEncoder;
use image::codecs::png::{CompressionType, FilterType, PngEncoder};
use plotters::coord::Shift;
use plotters::prelude::*;
use plotters::style::register_font;

use super::surface::Surface;
use super::{HEIGHT_PX, PlotError, WIDTH_PX};

/// The bundled DejaVu Sans font (Bitstream Vera licence; see `assets/DejaVuSans-LICENSE.txt`).
pub(super) static FONT: &[u8] = include_bytes!(concat!(
    env!("CARGO_MANIFEST_DIR"),
    "/assets/DejaVuSans.ttf"
));

/// Font family under which the bundled font is registered (plotters' default for tick labels).
pub(super) const FAMILY: &str = "sans-serif";

/// Height of the band at the top that holds the title and the subtitle, in pixels.
pub(super) const TITLE_BAND_PX: u32 = 96;

pub(super) const INK: RGBColor = RGBColor(34, 34, 34);
pub(super) const MUTED: RGBColor = RGBColor(92, 92, 92);
pub(super) const GRID_BOLD: RGBColor = RGBColor(212, 212, 212);
pub(super) const GRID_LIGHT: RGBColor = RGBColor(238, 238, 238);
pub(super) const RAIN_FILL: RGBColor = RGBColor(168, 194, 222);
pub(super) const RAIN_EDGE: RGBColor = RGBColor(112, 142, 178);
pub(super) const LIMIT: RGBColor = RGBColor(176, 28, 46);
pub(super) const REFERENCE: RGBColor = RGBColor(104, 104, 104);
pub(super) const BAND_FILL: RGBColor = RGBColor(226, 236, 214);
pub(super) const BAND_EDGE: RGBColor = RGBColor(150, 176, 120);

/// Line colours, one per condition in order. Chosen to stay apart for the common forms of
/// colour-vision deficiency (blue/orange first); lines also differ in dash pattern.
pub(super) const SERIES_COLOURS: [RGBColor; 6] = [
    RGBColor(31, 87, 153),
    RGBColor(214, 112, 20),
    RGBColor(23, 133, 107),
    RGBColor(156, 60, 132),
    RGBColor(85, 85, 85),
    RGBColor(181, 151, 22),
];

pub(super) type Area<'a> = DrawingArea<Surface<'a>, Shift>;
pub(super) type DrawResult = Result<(), Box<dyn StdError>>;

/// Dash pattern of a line.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) enum Dash {
    /// Unbroken.
    Solid,
    /// Long dashes.
    Long,
    /// Short dashes.
    Short,
}

/// Marker drawn at an annotated point or an observed value.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) enum Shape {
    /// Filled circle.
    Circle,
    /// Filled triangle pointing up.
    Triangle,
    /// Filled square.
    Square,
    /// Filled diamond.
    Diamond,
}

/// How one legend entry is drawn.
#[derive(Debug, Clone, Copy)]
pub(super) enum Swatch {
    /// A line sample.
    Line(RGBColor, u32, Dash),
    /// A filled bar.
    Bar(RGBColor, RGBColor),
    /// A marker.
    Marker(RGBColor, Shape),
}

/// A text label tied to a point of the figure (pixel coordinates), with its marker.
pub(super) struct Note {
    pub(super) anchor: (i32, i32),
    pub(super) text: String,
    pub(super) colour: RGBColor,
    pub(super) marker: Option<Shape>,
}

pub(super) fn colour_of(i: usize) -> RGBColor {
    SERIES_COLOURS[i % SERIES_COLOURS.len()]
}

pub(super) fn dash_of(i: usize) -> Dash {
    match i % 3 {
        0 => Dash::Solid,
        1 => Dash::Long,
        _ => Dash::Short,
    }
}

pub(super) fn shape_of(i: usize) -> Shape {
    match i % 4 {
        0 => Shape::Circle,
        1 => Shape::Triangle,
        2 => Shape::Square,
        _ => Shape::Diamond,
    }
}

pub(super) fn font(size: u32) -> TextStyle<'static> {
    TextStyle::from((FAMILY, size).into_font()).color(&INK)
}

pub(super) fn plot_name(kind: &str, title: &str) -> String {
    if title.trim().is_empty() {
        kind.to_string()
    } else {
        format!("{kind} \"{title}\"")
    }
}

pub(super) fn draw_error(name: &str, e: impl std::fmt::Display) -> PlotError {
    PlotError::Draw {
        name: name.to_string(),
        message: e.to_string(),
    }
}

pub(super) fn input_error(name: &str, message: String) -> PlotError {
    PlotError::Input {
        name: name.to_string(),
        message,
    }
}

/// Registers the bundled font once per process.
pub(super) fn ensure_font(name: &str) -> Result<(), PlotError> {
    static REGISTERED: OnceLock<bool> = OnceLock::new();
    let ok = *REGISTERED.get_or_init(|| register_font(FAMILY, FontStyle::Normal, FONT).is_ok());
    if ok {
        Ok(())
    } else {
        Err(draw_error(
            name,
            "the bundled DejaVu Sans font could not be loaded",
        ))
    }
}

/// PNG row filter. The adaptive filter gives files about half the size for the same pixels,
/// but unoptimised (debug) builds of the `png` crate take about a second per figure with it,
/// so debug builds use the cheap `Sub` filter. The decoded image is the same either way.
pub(super) const PNG_FILTER: FilterType = if cfg!(debug_assertions) {
    FilterType::Sub
} else {
    FilterType::Adaptive
};

/// A drawn figure before encoding: its name (for error messages) and its RGB pixels, row by row.
pub(super) struct Canvas {
    pub(super) name: String,
    pub(super) rgb: Vec<u8>,
}

/// Draws into a white RGB canvas of `WIDTH_PX` x `HEIGHT_PX`.
pub(super) fn render(
    name: &str,
    draw: impl for<'a> FnOnce(&Area<'a>) -> DrawResult,
) -> Result<Canvas, PlotError> {
    ensure_font(name)?;
    let len = WIDTH_PX as usize * HEIGHT_PX as usize * 3;
    let mut rgb = vec![255u8; len];
    {
        let backend = BitMapBackend::with_buffer_and_format(&mut rgb, (WIDTH_PX, HEIGHT_PX))
            .map_err(|e| draw_error(name, e))?;
        finish(name, Surface::Bitmap(backend), draw)?;
    }
    Ok(Canvas {
        name: name.to_string(),
        rgb,
    })
}

/// Width of a figure drawn as SVG, in user units: narrower than the PNG, so that the same
/// text sizes read well at the width of a printed page.
pub(super) const SVG_WIDTH: u32 = 1120;
/// Height of a figure drawn as SVG, in user units.
pub(super) const SVG_HEIGHT: u32 = 660;

/// Draws the same figure as SVG text (`SVG_WIDTH` x `SVG_HEIGHT` user units, a white ground),
/// for inline use in the HTML report.
pub(super) fn render_svg(
    name: &str,
    draw: impl for<'a> FnOnce(&Area<'a>) -> DrawResult,
) -> Result<String, PlotError> {
    ensure_font(name)?;
    let mut text = String::new();
    {
        let backend = SVGBackend::with_string(&mut text, (SVG_WIDTH, SVG_HEIGHT));
        finish(name, Surface::Svg(backend), |root| {
            root.fill(&WHITE)?;
            draw(root)
        })?;
    }
    Ok(text)
}

fn finish(
    name: &str,
    surface: Surface<'_>,
    draw: impl for<'a> FnOnce(&Area<'a>) -> DrawResult,
) -> Result<(), PlotError> {
    let root = surface.into_drawing_area();
    draw(&root)
        .and_then(|()| root.present().map_err(Into::into))
        .map_err(|e| match e.downcast::<PlotError>() {
            Ok(p) => *p,
            Err(e) => draw_error(name, e),
        })
}

/// Encodes a drawn figure as PNG.
pub(super) fn encode_png(canvas: Canvas) -> Result<Vec<u8>, PlotError> {
    let mut png = Vec::new();
    PngEncoder::new_with_quality(&mut png, CompressionType::Fast, PNG_FILTER)
        .write_image(&canvas.rgb, WIDTH_PX, HEIGHT_PX, image::ColorType::Rgb8)
        .map_err(|e| draw_error(&canvas.name, e))?;
    Ok(png)
}

/// Which file a figure is drawn for.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(super) enum Target {
    /// Pixels, encoded as PNG.
    Png,
    /// SVG text, for the HTML report.
    Svg,
}

/// A drawn figure: pixels or SVG text.
pub(super) enum Drawn {
    Canvas(Canvas),
    Svg(String),
}

impl Drawn {
    /// The PNG bytes (SVG text is returned as it is, as bytes).
    pub(super) fn png(self) -> Result<Vec<u8>, PlotError> {
        match self {
            Drawn::Canvas(c) => encode_png(c),
            Drawn::Svg(s) => Ok(s.into_bytes()),
        }
    }

    /// The SVG text (an empty string for pixels).
    pub(super) fn svg(self) -> String {
        match self {
            Drawn::Svg(s) => s,
            Drawn::Canvas(_) => String::new(),
        }
    }

    /// The pixels (for the figures' tests).
    #[cfg(test)]
    pub(super) fn canvas(self) -> Canvas {
        match self {
            Drawn::Canvas(c) => c,
            Drawn::Svg(_) => Canvas {
                name: String::new(),
                rgb: Vec::new(),
            },
        }
    }
}

/// Draws a figure for `target`.
pub(super) fn render_to(
    target: Target,
    name: &str,
    draw: impl for<'a> FnOnce(&Area<'a>) -> DrawResult,
) -> Result<Drawn, PlotError> {
    match target {
        Target::Png => render(name, draw).map(Drawn::Canvas),
        Target::Svg => render_svg(name, draw).map(Drawn::Svg),
    }
}
