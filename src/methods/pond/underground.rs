//! Underground storage: pipe galleries, vaults and stone beds, each a
//! stage-storage relation in closed form that a pond adds to its open
//! basin (or holds alone).
//!
//! Sources: the area of a partly full circle (a circular segment) and the
//! volumes of prisms are elementary geometry; the void volume of a stone
//! bed is its gross volume times its porosity (the porosity is the user's,
//! from the stone's gradation or the governing manual).

use super::{PondError, StageStorage};

/// Area (ft2) of a circle of diameter `d_ft` filled to a depth `y_ft`
/// above its invert (0 below the invert, the whole circle above the crown).
///
/// # Formula
/// Circular segment, `A = r^2 acos((r - y)/r) - (r - y) sqrt(y (D - y))`,
/// r = D/2 (elementary geometry); A ft2, D and y ft.
pub fn circular_segment_area_ft2(d_ft: f64, y_ft: f64) -> f64 {
    if d_ft.is_nan() || d_ft <= 0.0 || y_ft.is_nan() || y_ft <= 0.0 {
        return 0.0;
    }
    let r = 0.5 * d_ft;
    if y_ft >= d_ft {
        return std::f64::consts::PI * r * r;
    }
    let c = ((r - y_ft) / r).clamp(-1.0, 1.0);
    r * r * c.acos() - (r - y_ft) * (y_ft * (d_ft - y_ft)).max(0.0).sqrt()
}

/// One underground storage unit, dimensions in ft (areas ft2).
#[derive(Debug, Clone, PartialEq)]
pub enum Underground {
    /// `count` parallel round pipes of one diameter and length, inverts
    /// level (a pipe gallery).
    Gallery {
        /// Pipe invert elevation, ft.
        invert_ft: f64,
        /// Inside diameter, ft.
        diameter_ft: f64,
        /// Length of each pipe, ft.
        length_ft: f64,
        /// Number of pipes.
        count: u32,
    },
    /// A rectangular vault with vertical walls.
    Vault {
        /// Floor elevation, ft.
        floor_ft: f64,
        /// Inside length, ft.
        length_ft: f64,
        /// Inside width, ft.
        width_ft: f64,
        /// Inside height (floor to ceiling), ft.
        height_ft: f64,
    },
    /// A bed of open-graded stone whose voids store water.
    Stone {
        /// Bottom elevation, ft.
        bottom_ft: f64,
        /// Depth of stone, ft.
        depth_ft: f64,
        /// Plan area, ft2.
        area_ft2: f64,
        /// Void ratio of the stone (volume of voids / gross volume), 0-1.
        porosity: f64,
        /// Stone displaced by the galleries laid in it: the volume (ft3)
        /// of those pipes at each stage is not void space. Their volume at
        /// a stage is `sum count * length * segment area`.
        embedded: Vec<(f64, f64, f64)>,
    },
}

impl Underground {
    /// Lowest elevation that holds water, ft.
    pub fn bottom_ft(&self) -> f64 {
        match self {
            Underground::Gallery { invert_ft, .. } => *invert_ft,
            Underground::Vault { floor_ft, .. } => *floor_ft,
            Underground::Stone { bottom_ft, .. } => *bottom_ft,
        }
    }

    /// Highest elevation that holds water (crown, ceiling, top of stone), ft.
    pub fn top_ft(&self) -> f64 {
        match self {
            Underground::Gallery {
                invert_ft,
                diameter_ft,
                ..
            } => invert_ft + diameter_ft,
            Underground::Vault {
                floor_ft,
                height_ft,
                ..
            } => floor_ft + height_ft,
            Underground::Stone {
                bottom_ft,
                depth_ft,
                ..
            } => bottom_ft + depth_ft,
        }
    }

    /// Plan area the unit covers, ft2.
    pub fn footprint_ft2(&self) -> f64 {
        match self {
            Underground::Gallery {
                diameter_ft,
                length_ft,
                count,
                ..
            } => f64::from(*count) * diameter_ft * length_ft,
            Underground::Vault {
                length_ft,
                width_ft,
                ..
            } => length_ft * width_ft,
            Underground::Stone { area_ft2, .. } => *area_ft2,
        }
    }

    /// Water stored (ft3) at `stage_ft`: 0 at and below the bottom, the
    /// full volume at and above the top.
    ///
    /// # Formula
    /// Gallery: `V = n L A_seg(D, h - invert)` (circular segment, see
    /// [`circular_segment_area_ft2`]); vault: `V = L W min(h - floor, H)`;
    /// stone: `V = p (A min(h - bottom, d) - V_pipes(h))`, p the porosity,
    /// `V_pipes` the galleries laid in it (elementary geometry).
    pub fn volume_ft3(&self, stage_ft: f64) -> f64 {
        if stage_ft.is_nan() {
            return 0.0;
        }
        match self {
            Underground::Gallery {
                invert_ft,
                diameter_ft,
                length_ft,
                count,
            } => {
                f64::from(*count)
                    * length_ft
                    * circular_segment_area_ft2(*diameter_ft, stage_ft - invert_ft)
            }
            Underground::Vault {
                floor_ft,
                length_ft,
                width_ft,
                height_ft,
            } => length_ft * width_ft * (stage_ft - floor_ft).clamp(0.0, *height_ft),
            Underground::Stone {
                bottom_ft,
                depth_ft,
                area_ft2,
                porosity,
                embedded,
            } => {
                let y = (stage_ft - bottom_ft).clamp(0.0, *depth_ft);
                let top = bottom_ft + y;
                let pipes: f64 = embedded
                    .iter()
                    .map(|&(invert, d, n_len)| n_len * circular_segment_area_ft2(d, top - invert))
                    .sum();
                porosity * (area_ft2 * y - pipes).max(0.0)
            }
        }
    }

