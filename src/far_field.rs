//! The far-field intensity map: the intensity of the delivered light over two angles beyond the
//! exit face, as a light-pipe designer reads it off a goniometer's map.
//!
//! **Angles.** In the exit face's frame (z its outward normal, x along its width axis, y along
//! its height axis) a delivered ray leaving in the unit direction (dx, dy, dz) has the
//! horizontal angle α = atan2(dx, dz) and the vertical angle β = atan2(dy, dz), degrees. On the
//! plane z = 1 the direction meets the point (tan α, tan β): the map is a grid of that plane
//! seen in angles, each axis from −90° to 90° in [`CELLS`] cells of [`CELL_DEG`]; the middle
//! cell holds the axis (α, β both within ±[`CELL_DEG`]/2). Light leaving at 90° or more from
//! the axis (dz ≤ 0, possible from a domed or textured face) has no place on the map and is
//! counted apart ([`FarField::sideways`]), so that the map and it together hold every delivered
//! ray.
//!
//! **Intensity.** A cell's value is the share of the emitted power leaving through it divided by
//! its solid angle ([`cell_solid_angle_sr`], exact): the mean intensity over the cell, in share
//! of the emitted power per steradian; with a source flux, times the flux: mW/sr for a flux in
//! mW, cd (lm/sr) for a flux in lm. Each cell's 95 % half-width is its share's (one ray lands
//! in one cell at most, [`crate::trace::Hist`]) over the same solid angle.
//!
//! **Solid angle of a cell.** A direction through the point (a, b) of the plane z = 1 spans, per
//! unit area of the plane, dΩ = cos θ / r² dA = da db / (1 + a² + b²)^{3/2} (the solid angle of
//! a small area at distance r, tilted θ from the line of sight; from memory, any radiometry
//! text). Its antiderivative, zero on both axes, is G(a, b) = atan(a b / √(1 + a² + b²)):
//! with s = √(1 + a² + b²), ∂G/∂b = a / (s (1 + b²)) and then ∂²G/∂a∂b = 1/s³ (derived here,
//! checked in the tests against quadrature). With a = tan α, b = tan β, multiplying the
//! argument's numerator and denominator by cos α cos β gives
//! ab/s = sin α sin β / √(1 − sin²α sin²β), so G = asin(sin α sin β) — finite up to ±90°. A
//! cell α₁…α₂ by β₁…β₂ spans Ω = G(α₂, β₂) − G(α₁, β₂) − G(α₂, β₁) + G(α₁, β₁); the whole
//! map (±90° both ways) spans 4 · π/2 = 2π, the half space in front of the face.

use glam::DVec3;
use serde::{Deserialize, Serialize};

use crate::stats::Share;
use crate::trace::{Hist, IntensityUnit};

/// Width of a cell of the map along either angle, degrees: 45 cells across ±90°, so that the
/// axis has a cell of its own, each about 0.0049 sr near the axis (a fifth of the 5° cone the
/// on-axis intensity is averaged over; at 10⁵ delivered rays of a Lambertian-like exit its
/// intensity is known to about ±16 %).
pub const CELL_DEG: f64 = 4.0;

/// Cells across the map along either angle (−90° … 90° in [`CELL_DEG`] steps).
pub const CELLS: usize = 45;

/// The histogram's bins: the map's cells, row after row, then the light leaving sideways.
pub const BINS: usize = CELLS * CELLS + 1;

/// The bin of the light leaving at 90° or more from the axis (not on the map).
pub const SIDEWAYS_BIN: usize = CELLS * CELLS;

/// The cell index along one angle, degrees (the edge at 90° belongs to the last cell).
fn cell_along(angle_deg: f64) -> usize {
    (((angle_deg + 90.0) / CELL_DEG) as isize).clamp(0, CELLS as isize - 1) as usize
}

/// The histogram bin of a delivered ray leaving in direction `d` (exit-face frame, any length):
/// row = vertical cell, column = horizontal cell, row-major; [`SIDEWAYS_BIN`] when dz ≤ 0.
pub fn bin_of(d: DVec3) -> usize {
    if d.z.is_nan() || d.z <= 0.0 {
        return SIDEWAYS_BIN;
    }
    let horizontal_deg = libm::atan2(d.x, d.z).to_degrees();
    let vertical_deg = libm::atan2(d.y, d.z).to_degrees();
    cell_along(vertical_deg) * CELLS + cell_along(horizontal_deg)
}

