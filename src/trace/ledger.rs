//! The tally columns: which entry of [`Batch::tallies`](super::Batch::tallies) holds what. This
//! is the one place that knows the layout; the walk, the batch sums and the report ask for a
//! column by name, so no energy can slip into a neighbouring column through an offset.
//!
//! The layout (kept as it is: batches sent between workers carry the columns in this order):
//! the fixed fates (delivered, missed entry, reflected at the entry, returned, stopped), the
//! three totals (leaked, absorbed, lost to contacts), then leaked per segment, absorbed per
//! segment and lost per contact zone — the partition of the emitted power — and after them the
//! turn-back columns: what reaches the exit face, what it turns back (by total reflection or by
//! Fresnel reflection) and what becomes of the light it turned back, in total and leaked per
//! segment. The turn-back columns repeat light of the partition, so they are outside it.
//!
//! The coated zones' columns come last, so a scenario without coatings keeps every column where
//! it was: lost into each coating (part of the partition), the weight first reaching each
//! coating, all coatings' loss in total and, of the turned-back weight, what is lost into
//! coatings (these three repeat other light and are outside the partition).
//!
//! Last, three sums that give the turn-back fractions' intervals from the replicates: per ray,
//! the weight reaching the exit face plus what it turns back (by either mechanism, by total
//! reflection, by Fresnel reflection). The spread of a sum's replicate means, less those of its
//! two parts, is twice their covariance, which the ratio of the two needs
//! ([`crate::stats::Estimate::fraction_of_replicated`]). They too are outside the partition.

use std::ops::Range;

const DELIVERED: usize = 0;
const MISSED_ENTRY: usize = 1;
const REFLECTED_ENTRY: usize = 2;
const RETURNED: usize = 3;
const STOPPED: usize = 4;
/// Totals over segments / zones, tallied per ray so that their confidence intervals are real
/// ones (not sums of half-widths). They repeat the per-segment and per-zone columns, so they
/// are left out of the partition that checks the budget.
const TOTAL_LEAKED: usize = 5;
const TOTAL_ABSORBED: usize = 6;
const TOTAL_CONTACT: usize = 7;
/// Columns before the per-segment ones.
const FIXED: usize = 8;

/// The turn-back columns, counted from the end of the partition (see [`Ledger::turn_back`]).
/// Weight on first reaching the exit face (each ray reaches it once at most in this column).
const REACHED_EXIT: usize = 0;
/// Weight turned back at the exit face on first reaching it, by either mechanism.
const TURNED_BACK: usize = 1;
/// … by total internal reflection.
const TURNED_BACK_TIR: usize = 2;
/// … by Fresnel reflection (below the critical angle).
const TURNED_BACK_FRESNEL: usize = 3;
/// What became of the turned-back weight: delivered on a later pass,
const AFTER_DELIVERED: usize = 4;
/// back out of the entry face,
const AFTER_RETURNED: usize = 5;
/// leaked through any side wall,
const AFTER_LEAKED: usize = 6;
/// lost into any contact zone,
const AFTER_CONTACT: usize = 7;
/// absorbed after the turn,
const AFTER_ABSORBED: usize = 8;
/// stopped by the interaction cap.
const AFTER_STOPPED: usize = 9;
/// Turn-back columns before the per-segment leaks after a turn back.
const TURN_FIXED: usize = 10;

/// The coating columns, counted from the end of the columns before them (see
/// [`Ledger::coating_column`]), for `n` coatings: lost into coating k at k, first reaching it at
/// n + k, then the two below at 2n + …
/// Lost into any coating (per ray: the sum of its per-coating columns).
const TOTAL_COATING: usize = 0;
/// Of the turned-back weight: lost into any coating.
const AFTER_COATING: usize = 1;
/// Coating columns besides the per-coating ones.
const COATING_FIXED: usize = 2;

/// The sums after the coating columns (see [`Ledger::reached_plus`]): the weight reaching the
/// exit face plus what it turns back by either mechanism, by total reflection, by Fresnel
/// reflection.
const REACHED_PLUS_TURNED_BACK: usize = 0;
const REACHED_PLUS_TIR: usize = 1;
const REACHED_PLUS_FRESNEL: usize = 2;
/// Columns after the coating ones.
const SUMS: usize = 3;

