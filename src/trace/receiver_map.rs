//! Where delivered light lands on the receiver (the detector): a histogram over the receiver's
//! bounding box, filled where a delivered ray is found to land on it, and the outline its blocks
//! must lie on for the uniformity figures ([`crate::exit_figures::MapOutline`]).

use crate::exit_figures::MapOutline;
use crate::scenario::Receiver;

/// Cells across and down the receiver's map: as many as the exit map's
/// ([`super::MAP_CELLS`]), so the same 9 × 9 blocks of whole cells judge its uniformity.
pub const RECEIVER_CELLS: usize = super::MAP_CELLS;

/// The receiver's outline: round of its diameter, or its window's width × height, centred on
/// the exit axis (the map spans its bounding box). `None` for a receiver that gives neither,
/// which the scenario's check refuses.
pub fn outline(r: &Receiver) -> Option<MapOutline> {
    match (r.diameter_mm, r.width_mm, r.height_mm) {
        (Some(d), _, _) => Some(MapOutline {
            half_width_mm: 0.5 * d,
            half_height_mm: 0.5 * d,
            round: true,
        }),
        (None, Some(w), Some(h)) => Some(MapOutline {
            half_width_mm: 0.5 * w,
            half_height_mm: 0.5 * h,
            round: false,
        }),
        _ => None,
    }
}

/// The map's cell of a point (x, y) on the receiver, mm from its centre (row-major from −y, as
/// the exit map): a point on the rim goes to the cell inside it.
#[inline]
pub fn cell(o: &MapOutline, x: f64, y: f64) -> usize {
    let at = |v: f64, half: f64| {
        (((v + half) / (2.0 * half) * RECEIVER_CELLS as f64) as isize)
            .clamp(0, RECEIVER_CELLS as isize - 1) as usize
    };
    at(y, o.half_height_mm) * RECEIVER_CELLS + at(x, o.half_width_mm)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn corners_and_centre_land_in_their_cells() {
        let o = MapOutline {
            half_width_mm: 2.0,
            half_height_mm: 1.0,
            round: false,
        };
        let n = RECEIVER_CELLS;
        assert_eq!(cell(&o, -2.0, -1.0), 0);
        assert_eq!(cell(&o, 2.0, 1.0), n * n - 1);
        assert_eq!(cell(&o, 0.0, 0.0), (n / 2) * n + n / 2);
        // x across the columns, y down the rows.
        assert_eq!(cell(&o, 2.0, -1.0), n - 1);
        assert_eq!(cell(&o, -2.0, 1.0), (n - 1) * n);
    }
}
