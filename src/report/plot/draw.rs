//! Drawing helpers shared by the figures: a ticked axis, lines, markers, titles, legends,
//! and notes placed where the figure is least crowded.

use std::error::Error as StdError;

use plotters::element::DashedPathElement;
use plotters::prelude::*;

use super::style::*;
use super::surface::Surface;
// The house type, not plotters' type of the same name.
use super::style::DrawResult;

/// A linear f64 axis with chosen major and minor tick positions. (plotters' own key-point
/// combinator drops the value formatter of a plain f64 axis, so this one keeps it.)
#[derive(Clone)]
pub(super) struct TickedAxis {
    pub(super) inner: plotters::coord::types::RangedCoordf64,
    pub(super) major: Vec<f64>,
    pub(super) minor: Vec<f64>,
}

impl TickedAxis {
    pub(super) fn new(lo: f64, hi: f64, major: Vec<f64>, minor: Vec<f64>) -> Self {
        Self {
            inner: (lo..hi).into(),
            major,
            minor,
        }
    }
}

impl Ranged for TickedAxis {
    type FormatOption = plotters::coord::ranged1d::DefaultFormatting;
    type ValueType = f64;

    fn map(&self, value: &f64, limit: (i32, i32)) -> i32 {
        self.inner.map(value, limit)
    }

    fn key_points<Hint: plotters::coord::ranged1d::KeyPointHint>(&self, hint: Hint) -> Vec<f64> {
        if hint.weight().allow_light_points() {
            self.minor.clone()
        } else {
            self.major.clone()
        }
    }

    fn range(&self) -> std::ops::Range<f64> {
        self.inner.range()
    }
}

pub(super) fn draw_path<CT>(
    area: &DrawingArea<Surface<'_>, CT>,
    points: Vec<(f64, f64)>,
    style: ShapeStyle,
    dash: Dash,
) -> DrawResult
where
    CT: CoordTranslate<From = (f64, f64)>,
{
    match dash {
        Dash::Solid => area.draw(&PathElement::new(points, style))?,
        Dash::Long => area.draw(&DashedPathElement::new(points, 16, 9, style))?,
        Dash::Short => area.draw(&DashedPathElement::new(points, 5, 6, style))?,
    }
    Ok(())
}

pub(super) fn draw_marker(
    root: &Area<'_>,
    (x, y): (i32, i32),
    shape: Shape,
    colour: RGBColor,
    r: i32,
) -> DrawResult {
    let fill = colour.filled();
    let edge = WHITE.stroke_width(2);
    match shape {
        Shape::Circle => {
            root.draw(&Circle::new((x, y), r + 1, WHITE.filled()))?;
            root.draw(&Circle::new((x, y), r, fill))?;
        }
        Shape::Triangle => {
            let (a, b, c) = (
                (x, y - r - 3),
                (x + r + 3, y + r + 1),
                (x - r - 3, y + r + 1),
            );
            root.draw(&Polygon::new(vec![a, b, c], fill))?;
            root.draw(&PathElement::new(vec![a, b, c, a], edge))?;
        }
        Shape::Square => {
            root.draw(&Rectangle::new([(x - r, y - r), (x + r, y + r)], fill))?;
            root.draw(&Rectangle::new([(x - r, y - r), (x + r, y + r)], edge))?;
        }
        Shape::Diamond => {
            let d = r + 2;
            let (a, b, c, e) = ((x, y - d), (x + d, y), (x, y + d), (x - d, y));
            root.draw(&Polygon::new(vec![a, b, c, e], fill))?;
            root.draw(&PathElement::new(vec![a, b, c, e, a], edge))?;
        }
    }
    Ok(())
}

pub(super) fn draw_title(area: &Area<'_>, title: &str, subtitle: &str) -> DrawResult {
    area.draw(&Text::new(title.to_string(), (40, 18), font(34)))?;
    if !subtitle.is_empty() {
        area.draw(&Text::new(
            subtitle.to_string(),
            (40, 62),
            font(22).color(&MUTED),
        ))?;
    }
    Ok(())
}

/// Legend entries laid out in rows: each row lists (entry index, width in pixels).
pub(super) type LegendRows = Vec<Vec<(usize, i32)>>;

pub(super) const LEGEND_ROW_PX: i32 = 34;
pub(super) const LEGEND_SWATCH_PX: i32 = 40;

