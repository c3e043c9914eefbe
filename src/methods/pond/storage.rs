//! Stage-storage geometry: a pond's storage from a stage-area table (the
//! conic-frustum rule) or a stage-volume table, underground units added to
//! it or alone ([`Underground`]), and the rows of a basin with uniform side
//! slopes.

use super::*;

/// How storage is interpolated between and beyond the table rows.
#[derive(Debug, Clone, PartialEq)]
pub(super) enum Shape {
    /// From a stage-area table: `sqrt(area)` linear in stage between rows
    /// (the conic frustum), the last area kept above the last row.
    Area { area_ft2: Vec<f64> },
    /// From a stage-volume table: volume linear between rows, the last
    /// slope extended above the last row.
    Volume,
}

/// An open basin's stage-storage table: storage (ft3) measured from its
/// lowest stage.
#[derive(Debug, Clone, PartialEq)]
pub(super) struct OpenTable {
    pub(super) stage_ft: Vec<f64>,
    pub(super) volume_ft3: Vec<f64>,
    pub(super) shape: Shape,
}

/// Stage-storage relation of a pond: an open basin's table, underground
/// units ([`Underground`]), or both added together; storage (ft3) measured
/// from the lowest stage of any of them.
#[derive(Debug, Clone, PartialEq)]
pub struct StageStorage {
    pub(super) open: Option<OpenTable>,
    pub(super) parts: Vec<Underground>,
}

/// Checks a `(stage, value)` table: at least 2 rows, finite values, stages
/// strictly increasing, values >= 0 and non-decreasing.
pub(super) fn validate_rows(
    rows: &[(f64, f64)],
    table: &'static str,
    column: &'static str,
) -> Result<(), PondError> {
    if rows.len() < 2 {
        return Err(PondError::TooFewRows {
            table,
            found: rows.len(),
        });
    }
    for (i, &(stage, value)) in rows.iter().enumerate() {
        let row = i + 1;
        if !stage.is_finite() {
            return Err(PondError::NotFinite {
                row,
                column: "stage",
                value: stage,
            });
        }
        if !value.is_finite() {
            return Err(PondError::NotFinite { row, column, value });
        }
        if i > 0 {
            let (prev_stage, _) = rows[i - 1];
            if stage <= prev_stage {
                return Err(PondError::StageNotIncreasing {
                    row,
                    stage,
                    previous: prev_stage,
                });
            }
        }
        if value < 0.0 {
            return Err(PondError::Negative { row, column, value });
        }
        if i > 0 {
            let (_, prev_value) = rows[i - 1];
            if value < prev_value {
                return Err(PondError::Decreasing {
                    row,
                    column,
                    value,
                    previous: prev_value,
                });
            }
        }
    }
    Ok(())
}

/// Volume (ft3) of a frustum between surface areas `a1_ft2` and `a2_ft2`
/// a height `h_ft` apart.
///
/// # Formula
/// `V = (h/3) (A1 + A2 + sqrt(A1 A2))` (frustum of a cone or pyramid,
/// elementary geometry); V ft3, h ft, A ft2.
pub(super) fn frustum_volume_ft3(h_ft: f64, a1_ft2: f64, a2_ft2: f64) -> f64 {
    h_ft / 3.0 * (a1_ft2 + a2_ft2 + (a1_ft2 * a2_ft2).sqrt())
}

impl OpenTable {
    /// Stage-storage from `(stage ft, surface area ft2)` rows.
    ///
    /// # Formula
    /// Between rows the conic-frustum volume `V = (h/3)(A1 + A2 + sqrt(A1 A2))`
    /// (h the stage difference, ft; A the areas, ft2); within a segment the
    /// same rule to the intermediate stage, with `sqrt(A)` linear in stage.
    /// Above the last row the last area is kept (vertical walls).
    ///
    /// # Errors
    /// Fewer than 2 rows, a non-finite value, stages not strictly
    /// increasing, a negative area, or an area smaller than the previous one.
    pub fn from_stage_area(rows: &[(f64, f64)]) -> Result<Self, PondError> {
        validate_rows(rows, "stage-area", "area")?;
        let mut volume_ft3 = Vec::with_capacity(rows.len());
        let mut v = 0.0;
        volume_ft3.push(v);
        for w in rows.windows(2) {
            let ((s1, a1), (s2, a2)) = (w[0], w[1]);
            v += frustum_volume_ft3(s2 - s1, a1, a2);
            volume_ft3.push(v);
        }
        Ok(OpenTable {
            stage_ft: rows.iter().map(|r| r.0).collect(),
            volume_ft3,
            shape: Shape::Area {
                area_ft2: rows.iter().map(|r| r.1).collect(),
            },
        })
    }