/// The lower edge of cell `k` along either angle, degrees.
pub fn cell_edge_deg(k: usize) -> f64 {
    -90.0 + k as f64 * CELL_DEG
}

/// G(α, β) = asin(sin α sin β): the solid angle of the directions with horizontal angle between
/// 0 and α and vertical angle between 0 and β (signed), sr (module docs).
fn corner_sr(alpha_deg: f64, beta_deg: f64) -> f64 {
    let p = libm::sin(alpha_deg.to_radians()) * libm::sin(beta_deg.to_radians());
    libm::asin(p.clamp(-1.0, 1.0))
}

/// The exact solid angle of the directions with horizontal angle in `horizontal_deg` (from, to)
/// and vertical angle in `vertical_deg` (from, to), degrees within −90…90, sr (module docs):
/// Ω = G(α₂, β₂) − G(α₁, β₂) − G(α₂, β₁) + G(α₁, β₁).
pub fn cell_solid_angle_sr(horizontal_deg: (f64, f64), vertical_deg: (f64, f64)) -> f64 {
    let ((a1, a2), (b1, b2)) = (horizontal_deg, vertical_deg);
    corner_sr(a2, b2) - corner_sr(a1, b2) - corner_sr(a2, b1) + corner_sr(a1, b1)
}

/// The solid angle of the map's cell `k` (row-major: row = vertical, column = horizontal), sr.
pub fn solid_angle_of_cell_sr(k: usize) -> f64 {
    let (row, col) = (k / CELLS, k % CELLS);
    cell_solid_angle_sr(
        (cell_edge_deg(col), cell_edge_deg(col + 1)),
        (cell_edge_deg(row), cell_edge_deg(row + 1)),
    )
}

/// The far-field intensity map of a trace report (module docs).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct FarField {
    /// Width of a cell along either angle, degrees.
    pub cell_deg: f64,
    /// Cells across the map along either angle (from −90° to 90°).
    pub cells: usize,
    /// Share of the emitted power leaving through each cell, row-major: rows by vertical angle
    /// from −90° up, columns by horizontal angle from −90° on.
    pub share: Vec<f64>,
    /// 95 % half-width of each cell's share (0 where there is no interval, below two rays).
    pub ci95: Vec<f64>,
    /// Intensity of each cell: its share over its solid angle, share of the emitted power per sr.
    pub share_per_sr: Vec<f64>,
    /// 95 % half-width of each cell's intensity, per sr.
    pub ci95_per_sr: Vec<f64>,
    /// Delivered light leaving at 90° or more from the exit axis, not on the map.
    pub sideways: Share,
    /// The intensity in the source's units, when it has a flux.
    pub absolute: Option<FarFieldAbsolute>,
}

/// A far-field map's intensity in absolute units: each cell's share per sr times the source's
/// flux.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct FarFieldAbsolute {
    /// mW/sr (flux in mW) or cd (flux in lm).
    pub intensity_unit: IntensityUnit,
    /// Each cell's intensity, in that unit.
    pub intensity: Vec<f64>,
    /// Its 95 % half-width.
    pub ci95: Vec<f64>,
}

impl Default for FarField {
    /// An empty map (no cells): what a report written before the map reads as.
    fn default() -> FarField {
        FarField {
            cell_deg: CELL_DEG,
            cells: 0,
            share: Vec::new(),
            ci95: Vec::new(),
            share_per_sr: Vec::new(),
            ci95_per_sr: Vec::new(),
            sideways: Share {
                share: 0.0,
                ci95: 0.0,
            },
            absolute: None,
        }
    }
}