/// The tally columns of one scenario (its segment, contact-zone and coating counts fix the
/// layout).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) struct Ledger {
    segments: usize,
    zones: usize,
    coatings: usize,
}

impl Ledger {
    /// The layout for `segments` route segments and `zones` contact zones, and no coatings.
    pub(crate) fn new(segments: usize, zones: usize) -> Ledger {
        Ledger {
            segments,
            zones,
            coatings: 0,
        }
    }

    /// The same layout with `coatings` coated zones.
    pub(crate) fn with_coatings(self, coatings: usize) -> Ledger {
        Ledger { coatings, ..self }
    }

    /// Number of columns.
    pub(crate) fn len(self) -> usize {
        self.sum_column(SUMS)
    }

    /// Sum column `k`: after the coating columns.
    #[inline]
    fn sum_column(self, k: usize) -> usize {
        self.coating_column(2 * self.coatings + COATING_FIXED) + k
    }

    /// Per ray, the weight on first reaching the exit face plus the weight turned back there
    /// (`None`: by either mechanism; `Some(true)`: by total reflection; `Some(false)`: by
    /// Fresnel reflection).
    #[inline]
    pub(crate) fn reached_plus(self, by_tir: Option<bool>) -> usize {
        self.sum_column(match by_tir {
            None => REACHED_PLUS_TURNED_BACK,
            Some(true) => REACHED_PLUS_TIR,
            Some(false) => REACHED_PLUS_FRESNEL,
        })
    }

    /// Coating column `k`: after the turn-back columns.
    #[inline]
    fn coating_column(self, k: usize) -> usize {
        self.turn_back(TURN_FIXED) + self.segments + k
    }

    /// Lost into (absorbed by) coating `coating`.
    #[inline]
    pub(crate) fn coating(self, coating: usize) -> usize {
        debug_assert!(coating < self.coatings);
        self.coating_column(coating)
    }

    /// The weight on a ray's first arrival at coating `coating`.
    #[inline]
    pub(crate) fn coating_reached(self, coating: usize) -> usize {
        debug_assert!(coating < self.coatings);
        self.coating_column(self.coatings + coating)
    }

    /// Lost into any coating (per ray: the sum of its per-coating columns).
    pub(crate) fn total_coating(self) -> usize {
        self.coating_column(2 * self.coatings + TOTAL_COATING)
    }

    /// Of the turned-back weight: lost into any coating.
    pub(crate) fn after_coating(self) -> usize {
        self.coating_column(2 * self.coatings + AFTER_COATING)
    }

    /// Turn-back column `k` (one of the `REACHED_EXIT` … constants): after the partition.
    #[inline]
    fn turn_back(self, k: usize) -> usize {
        FIXED + 2 * self.segments + self.zones + k
    }

    /// Left through the exit face.
    pub(crate) fn delivered(self) -> usize {
        DELIVERED
    }

    /// Missed the entry face.
    pub(crate) fn missed_entry(self) -> usize {
        MISSED_ENTRY
    }

    /// Reflected at the entry face.
    pub(crate) fn reflected_entry(self) -> usize {
        REFLECTED_ENTRY
    }

    /// Left back through the entry face.
    pub(crate) fn returned(self) -> usize {
        RETURNED
    }

    /// Stopped by the interaction cap.
    pub(crate) fn stopped(self) -> usize {
        STOPPED
    }

    /// Leaked through any side wall (per ray: the sum of its per-segment leaked columns).
    pub(crate) fn total_leaked(self) -> usize {
        TOTAL_LEAKED
    }

    /// Absorbed in any segment (per ray: the sum of its per-segment absorbed columns).
    pub(crate) fn total_absorbed(self) -> usize {
        TOTAL_ABSORBED
    }

    /// Lost into any contact zone (per ray: the sum of its per-zone columns).
    pub(crate) fn total_contact(self) -> usize {
        TOTAL_CONTACT
    }

    /// Leaked through the side walls of `segment`.
    #[inline]
    pub(crate) fn leaked(self, segment: usize) -> usize {
        debug_assert!(segment < self.segments);
        FIXED + segment
    }

    /// Absorbed in `segment`.
    #[inline]
    pub(crate) fn absorbed(self, segment: usize) -> usize {
        debug_assert!(segment < self.segments);
        FIXED + self.segments + segment
    }