    /// Stage-storage from `(stage ft, volume ft3)` rows; volumes are linear
    /// between rows, the last slope is extended above the last row, and
    /// storage is measured from the first row (its volume is subtracted).
    ///
    /// # Errors
    /// Fewer than 2 rows, a non-finite value, stages not strictly
    /// increasing, a negative volume, or a volume smaller than the previous one.
    pub fn from_stage_volume(rows: &[(f64, f64)]) -> Result<Self, PondError> {
        validate_rows(rows, "stage-volume", "volume")?;
        let v0 = rows[0].1;
        Ok(OpenTable {
            stage_ft: rows.iter().map(|r| r.0).collect(),
            volume_ft3: rows.iter().map(|r| r.1 - v0).collect(),
            shape: Shape::Volume,
        })
    }

    /// The lowest stage of the table (ft), where storage is 0.
    pub fn bottom_ft(&self) -> f64 {
        self.stage_ft[0]
    }

    /// `(stage ft, storage ft3)` at each input row, storage measured from
    /// the lowest stage.
    pub fn rows(&self) -> Vec<(f64, f64)> {
        self.stage_ft
            .iter()
            .copied()
            .zip(self.volume_ft3.iter().copied())
            .collect()
    }

    /// Slope dV/dh (ft2) above the last row.
    pub(super) fn top_slope_ft2(&self) -> f64 {
        let n = self.stage_ft.len();
        match &self.shape {
            Shape::Area { area_ft2 } => area_ft2[n - 1],
            Shape::Volume => {
                (self.volume_ft3[n - 1] - self.volume_ft3[n - 2])
                    / (self.stage_ft[n - 1] - self.stage_ft[n - 2])
            }
        }
    }

    /// Storage (ft3) above the row `k` at a depth `d_ft` above it, inside
    /// segment `k..k+1`.
    pub(super) fn segment_volume_ft3(&self, k: usize, d_ft: f64) -> f64 {
        let h = self.stage_ft[k + 1] - self.stage_ft[k];
        match &self.shape {
            Shape::Area { area_ft2 } => {
                let a = area_ft2[k].sqrt();
                let b = (area_ft2[k + 1].sqrt() - a) / h;
                // integral of (a + b t)^2 dt from 0 to d, the frustum rule to depth d
                d_ft * (a * a + a * b * d_ft + b * b * d_ft * d_ft / 3.0)
            }
            Shape::Volume => (self.volume_ft3[k + 1] - self.volume_ft3[k]) * (d_ft / h),
        }
    }

    /// Storage (ft3) at `stage_ft`, measured from the lowest stage: 0 at and
    /// below it (and for a NaN stage).
    pub fn volume_ft3(&self, stage_ft: f64) -> f64 {
        let n = self.stage_ft.len();
        if stage_ft.is_nan() || stage_ft <= self.stage_ft[0] {
            return 0.0;
        }
        let k = self.stage_ft.partition_point(|&s| s <= stage_ft);
        if k >= n {
            return self.volume_ft3[n - 1]
                + self.top_slope_ft2() * (stage_ft - self.stage_ft[n - 1]);
        }
        self.volume_ft3[k - 1] + self.segment_volume_ft3(k - 1, stage_ft - self.stage_ft[k - 1])
    }