/// Splits the legend entries into rows that fit the figure width; returns (row, width) lists.
pub(super) fn legend_rows(
    root: &Area<'_>,
    items: &[(String, Swatch)],
) -> Result<LegendRows, Box<dyn StdError>> {
    let style = font(20);
    let max_w = root.dim_in_pixel().0 as i32 - 120;
    let mut rows: Vec<Vec<(usize, i32)>> = Vec::new();
    let mut cur: Vec<(usize, i32)> = Vec::new();
    let mut cur_w = 0;
    for (i, (label, _)) in items.iter().enumerate() {
        let (tw, _) = root.estimate_text_size(label, &style)?;
        let w = LEGEND_SWATCH_PX + 10 + tw as i32 + 36;
        if cur_w + w > max_w && !cur.is_empty() {
            rows.push(std::mem::take(&mut cur));
            cur_w = 0;
        }
        cur.push((i, w));
        cur_w += w;
    }
    if !cur.is_empty() {
        rows.push(cur);
    }
    Ok(rows)
}

pub(super) fn legend_height(rows: &[Vec<(usize, i32)>]) -> u32 {
    (rows.len() as u32) * LEGEND_ROW_PX as u32 + 18
}

/// Draws the legend as centred rows in the band below the chart.
pub(super) fn draw_legend(
    area: &Area<'_>,
    items: &[(String, Swatch)],
    rows: &[Vec<(usize, i32)>],
) -> DrawResult {
    // Coordinates on a `Shift` area are relative to its own top-left corner.
    let (x0, y0) = (0, 0);
    let x1 = area.dim_in_pixel().0 as i32;
    let style = font(20);
    for (r, row) in rows.iter().enumerate() {
        let total: i32 = row.iter().map(|&(_, w)| w).sum::<i32>() - 36;
        let mut x = x0 + ((x1 - x0) - total).max(0) / 2;
        let cy = y0 + 6 + r as i32 * LEGEND_ROW_PX + LEGEND_ROW_PX / 2;
        // Swatches sit on the middle of the lower-case letters, a little above the text box's.
        let sy = cy - 2;
        for &(i, w) in row {
            let Some((label, swatch)) = items.get(i) else {
                continue;
            };
            let sx = (x, x + LEGEND_SWATCH_PX);
            match *swatch {
                Swatch::Line(c, width, dash) => {
                    let st = c.stroke_width(width);
                    match dash {
                        Dash::Solid => {
                            area.draw(&PathElement::new(vec![(sx.0, sy), (sx.1, sy)], st))?;
                        }
                        Dash::Long => {
                            area.draw(&PathElement::new(vec![(sx.0, sy), (sx.0 + 16, sy)], st))?;
                            area.draw(&PathElement::new(vec![(sx.0 + 24, sy), (sx.1, sy)], st))?;
                        }
                        Dash::Short => {
                            let mut s = sx.0;
                            while s < sx.1 {
                                area.draw(&PathElement::new(
                                    vec![(s, sy), ((s + 5).min(sx.1), sy)],
                                    st,
                                ))?;
                                s += 11;
                            }
                        }
                    }
                }
                Swatch::Bar(fill, edge) => {
                    let rect = [(sx.0 + 6, sy - 9), (sx.1 - 6, sy + 9)];
                    area.draw(&Rectangle::new(rect, fill.filled()))?;
                    area.draw(&Rectangle::new(rect, edge.stroke_width(1)))?;
                }
                Swatch::Marker(c, shape) => {
                    draw_marker(area, ((sx.0 + sx.1) / 2, sy), shape, c, 6)?;
                }
            }
            let (_, th) = area.estimate_text_size(label, &style)?;
            area.draw(&Text::new(
                label.clone(),
                (sx.1 + 10, cy - th as i32 / 2),
                style.clone(),
            ))?;
            x += w;
        }
    }
    Ok(())
}

/// Size of a cell of the crowding grid, in pixels.
pub(super) const CELL_PX: i32 = 4;

/// Where the figure is already drawn on (lines, markers, bars), on a coarse grid with a
/// summed-area table, so that notes can be put where they hide the least.
pub(super) struct Crowding {
    pub(super) x0: i32,
    pub(super) y0: i32,
    pub(super) cols: usize,
    pub(super) rows: usize,
    pub(super) marks: Vec<u32>,
    pub(super) sums: Vec<u32>,
}

impl Crowding {
    pub(super) fn new((x0, y0, x1, y1): (i32, i32, i32, i32)) -> Self {
        let cols = ((x1 - x0).max(1) / CELL_PX + 1) as usize;
        let rows = ((y1 - y0).max(1) / CELL_PX + 1) as usize;
        Self {
            x0,
            y0,
            cols,
            rows,
            marks: vec![0; cols * rows],
            sums: Vec::new(),
        }
    }