impl FarField {
    /// The map of a histogram of [`BINS`] bins over `rays` rays; `flux` is the source's flux in
    /// the unit whose intensity unit is given, when it has one. A histogram of another size
    /// gives an empty map.
    pub fn from_hist(h: &Hist, rays: u64, flux: Option<(f64, IntensityUnit)>) -> FarField {
        if h.sum.len() != BINS {
            return FarField::default();
        }
        let (mut share, mut ci95): (Vec<f64>, Vec<f64>) = h
            .estimates(rays)
            .map(|e| (e.mean, e.half_width95().unwrap_or(0.0)))
            .unzip();
        let sideways = Share {
            share: share.pop().unwrap_or(0.0),
            ci95: ci95.pop().unwrap_or(0.0),
        };
        let (share_per_sr, ci95_per_sr): (Vec<f64>, Vec<f64>) = (0..CELLS * CELLS)
            .map(|k| {
                let omega = solid_angle_of_cell_sr(k);
                (share[k] / omega, ci95[k] / omega)
            })
            .unzip();
        let absolute = flux.map(|(value, intensity_unit)| FarFieldAbsolute {
            intensity_unit,
            intensity: share_per_sr.iter().map(|v| v * value).collect(),
            ci95: ci95_per_sr.iter().map(|v| v * value).collect(),
        });
        FarField {
            cell_deg: CELL_DEG,
            cells: CELLS,
            share,
            ci95,
            share_per_sr,
            ci95_per_sr,
            sideways,
            absolute,
        }
    }

    /// The middle cell's index (the one holding the exit axis), when the map has an odd number
    /// of cells across.
    pub fn axis_cell(&self) -> Option<usize> {
        (self.cells % 2 == 1).then(|| (self.cells / 2) * self.cells + self.cells / 2)
    }
}