    /// Surface area dV/dh (ft2) at `stage_ft`: 0 below the lowest stage.
    /// For a stage-area table the frustum interpolation between rows (the
    /// given area at each row, the last area above the last row); for a
    /// stage-volume table the slope of the segment containing the stage
    /// (the segment above at a row).
    pub fn area_at_ft2(&self, stage_ft: f64) -> f64 {
        let n = self.stage_ft.len();
        if stage_ft.is_nan() || stage_ft < self.stage_ft[0] {
            return 0.0;
        }
        let k = self.stage_ft.partition_point(|&s| s <= stage_ft);
        if k >= n {
            return self.top_slope_ft2();
        }
        let j = k - 1;
        let h = self.stage_ft[k] - self.stage_ft[j];
        match &self.shape {
            Shape::Area { area_ft2 } => {
                let a = area_ft2[j].sqrt();
                let b = (area_ft2[k].sqrt() - a) / h;
                let r = a + b * (stage_ft - self.stage_ft[j]);
                r * r
            }
            Shape::Volume => (self.volume_ft3[k] - self.volume_ft3[j]) / h,
        }
    }

    /// The lowest stage (ft) at which storage reaches `volume_ft3`: the
    /// bottom for 0 or less (or NaN), `+inf` when the storage never gets
    /// there (a flat top).
    pub fn stage_for_volume_ft(&self, volume_ft3: f64) -> f64 {
        let n = self.stage_ft.len();
        if volume_ft3.is_nan() || volume_ft3 <= 0.0 {
            return self.stage_ft[0];
        }
        let k = self.volume_ft3.partition_point(|&v| v < volume_ft3);
        if k >= n {
            let slope = self.top_slope_ft2();
            if slope > 0.0 {
                return self.stage_ft[n - 1] + (volume_ft3 - self.volume_ft3[n - 1]) / slope;
            }
            return f64::INFINITY;
        }
        // volume_ft3[k-1] < volume <= volume_ft3[k], k >= 1 because volume_ft3[0] = 0
        let j = k - 1;
        let target = volume_ft3 - self.volume_ft3[j];
        let h = self.stage_ft[k] - self.stage_ft[j];
        match &self.shape {
            Shape::Volume => {
                let dv = self.volume_ft3[k] - self.volume_ft3[j];
                self.stage_ft[j] + h * (target / dv)
            }
            Shape::Area { .. } => {
                // bisection on the monotone segment volume
                let (mut lo, mut hi) = (0.0, h);
                for _ in 0..200 {
                    let mid = 0.5 * (lo + hi);
                    if mid <= lo || mid >= hi {
                        break;
                    }
                    if self.segment_volume_ft3(j, mid) < target {
                        lo = mid;
                    } else {
                        hi = mid;
                    }
                }
                self.stage_ft[j] + hi
            }
        }
    }
}

impl StageStorage {
    /// Stage-storage from `(stage ft, surface area ft2)` rows.
    ///
    /// # Formula
    /// Between rows the conic-frustum volume `V = (h/3)(A1 + A2 + sqrt(A1 A2))`
    /// (h the stage difference, ft; A the areas, ft2); within a segment the
    /// same rule to the intermediate stage, with `sqrt(A)` linear in stage.
    /// Above the last row the last area is kept (vertical walls).
    ///
    /// # Errors
    /// Fewer than 2 rows, a non-finite value, stages not strictly
    /// increasing, a negative area, or an area smaller than the previous one.
    pub fn from_stage_area(rows: &[(f64, f64)]) -> Result<Self, PondError> {
        Ok(StageStorage {
            open: Some(OpenTable::from_stage_area(rows)?),
            parts: Vec::new(),
        })
    }

    /// Stage-storage from `(stage ft, volume ft3)` rows; volumes are linear
    /// between rows, the last slope is extended above the last row, and
    /// storage is measured from the first row (its volume is subtracted).
    ///
    /// # Errors
    /// Fewer than 2 rows, a non-finite value, stages not strictly
    /// increasing, a negative volume, or a volume smaller than the previous one.
    pub fn from_stage_volume(rows: &[(f64, f64)]) -> Result<Self, PondError> {
        Ok(StageStorage {
            open: Some(OpenTable::from_stage_volume(rows)?),
            parts: Vec::new(),
        })
    }

    /// Storage of underground units alone (no open basin): above the top
    /// of the highest unit the storage stays full (it does not rise).
    ///
    /// # Errors
    /// No unit, or a unit whose dimensions are not valid
    /// ([`Underground::validate`]).
    pub fn underground(parts: Vec<Underground>) -> Result<Self, PondError> {
        if parts.is_empty() {
            return Err(PondError::InvalidParameter {
                what: "the number of underground units",
                value: 0.0,
                expected: "at least one gallery, vault or stone bed",
            });
        }
        for p in &parts {
            p.validate()?;
        }
        Ok(StageStorage { open: None, parts })
    }