    pub(super) fn cell(&self, (x, y): (i32, i32)) -> Option<usize> {
        let c = (x - self.x0).div_euclid(CELL_PX);
        let r = (y - self.y0).div_euclid(CELL_PX);
        if c < 0 || r < 0 || c as usize >= self.cols || r as usize >= self.rows {
            None
        } else {
            Some(r as usize * self.cols + c as usize)
        }
    }

    pub(super) fn mark(&mut self, p: (i32, i32), weight: u32) {
        let Some(i) = self.cell(p) else {
            return;
        };
        if let Some(m) = self.marks.get_mut(i) {
            *m = m.saturating_add(weight);
        }
    }

    /// Marks a polyline given in pixels, filling in the points between its vertices (lines
    /// weigh more than filled areas: a note may cover part of a bar sooner than a curve).
    pub(super) fn trace(&mut self, pts: impl IntoIterator<Item = (i32, i32)>) {
        let mut prev: Option<(i32, i32)> = None;
        for p in pts {
            if let Some(q) = prev {
                let dx = i64::from(p.0) - i64::from(q.0);
                let dy = i64::from(p.1) - i64::from(q.1);
                let n = (dx.abs().max(dy.abs()) / i64::from(CELL_PX)).clamp(1, 2000);
                for k in 1..=n {
                    let x = i64::from(q.0) + dx * k / n;
                    let y = i64::from(q.1) + dy * k / n;
                    self.mark((x as i32, y as i32), 3);
                }
            } else {
                self.mark(p, 3);
            }
            prev = Some(p);
        }
    }

    /// Marks a filled rectangle given in pixels.
    pub(super) fn fill(&mut self, (l, t): (i32, i32), (r, b): (i32, i32)) {
        let (l, r) = (l.min(r), l.max(r));
        let (t, b) = (t.min(b), t.max(b));
        let mut y = t;
        while y <= b {
            let mut x = l;
            while x <= r {
                self.mark((x, y), 1);
                x += CELL_PX;
            }
            y += CELL_PX;
        }
    }

    pub(super) fn finish(&mut self) {
        let w = self.cols + 1;
        let mut sums = vec![0u32; w * (self.rows + 1)];
        for r in 0..self.rows {
            let mut row = 0u32;
            for c in 0..self.cols {
                row = row.saturating_add(self.marks.get(r * self.cols + c).copied().unwrap_or(0));
                let above = sums.get(r * w + c + 1).copied().unwrap_or(0);
                if let Some(s) = sums.get_mut((r + 1) * w + c + 1) {
                    *s = above.saturating_add(row);
                }
            }
        }
        self.sums = sums;
    }

    /// Total marks in the cells that a pixel rectangle touches.
    pub(super) fn count(&self, (l, t, r, b): (i32, i32, i32, i32)) -> u32 {
        let w = self.cols + 1;
        let c0 = ((l - self.x0).div_euclid(CELL_PX)).clamp(0, self.cols as i32) as usize;
        let c1 = ((r - self.x0).div_euclid(CELL_PX) + 1).clamp(0, self.cols as i32) as usize;
        let r0 = ((t - self.y0).div_euclid(CELL_PX)).clamp(0, self.rows as i32) as usize;
        let r1 = ((b - self.y0).div_euclid(CELL_PX) + 1).clamp(0, self.rows as i32) as usize;
        let at = |r: usize, c: usize| i64::from(self.sums.get(r * w + c).copied().unwrap_or(0));
        let v = at(r1, c1) - at(r0, c1) - at(r1, c0) + at(r0, c0);
        u32::try_from(v.max(0)).unwrap_or(u32::MAX)
    }
}

/// A rectangle in pixels: (left, top, right, bottom).
pub(super) type Rect = (i32, i32, i32, i32);

/// A point or a size in pixels.
pub(super) type Px = (i32, i32);

