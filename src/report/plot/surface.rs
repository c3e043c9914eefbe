//! The one drawing surface of the figures: plotters' bitmap backend (for PNG) or its SVG
//! backend (for the HTML report), chosen at run time, so that every figure is drawn by the same
//! code whichever file it ends up in.

use plotters::prelude::*;
use plotters_backend::{
    BackendColor, BackendCoord, BackendStyle, BackendTextStyle, DrawingBackend, DrawingErrorKind,
};

/// A bitmap or an SVG backend behind one type.
pub(crate) enum Surface<'a> {
    /// RGB pixels, encoded as PNG afterwards.
    Bitmap(BitMapBackend<'a>),
    /// SVG text written into a string.
    Svg(SVGBackend<'a>),
}

/// What went wrong in either backend, as text.
#[derive(Debug, thiserror::Error)]
#[error("{0}")]
pub(crate) struct SurfaceError(String);

fn lift<E: std::error::Error + Send + Sync>(
    e: DrawingErrorKind<E>,
) -> DrawingErrorKind<SurfaceError> {
    match e {
        DrawingErrorKind::DrawingError(e) => {
            DrawingErrorKind::DrawingError(SurfaceError(e.to_string()))
        }
        DrawingErrorKind::FontError(e) => DrawingErrorKind::FontError(e),
    }
}

/// Calls the same method on whichever backend is inside and lifts its error.
macro_rules! both {
    ($self:expr, $b:ident => $call:expr) => {
        match $self {
            Surface::Bitmap($b) => $call.map_err(lift),
            Surface::Svg($b) => $call.map_err(lift),
        }
    };
}

type Drawn = Result<(), DrawingErrorKind<SurfaceError>>;

impl DrawingBackend for Surface<'_> {
    type ErrorType = SurfaceError;

    fn get_size(&self) -> (u32, u32) {
        match self {
            Surface::Bitmap(b) => b.get_size(),
            Surface::Svg(b) => b.get_size(),
        }
    }

    fn ensure_prepared(&mut self) -> Drawn {
        both!(self, b => b.ensure_prepared())
    }

    fn present(&mut self) -> Drawn {
        both!(self, b => b.present())
    }

    fn draw_pixel(&mut self, point: BackendCoord, color: BackendColor) -> Drawn {
        both!(self, b => b.draw_pixel(point, color))
    }

    fn draw_line<S: BackendStyle>(
        &mut self,
        from: BackendCoord,
        to: BackendCoord,
        style: &S,
    ) -> Drawn {
        both!(self, b => b.draw_line(from, to, style))
    }

    fn draw_rect<S: BackendStyle>(
        &mut self,
        upper_left: BackendCoord,
        bottom_right: BackendCoord,
        style: &S,
        fill: bool,
    ) -> Drawn {
        both!(self, b => b.draw_rect(upper_left, bottom_right, style, fill))
    }

    fn draw_path<S: BackendStyle, I: IntoIterator<Item = BackendCoord>>(
        &mut self,
        path: I,
        style: &S,
    ) -> Drawn {
        both!(self, b => b.draw_path(path, style))
    }

    fn draw_circle<S: BackendStyle>(
        &mut self,
        center: BackendCoord,
        radius: u32,
        style: &S,
        fill: bool,
    ) -> Drawn {
        both!(self, b => b.draw_circle(center, radius, style, fill))
    }

    fn fill_polygon<S: BackendStyle, I: IntoIterator<Item = BackendCoord>>(
        &mut self,
        vert: I,
        style: &S,
    ) -> Drawn {
        both!(self, b => b.fill_polygon(vert, style))
    }

    fn draw_text<T: BackendTextStyle>(
        &mut self,
        text: &str,
        style: &T,
        pos: BackendCoord,
    ) -> Drawn {
        both!(self, b => b.draw_text(text, style, pos))
    }

    fn estimate_text_size<T: BackendTextStyle>(
        &self,
        text: &str,
        style: &T,
    ) -> Result<(u32, u32), DrawingErrorKind<SurfaceError>> {
        // Both backends measure with the bundled font, so layouts agree.
        both!(self, b => b.estimate_text_size(text, style))
    }

    fn blit_bitmap(&mut self, pos: BackendCoord, size: (u32, u32), src: &[u8]) -> Drawn {
        both!(self, b => b.blit_bitmap(pos, size, src))
    }
}