    /// Plan area of the stored water at `stage_ft`, dV/dh (ft2): 0 below
    /// the bottom and above the top (the value just below the top at it).
    ///
    /// # Formula
    /// Gallery: `n L 2 sqrt(y (D - y))` (the chord at depth y); vault:
    /// `L W`; stone: `p (A - chords of the pipes in it)`.
    pub fn area_ft2(&self, stage_ft: f64) -> f64 {
        if stage_ft.is_nan() || stage_ft < self.bottom_ft() || stage_ft > self.top_ft() {
            return 0.0;
        }
        let chord = |d: f64, y: f64| 2.0 * (y * (d - y)).max(0.0).sqrt();
        match self {
            Underground::Gallery {
                invert_ft,
                diameter_ft,
                length_ft,
                count,
            } => f64::from(*count) * length_ft * chord(*diameter_ft, stage_ft - invert_ft),
            Underground::Vault {
                length_ft,
                width_ft,
                ..
            } => length_ft * width_ft,
            Underground::Stone {
                area_ft2,
                porosity,
                embedded,
                ..
            } => {
                let pipes: f64 = embedded
                    .iter()
                    .filter(|&&(invert, d, _)| stage_ft > invert && stage_ft < invert + d)
                    .map(|&(invert, d, n_len)| n_len * chord(d, stage_ft - invert))
                    .sum();
                porosity * (area_ft2 - pipes).max(0.0)
            }
        }
    }

    /// Area (ft2) through which the unit infiltrates: a stone bed's plan
    /// area once water stands in it; vaults and pipes are closed (0).
    pub fn infiltration_area_ft2(&self, stage_ft: f64) -> f64 {
        match self {
            Underground::Stone {
                bottom_ft,
                area_ft2,
                ..
            } if stage_ft > *bottom_ft => *area_ft2,
            _ => 0.0,
        }
    }

    /// Checks the dimensions: finite elevations, positive sizes, a count of
    /// at least 1, a porosity in (0, 1), embedded pipes inside the stone.
    ///
    /// # Errors
    /// [`PondError::InvalidParameter`] naming the value.
    pub fn validate(&self) -> Result<(), PondError> {
        let positive = |what: &'static str, v: f64| {
            if v.is_finite() && v > 0.0 {
                Ok(())
            } else {
                Err(PondError::InvalidParameter {
                    what,
                    value: v,
                    expected: "a positive finite number",
                })
            }
        };
        if !self.bottom_ft().is_finite() {
            return Err(PondError::InvalidParameter {
                what: "the bottom elevation",
                value: self.bottom_ft(),
                expected: "a finite number",
            });
        }
        match self {
            Underground::Gallery {
                diameter_ft,
                length_ft,
                count,
                ..
            } => {
                positive("the pipe diameter (ft)", *diameter_ft)?;
                positive("the pipe length (ft)", *length_ft)?;
                positive("the pipe count", f64::from(*count))
            }
            Underground::Vault {
                length_ft,
                width_ft,
                height_ft,
                ..
            } => {
                positive("the vault length (ft)", *length_ft)?;
                positive("the vault width (ft)", *width_ft)?;
                positive("the vault height (ft)", *height_ft)
            }
            Underground::Stone {
                depth_ft,
                area_ft2,
                porosity,
                ..
            } => {
                positive("the stone depth (ft)", *depth_ft)?;
                positive("the stone area (ft2)", *area_ft2)?;
                if !(porosity.is_finite() && *porosity > 0.0 && *porosity < 1.0) {
                    return Err(PondError::InvalidParameter {
                        what: "the stone porosity",
                        value: *porosity,
                        expected: "a fraction between 0 and 1, such as 0.4",
                    });
                }
                Ok(())
            }
        }
    }
}

/// The highest grid stage (ft) a routing table needs for a storage that is
/// full at its top (underground units alone): the lowest stage, at or above
/// the top and found by doubling the height above it, where the outflow
/// `flow(h)` (cfs) reaches `4 max_storage/dt`. The storage-indication value
/// of a step is at most `2 I_peak + 2 S/dt`, and a trapezoidal inflow of
/// volume V peaks at no more than `2 V/dt`, so the table then holds every
/// value the routing can reach.
///
/// # Errors
/// [`PondError::StorageBoundUnreachable`] when the outflow does not get
/// there within 10^7 ft above the top.
pub(super) fn full_storage_grid_end_ft(
    storage: &StageStorage,
    flow: impl Fn(f64) -> f64,
    dt_s: f64,
    max_storage_ft3: f64,
) -> Result<f64, PondError> {
    let top = storage.top_ft();
    let need = 4.0 * max_storage_ft3 / dt_s;
    let mut rise = 0.01;
    while rise < 1e7 {
        let h = top + rise;
        if flow(h) >= need {
            return Ok(h);
        }
        rise *= 2.0;
    }
    Err(PondError::StorageBoundUnreachable {
        storage_ft3: max_storage_ft3,
    })
}