    /// Lost into contact zone `zone`.
    #[inline]
    pub(crate) fn contact(self, zone: usize) -> usize {
        debug_assert!(zone < self.zones);
        FIXED + 2 * self.segments + zone
    }

    /// Weight on first reaching the exit face.
    pub(crate) fn reached_exit(self) -> usize {
        self.turn_back(REACHED_EXIT)
    }

    /// Weight turned back at the exit face on first reaching it (total or Fresnel reflection).
    pub(crate) fn turned_back(self) -> usize {
        self.turn_back(TURNED_BACK)
    }

    /// Weight turned back at the exit face on first reaching it by total internal reflection.
    pub(crate) fn turned_back_tir(self) -> usize {
        self.turn_back(TURNED_BACK_TIR)
    }

    /// Weight turned back at the exit face on first reaching it by Fresnel reflection.
    pub(crate) fn turned_back_fresnel(self) -> usize {
        self.turn_back(TURNED_BACK_FRESNEL)
    }

    /// Of the turned-back weight: delivered through the exit face on a later pass.
    pub(crate) fn after_delivered(self) -> usize {
        self.turn_back(AFTER_DELIVERED)
    }

    /// Of the turned-back weight: left back through the entry face.
    pub(crate) fn after_returned(self) -> usize {
        self.turn_back(AFTER_RETURNED)
    }

    /// Of the turned-back weight: leaked through any side wall.
    pub(crate) fn after_leaked_total(self) -> usize {
        self.turn_back(AFTER_LEAKED)
    }

    /// Of the turned-back weight: lost into any contact zone.
    pub(crate) fn after_contact(self) -> usize {
        self.turn_back(AFTER_CONTACT)
    }

    /// Of the turned-back weight: absorbed after the turn.
    pub(crate) fn after_absorbed(self) -> usize {
        self.turn_back(AFTER_ABSORBED)
    }

    /// Of the turned-back weight: stopped by the interaction cap.
    pub(crate) fn after_stopped(self) -> usize {
        self.turn_back(AFTER_STOPPED)
    }

    /// Of the turned-back weight: leaked through the side walls of `segment`.
    #[inline]
    pub(crate) fn after_leaked(self, segment: usize) -> usize {
        debug_assert!(segment < self.segments);
        self.turn_back(TURN_FIXED) + segment
    }

    fn leaked_columns(self) -> Range<usize> {
        FIXED..FIXED + self.segments
    }

    fn absorbed_columns(self) -> Range<usize> {
        FIXED + self.segments..FIXED + 2 * self.segments
    }

    fn contact_columns(self) -> Range<usize> {
        FIXED + 2 * self.segments..self.turn_back(0)
    }

    fn after_leaked_columns(self) -> Range<usize> {
        self.turn_back(TURN_FIXED)..self.coating_column(0)
    }

    fn coating_columns(self) -> Range<usize> {
        self.coating_column(0)..self.coating_column(self.coatings)
    }

    /// Fill the five totals of one ray's contributions (one value per column) from its
    /// per-segment and per-zone columns: leaked, absorbed, lost to contacts, leaked after a
    /// turn back at the exit face, and lost into coatings; and the three sums of the weight
    /// reaching the exit face and what it turns back ([`Ledger::reached_plus`]).
    #[inline]
    pub(crate) fn fill_totals(self, ray: &mut [f64]) {
        ray[TOTAL_LEAKED] = ray[self.leaked_columns()].iter().sum();
        ray[TOTAL_ABSORBED] = ray[self.absorbed_columns()].iter().sum();
        ray[TOTAL_CONTACT] = ray[self.contact_columns()].iter().sum();
        ray[self.after_leaked_total()] = ray[self.after_leaked_columns()].iter().sum();
        ray[self.total_coating()] = ray[self.coating_columns()].iter().sum();
        let reached = ray[self.reached_exit()];
        ray[self.reached_plus(None)] = reached + ray[self.turned_back()];
        ray[self.reached_plus(Some(true))] = reached + ray[self.turned_back_tir()];
        ray[self.reached_plus(Some(false))] = reached + ray[self.turned_back_fresnel()];
    }