/// Chooses a box for each note (anchor point and box size, in pixels) inside `bounds`. Each
/// box goes to the nearby spot that hides the fewest drawn marks and keeps clear of the boxes
/// placed before it (notes are placed in the given order) and of every anchor.
pub(super) fn place_notes(notes: &[(Px, Px)], crowding: &mut Crowding, bounds: Rect) -> Vec<Rect> {
    let (bx0, by0, bx1, by1) = bounds;
    for &((ax, ay), _) in notes {
        for d in -9..=9 {
            crowding.mark((ax + d, ay), 40);
            crowding.mark((ax, ay + d), 40);
        }
    }
    crowding.finish();
    let mut placed: Vec<Rect> = Vec::new();
    for &((ax, ay), (w, h)) in notes {
        let near = [ax + 14, ax - 14 - w, ax - w / 2, ax + 40, ax - 40 - w];
        let mut tops = vec![ay - h - 8, ay - h / 2, ay + 10];
        for k in 1..=6 {
            tops.push(ay - h - 8 - k * (h + 8));
            tops.push(ay + 10 + k * (h + 8));
        }
        let score_of = |bx: Rect| -> Option<(i64, bool)> {
            if bx.0 < bx0 + 2 || bx.2 > bx1 - 2 || bx.1 < by0 + 2 || bx.3 > by1 - 2 {
                return None;
            }
            let clash = placed
                .iter()
                .any(|p| bx.0 < p.2 + 4 && bx.2 + 4 > p.0 && bx.1 < p.3 + 4 && bx.3 + 4 > p.1);
            let near_x = ax.clamp(bx.0, bx.2);
            let near_y = ay.clamp(bx.1, bx.3);
            let dist = i64::from((near_x - ax).abs() + (near_y - ay).abs());
            let score =
                i64::from(crowding.count(bx)) * 12 + dist + if clash { 1_000_000 } else { 0 };
            Some((score, clash))
        };
        let best_of = |lefts: &[i32]| -> Option<(i64, bool, Rect)> {
            let mut best: Option<(i64, bool, Rect)> = None;
            for &l in lefts {
                for &t in &tops {
                    let bx = (l, t, l + w, t + h);
                    if let Some((score, clash)) = score_of(bx)
                        && best.is_none_or(|(s, _, _)| score < s)
                    {
                        best = Some((score, clash, bx));
                    }
                }
            }
            best
        };
        // Beside the point first; only when every such spot would overlap a box already
        // placed (notes anchored close together, as reference elevations at the plot's edge),
        // further along to either side.
        let mut best = best_of(&near);
        if best.is_none_or(|b| b.1) {
            let farther: Vec<i32> = (1..=8)
                .flat_map(|k| [ax - 40 - w - k * (w / 3 + 8), ax + 40 + k * (w / 3 + 8)])
                .collect();
            if let Some(b) = best_of(&farther).filter(|b| !b.1) {
                best = Some(b);
            }
        }
        let best = best.map(|b| (b.0, b.2));
        // Nothing fits inside the plot (a tiny plot or a huge note): use the top-left corner.
        placed.push(best.map_or((bx0 + 4, by0 + 4, bx0 + 4 + w, by0 + 4 + h), |b| b.1));
    }
    placed
}

/// Draws notes in boxes chosen by [`place_notes`], with a leader line when a box ends up away
/// from its point, and the notes' markers on top.
pub(super) fn draw_notes(
    root: &Area<'_>,
    notes: &[Note],
    crowding: &mut Crowding,
    bounds: Rect,
) -> DrawResult {
    let style = font(19);
    let mut sized = Vec::with_capacity(notes.len());
    for n in notes {
        let (tw, th) = root.estimate_text_size(&n.text, &style)?;
        sized.push((n.anchor, (tw as i32 + 14, th as i32 + 10)));
    }
    let boxes = place_notes(&sized, crowding, bounds);
    for (note, &(left, top, right, bottom)) in notes.iter().zip(&boxes) {
        let (ax, ay) = note.anchor;
        let near_x = ax.clamp(left, right);
        let near_y = ay.clamp(top, bottom);
        if (near_x - ax).abs() + (near_y - ay).abs() > 24 {
            root.draw(&PathElement::new(
                vec![(ax, ay), (near_x, near_y)],
                note.colour.stroke_width(1),
            ))?;
        }
        root.draw(&Rectangle::new(
            [(left, top), (right, bottom)],
            WHITE.mix(0.92).filled(),
        ))?;
        root.draw(&Rectangle::new(
            [(left, top), (right, bottom)],
            note.colour.stroke_width(1),
        ))?;
        root.draw(&Text::new(
            note.text.clone(),
            (left + 7, top + 5),
            style.clone(),
        ))?;
    }
    for note in notes {
        if let Some(shape) = note.marker {
            draw_marker(root, note.anchor, shape, note.colour, 7)?;
        }
    }
    Ok(())
}

/// Splits the area below the title band into the chart body and the legend band.
pub(super) fn layout<'a>(
    root: &Area<'a>,
    title: &str,
    subtitle: &str,
    legend: &[(String, Swatch)],
) -> Result<(Area<'a>, Area<'a>, LegendRows), Box<dyn StdError>> {
    let (top, rest) = root.split_vertically(TITLE_BAND_PX);
    draw_title(&top, title, subtitle)?;
    let rows = legend_rows(root, legend)?;
    let rest_h = rest.dim_in_pixel().1;
    let (body, foot) = rest.split_vertically(rest_h.saturating_sub(legend_height(&rows)));
    Ok((body, foot, rows))
}