    /// This storage with underground units added to it.
    ///
    /// # Errors
    /// A unit whose dimensions are not valid ([`Underground::validate`]).
    pub fn with_underground(mut self, parts: Vec<Underground>) -> Result<Self, PondError> {
        for p in &parts {
            p.validate()?;
        }
        self.parts.extend(parts);
        Ok(self)
    }

    /// The underground units, in the order given.
    pub fn underground_parts(&self) -> &[Underground] {
        &self.parts
    }

    /// Whether the storage stops rising above its top (underground units
    /// without an open basin).
    pub fn is_capped(&self) -> bool {
        self.open.is_none()
    }

    /// Whether there is an open basin (a stage-area or stage-volume table).
    pub fn has_open_basin(&self) -> bool {
        self.open.is_some()
    }

    /// The lowest stage (ft), where storage is 0: the lowest of the open
    /// table's first row and every unit's bottom.
    pub fn bottom_ft(&self) -> f64 {
        let open = self
            .open
            .as_ref()
            .map_or(f64::INFINITY, OpenTable::bottom_ft);
        self.parts
            .iter()
            .map(Underground::bottom_ft)
            .fold(open, f64::min)
    }

    /// The highest stage (ft) of the open table's rows and the units' tops.
    pub fn top_ft(&self) -> f64 {
        let open = self
            .open
            .as_ref()
            .and_then(|o| o.stage_ft.last().copied())
            .unwrap_or(f64::NEG_INFINITY);
        self.parts
            .iter()
            .map(Underground::top_ft)
            .fold(open, f64::max)
    }

    /// Stages where the relation changes form: the open table's rows and
    /// every unit's bottom and top.
    pub fn key_stages_ft(&self) -> Vec<f64> {
        let mut out: Vec<f64> = self
            .open
            .as_ref()
            .map(|o| o.stage_ft.clone())
            .unwrap_or_default();
        for p in &self.parts {
            out.push(p.bottom_ft());
            out.push(p.top_ft());
        }
        out.sort_by(f64::total_cmp);
        out.dedup();
        out
    }

    /// `(stage ft, storage ft3)` at each input row (with underground
    /// units: at every key stage, [`StageStorage::key_stages_ft`]), storage
    /// measured from the lowest stage.
    pub fn rows(&self) -> Vec<(f64, f64)> {
        match &self.open {
            Some(o) if self.parts.is_empty() => o.rows(),
            _ => self
                .key_stages_ft()
                .into_iter()
                .map(|h| (h, self.volume_ft3(h)))
                .collect(),
        }
    }

    /// Storage (ft3) at `stage_ft`, measured from the lowest stage: 0 at and
    /// below it (and for a NaN stage).
    pub fn volume_ft3(&self, stage_ft: f64) -> f64 {
        let open = self.open.as_ref().map_or(0.0, |o| o.volume_ft3(stage_ft));
        if self.parts.is_empty() {
            return open;
        }
        open + self
            .parts
            .iter()
            .map(|p| p.volume_ft3(stage_ft))
            .sum::<f64>()
    }

    /// Plan area of the stored water, dV/dh (ft2), at `stage_ft`: the open
    /// table's area (see [`OpenTable::area_at_ft2`]) plus each unit's
    /// ([`Underground::area_ft2`]); 0 below the bottom.
    pub fn area_at_ft2(&self, stage_ft: f64) -> f64 {
        let open = self.open.as_ref().map_or(0.0, |o| o.area_at_ft2(stage_ft));
        open + self.parts.iter().map(|p| p.area_ft2(stage_ft)).sum::<f64>()
    }

    /// The open water surface (ft2) at `stage_ft`: the open basin's area
    /// above its bottom, 0 at and below it and without an open basin.
    pub fn open_surface_ft2(&self, stage_ft: f64) -> f64 {
        match &self.open {
            Some(o) if stage_ft > o.bottom_ft() => o.area_at_ft2(stage_ft),
            _ => 0.0,
        }
    }