    /// Whether `column` belongs to the partition of the emitted power (every fate and absorption
    /// by segment, so that the partition sums to one), rather than being a total or a turn-back
    /// column that repeats other columns.
    pub(crate) fn in_partition(self, column: usize) -> bool {
        (!(TOTAL_LEAKED..FIXED).contains(&column) && column < self.turn_back(0))
            || self.coating_columns().contains(&column)
    }
}

#[cfg(test)]
mod tests {
    use super::Ledger;

    #[test]
    fn every_column_has_one_name() {
        for coatings in [0, 2] {
            columns_are_named_once(coatings);
        }
    }

    /// Two segments, three zones and `coatings` coatings: each named column appears once and
    /// they cover 0..len.
    fn columns_are_named_once(coatings: usize) {
        let l = Ledger::new(2, 3).with_coatings(coatings);
        let mut named = vec![
            l.delivered(),
            l.missed_entry(),
            l.reflected_entry(),
            l.returned(),
            l.stopped(),
            l.total_leaked(),
            l.total_absorbed(),
            l.total_contact(),
        ];
        named.extend((0..2).map(|s| l.leaked(s)));
        named.extend((0..2).map(|s| l.absorbed(s)));
        named.extend((0..3).map(|z| l.contact(z)));
        let partition_end = named.len();
        let turn_back = [
            l.reached_exit(),
            l.turned_back(),
            l.turned_back_tir(),
            l.turned_back_fresnel(),
            l.after_delivered(),
            l.after_returned(),
            l.after_leaked_total(),
            l.after_contact(),
            l.after_absorbed(),
            l.after_stopped(),
            l.after_leaked(0),
            l.after_leaked(1),
        ];
        named.extend(turn_back);
        // The coating columns come last: without coatings every other column stays where it
        // was.
        let coating_start = named.len();
        let lost: Vec<usize> = (0..coatings).map(|k| l.coating(k)).collect();
        let mut repeated: Vec<usize> = (0..coatings).map(|k| l.coating_reached(k)).collect();
        repeated.extend([l.total_coating(), l.after_coating()]);
        named.extend(&lost);
        named.extend(&repeated);
        assert_eq!(
            lost.iter().chain(&repeated).min(),
            Some(&coating_start),
            "{coatings} coatings"
        );
        // Then the three sums.
        let sums = [
            l.reached_plus(None),
            l.reached_plus(Some(true)),
            l.reached_plus(Some(false)),
        ];
        assert_eq!(sums.iter().min(), Some(&named.len()));
        named.extend(sums);
        named.sort_unstable();
        assert_eq!(named, (0..l.len()).collect::<Vec<_>>());
        // The turn-back columns come after every column of the partition (whose layout is kept).
        assert_eq!(turn_back.iter().min(), Some(&partition_end));
        let totals = [l.total_leaked(), l.total_absorbed(), l.total_contact()];
        for c in 0..l.len() {
            let repeats = totals.contains(&c)
                || turn_back.contains(&c)
                || repeated.contains(&c)
                || sums.contains(&c);
            assert_eq!(l.in_partition(c), !repeats, "column {c}");
        }
    }

    #[test]
    fn totals_sum_their_own_columns() {
        let l = Ledger::new(2, 1).with_coatings(2);
        let mut ray = vec![0.0; l.len()];
        ray[l.coating(0)] = 4.0;
        ray[l.coating(1)] = 8.0;
        ray[l.coating_reached(1)] = 16.0;
        ray[l.leaked(1)] = 0.25;
        ray[l.absorbed(0)] = 0.125;
        ray[l.absorbed(1)] = 0.5;
        ray[l.contact(0)] = 2.0;
        ray[l.after_leaked(1)] = 0.0625;
        ray[l.reached_exit()] = 0.75;
        ray[l.turned_back()] = 0.75;
        ray[l.turned_back_fresnel()] = 0.75;
        l.fill_totals(&mut ray);
        assert_eq!(ray[l.reached_plus(None)], 1.5);
        assert_eq!(ray[l.reached_plus(Some(true))], 0.75);
        assert_eq!(ray[l.reached_plus(Some(false))], 1.5);
        assert_eq!(ray[l.total_leaked()], 0.25);
        assert_eq!(ray[l.total_absorbed()], 0.625);
        assert_eq!(ray[l.total_contact()], 2.0);
        assert_eq!(ray[l.after_leaked_total()], 0.0625);
        assert_eq!(ray[l.total_coating()], 12.0);
    }
}