pub(super) fn plot_bounds<CT: CoordTranslate>(
    area: &DrawingArea<Surface<'_>, CT>,
) -> (i32, i32, i32, i32) {
    let (xr, yr) = area.get_pixel_range();
    (xr.start, yr.start, xr.end, yr.end)
}

/// The house style of grid, axes and labels.
macro_rules! house_mesh {
    ($chart:expr) => {
        $chart
            .configure_mesh()
            .bold_line_style(GRID_BOLD.stroke_width(1))
            .light_line_style(GRID_LIGHT.stroke_width(1))
            .axis_style(MUTED.stroke_width(1))
            .label_style(font(19))
            .axis_desc_style(font(22))
    };
}

pub(super) use house_mesh;

/// The axes of a time chart with a second value axis on the right: flow on the left, and rain
/// (inverted) or stage on the right.
pub(super) struct TimeAxes {
    /// Time axis, hours.
    pub(super) t: (f64, f64),
    /// Left axis range.
    pub(super) y: (f64, f64),
    /// Right axis range (high to low for an axis that hangs from the top).
    pub(super) y2: (f64, f64),
    /// Left axis description.
    pub(super) y_desc: String,
    /// Right axis description.
    pub(super) y2_desc: String,
    /// How many labels on the right axis.
    pub(super) y2_labels: usize,
}

/// A time chart with its second axis.
pub(super) type TimeChart<'a, 'b> = plotters::chart::DualCoordChartContext<
    'a,
    Surface<'b>,
    Cartesian2d<TickedAxis, plotters::coord::types::RangedCoordf64>,
    Cartesian2d<plotters::coord::types::RangedCoordf64, plotters::coord::types::RangedCoordf64>,
>;

/// Builds the house time chart on `body` and draws its grid and both axes (the storm and the
/// pond figures share it).
pub(super) fn time_chart<'a, 'b>(
    body: &'a DrawingArea<Surface<'b>, plotters::coord::Shift>,
    ax: &TimeAxes,
) -> Result<TimeChart<'a, 'b>, Box<dyn StdError>> {
    let (t0, t1) = ax.t;
    let (x_major, x_minor) = super::axes::ticks_between(t0, t1);
    let mut chart = ChartBuilder::on(body)
        .margin_left(24)
        .margin_right(24)
        .margin_top(12)
        .margin_bottom(6)
        .x_label_area_size(70)
        .y_label_area_size(104)
        .right_y_label_area_size(112)
        .build_cartesian_2d(TickedAxis::new(t0, t1, x_major, x_minor), ax.y.0..ax.y.1)?
        .set_secondary_coord(t0..t1, ax.y2.0..ax.y2.1);
    house_mesh!(chart)
        .x_label_formatter(&|v| super::axes::fmt_tick(v))
        .y_label_formatter(&|v| super::axes::fmt_tick(v))
        .y_labels(10)
        .y_max_light_lines(1)
        .x_desc("Time from start of storm (h)")
        .y_desc(ax.y_desc.clone())
        .draw()?;
    chart
        .configure_secondary_axes()
        .axis_style(MUTED.stroke_width(1))
        .label_style(font(19))
        .axis_desc_style(font(22))
        .y_label_formatter(&|v| super::axes::fmt_tick(v))
        .y_labels(ax.y2_labels)
        .y_desc(ax.y2_desc.clone())
        .draw()?;
    Ok(chart)
}

/// Points of a uniformly sampled series inside the time window `[t0, t1]`.
pub(super) fn windowed(values: &[f64], step_h: f64, (t0, t1): (f64, f64)) -> Vec<(f64, f64)> {
    super::axes::timed(values, step_h)
        .filter(|(t, _)| *t >= t0 - 1e-9 && *t <= t1 + 1e-9)
        .collect()
}

/// Peak notes with the same text after the series' name (same value, same time) merged into
/// one note that names every series, so that equal peaks never print on top of each other.
/// Each entry: (series label, rest of the text, note); the first note of a group is kept.
pub(super) fn merge_equal_notes(notes: Vec<(String, String, Note)>) -> Vec<Note> {
    let mut out: Vec<(Vec<String>, String, Note)> = Vec::new();
    for (label, rest, note) in notes {
        if let Some(g) = out.iter_mut().find(|g| g.1 == rest) {
            g.0.push(label);
        } else {
            out.push((vec![label], rest, note));
        }
    }
    out.into_iter()
        .map(|(labels, rest, mut note)| {
            note.text = format!("{}: {rest}", labels.join(", "));
            note
        })
        .collect()
}