    /// The open basin's bottom area (ft2): its area at the lowest row (for
    /// a stage-volume table, the slope of the first segment); 0 without an
    /// open basin.
    pub fn open_bottom_area_ft2(&self) -> f64 {
        self.open
            .as_ref()
            .map_or(0.0, |o| o.area_at_ft2(o.bottom_ft()))
    }

    /// The lowest stage (ft) at which storage reaches `volume_ft3`: the
    /// bottom for 0 or less (or NaN), `+inf` when the storage never gets
    /// there (a flat top).
    pub fn stage_for_volume_ft(&self, volume_ft3: f64) -> f64 {
        if self.parts.is_empty()
            && let Some(o) = &self.open
        {
            return o.stage_for_volume_ft(volume_ft3);
        }
        let bottom = self.bottom_ft();
        if volume_ft3.is_nan() || volume_ft3 <= 0.0 {
            return bottom;
        }
        let top = self.top_ft();
        let at_top = self.volume_ft3(top);
        if volume_ft3 > at_top {
            let slope = self.open.as_ref().map_or(0.0, OpenTable::top_slope_ft2);
            // above every row and unit only the open table's last slope remains
            if slope > 0.0 {
                return top + (volume_ft3 - at_top) / slope;
            }
            return f64::INFINITY;
        }
        // bisection on the monotone total volume
        let (mut lo, mut hi) = (bottom, top);
        for _ in 0..200 {
            let mid = 0.5 * (lo + hi);
            if mid <= lo || mid >= hi {
                break;
            }
            if self.volume_ft3(mid) < volume_ft3 {
                lo = mid;
            } else {
                hi = mid;
            }
        }
        hi
    }
}

/// Stage-area rows of a basin with a rectangular bottom and uniform side
/// slopes, for concept design.
///
/// Rows from the bottom to the top (`bottom + depth`) at equal spacing of
/// 0.5 ft or finer, the top row exact.
///
/// # Formula
/// `A(h) = (L + 2 z h)(W + 2 z h)`: A ft2, L and W the bottom length and
/// width (ft), z the side slope (horizontal per vertical), h the depth above
/// the bottom (ft) (elementary geometry). Volumes from these rows by the
/// frustum rule of [`StageStorage::from_stage_area`] are within about 0.1 %
/// of the exact prismoid for ordinary basins.
///
/// # Errors
/// A non-finite bottom elevation, a length, width or depth that is not
/// positive, a negative side slope, or a depth so large that more than
/// 100 000 rows would be needed.
pub fn basin_stage_area(
    bottom_elev_ft: f64,
    bottom_length_ft: f64,
    bottom_width_ft: f64,
    side_slope_h_per_v: f64,
    depth_ft: f64,
) -> Result<Vec<(f64, f64)>, PondError> {
    if !bottom_elev_ft.is_finite() {
        return Err(PondError::InvalidParameter {
            what: "the basin bottom elevation",
            value: bottom_elev_ft,
            expected: "a finite number",
        });
    }
    for (what, value) in [
        ("the basin bottom length", bottom_length_ft),
        ("the basin bottom width", bottom_width_ft),
        ("the basin depth", depth_ft),
    ] {
        if !(value.is_finite() && value > 0.0) {
            return Err(PondError::InvalidParameter {
                what,
                value,
                expected: "a positive finite number",
            });
        }
    }
    if !(side_slope_h_per_v.is_finite() && side_slope_h_per_v >= 0.0) {
        return Err(PondError::InvalidParameter {
            what: "the basin side slope",
            value: side_slope_h_per_v,
            expected: "0 or more (horizontal per vertical)",
        });
    }
    let n_f = (depth_ft / BASIN_ROW_STEP_FT).ceil().max(1.0);
    if n_f > MAX_BASIN_ROWS as f64 {
        return Err(PondError::InvalidParameter {
            what: "the basin depth",
            value: depth_ft,
            expected: "at most 50000 ft",
        });
    }
    let n = n_f as usize;
    let z = side_slope_h_per_v;
    let rows = (0..=n)
        .map(|i| {
            let h = if i == n {
                depth_ft
            } else {
                depth_ft * (i as f64 / n as f64)
            };
            let area = (bottom_length_ft + 2.0 * z * h) * (bottom_width_ft + 2.0 * z * h);
            (bottom_elev_ft + h, area)
        })
        .collect();
    Ok(rows)
}
