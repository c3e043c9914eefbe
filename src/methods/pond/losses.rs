//! Water a pond loses other than through its outlets: infiltration into
//! the ground at a constant design rate, and evaporation from the open
//! water surface at monthly depths per day.
//!
//! Infiltration is a loss that depends on the stage, so it enters the
//! routing table beside the outflow (`2S/dt + O + L`, the storage-indication
//! form with the loss as one more outflow term; Bedient, Huber & Vieux eq.
//! 4-13). Evaporation changes with the calendar month, so the routing
//! removes it explicitly, at the surface area of the step's start, in long
//! records only (over a design storm of a day or so it is a few hundredths
//! of an inch).

use super::StageStorage;

/// Over which area a pond infiltrates.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum InfiltrationArea {
    /// The water surface at the current stage (the wetted plan area).
    #[default]
    Wetted,
    /// The bottom area alone, whatever the stage.
    Bottom,
}

impl InfiltrationArea {
    /// Keyword in the scenario (`infiltration_area`).
    pub fn word(self) -> &'static str {
        match self {
            InfiltrationArea::Wetted => "wetted",
            InfiltrationArea::Bottom => "bottom",
        }
    }
}

/// A pond's losses to the ground and the air.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct PondLosses {
    /// Constant infiltration rate, ft/s (0: none).
    pub infiltration_ft_per_s: f64,
    /// The area it acts over.
    pub infiltration_area: InfiltrationArea,
    /// Open-water evaporation, ft per day, January to December (empty: none).
    pub evaporation_ft_per_day: Vec<f64>,
}

impl PondLosses {
    /// Whether the pond loses water other than through its outlets.
    pub fn any(&self) -> bool {
        self.infiltration_ft_per_s > 0.0 || self.evaporation_ft_per_day.iter().any(|&e| e > 0.0)
    }

    /// The area (ft2) infiltrating at `stage_ft`: the open basin's water
    /// surface (or, with [`InfiltrationArea::Bottom`], its bottom area once
    /// water stands above it), plus the plan area of every stone bed holding
    /// water. Vaults and pipe galleries are closed. 0 at and below the
    /// bottom, so an empty pond loses nothing.
    pub fn infiltration_area_ft2(&self, storage: &StageStorage, stage_ft: f64) -> f64 {
        if stage_ft.is_nan() || stage_ft <= storage.bottom_ft() {
            return 0.0;
        }
        let open = match self.infiltration_area {
            InfiltrationArea::Wetted => storage.open_surface_ft2(stage_ft),
            InfiltrationArea::Bottom if storage.open_surface_ft2(stage_ft) > 0.0 => {
                storage.open_bottom_area_ft2()
            }
            InfiltrationArea::Bottom => 0.0,
        };
        open + storage
            .underground_parts()
            .iter()
            .map(|p| p.infiltration_area_ft2(stage_ft))
            .sum::<f64>()
    }

    /// Infiltration (cfs) at `stage_ft`.
    ///
    /// # Formula
    /// `L = f A(h)`: f the design rate (ft/s), A the infiltrating area
    /// (ft2) at stage h, the constant-rate sizing of infiltration basins in
    /// state stormwater manuals.
    pub fn infiltration_cfs(&self, storage: &StageStorage, stage_ft: f64) -> f64 {
        if self.infiltration_ft_per_s <= 0.0 {
            return 0.0;
        }
        self.infiltration_ft_per_s * self.infiltration_area_ft2(storage, stage_ft)
    }
}

/// The evaporation rate (ft/s) from each step on: `(first step, rate)`,
/// steps counted from `start_s` (s since 1970-01-01) at `step_s` s, for
/// `n` steps, the rate of each calendar month from `ft_per_day` (January
/// first). Empty when `ft_per_day` does not hold 12 values.
pub fn evaporation_schedule(
    start_s: i64,
    step_s: i64,
    n: usize,
    ft_per_day: &[f64],
) -> Vec<(usize, f64)> {
    use crate::util::calendar::{day_number, month_of, year_of};
    let mut out = Vec::new();
    if ft_per_day.len() != 12 || step_s <= 0 {
        return out;
    }
    let mut k = 0usize;
    while k < n {
        let t = start_s + k as i64 * step_s;
        let (y, m) = (year_of(t), month_of(t));
        out.push((k, ft_per_day[(m as usize).clamp(1, 12) - 1] / 86_400.0));
        let (ny, nm) = if m == 12 { (y + 1, 1) } else { (y, m + 1) };
        let Some(day) = day_number(ny, nm, 1) else {
            break;
        };
        let next_s = day * 86_400;
        // the first step at or after the next month's first second
        let next_k = (next_s - start_s + step_s - 1).div_euclid(step_s);
        if next_k <= k as i64 {
            break;
        }
        k = next_k as usize;
    }
    out
}