/// The far-field map as a CSV table after a blank line (part of `tirtrace trace --csv` and the
/// page's download): a line saying what the angles are, then one row per cell, rows by vertical
/// angle from −90° up and within a row by horizontal angle: the cell's edges in degrees, its
/// solid angle, its share in % of the emitted light and its intensity in % per sr, each with its
/// 95 % half-width, and with a source flux the intensity in mW/sr or cd; then the light leaving
/// at 90° or more from the axis. Nothing when the map is empty.
pub fn csv(f: &FarField) -> String {
    use crate::export::{csv_num, csv_text, percent};
    if f.cells == 0 || f.share.len() != f.cells * f.cells {
        return String::new();
    }
    let mut s = format!(
        "\n{}\n",
        csv_text(&format!(
            "Intensity map beyond the exit face: horizontal angle atan2(x, z), vertical angle \
             atan2(y, z), in the exit face's frame (z its outward normal, x its width axis, y \
             its height axis); cells of {}°",
            csv_num(f.cell_deg)
        ))
    );
    let abs = f.absolute.as_ref();
    let abs_head = abs.map_or(String::new(), |a| {
        format!(",intensity {u},± {u}", u = a.intensity_unit)
    });
    s += &format!(
        "horizontal from °,horizontal to °,vertical from °,vertical to °,solid angle sr,\
         % of emitted,± %,% of emitted per sr,± % per sr{abs_head}\n"
    );
    let n = f.cells;
    let edge = |k: usize| csv_num(-90.0 + k as f64 * f.cell_deg);
    for k in 0..n * n {
        let (row, col) = (k / n, k % n);
        let omega = cell_solid_angle_sr((edge(col), edge(col + 1)), (edge(row), edge(row + 1)));
        s += &format!(
            "{},{},{},{},{},{},{},{},{}",
            edge(col),
            edge(col + 1),
            edge(row),
            edge(row + 1),
            csv_num(omega),
            percent(f.share[k]),
            percent(f.ci95[k]),
            percent(f.share_per_sr[k]),
            percent(f.ci95_per_sr[k]),
        );
        if let Some(a) = abs {
            s += &format!(",{},{}", csv_num(a.intensity[k]), csv_num(a.ci95[k]));
        }
        s += "\n";
    }
    s += &format!(
        "\n\"Reaches the window at 90° or more from its axis (not on the map)\",% of emitted,± %\n\
         ,{},{}\n",
        percent(f.sideways.share),
        percent(f.sideways.ci95)
    );
    s
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The solid angle by midpoint quadrature of dΩ = sec²α sec²β / (1 + tan²α + tan²β)^{3/2}
    /// dα dβ over a cell (degrees), `steps` per side: an independent check of the closed form.
    fn quadrature_sr(h: (f64, f64), v: (f64, f64), steps: usize) -> f64 {
        let (da, db) = ((h.1 - h.0) / steps as f64, (v.1 - v.0) / steps as f64);
        let mut sum = 0.0;
        for i in 0..steps {
            for j in 0..steps {
                let a = (h.0 + (i as f64 + 0.5) * da).to_radians();
                let b = (v.0 + (j as f64 + 0.5) * db).to_radians();
                let (ta, tb) = (libm::tan(a), libm::tan(b));
                let (ca, cb) = (libm::cos(a), libm::cos(b));
                let jac = 1.0 / (ca * ca * cb * cb);
                let s2 = 1.0 + ta * ta + tb * tb;
                sum += jac / (s2 * s2.sqrt());
            }
        }
        sum * da.to_radians() * db.to_radians()
    }

    #[test]
    fn the_cells_span_the_half_space() {
        // Every cell's solid angle adds up to 2π, the half space in front of the face.
        let total: f64 = (0..CELLS * CELLS).map(solid_angle_of_cell_sr).sum();
        assert!((total - std::f64::consts::TAU).abs() < 1e-12, "{total}");
        assert!((0..CELLS * CELLS).all(|k| solid_angle_of_cell_sr(k) > 0.0));
        // The whole map in one cell: 2π exactly; a quadrant: π/2.
        assert!(
            (cell_solid_angle_sr((-90.0, 90.0), (-90.0, 90.0)) - std::f64::consts::TAU).abs()
                < 1e-15
        );
        assert!(
            (cell_solid_angle_sr((0.0, 90.0), (0.0, 90.0)) - std::f64::consts::FRAC_PI_2).abs()
                < 1e-15
        );
    }

    #[test]
    fn a_cells_solid_angle_is_the_integral_of_its_directions() {
        // The closed form against quadrature of dΩ = da db / (1 + a² + b²)^{3/2} on the plane
        // z = 1, for cells near the axis, off it and at the edge of the map.
        for (h, v) in [
            ((-2.0, 2.0), (-2.0, 2.0)),
            ((10.0, 14.0), (-30.0, -26.0)),
            ((50.0, 54.0), (62.0, 66.0)),
            ((-86.0, -82.0), (20.0, 24.0)),
            ((0.0, 30.0), (0.0, 40.0)),
        ] {
            let exact = cell_solid_angle_sr(h, v);
            let numeric = quadrature_sr(h, v, 200);
            assert!(
                (exact - numeric).abs() < 1e-6 * exact,
                "{h:?} {v:?}: {exact} vs {numeric}"
            );
        }
        // Near the axis a cell is nearly flat: (4° in radians)².
        let small = cell_solid_angle_sr((-2.0, 2.0), (-2.0, 2.0));
        assert!((small - 4f64.to_radians() * 4f64.to_radians()).abs() < 1e-3 * small);
    }

    #[test]
    fn directions_land_in_their_cells() {
        let axis = bin_of(DVec3::Z);
        assert_eq!(
            axis,
            (CELLS / 2) * CELLS + CELLS / 2,
            "the axis: the middle cell"
        );
        // 11° towards +x (width axis): column of 10°…14° (edges at −90° + 4° k), middle row.
        let t = 11f64.to_radians();
        let d = DVec3::new(libm::sin(t), 0.0, libm::cos(t));
        assert_eq!(bin_of(d), (CELLS / 2) * CELLS + 25);
        assert_eq!((cell_edge_deg(25), cell_edge_deg(26)), (10.0, 14.0));
        // 11° towards −y (height axis): row of −14°…−10°, middle column.
        let d = DVec3::new(0.0, -libm::sin(t), libm::cos(t));
        assert_eq!(bin_of(d), 19 * CELLS + CELLS / 2);
        // Grazing and backwards: sideways, never on the map.
        for d in [DVec3::X, -DVec3::Z, DVec3::new(0.3, 0.2, -0.1), DVec3::NAN] {
            assert_eq!(bin_of(d), SIDEWAYS_BIN, "{d}");
        }
        // Nearly grazing but forward: the edge cells.
        let d = DVec3::new(1.0, -1.0, 1e-12);
        assert_eq!(bin_of(d), CELLS - 1);
    }
}
